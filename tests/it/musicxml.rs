//! Worked examples for the MusicXML reader. Each input is a small score
//! written inline; each expected value follows from the MusicXML 4.0
//! reference (W3C Music Notation CG, element pages named in the comments) or
//! from common practice in reading printed music, as stated beside it.

use crate::common;

use std::path::Path;

use ambit::score::{Mode, PartKind, Piece, ReadOptions, read_score_bytes};

fn read(xml: &str) -> Piece {
    read_with(xml, ReadOptions::default())
}

fn read_with(xml: &str, options: ReadOptions) -> Piece {
    read_score_bytes(Path::new("example.musicxml"), xml.as_bytes(), &options)
        .unwrap_or_else(|error| panic!("{error}"))
}

/// A one-part score around the given measures.
fn one_part(measures: &str) -> String {
    format!(
        r#"<?xml version="1.0" encoding="UTF-8"?>
<!DOCTYPE score-partwise PUBLIC "-//Recordare//DTD MusicXML 4.0 Partwise//EN" "http://www.musicxml.org/dtds/partwise.dtd">
<score-partwise version="4.0">
  <part-list><score-part id="P1"><part-name>Soprano</part-name></score-part></part-list>
  <part id="P1">{measures}</part>
</score-partwise>"#
    )
}

fn pitch(step: &str, octave: i32) -> String {
    format!("<pitch><step>{step}</step><octave>{octave}</octave></pitch>")
}

/// (onset quarters, MIDI) of every note of the first part.
fn onsets(piece: &Piece) -> Vec<(f64, f64)> {
    piece.parts[0]
        .notes
        .iter()
        .map(|note| (note.onset_quarters, note.midi))
        .collect()
}

fn numbers(piece: &Piece) -> Vec<&str> {
    piece
        .measures
        .iter()
        .map(|measure| measure.number.as_str())
        .collect()
}

#[test]
fn chords_backup_forward_and_ties_follow_the_cursor() {
    // MusicXML <note>, <chord>, <backup>, <forward>: a note starts at the
    // cursor and moves it by its duration; a chord note starts with the note
    // before it; backup/forward move the cursor. Divisions 2 = eighth note.
    let xml = one_part(&format!(
        r#"<measure number="1">
          <attributes><divisions>2</divisions><time><beats>4</beats><beat-type>4</beat-type></time></attributes>
          <note>{c5}<duration>4</duration><voice>1</voice></note>
          <note><chord/>{e5}<duration>4</duration><voice>1</voice></note>
          <note>{d5}<duration>4</duration><tie type="start"/><voice>1</voice></note>
          <backup><duration>8</duration></backup>
          <note>{c4}<duration>2</duration><voice>2</voice></note>
          <forward><duration>4</duration></forward>
          <note>{g3}<duration>2</duration><voice>2</voice></note>
        </measure>
        <measure number="2">
          <note>{d5}<duration>8</duration><tie type="stop"/><voice>1</voice></note>
        </measure>"#,
        c5 = pitch("C", 5),
        e5 = pitch("E", 5),
        d5 = pitch("D", 5),
        c4 = pitch("C", 4),
        g3 = pitch("G", 3),
    ));
    let piece = read(&xml);
    // Sorted by onset, then pitch. C4 = 60 (scientific pitch notation).
    // Voice 2: C4 on beat 1 (1 quarter), forward 2 quarters, G3 on beat 4.
    assert_eq!(
        onsets(&piece),
        vec![
            (0.0, 60.0),
            (0.0, 72.0),
            (0.0, 76.0),
            (2.0, 74.0),
            (3.0, 55.0),
            (4.0, 74.0)
        ]
    );
    let notes = &piece.parts[0].notes;
    assert_eq!(notes[1].duration_quarters, 2.0);
    assert_eq!(notes[0].voice, 2);
    // <tie type="stop"> marks the continuation, which keeps its own duration.
    assert!(notes[5].tied_from_previous && !notes[3].tied_from_previous);
    assert_eq!(notes[5].duration_quarters, 4.0);
    assert_eq!(notes[5].measure, "2");
    // No tempo anywhere: 120 quarter notes per minute (MusicXML <sound>
    // default), so one quarter lasts 0.5 s, and the reader says so.
    assert_eq!(notes[5].onset_seconds, 2.0);
    assert!(piece.warnings.iter().any(|warning| warning.contains("120")));
}

