//! Worked examples for the MIDI reader. Each file is built byte by byte
//! (tests/it/smf_builder) and each expected value is worked out by hand from the
//! Standard MIDI Files 1.0 specification (MIDI Manufacturers Association,
//! 1996), cited below as "SMF 1.0":
//! - seconds = Σ ticks / PPQ × (µs per quarter) / 10⁶ over each stretch of
//!   constant tempo, 500 000 µs per quarter until the first Set Tempo;
//! - with SMPTE division, ticks per second = frames per second × ticks per frame;
//! - a note-on with velocity 0 is a note-off; time signatures nn/2^dd.

use crate::smf_builder;

use std::path::Path;

use ambit::score::{Mode, Part, PartKind, Piece, ReadOptions, ScoreError, read_score_bytes};
use smf_builder::{Track, header, smf};

fn read(bytes: &[u8]) -> Result<Piece, ScoreError> {
    read_score_bytes(Path::new("test.mid"), bytes, &ReadOptions::default())
}

fn read_ok(bytes: &[u8]) -> Piece {
    match read(bytes) {
        Ok(piece) => piece,
        Err(error) => panic!("expected a piece, got {error}"),
    }
}

/// (midi, onset s, end s) of a part's notes.
fn seconds(part: &Part) -> Vec<(f64, f64, f64)> {
    part.notes
        .iter()
        .map(|note| (note.midi, note.onset_seconds, note.end_seconds()))
        .collect()
}

fn assert_close(actual: f64, expected: f64, what: &str) {
    assert!(
        (actual - expected).abs() < 1e-9,
        "{what}: got {actual}, expected {expected}"
    );
}

#[test]
fn tempo_changes_on_any_track_make_one_tempo_map() {
    // PPQ 480. Track 1 (conductor): 500 000 µs/quarter at tick 0, 1 000 000 at
    // tick 960. Track 2 (the singer) sets 250 000 at tick 1920 itself.
    let conductor = Track::new()
        .name(0, "Evening Hymn")
        .tempo(0, 500_000)
        .tempo(960, 1_000_000)
        .end(0);
    let alto = Track::new()
        .name(0, "Alto")
        .note_on(0, 0, 60, 80)
        .note_off(480, 0, 60)
        .note_on(480, 0, 62, 80)
        .note_off(480, 0, 62)
        .tempo(480, 250_000)
        .note_on(0, 0, 64, 80)
        .note_off(480, 0, 64)
        .note_on(0, 0, 65, 80)
        .note_off(480, 0, 65)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[conductor, alto]));
    assert_eq!(piece.title.as_deref(), Some("Evening Hymn"));
    assert_eq!(piece.parts.len(), 1);
    let part = &piece.parts[0];
    assert_eq!(part.name, "Alto");
    assert_eq!(part.id, "track 2");
    // By hand (SMF 1.0 Set Tempo):
    //   tick  480 = 480/480 × 0.5 s              = 0.5 s
    //   tick  960 = 960/480 × 0.5 s              = 1.0 s
    //   tick 1440 = 1.0 + 480/480 × 1.0 s        = 2.0 s
    //   tick 1920 = 1.0 + 960/480 × 1.0 s        = 3.0 s
    //   tick 2400 = 3.0 + 480/480 × 0.25 s       = 3.25 s
    //   tick 2880 = 3.0 + 960/480 × 0.25 s       = 3.5 s
    let expected = [
        (60.0, 0.0, 0.5),
        (62.0, 1.0, 2.0),
        (64.0, 3.0, 3.25),
        (65.0, 3.25, 3.5),
    ];
    let actual = seconds(part);
    assert_eq!(actual.len(), expected.len());
    for (got, want) in actual.iter().zip(expected) {
        assert_eq!(got.0, want.0);
        assert_close(got.1, want.1, "onset");
        assert_close(got.2, want.2, "end");
    }
    // Quarters are ticks / PPQ, whatever the tempo.
    let quarters: Vec<(f64, f64)> = part
        .notes
        .iter()
        .map(|note| (note.onset_quarters, note.duration_quarters))
        .collect();
    assert_eq!(quarters, [(0.0, 1.0), (2.0, 1.0), (4.0, 1.0), (5.0, 1.0)]);
}