#[test]
fn divisions_may_change_between_measures() {
    // MusicXML <divisions>: durations are in divisions per quarter, in force
    // until the next <divisions>. 1 per quarter, then 4 per quarter.
    let xml = one_part(&format!(
        r#"<measure number="1">
          <attributes><divisions>1</divisions></attributes>
          <note>{c}<duration>4</duration></note>
        </measure>
        <measure number="2">
          <attributes><divisions>4</divisions></attributes>
          <note>{d}<duration>1</duration></note>
          <note>{e}<duration>3</duration></note>
          <note>{c}<duration>12</duration></note>
        </measure>"#,
        c = pitch("C", 4),
        d = pitch("D", 4),
        e = pitch("E", 4),
    ));
    let piece = read(&xml);
    // A sixteenth (1/4) then a dotted eighth (3/4) then a dotted half (3).
    assert_eq!(
        onsets(&piece),
        vec![(0.0, 60.0), (4.0, 62.0), (4.25, 64.0), (5.0, 60.0)]
    );
    assert_eq!(piece.measures[1].duration_quarters, 4.0);
}

#[test]
fn transposing_parts_and_microtones_sound_where_they_should() {
    // MusicXML <transpose>: sounding = written + chromatic + 12 · octave-change.
    // A tenor in the octave treble clef written G4 sounds G3 = 55; a B-flat
    // clarinet (chromatic −2) written D5 sounds C5 = 72. <alter> 0.5 is a
    // quarter-tone sharp: F4 + 0.5 = 65.5.
    let xml = r#"<score-partwise version="4.0">
      <part-list>
        <score-part id="T"><part-name>Tenor</part-name></score-part>
        <score-part id="C"><part-name>Clarinet in B♭</part-name></score-part>
      </part-list>
      <part id="T"><measure number="1">
        <attributes><divisions>1</divisions>
          <clef><sign>G</sign><line>2</line><clef-octave-change>-1</clef-octave-change></clef>
          <transpose><diatonic>0</diatonic><chromatic>0</chromatic><octave-change>-1</octave-change></transpose>
        </attributes>
        <note><pitch><step>G</step><octave>4</octave></pitch><duration>1</duration></note>
        <note><pitch><step>F</step><alter>0.5</alter><octave>4</octave></pitch><duration>1</duration></note>
      </measure></part>
      <part id="C"><measure number="1">
        <attributes><divisions>1</divisions>
          <transpose><diatonic>-1</diatonic><chromatic>-2</chromatic></transpose>
        </attributes>
        <note><pitch><step>D</step><octave>5</octave></pitch><duration>2</duration></note>
      </measure></part>
    </score-partwise>"#;
    let piece = read(xml);
    let tenor: Vec<f64> = piece.parts[0].notes.iter().map(|note| note.midi).collect();
    assert_eq!(tenor, vec![55.0, 53.5]);
    assert_eq!(piece.parts[1].notes[0].midi, 72.0);
    assert_eq!(piece.parts[0].kind, PartKind::Voice);
    assert_eq!(piece.parts[1].kind, PartKind::Accompaniment);
}

#[test]
fn a_pickup_keeps_its_printed_number() {
    // A pickup (anacrusis) is printed as measure 0 with implicit="yes"
    // (MusicXML <measure>); it lasts only what it holds: one quarter in 3/4.
    let xml = one_part(&format!(
        r#"<measure number="0" implicit="yes">
          <attributes><divisions>1</divisions><time><beats>3</beats><beat-type>4</beat-type></time></attributes>
          <note>{g}<duration>1</duration></note>
        </measure>
        <measure number="1"><note>{c}<duration>3</duration></note></measure>"#,
        g = pitch("G", 4),
        c = pitch("C", 5),
    ));
    let piece = read(&xml);
    assert_eq!(numbers(&piece), vec!["0", "1"]);
    assert_eq!(piece.measures[1].onset_quarters, 1.0);
    assert_eq!(piece.measures[0].duration_quarters, 1.0);
    assert_eq!(piece.parts[0].notes[1].measure, "1");
    assert_eq!(piece.parts[0].notes[1].measure_index, 1);
}