#[test]
fn default_tempo_is_120_per_quarter_until_the_first_set_tempo() {
    // No tempo before tick 960: 500 000 µs/quarter (SMF 1.0) → tick 960 = 1.0 s.
    // Then 600 000 µs/quarter → tick 1440 = 1.0 + 0.6 = 1.6 s.
    let track = Track::new()
        .note_on(0, 0, 67, 90)
        .tempo(960, 600_000)
        .note_off(480, 0, 67)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[track]));
    let notes = seconds(&piece.parts[0]);
    assert_close(notes[0].2, 1.6, "end of G4");
    assert!(
        piece.warnings.is_empty(),
        "a Set Tempo exists: {:?}",
        piece.warnings
    );
}

#[test]
fn note_on_with_velocity_zero_is_a_note_off() {
    // SMF 1.0 / MIDI 1.0: 9n kk 00 = note off. PPQ 96, default tempo:
    // tick 96 = 0.5 s.
    let track = Track::new()
        .note_on(0, 2, 69, 100)
        .note_on(96, 2, 69, 0)
        .end(96);
    let piece = read_ok(&smf(1, 96, &[track]));
    let note = &piece.parts[0].notes[0];
    assert_close(note.duration_seconds, 0.5, "A4 duration");
    assert_eq!(note.velocity, Some(100));
    assert_eq!(note.voice, 3, "voice = channel + 1 (channel index 2)");
    assert_eq!(note.staff, 1);
    assert!(
        !piece.warnings.iter().any(|w| w.contains("never released")),
        "the velocity-0 note-on released the note: {:?}",
        piece.warnings
    );
}

#[test]
fn overlapping_notes_of_one_pitch_pair_first_in_first_out() {
    // Two C4 note-ons (ticks 0 and 240) and two note-offs (480 and 960): the
    // first off ends the first note, the second off the second (FIFO).
    let track = Track::new()
        .note_on(0, 0, 60, 70)
        .note_on(240, 0, 60, 90)
        .note_off(240, 0, 60)
        .note_off(480, 0, 60)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[track]));
    let notes = &piece.parts[0].notes;
    assert_eq!(notes.len(), 2);
    assert_eq!(
        (notes[0].onset_quarters, notes[0].duration_quarters),
        (0.0, 1.0)
    );
    assert_eq!(notes[0].velocity, Some(70));
    assert_eq!(
        (notes[1].onset_quarters, notes[1].duration_quarters),
        (0.5, 1.5)
    );
    assert_eq!(notes[1].velocity, Some(90));
}

#[test]
fn a_note_never_released_is_dropped_with_a_warning() {
    // E4 is struck at tick 480 and never released; D4 (ticks 0–480) is a
    // whole note-on/off pair. The stray E4 is dropped (pretty_midi drops it
    // too: it makes a note only at a note-off), and a warning names it.
    let tenor = Track::new()
        .name(0, "Tenor")
        .note_on(0, 0, 62, 64)
        .note_off(480, 0, 62)
        .note_on(0, 0, 64, 64)
        .end(1440);
    let piece = read_ok(&smf(
        1,
        480,
        &[Track::new().tempo(0, 500_000).end(0), tenor],
    ));
    let notes = &piece.parts[0].notes;
    assert_eq!(notes.len(), 1, "only the released D4 is kept: {notes:?}");
    assert_eq!(notes[0].midi, 62.0);
    assert_close(notes[0].duration_seconds, 0.5, "D4 duration");
    let warning = piece
        .warnings
        .iter()
        .find(|warning| warning.contains("never released"))
        .expect("a stray-note warning");
    assert!(warning.contains("track 2"), "{warning}");
    assert!(warning.contains("E4"), "{warning}");
    assert!(warning.contains("tick 480"), "{warning}");
    assert!(warning.contains("dropped"), "{warning}");
}