/// Measures 1–5, each one whole note of a different pitch, with a forward
/// repeat at 1, a first ending at 3 (with the backward repeat) and a second
/// ending at 4.
fn with_endings() -> String {
    let whole = |step: &str| format!("<note>{}<duration>4</duration></note>", pitch(step, 4));
    one_part(&format!(
        r#"<measure number="1">
          <attributes><divisions>1</divisions></attributes>
          <barline location="left"><bar-style>heavy-light</bar-style><repeat direction="forward"/></barline>
          {c}</measure>
        <measure number="2">{d}</measure>
        <measure number="3">
          <barline location="left"><ending number="1" type="start"/></barline>
          {e}
          <barline location="right"><bar-style>light-heavy</bar-style><ending number="1" type="stop"/><repeat direction="backward"/></barline>
        </measure>
        <measure number="4">
          <barline location="left"><ending number="2" type="start"/></barline>
          {f}
          <barline location="right"><ending number="2" type="discontinue"/></barline>
        </measure>
        <measure number="5">{g}</measure>"#,
        c = whole("C"),
        d = whole("D"),
        e = whole("E"),
        f = whole("F"),
        g = whole("G"),
    ))
}

#[test]
fn repeats_with_first_and_second_endings_unroll_in_performance_order() {
    // Common practice: play 1 2 3 (first ending), repeat from the forward
    // repeat, play 1 2, skip the first ending, take the second (4), go on (5).
    let piece = read(&with_endings());
    assert_eq!(numbers(&piece), vec!["1", "2", "3", "1", "2", "4", "5"]);
    let onsets_quarters: Vec<f64> = piece.measures.iter().map(|m| m.onset_quarters).collect();
    assert_eq!(onsets_quarters, vec![0.0, 4.0, 8.0, 12.0, 16.0, 20.0, 24.0]);
    let pitches: Vec<f64> = piece.parts[0].notes.iter().map(|note| note.midi).collect();
    assert_eq!(pitches, vec![60.0, 62.0, 64.0, 60.0, 62.0, 65.0, 67.0]);
    // The second C is in performance measure 4 (index 3), printed "1".
    assert_eq!(piece.parts[0].notes[3].measure_index, 3);
    assert_eq!(piece.parts[0].notes[3].measure, "1");

    // --no-repeats: as written.
    let written = read_with(
        &with_endings(),
        ReadOptions {
            unroll_repeats: false,
        },
    );
    assert_eq!(numbers(&written), vec!["1", "2", "3", "4", "5"]);
}

#[test]
fn a_backward_repeat_without_forward_goes_to_the_start_and_times_counts_passes() {
    // MusicXML <repeat times="3">: the section is played three times; with
    // no forward repeat the section starts at the beginning (common practice).
    let xml = one_part(&format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>{c}</measure>
        <measure number="2">{c}<barline location="right"><repeat direction="backward" times="3"/></barline></measure>
        <measure number="3">{c}</measure>"#,
        c = format!("<note>{}<duration>4</duration></note>", pitch("C", 4)),
    ));
    assert_eq!(
        numbers(&read(&xml)),
        vec!["1", "2", "1", "2", "1", "2", "3"]
    );
}

#[test]
fn da_capo_al_fine_unrolls_and_printed_words_alone_are_reported() {
    // <sound fine="yes"> and <sound dacapo="yes"> carry the playback meaning
    // (MusicXML <sound>): 1 2 3, back to the start, stop at Fine after 2.
    let note = format!("<note>{}<duration>4</duration></note>", pitch("A", 4));
    let xml = one_part(&format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>{note}</measure>
        <measure number="2">{note}<direction><direction-type><words>Fine</words></direction-type><sound fine="yes"/></direction></measure>
        <measure number="3">{note}<direction><direction-type><words>D.C. al Fine</words></direction-type><sound dacapo="yes"/></direction></measure>"#
    ));
    let piece = read(&xml);
    assert_eq!(numbers(&piece), vec!["1", "2", "3", "1", "2"]);
    assert!(
        piece
            .warnings
            .iter()
            .any(|w| w.contains("measure 3") && w.contains("unrolled"))
    );

    // The same words with no <sound>: detected, reported, not unrolled.
    let printed = one_part(&format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>{note}</measure>
        <measure number="2">{note}<direction><direction-type><words>D.S. al Coda</words></direction-type></direction></measure>"#
    ));
    let piece = read(&printed);
    assert_eq!(numbers(&piece), vec!["1", "2"]);
    assert!(
        piece.warnings.iter().any(|w| w.contains("measure 2")
            && w.contains("D.S. al Coda")
            && w.contains("not unrolled")),
        "{:?}",
        piece.warnings
    );
}

#[test]
fn tempo_marks_from_any_part_drive_one_clock() {
    // Seconds = Σ quarters · 60 / tempo over the tempo map.
    // m1: <sound tempo="60"> → 4 quarters = 4 s.
    // m2: metronome dotted quarter = 80 → 80 · 1.5 = 120 quarters/min → 2 s.
    // m3: the alto part alone has <sound tempo="240"> on beat 3: the first two
    //     quarters take 1 s at 120, the last two 0.5 s at 240 — for the
    //     soprano too, because tempo belongs to the whole score.
    let soprano = format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>
          <direction><direction-type><words>Adagio</words></direction-type><sound tempo="60"/></direction>
          <note>{c}<duration>4</duration></note></measure>
        <measure number="2">
          <direction><direction-type><metronome><beat-unit>quarter</beat-unit><beat-unit-dot/><per-minute>80</per-minute></metronome></direction-type></direction>
          <note>{c}<duration>4</duration></note></measure>
        <measure number="3"><note>{c}<duration>2</duration></note><note>{c}<duration>2</duration></note></measure>"#,
        c = pitch("C", 5)
    );
    let alto = format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes><note><rest/><duration>4</duration></note></measure>
        <measure number="2"><note><rest/><duration>4</duration></note></measure>
        <measure number="3"><note><rest/><duration>2</duration></note>
          <direction><direction-type><words>Presto</words></direction-type><sound tempo="240"/></direction>
          <note>{a}<duration>2</duration></note></measure>"#,
        a = pitch("A", 4)
    );
    let xml = format!(
        r#"<score-partwise version="4.0"><part-list>
          <score-part id="S"><part-name>Soprano</part-name></score-part>
          <score-part id="A"><part-name>Alto</part-name></score-part></part-list>
          <part id="S">{soprano}</part><part id="A">{alto}</part></score-partwise>"#
    );
    let piece = read(&xml);
    let soprano: Vec<(f64, f64)> = piece.parts[0]
        .notes
        .iter()
        .map(|note| (note.onset_seconds, note.duration_seconds))
        .collect();
    assert_eq!(
        soprano,
        vec![(0.0, 4.0), (4.0, 2.0), (6.0, 1.0), (7.0, 0.5)]
    );
    let measure_seconds: Vec<f64> = piece.measures.iter().map(|m| m.onset_seconds).collect();
    assert_eq!(measure_seconds, vec![0.0, 4.0, 6.0]);
    assert!(piece.warnings.is_empty(), "{:?}", piece.warnings);
}

#[test]
fn a_zero_tempo_is_refused_with_its_measure() {
    let xml = one_part(&format!(
        r#"<measure number="7"><attributes><divisions>1</divisions></attributes>
          <sound tempo="0"/><note>{c}<duration>1</duration></note></measure>"#,
        c = pitch("C", 4)
    ));
    let error = read_score_bytes(
        Path::new("zero.musicxml"),
        xml.as_bytes(),
        &ReadOptions::default(),
    )
    .expect_err("a zero tempo is an error");
    let message = error.to_string();
    assert!(
        message.contains("zero.musicxml") && message.contains("measure 7"),
        "{message}"
    );
}

#[test]
fn grace_notes_take_no_time_and_cue_notes_are_not_sung() {
    // MusicXML <grace>: no <duration>, takes no time. <cue>: printed for
    // orientation, not performed by this part, but it does fill its time.
    let xml = one_part(&format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>
          <note><grace slash="yes"/>{d}<voice>1</voice></note>
          <note>{c}<duration>1</duration></note>
          <note><cue/>{g}<duration>1</duration></note>
          <note>{e}<duration>2</duration></note>
        </measure>"#,
        d = pitch("D", 5),
        c = pitch("C", 5),
        g = pitch("G", 3),
        e = pitch("E", 5),
    ));
    let piece = read(&xml);
    assert_eq!(onsets(&piece), vec![(0.0, 72.0), (0.0, 74.0), (2.0, 76.0)]);
    let grace = &piece.parts[0].notes[1];
    assert!(grace.grace);
    assert_eq!(
        (grace.duration_quarters, grace.duration_seconds),
        (0.0, 0.0)
    );
}