#[test]
fn format_0_channels_become_parts_and_channel_10_is_skipped() {
    // One track, three channels: 0 (soprano), 1 (bass), 9 (percussion,
    // General MIDI channel 10).
    let track = Track::new()
        .name(0, "Round for Two")
        .note_on(0, 0, 72, 80)
        .note_on(0, 1, 48, 80)
        .note_on(0, 9, 36, 100)
        .note_off(480, 0, 72)
        .note_off(0, 1, 48)
        .note_off(0, 9, 36)
        .end(0);
    let piece = read_ok(&smf(0, 480, &[track]));
    assert_eq!(piece.title.as_deref(), Some("Round for Two"));
    let names: Vec<&str> = piece.parts.iter().map(|part| part.name.as_str()).collect();
    assert_eq!(names, ["Channel 1", "Channel 2"]);
    assert_eq!(piece.parts[0].notes[0].midi, 72.0);
    assert_eq!(piece.parts[1].notes[0].midi, 48.0);
    assert_eq!(piece.parts[1].notes[0].voice, 2);
    assert!(
        piece
            .warnings
            .iter()
            .any(|warning| warning.contains("channel 10") && warning.contains("1 note")),
        "{:?}",
        piece.warnings
    );
}

#[test]
fn time_signatures_number_the_measures() {
    // PPQ 480. 3/4 from tick 0 (bar = 3 quarters = 1440 ticks), 2/4 from tick
    // 2880 (start of bar 3; bar = 2 quarters). Notes at quarters 0, 3, 6, 8, 9
    // fall in bars 1, 2, 3, 4, 4.
    let conductor = Track::new()
        .time_signature(0, 3, 2)
        .time_signature(2880, 2, 2)
        .end(0);
    let onsets_ticks = [0u32, 1440, 2880, 3840, 4320];
    let mut bass = Track::new().name(0, "Bass");
    let mut previous = 0;
    for onset in onsets_ticks {
        bass = bass
            .note_on(onset - previous, 0, 43, 80)
            .note_off(240, 0, 43);
        previous = onset + 240;
    }
    let piece = read_ok(&smf(1, 480, &[conductor, bass.end(0)]));
    let measures: Vec<(&str, f64, f64)> = piece
        .measures
        .iter()
        .map(|m| (m.number.as_str(), m.onset_quarters, m.duration_quarters))
        .collect();
    assert_eq!(
        measures,
        [
            ("1", 0.0, 3.0),
            ("2", 3.0, 3.0),
            ("3", 6.0, 2.0),
            ("4", 8.0, 2.0)
        ]
    );
    // Bar 4 starts at 8 quarters = 4.0 s at the default 120 per quarter.
    assert_close(piece.measures[3].onset_seconds, 4.0, "bar 4 onset");
    let bars: Vec<&str> = piece.parts[0]
        .notes
        .iter()
        .map(|note| note.measure.as_str())
        .collect();
    assert_eq!(bars, ["1", "2", "3", "4", "4"]);
    let indices: Vec<usize> = piece.parts[0]
        .notes
        .iter()
        .map(|note| note.measure_index)
        .collect();
    assert_eq!(indices, [0, 1, 2, 3, 3]);
}

#[test]
fn a_time_signature_inside_a_bar_cuts_it_short() {
    // 4/4 by default (SMF 1.0); a 3/4 at quarter 2 (tick 960) ends bar 1 after
    // 2 quarters, and bar 2 (3/4) starts there.
    let track = Track::new()
        .note_on(0, 0, 60, 80)
        .time_signature(960, 3, 2)
        .note_off(1440, 0, 60)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[track]));
    let measures: Vec<(f64, f64)> = piece
        .measures
        .iter()
        .map(|m| (m.onset_quarters, m.duration_quarters))
        .collect();
    assert_eq!(measures, [(0.0, 2.0), (2.0, 3.0)]);
}