#[test]
fn dynamics_stay_in_force_until_the_next_mark_within_their_part() {
    // A dynamic mark holds until the next one (common practice). Part 2 has
    // no mark, so its notes carry none.
    let xml = format!(
        r#"<score-partwise version="4.0"><part-list>
          <score-part id="S"><part-name>Soprano</part-name></score-part>
          <score-part id="A"><part-name>Alto</part-name></score-part></part-list>
          <part id="S"><measure number="1"><attributes><divisions>1</divisions></attributes>
            <direction><direction-type><dynamics><pp/></dynamics></direction-type></direction>
            <note>{c}<duration>1</duration></note><note>{c}<duration>1</duration></note>
            <direction><direction-type><dynamics><f/></dynamics></direction-type></direction>
            <note>{c}<duration>1</duration></note>
            <note>{c}<duration>1</duration><notations><dynamics><sfz/></dynamics></notations></note>
          </measure></part>
          <part id="A"><measure number="1"><attributes><divisions>1</divisions></attributes>
            <note>{c}<duration>4</duration></note></measure></part></score-partwise>"#,
        c = pitch("C", 4)
    );
    let piece = read(&xml);
    let marks: Vec<Option<&str>> = piece.parts[0]
        .notes
        .iter()
        .map(|n| n.dynamic.as_deref())
        .collect();
    assert_eq!(marks, vec![Some("pp"), Some("pp"), Some("f"), Some("sfz")]);
    assert_eq!(piece.parts[1].notes[0].dynamic, None);
}

#[test]
fn names_kinds_title_and_key_come_from_the_header() {
    // <part-name>, else <part-abbreviation>, else the id. A two-staff part
    // with G and F clefs and no lyrics is a keyboard accompaniment; a
    // percussion clef marks unpitched percussion (MusicXML <clef>).
    let c = pitch("C", 4);
    let xml = format!(
        r#"<score-partwise version="4.0">
          <work><work-title>Evening Lanterns</work-title></work>
          <movement-title>No. 2</movement-title>
          <part-list>
            <score-part id="P1"><part-name></part-name><part-abbreviation>Mz.</part-abbreviation></score-part>
            <score-part id="P2"><part-name>Pno.</part-name></score-part>
          </part-list>
          <part id="P1"><measure number="1"><attributes><divisions>1</divisions>
            <key><fifths>-3</fifths><mode>minor</mode></key></attributes>
            <note>{c}<duration>1</duration><lyric><text>la</text></lyric></note></measure></part>
          <part id="P2"><measure number="1"><attributes><divisions>1</divisions><staves>2</staves>
            <clef number="1"><sign>G</sign><line>2</line></clef><clef number="2"><sign>F</sign><line>4</line></clef></attributes>
            <note>{c}<duration>1</duration><staff>1</staff></note></measure></part>
          <part id="P3"><measure number="1"><attributes><divisions>1</divisions>
            <clef><sign>percussion</sign></clef></attributes>
            <note><unpitched><display-step>C</display-step><display-octave>5</display-octave></unpitched><duration>1</duration></note></measure></part>
        </score-partwise>"#
    );
    let piece = read(&xml);
    assert_eq!(piece.title.as_deref(), Some("Evening Lanterns"));
    let key = piece.key.expect("a key");
    assert_eq!((key.fifths, key.mode), (-3, Mode::Minor));
    let names: Vec<(&str, PartKind)> = piece
        .parts
        .iter()
        .map(|p| (p.name.as_str(), p.kind))
        .collect();
    assert_eq!(
        names,
        vec![
            ("Mz.", PartKind::Voice),
            ("Pno.", PartKind::Accompaniment),
            ("P3", PartKind::Percussion)
        ]
    );
}