#[test]
fn smpte_timing_gives_seconds_directly_and_quarters_through_the_tempo_map() {
    // Division 0xE728: high byte −25 (25 frames/s), 40 ticks per frame →
    // 1000 ticks per second (SMF 1.0 "Header Chunks").
    // C5 from tick 500 to 1500 → 0.5 s to 1.5 s.
    // Quarters: 120 per quarter until a Set Tempo of 1 000 000 µs at tick 1000
    // (1.0 s): 0.5 s → 1.0 q, 1.0 s → 2.0 q, 1.5 s → 2.0 + 0.5/1.0 = 2.5 q.
    let track = Track::new()
        .note_on(500, 0, 72, 80)
        .tempo(500, 1_000_000)
        .note_off(500, 0, 72)
        .end(0);
    let mut bytes = header(1, 1, 0xE728);
    bytes.extend(track.chunk());
    let piece = read_ok(&bytes);
    let note = &piece.parts[0].notes[0];
    assert_close(note.onset_seconds, 0.5, "onset seconds");
    assert_close(note.end_seconds(), 1.5, "end seconds");
    assert_close(note.onset_quarters, 1.0, "onset quarters");
    assert_close(note.end_quarters(), 2.5, "end quarters");
    assert!(
        piece
            .warnings
            .iter()
            .any(|warning| warning.contains("SMPTE")),
        "{:?}",
        piece.warnings
    );
}

#[test]
fn format_2_is_rejected_with_a_clear_message() {
    let bytes = smf(2, 480, &[Track::new().note_on(0, 0, 60, 80).end(0)]);
    let error = read(&bytes).expect_err("format 2 is not read");
    let message = error.to_string();
    assert!(matches!(error, ScoreError::Unsupported { .. }), "{message}");
    assert!(message.contains("test.mid"), "{message}");
    assert!(message.contains("format 2"), "{message}");
    assert!(message.contains("byte 8"), "{message}");
}

#[test]
fn a_zero_tempo_names_the_track_the_tick_and_the_byte() {
    // The Set Tempo sits in track 2 at tick 960. Track 1's chunk is 8 + 4 bytes
    // (delta 0, FF 2F 00) after the 14-byte header: track 2's data starts at
    // byte 14 + 12 + 8 = 34, and the tempo event follows the note-on (4 bytes)
    // → byte 38.
    let first = Track::new().end(0);
    let second = Track::new()
        .note_on(0, 0, 60, 80)
        .tempo(960, 0)
        .note_off(0, 0, 60)
        .end(0);
    let error = read(&smf(1, 480, &[first, second])).expect_err("zero tempo");
    let message = error.to_string();
    assert!(message.contains("test.mid"), "{message}");
    assert!(message.contains("track 2"), "{message}");
    assert!(message.contains("tick 960"), "{message}");
    assert!(message.contains("byte 38"), "{message}");
}

#[test]
fn key_title_and_part_names_come_from_meta_events() {
    // FF 59 sf=-3 mi=1: three flats, minor (C minor).
    let conductor = Track::new()
        .name(0, "Lantern Song")
        .key_signature(0, -3, true)
        .key_signature(960, 2, false)
        .end(0);
    let named = Track::new()
        .name(0, "Soprano")
        .note_on(0, 0, 72, 80)
        .note_off(480, 0, 72)
        .end(0);
    let instrument_only = Track::new()
        .instrument(0, "Choir Aahs")
        .note_on(0, 1, 60, 80)
        .note_off(480, 1, 60)
        .end(0);
    let nameless = Track::new()
        .note_on(0, 2, 48, 80)
        .note_off(480, 2, 48)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[conductor, named, instrument_only, nameless]));
    assert_eq!(piece.title.as_deref(), Some("Lantern Song"));
    let key = piece.key.expect("a key signature");
    assert_eq!((key.fifths, key.mode), (-3, Mode::Minor));
    let names: Vec<(&str, &str)> = piece
        .parts
        .iter()
        .map(|part| (part.name.as_str(), part.id.as_str()))
        .collect();
    assert_eq!(
        names,
        [
            ("Soprano", "track 2"),
            ("Choir Aahs", "track 3"),
            ("Track 4", "track 4")
        ]
    );
}

#[test]
fn notes_are_sorted_by_onset_then_pitch() {
    // Written out of order: G4 then C4 at tick 0, E4 at tick 0 on another channel.
    let track = Track::new()
        .note_on(0, 0, 67, 80)
        .note_on(0, 0, 60, 80)
        .note_on(0, 1, 64, 80)
        .note_off(480, 0, 67)
        .note_off(0, 0, 60)
        .note_off(0, 1, 64)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[track]));
    let pitches: Vec<f64> = piece.parts[0].notes.iter().map(|note| note.midi).collect();
    assert_eq!(pitches, [60.0, 64.0, 67.0]);
}

#[test]
fn a_note_on_and_off_at_the_same_tick_is_dropped() {
    // Zero length: nothing is sung. pretty_midi drops such notes too.
    let track = Track::new()
        .note_on(0, 0, 60, 80)
        .note_off(0, 0, 60)
        .note_on(0, 0, 62, 80)
        .note_off(480, 0, 62)
        .end(0);
    let piece = read_ok(&smf(1, 480, &[track]));
    let pitches: Vec<f64> = piece.parts[0].notes.iter().map(|note| note.midi).collect();
    assert_eq!(pitches, [62.0]);
}

#[test]
fn a_riff_rmid_wrapper_is_unwrapped() {
    // RIFF <size> "RMID" "data" <size> <SMF> (little-endian sizes, RIFF/RMID).
    let inner = smf(
        1,
        480,
        &[Track::new()
            .note_on(0, 0, 65, 80)
            .note_off(960, 0, 65)
            .end(0)],
    );
    let mut bytes = b"RIFF".to_vec();
    bytes.extend((4 + 8 + inner.len() as u32).to_le_bytes());
    bytes.extend_from_slice(b"RMIDdata");
    bytes.extend((inner.len() as u32).to_le_bytes());
    bytes.extend_from_slice(&inner);
    let piece = read_ok(&bytes);
    assert_close(piece.parts[0].notes[0].duration_seconds, 1.0, "F4 duration");
}

#[test]
fn a_piano_track_of_chords_is_accompaniment_and_a_divisi_voice_is_not() {
    // General MIDI program 1 (Acoustic Grand Piano, index 0) playing
    // three-note chords: accompaniment. The same program on a two-note
    // divisi: a voice part (common practice: choir parts are often played
    // with a piano sound).
    let mut piano = Track::new().name(0, "Right hand").program(0, 0, 0);
    let mut divisi = Track::new().name(0, "Soprano").program(0, 1, 0);
    for _ in 0..4 {
        piano = piano
            .note_on(0, 0, 60, 70)
            .note_on(0, 0, 64, 70)
            .note_on(0, 0, 67, 70)
            .note_off(480, 0, 60)
            .note_off(0, 0, 64)
            .note_off(0, 0, 67);
        divisi = divisi
            .note_on(0, 1, 72, 70)
            .note_on(0, 1, 76, 70)
            .note_off(480, 1, 72)
            .note_off(0, 1, 76);
    }
    let piece = read_ok(&smf(1, 480, &[piano.end(0), divisi.end(0)]));
    let kinds: Vec<PartKind> = piece.parts.iter().map(|part| part.kind).collect();
    assert_eq!(kinds, [PartKind::Accompaniment, PartKind::Voice]);
    assert_eq!(piece.voice_parts().count(), 1);
}