#[test]
fn score_timewise_reads_like_the_same_score_partwise() {
    // score-timewise holds the same music measure by measure (MusicXML
    // <score-timewise>); converted, it must give the same notes.
    let c = pitch("C", 4);
    let e = pitch("E", 4);
    let partwise = format!(
        r#"<score-partwise><part-list><score-part id="P1"><part-name>Alto</part-name></score-part></part-list>
          <part id="P1"><measure number="1"><attributes><divisions>1</divisions></attributes><note>{c}<duration>2</duration></note></measure>
          <measure number="2"><note>{e}<duration>2</duration></note></measure></part></score-partwise>"#
    );
    let timewise = format!(
        r#"<score-timewise><part-list><score-part id="P1"><part-name>Alto</part-name></score-part></part-list>
          <measure number="1"><part id="P1"><attributes><divisions>1</divisions></attributes><note>{c}<duration>2</duration></note></part></measure>
          <measure number="2"><part id="P1"><note>{e}<duration>2</duration></note></part></measure></score-timewise>"#
    );
    assert_eq!(read(&partwise), read(&timewise));
    assert_eq!(onsets(&read(&timewise)), vec![(0.0, 60.0), (2.0, 64.0)]);
}

#[test]
fn compressed_mxl_is_read_through_its_container() {
    // Compressed MusicXML: META-INF/container.xml names the root file
    // (MusicXML 4.0, "Compressed MusicXML files"); a decoy at the top level
    // must not be taken instead.
    let score = with_endings();
    let container = r#"<?xml version="1.0" encoding="UTF-8"?>
      <container><rootfiles><rootfile full-path="scores/piece.musicxml" media-type="application/vnd.recordare.musicxml+xml"/></rootfiles></container>"#;
    let archive = common::zip_archive(&[
        ("mimetype", b"application/vnd.recordare.musicxml".as_slice()),
        ("META-INF/container.xml", container.as_bytes()),
        ("decoy.xml", b"<score-partwise/>"),
        ("scores/piece.musicxml", score.as_bytes()),
    ]);
    let piece = read_score_bytes(Path::new("piece.mxl"), &archive, &ReadOptions::default())
        .unwrap_or_else(|error| panic!("{error}"));
    assert_eq!(piece, read(&score));

    // Without a container, the first .musicxml/.xml at the top level.
    let bare = common::zip_archive(&[("piece.musicxml", score.as_bytes())]);
    let piece = read_score_bytes(Path::new("bare.mxl"), &bare, &ReadOptions::default())
        .unwrap_or_else(|error| panic!("{error}"));
    assert_eq!(numbers(&piece), vec!["1", "2", "3", "1", "2", "4", "5"]);
}

#[test]
fn an_ending_for_passes_one_and_two_gives_three_passes() {
    // Ending "1, 2" then ending "3" (MusicXML <ending number="1, 2">): the
    // section is played three times, the shared ending twice, then the third.
    let whole = |step: &str| format!("<note>{}<duration>4</duration></note>", pitch(step, 4));
    let xml = one_part(&format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>
          <barline location="left"><repeat direction="forward"/></barline>{c}</measure>
        <measure number="2"><barline location="left"><ending number="1, 2" type="start"/></barline>{d}
          <barline location="right"><ending number="1, 2" type="stop"/><repeat direction="backward"/></barline></measure>
        <measure number="3"><barline location="left"><ending number="3" type="start"/></barline>{e}
          <barline location="right"><ending number="3" type="stop"/></barline></measure>"#,
        c = whole("C"),
        d = whole("D"),
        e = whole("E"),
    ));
    assert_eq!(numbers(&read(&xml)), vec!["1", "2", "1", "2", "1", "3"]);
}

#[test]
fn dal_segno_al_coda_jumps_to_the_segno_then_to_the_coda() {
    // <sound segno>, <sound dalsegno>, <sound tocoda>, <sound coda>
    // (MusicXML <sound>): 1 2 3 4, back to the segno at 2, play 2, jump from
    // To Coda at 2 to the coda at 5.
    let note = format!("<note>{}<duration>4</duration></note>", pitch("B", 3));
    let xml = one_part(&format!(
        r#"<measure number="1"><attributes><divisions>1</divisions></attributes>{note}</measure>
        <measure number="2"><direction><direction-type><segno/></direction-type><sound segno="s"/></direction>{note}
          <direction><direction-type><words>To Coda</words></direction-type><sound tocoda="c"/></direction></measure>
        <measure number="3">{note}</measure>
        <measure number="4">{note}<direction><direction-type><words>D.S. al Coda</words></direction-type><sound dalsegno="s"/></direction></measure>
        <measure number="5"><direction><direction-type><coda/></direction-type><sound coda="c"/></direction>{note}</measure>"#
    ));
    assert_eq!(numbers(&read(&xml)), vec!["1", "2", "3", "4", "2", "5"]);
}
