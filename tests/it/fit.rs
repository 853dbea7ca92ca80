//! Fit, section mapping and transposition as worked examples: every expected
//! value is computed by hand in the comments from the formula in
//! docs/METHODS.md ("Fit"), or comes from a fact of the trade (marked).

use ambit::fit::{
    FitConfig, FitTerms, SectionFitConfig, fit_figure, fit_profile, notes_fit, part_fit,
    profile_notes, section_fit_matrix,
};
use ambit::roster::{Roster, Singer};
use ambit::score::{KeySignature, Measure, Mode, Note, Part, PartKind, Piece};
use ambit::sections::{
    Layout, LineRole, MappingConfig, MappingError, PartOverride, Recognised, SectionSings, Voice,
    map_piece, recognise_part_name,
};
use ambit::transpose::{
    TransposeConfig, TransposeError, choir_keys, interval_name, key_name, soloist_keys,
    transposed_key,
};
use proptest::prelude::*;

/// Two-second bars (4/4 at ♩ = 120), numbered from 1.
fn measures(count: usize) -> Vec<Measure> {
    (0..count)
        .map(|index| Measure {
            number: (index + 1).to_string(),
            onset_seconds: 2.0 * index as f64,
            onset_quarters: 4.0 * index as f64,
            duration_quarters: 4.0,
        })
        .collect()
}

fn note(onset_seconds: f64, duration_seconds: f64, midi: f64) -> Note {
    Note {
        onset_seconds,
        duration_seconds,
        onset_quarters: onset_seconds * 2.0,
        duration_quarters: duration_seconds * 2.0,
        midi,
        measure_index: (onset_seconds / 2.0).floor().max(0.0) as usize,
        measure: ((onset_seconds / 2.0).floor().max(0.0) as usize + 1).to_string(),
        voice: 1,
        staff: 1,
        dynamic: None,
        velocity: None,
        tied_from_previous: false,
        grace: false,
    }
}

fn part(name: &str, notes: Vec<Note>) -> Part {
    Part {
        name: name.to_string(),
        id: name.to_string(),
        kind: PartKind::Voice,
        notes,
    }
}

fn piece(title: &str, parts: Vec<Part>) -> Piece {
    Piece {
        title: Some(title.to_string()),
        parts,
        measures: measures(40),
        key: None,
        warnings: Vec::new(),
    }
}

fn singer(name: &str, range: (f64, f64), comfort: (f64, f64)) -> Singer {
    Singer {
        name: name.to_string(),
        range_low_midi: range.0,
        range_high_midi: range.1,
        comfort_low_midi: comfort.0,
        comfort_high_midi: comfort.1,
        primo_midi: None,
        secondo_midi: None,
        voice_type: None,
        section: None,
        notes: None,
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() < 1e-9
}

// ---------------------------------------------------------------- fit

/// Range G3–G5 (55–79), comfort C4–D5 (60–74).
fn example_singer() -> Singer {
    singer("Ilse Marwick", (55.0, 79.0), (60.0, 74.0))
}

/// The worked example:
/// 1. 0–2 s   G4 (67)  inside
/// 2. 2–4 s   C5 (72)  inside
/// 3. 4–6 s   E5 (76)  2 above comfort
/// 4. 6.5–7.5 F5 (77)  3 above
/// 5. 7.5–8.5 A♯3 (58) 2 below
/// 6. 10–11 s G♯5 (80) 6 above, 1 beyond the range
fn example_notes() -> Vec<Note> {
    vec![
        note(0.0, 2.0, 67.0),
        note(2.0, 2.0, 72.0),
        note(4.0, 2.0, 76.0),
        note(6.5, 1.0, 77.0),
        note(7.5, 1.0, 58.0),
        note(10.0, 1.0, 80.0),
    ]
}

#[test]
fn worked_example_figures() {
    let singer = example_singer();
    let example = piece("Example", vec![part("Soprano", example_notes())]);
    let fit = part_fit(&singer, &example, &example.parts[0], &FitConfig::default());
    // Sung 2+2+2+1+1+1 = 9 s; outside: above 2+1+1 = 4 s, below 1 s.
    assert!(close(fit.sung_seconds, 9.0));
    assert!(close(fit.above_comfort_seconds, 4.0));
    assert!(close(fit.below_comfort_seconds, 1.0));
    assert!(close(fit.outside_comfort_share, 5.0 / 9.0));
    // Semitone-seconds: 2·2 + 1·3 + 1·2 + 1·6 = 15; per sung second 15/9.
    assert!(close(fit.outside_semitone_seconds, 15.0));
    assert!(close(fit.severity_semitones, 15.0 / 9.0));
    // Only G♯5 lies beyond the range top G5: 1 s.
    assert!(close(fit.beyond_range_seconds, 1.0));
    assert!(fit.beyond_range);
    // High stretch: E5 4–6 s and F5 6.5–7.5 s are 0.5 s apart (< 1 s breath),
    // the A♯3 between does not break it: 4 → 7.5 = 3.5 s; G♯5 starts 2.5 s later.
    assert!(close(fit.longest_high_stretch_seconds, 3.5));
    // Reserves (Herbst et al. 2012): upper 79 − 80 = −1, lower 58 − 55 = 3.
    assert_eq!(fit.upper_reserve_semitones, Some(-1.0));
    assert_eq!(fit.lower_reserve_semitones, Some(3.0));
    assert_eq!(fit.passaggio_seconds, 0.0);
    assert!(!fit.passaggio_known);
    // fit = 100·exp(−(1.5·5/9 + 0.5·15/(4+10) + 5·1/(4+10) + 0.4·3.5/(3.5+30)))
    //     = 100·exp(−(0.83333 + 0.53571 + 0.35714 + 0.04179)) = 17.07
    let expected =
        100.0 * (-(1.5 * 5.0 / 9.0 + 0.5 * 15.0 / 14.0 + 5.0 / 14.0 + 0.4 * 3.5 / 33.5f64)).exp();
    assert!(close(fit.fit, expected), "{} vs {expected}", fit.fit);
    assert!((fit.fit - 17.07).abs() < 0.01);
}

#[test]
fn worked_example_worst_passage() {
    // 6-s windows starting at each outside onset, semitone-seconds inside:
    //   4.0 s: E5 4 + F5 3 + A♯3 2 = 9     6.5 s: F5 3 + A♯3 2 + G♯5 6 = 11
    //   7.5 s: 2 + 6 = 8                   10 s: 6
    // The best is 6.5–11 s (bars 4–6 of 2-s bars); every other overlaps it.
    let singer = example_singer();
    let example = piece("Example", vec![part("Soprano", example_notes())]);
    let fit = part_fit(&singer, &example, &example.parts[0], &FitConfig::default());
    assert_eq!(fit.worst_passages.len(), 1, "{:?}", fit.worst_passages);
    let passage = &fit.worst_passages[0];
    assert_eq!(passage.bars, "4–6");
    assert!(close(passage.start_seconds, 6.5));
    assert!(close(passage.end_seconds, 11.0));
    assert!(close(passage.outside_semitone_seconds, 11.0));
    assert_eq!(passage.side, "above");
}

#[test]
fn passaggio_load_counts_time_within_a_semitone() {
    // Secondo at C5 (72): only the C5 note (2 s) lies within ±1 semitone.
    // It is inside the comfort zone, so the formula adds 0.25·2/9.
    let mut singer = example_singer();
    singer.secondo_midi = Some(72.0);
    let example = piece("Example", vec![part("Soprano", example_notes())]);
    let fit = notes_fit(
        &singer,
        &example,
        &example.parts[0].notes,
        &FitConfig::default(),
    );
    assert!(close(fit.passaggio_seconds, 2.0));
    assert!(close(fit.passaggio_share, 2.0 / 9.0));
    let expected = 100.0
        * (-(1.5 * 5.0 / 9.0
            + 0.5 * 15.0 / 14.0
            + 5.0 / 14.0
            + 0.25 * 2.0 / 9.0
            + 0.4 * 3.5 / 33.5f64))
            .exp();
    assert!(close(fit.fit, expected), "{} vs {expected}", fit.fit);
}

#[test]
fn a_part_inside_the_comfort_zone_fits_perfectly_and_grace_notes_take_no_time() {
    // All notes within C4–D5; a grace note at E5 sounds for no time: it
    // changes no seconds but the part's highest note (reserve 79 − 76 = 3).
    let mut notes = vec![note(0.0, 1.0, 60.0), note(1.0, 1.0, 74.0)];
    let mut grace = note(1.0, 0.0, 76.0);
    grace.grace = true;
    notes.push(grace);
    let example = piece("Example", vec![part("Soprano", notes)]);
    let fit = part_fit(
        &example_singer(),
        &example,
        &example.parts[0],
        &FitConfig::default(),
    );
    assert!(close(fit.sung_seconds, 2.0));
    assert_eq!(fit.outside_comfort_seconds, 0.0);
    assert!(close(fit.fit, 100.0));
    assert_eq!(fit.upper_reserve_semitones, Some(3.0));
    assert!(fit.worst_passages.is_empty());
}

#[test]
fn ties_merge_into_one_stretch() {
    // Two tied halves of a held E5 (4–5 s, 5–6 s) make one 2-s stretch.
    let mut second = note(5.0, 1.0, 76.0);
    second.tied_from_previous = true;
    let profile = profile_notes(&[note(4.0, 1.0, 76.0), second], &FitConfig::default());
    let fit = fit_profile(&example_singer(), &profile, 0, &FitConfig::default());
    assert!(close(fit.longest_high_stretch_seconds, 2.0));
}

#[test]
fn empty_part_fits_trivially() {
    let terms = FitTerms {
        sung_seconds: 0.0,
        outside_seconds: 0.0,
        outside_semitone_seconds: 0.0,
        beyond_range_seconds: 0.0,
        passaggio_inside_seconds: 0.0,
        longest_high_stretch_seconds: 0.0,
    };
    assert_eq!(fit_figure(&terms, &FitConfig::default()), 100.0);
}

// ------------------------------------------------ monotonicity (proptest)

fn fit_of(singer: &Singer, notes: &[Note]) -> f64 {
    let config = FitConfig::default();
    fit_profile(singer, &profile_notes(notes, &config), 0, &config).fit
}

prop_compose! {
    fn arbitrary_notes()(raw in prop::collection::vec((0.0f64..3.0, 0.05f64..4.0, 40.0f64..90.0), 1..30))
        -> Vec<Note> {
        let mut onset = 0.0;
        raw.into_iter().map(|(gap, duration, midi)| {
            onset += gap;
            let made = note(onset, duration, midi.round());
            onset += duration;
            made
        }).collect()
    }
}

prop_compose! {
    fn arbitrary_singer()(low in 40.0f64..70.0, span in 6.0f64..30.0, inset_low in 0.0f64..5.0,
                          inset_high in 0.0f64..5.0, passaggio in prop::option::of(45.0f64..85.0))
        -> Singer {
        let mut made = singer("Proptest Singer", (low, low + span + 10.0),
            (low + inset_low, low + span + 10.0 - inset_high));
        made.secondo_midi = passaggio;
        made
    }
}

proptest! {
    /// Moving any note further from the comfort zone never raises fit.
    #[test]
    fn moving_a_note_further_outside_never_raises_fit(
        notes in arbitrary_notes(), singer in arbitrary_singer(),
        pick in 0usize..1000, delta in prop_oneof![0.001f64..0.5, 0.01f64..12.0],
        upward in any::<bool>(), passaggio_on_note in prop::option::of(-1.0f64..=1.0),
    ) {
        let mut singer = singer;
        let index = pick % notes.len();
        // Often put a passaggio on the moved note itself: the case where
        // leaving the comfort zone also leaves a passaggio band.
        if let Some(offset) = passaggio_on_note {
            singer.primo_midi = Some(notes[index].midi + offset);
            singer.secondo_midi = None;
        }
        let before = fit_of(&singer, &notes);
        let mut moved = notes.clone();
        let midi = moved[index].midi;
        moved[index].midi = if midi > singer.comfort_high_midi {
            midi + delta
        } else if midi < singer.comfort_low_midi {
            midi - delta
        } else if upward {
            singer.comfort_high_midi + delta
        } else {
            singer.comfort_low_midi - delta
        };
        let after = fit_of(&singer, &moved);
        prop_assert!(after <= before + 1e-9, "fit rose from {before} to {after}");
    }

    /// Adding time outside the comfort zone (a new note, or a longer note
    /// already outside) never raises fit.
    #[test]
    fn adding_time_outside_never_raises_fit(
        notes in arbitrary_notes(), singer in arbitrary_singer(),
        onset in 0.0f64..60.0, duration in 0.05f64..6.0, beyond in 0.01f64..12.0,
        upward in any::<bool>(), lengthen in any::<bool>(), pick in 0usize..1000,
    ) {
        let before = fit_of(&singer, &notes);
        let mut more = notes.clone();
        let outside: Vec<usize> = (0..notes.len())
            .filter(|&i| notes[i].midi > singer.comfort_high_midi || notes[i].midi < singer.comfort_low_midi)
            .collect();
        if lengthen && !outside.is_empty() {
            let index = outside[pick % outside.len()];
            more[index].duration_seconds += duration;
        } else {
            let midi = if upward {
                singer.comfort_high_midi + beyond
            } else {
                singer.comfort_low_midi - beyond
            };
            more.push(note(onset, duration, midi));
        }
        let after = fit_of(&singer, &more);
        prop_assert!(after <= before + 1e-9, "fit rose from {before} to {after}");
    }
}

// ------------------------------------------------------ facts of the trade

/// An original four-part phrase in C major, one chord a second, written in
/// the usual SATB spacing (soprano C5–G5 at the top, bass down to G2).
fn chorale() -> Piece {
    // (S, A, T, B) per chord.
    let chords: [(f64, f64, f64, f64); 12] = [
        (72.0, 67.0, 64.0, 48.0),
        (69.0, 65.0, 60.0, 53.0),
        (71.0, 67.0, 62.0, 55.0),
        (72.0, 67.0, 64.0, 48.0),
        (76.0, 69.0, 64.0, 57.0),
        (74.0, 69.0, 65.0, 50.0),
        (74.0, 65.0, 59.0, 43.0),
        (72.0, 64.0, 60.0, 48.0),
        (77.0, 72.0, 65.0, 53.0),
        (79.0, 71.0, 67.0, 55.0),
        (76.0, 67.0, 64.0, 52.0),
        (72.0, 67.0, 64.0, 48.0),
    ];
    let line = |pick: fn(&(f64, f64, f64, f64)) -> f64| -> Vec<Note> {
        chords
            .iter()
            .enumerate()
            .map(|(index, chord)| note(index as f64, 1.0, pick(chord)))
            .collect()
    };
    piece(
        "Chorale in C",
        vec![
            part("Soprano", line(|c| c.0)),
            part("Alto", line(|c| c.1)),
            part("Tenor", line(|c| c.2)),
            part("Bass", line(|c| c.3)),
        ],
    )
}

/// Typical choral comfort zones and ranges, from memory (common practice in
/// choral handbooks; not a cited table): soprano comfort F4–G5, range C4–C6;
/// alto A3–C5, range F3–F5; tenor D3–G4, range B2–B4; bass G2–C4, range E2–E4.
fn typical_choir() -> Roster {
    Roster {
        singers: vec![
            singer("Typical soprano", (60.0, 84.0), (65.0, 79.0)),
            singer("Typical alto", (53.0, 77.0), (57.0, 72.0)),
            singer("Typical tenor", (47.0, 71.0), (50.0, 67.0)),
            singer("Typical bass", (40.0, 64.0), (43.0, 60.0)),
        ],
    }
}

#[test]
fn typical_voices_fit_their_own_sections_best() {
    // Facts of the trade (from memory, common practice): a typical soprano
    // sits best in the soprano part, an alto in the alto part, and so on.
    let layout = Layout::parse("SATB").unwrap();
    let matrix = section_fit_matrix(
        &typical_choir(),
        &[chorale()],
        &layout,
        &SectionFitConfig::default(),
    )
    .unwrap();
    assert_eq!(matrix.sections, ["S", "A", "T", "B"]);
    for (row, fits) in matrix.fit.iter().enumerate() {
        let own = fits[row].unwrap();
        for (column, other) in fits.iter().enumerate() {
            assert!(
                own >= other.unwrap(),
                "{} fits {} ({other:?}) better than their own section ({own})",
                matrix.singers[row],
                matrix.sections[column]
            );
        }
    }
    // And strictly better than the neighbouring section on the far side:
    // the alto part's E4 lies below the soprano's F4; the soprano part's
    // E5–G5 above the alto's C5; the bass part's G2–C3 below the tenor's D3;
    // the tenor part's D4–G4 above the bass's C4.
    let fit = |singer: usize, section: usize| matrix.fit[singer][section].unwrap();
    assert!(fit(0, 0) > fit(0, 1));
    assert!(fit(1, 1) > fit(1, 0));
    assert!(fit(2, 2) > fit(2, 3));
    assert!(fit(3, 3) > fit(3, 2));
}

// ------------------------------------------------------- section mapping

#[test]
fn part_names_in_four_languages() {
    // Choral part names as printed in English, German, Italian and French
    // scores (common practice).
    let line = |voice, number| Recognised::Line { voice, number };
    let cases = [
        ("Soprano", line(Voice::Soprano, None)),
        ("Sopran", line(Voice::Soprano, None)),
        ("Sopr. 1", line(Voice::Soprano, Some(1))),
        ("Soprano II", line(Voice::Soprano, Some(2))),
        ("S1", line(Voice::Soprano, Some(1))),
        ("Dessus", line(Voice::Soprano, None)),
        ("Alt", line(Voice::Alto, None)),
        ("Contralto", line(Voice::Alto, None)),
        ("Alto 2", line(Voice::Alto, Some(2))),
        ("Haute-contre", line(Voice::Alto, None)),
        ("Ténor", line(Voice::Tenor, None)),
        ("Tenore I", line(Voice::Tenor, Some(1))),
        ("Taille", line(Voice::Tenor, None)),
        ("T", line(Voice::Tenor, None)),
        ("Basso", line(Voice::Bass, None)),
        ("Basse", line(Voice::Bass, None)),
        ("Bariton", line(Voice::Bass, None)),
        ("Baritone 2", line(Voice::Bass, Some(2))),
        ("Bass 1st", line(Voice::Bass, Some(1))),
        ("Piano", Recognised::Excluded),
        ("Soprano Solo", Recognised::Excluded),
        ("Orgel", Recognised::Excluded),
        ("Voice 3", Recognised::Unknown),
        ("Choir A", Recognised::Unknown),
    ];
    for (name, expected) in cases {
        assert_eq!(recognise_part_name(name), expected, "{name}");
    }
}

#[test]
fn layouts_parse_from_letters_and_lists() {
    assert_eq!(
        Layout::parse("SSAATTBB").unwrap().labels(),
        ["S1", "S2", "A1", "A2", "T1", "T2", "B1", "B2"]
    );
    assert_eq!(
        Layout::parse("SATB").unwrap().labels(),
        ["S", "A", "T", "B"]
    );
    assert_eq!(Layout::parse("SSA").unwrap().labels(), ["S1", "S2", "A"]);
    assert_eq!(Layout::parse("SAB").unwrap().labels(), ["S", "A", "B"]);
    assert_eq!(
        Layout::parse("TTBB").unwrap().labels(),
        ["T1", "T2", "B1", "B2"]
    );
    assert_eq!(
        Layout::parse("S1,S2,A,T,B").unwrap().labels(),
        ["S1", "S2", "A", "T", "B"]
    );
    assert!(Layout::parse("SATX").is_err());
    assert!(Layout::parse("S1,S1,A").is_err());
    assert!(Layout::parse("").is_err());
}

fn sings_label(sings: &SectionSings) -> String {
    match sings {
        SectionSings::Line { line } => line.label.clone(),
        SectionSings::Divisi { upper, lower } => format!("{} / {}", upper.label, lower.label),
        SectionSings::Tacet => "tacet".into(),
    }
}

#[test]
fn satb_piece_on_an_eight_section_choir_doubles_each_part() {
    let layout = Layout::parse("SSAATTBB").unwrap();
    let mapping = map_piece(&chorale(), 0, &layout, &MappingConfig::default()).unwrap();
    let labels: Vec<String> = mapping
        .sections
        .iter()
        .map(|(_, s)| sings_label(s))
        .collect();
    assert_eq!(
        labels,
        [
            "Soprano", "Soprano", "Alto", "Alto", "Tenor", "Tenor", "Bass", "Bass"
        ]
    );
}

#[test]
fn divided_parts_on_an_undivided_layout_become_a_divisi() {
    // Two written soprano parts for one S section: a divisi of written parts.
    let mut parts = chorale().parts;
    let mut second = parts[0].clone();
    second.name = "Soprano II".into();
    parts[0].name = "Soprano I".into();
    parts.insert(1, second);
    let mapping = map_piece(
        &piece("Eight", parts),
        0,
        &Layout::parse("SATB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap();
    assert_eq!(
        sings_label(&mapping.sections[0].1),
        "Soprano I / Soprano II"
    );
}

#[test]
fn chords_in_one_part_are_split_into_upper_and_lower_lines() {
    // A tenor part with a two-note chord at 1–2 s divides (tessitura::split_divisi).
    let tenor = part(
        "Tenor",
        vec![
            note(0.0, 1.0, 60.0),
            note(1.0, 1.0, 64.0),
            note(1.0, 1.0, 67.0),
            note(2.0, 1.0, 62.0),
        ],
    );
    let mut satb = chorale();
    satb.parts[2] = tenor;
    let mapping = map_piece(
        &satb,
        0,
        &Layout::parse("SATB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap();
    let SectionSings::Divisi { upper, lower } = &mapping.sections[2].1 else {
        panic!("tenor should divide: {:?}", mapping.sections[2].1);
    };
    assert_eq!((upper.role, lower.role), (LineRole::Upper, LineRole::Lower));
    assert!(upper.part.notes.iter().any(|n| n.midi == 67.0));
    assert!(lower.part.notes.iter().any(|n| n.midi == 64.0));
    // On an eight-section layout the T1 section takes the upper line, T2 the lower.
    let mapping = map_piece(
        &satb,
        0,
        &Layout::parse("SSAATTBB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap();
    let roles: Vec<LineRole> = mapping.sections[4..6]
        .iter()
        .map(|(_, sings)| match sings {
            SectionSings::Line { line } => line.role,
            other => panic!("{other:?}"),
        })
        .collect();
    assert_eq!(roles, [LineRole::Upper, LineRole::Lower]);
}

#[test]
fn accompaniment_is_excluded_and_unnamed_parts_map_by_order() {
    let mut parts: Vec<Part> = chorale().parts;
    for (index, part) in parts.iter_mut().enumerate() {
        part.name = format!("Track {}", index + 1);
    }
    let mut piano = part("Piano", vec![note(0.0, 4.0, 36.0)]);
    piano.kind = PartKind::Accompaniment;
    parts.push(piano);
    let mapping = map_piece(
        &piece("Tracks", parts),
        0,
        &Layout::parse("SATB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap();
    let labels: Vec<String> = mapping
        .sections
        .iter()
        .map(|(_, s)| sings_label(s))
        .collect();
    assert_eq!(labels, ["Track 1", "Track 2", "Track 3", "Track 4"]);
    assert_eq!(mapping.excluded.len(), 1);
    assert!(mapping.notes[0].contains("score order"));
}

#[test]
fn unmappable_pieces_name_the_piece_and_the_part() {
    // An SATB piece for a TTBB choir: the soprano part has no section.
    let error = map_piece(
        &chorale(),
        0,
        &Layout::parse("TTBB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap_err();
    assert!(matches!(error, MappingError::UnmappedPart { .. }));
    let message = error.to_string();
    assert!(
        message.contains("Chorale in C") && message.contains("`Soprano`"),
        "{message}"
    );
    // A named part beside an unnamed one cannot be guessed.
    let mut parts = chorale().parts;
    parts[1].name = "Voice 2".into();
    let error = map_piece(
        &piece("Mixed", parts.clone()),
        0,
        &Layout::parse("SATB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap_err();
    assert!(error.to_string().contains("`Voice 2`"), "{error}");
    // … unless an override says what it is.
    let config = MappingConfig {
        overrides: vec![PartOverride {
            piece: None,
            part: "Voice 2".into(),
            line: Some("A".into()),
        }],
        ignore_divisi: false,
    };
    let mapping = map_piece(
        &piece("Mixed", parts),
        0,
        &Layout::parse("SATB").unwrap(),
        &config,
    )
    .unwrap();
    assert_eq!(sings_label(&mapping.sections[1].1), "Voice 2");
}

#[test]
fn sections_without_a_line_are_tacet() {
    // An SA piece sung by an SATB choir: the men rest.
    let parts = chorale().parts.into_iter().take(2).collect();
    let mapping = map_piece(
        &piece("Upper voices", parts),
        0,
        &Layout::parse("SATB").unwrap(),
        &MappingConfig::default(),
    )
    .unwrap();
    assert_eq!(mapping.sections[2].1, SectionSings::Tacet);
    assert_eq!(mapping.sections[3].1, SectionSings::Tacet);
}

#[test]
fn programme_fit_is_the_sung_time_weighted_mean() {
    // Piece one: 2 s of C4 for S (inside → 100). Piece two: 6 s of A5 (81),
    // 3 above comfort top F#5 (78), inside the range (to C6).
    // Piece-two fit = 100·exp(−(1.5·1 + 0.5·18/(0+10) + 0.4·6/(6+30))) = 100·exp(−2.46667).
    // Programme: (2·100 + 6·f2) / 8.
    let soprano = singer("Ada Lindqvist", (55.0, 84.0), (60.0, 78.0));
    let one = piece("One", vec![part("Soprano", vec![note(0.0, 2.0, 60.0)])]);
    let two = piece("Two", vec![part("Soprano", vec![note(0.0, 6.0, 81.0)])]);
    let roster = Roster {
        singers: vec![soprano],
    };
    let matrix = section_fit_matrix(
        &roster,
        &[one, two],
        &Layout::parse("S").unwrap(),
        &SectionFitConfig::default(),
    )
    .unwrap();
    let two_fit = 100.0 * (-(1.5 + 0.5 * 18.0 / 10.0 + 0.4 * 6.0 / 36.0f64)).exp();
    let expected = (2.0 * 100.0 + 6.0 * two_fit) / 8.0;
    assert!(
        close(matrix.fit[0][0].unwrap(), expected),
        "{:?} vs {expected}",
        matrix.fit[0][0]
    );
    // Programme share above comfort: 6 of 8 s.
    assert!(close(matrix.details[0][0].above_comfort_share, 0.75));
}

#[test]
fn exclusions_and_beyond_range_policy_give_none() {
    use ambit::fit::{BeyondRangePolicy, Exclusion};
    let roster = typical_choir();
    let layout = Layout::parse("SATB").unwrap();
    let config = SectionFitConfig {
        beyond_range: BeyondRangePolicy::NotAllowed,
        exclusions: vec![Exclusion {
            singer: "Typical alto".into(),
            section: "T".into(),
        }],
        ..SectionFitConfig::default()
    };
    let matrix = section_fit_matrix(&roster, &[chorale()], &layout, &config).unwrap();
    // The bass's range tops at E4 (64); the soprano part reaches G5: not allowed.
    assert_eq!(matrix.fit[3][0], None);
    assert!(
        matrix.details[3][0]
            .not_allowed
            .as_deref()
            .unwrap()
            .contains("beyond range")
    );
    assert_eq!(matrix.fit[1][2], None);
    assert_eq!(
        matrix.details[1][2].not_allowed.as_deref(),
        Some("excluded by the director")
    );
    assert!(matrix.fit[1][1].is_some());
}

// --------------------------------------------------------- transposition

#[test]
fn key_names_follow_the_circle_of_fifths() {
    // Circle of fifths (music theory, common practice): a semitone up adds
    // seven sharps modulo twelve; the simpler spelling wins.
    let key = |fifths, mode| KeySignature { fifths, mode };
    let name = |k: KeySignature, shift| key_name(transposed_key(k, shift));
    assert_eq!(key_name(key(-3, Mode::Major)), "E♭ major");
    assert_eq!(name(key(-3, Mode::Major), 2), "F major");
    assert_eq!(name(key(-3, Mode::Major), -3), "C major");
    assert_eq!(name(key(2, Mode::Major), 4), "F♯ major");
    assert_eq!(name(key(0, Mode::Major), 6), "F♯ major");
    assert_eq!(name(key(0, Mode::Major), -6), "G♭ major");
    assert_eq!(name(key(0, Mode::Minor), 1), "B♭ minor");
    assert_eq!(name(key(1, Mode::Minor), -2), "D minor");
    assert_eq!(name(key(0, Mode::Major), 1), "D♭ major");
    assert_eq!(key_name(key(3, Mode::Other)), "3 sharps");
    assert_eq!(interval_name(-2), "down a major second");
    assert_eq!(interval_name(5), "up a perfect fourth");
    assert_eq!(interval_name(0), "as written");
}

#[test]
fn soloist_gets_the_smallest_move_into_the_comfort_zone() {
    // Comfort C4–C5 (60–72); the song spans B♭4–D5 (70–74). Every shift from
    // −2 down to −6 puts it wholly inside (74−2 = 72) and scores 100; the
    // smallest move wins: down a major second.
    let student = singer("Pia Stoltz", (55.0, 79.0), (60.0, 72.0));
    let mut song = piece(
        "Song",
        vec![part(
            "Voice",
            vec![note(0.0, 2.0, 70.0), note(2.0, 2.0, 74.0)],
        )],
    );
    song.key = Some(KeySignature {
        fifths: -1,
        mode: Mode::Major,
    });
    let advice = soloist_keys(
        &student,
        &song,
        "Voice",
        &song.parts[0].notes,
        &TransposeConfig::default(),
    );
    assert_eq!(advice.keys.len(), 13);
    assert_eq!(advice.best_semitones, -2);
    assert_eq!(advice.written_key.as_deref(), Some("F major"));
    let best = advice
        .keys
        .iter()
        .find(|k| k.transpose_semitones == -2)
        .unwrap();
    assert_eq!(best.key.as_deref(), Some("E♭ major"));
    assert!(close(best.fit.fit, 100.0));
    let written = advice
        .keys
        .iter()
        .find(|k| k.transpose_semitones == 0)
        .unwrap();
    assert!(written.fit.fit < 100.0);
}

#[test]
fn choir_key_maximises_the_worst_section() {
    // S comfort 62–74, A comfort 57–69. Soprano line at 74, alto line at 69
    // (each 2 s). As written both are at their tops: 100 and 100. Up one
    // semitone both go outside; down moves keep S inside until 62 and A until 57.
    // Every shift from 0 to −5 keeps both at 100 (tie) → smallest move: 0.
    // Raise the alto line to 71: as written A is 2 above → the best move is
    // down a major second (−2), the smallest move that brings A inside.
    let mut soprano = singer("Nadia Fenwick", (57.0, 81.0), (62.0, 74.0));
    soprano.section = Some("S".into());
    let mut alto = singer("Ruth Okonedo", (52.0, 76.0), (57.0, 69.0));
    alto.section = Some("A".into());
    let roster = Roster {
        singers: vec![soprano, alto],
    };
    let duet = piece(
        "Duet",
        vec![
            part("Soprano", vec![note(0.0, 2.0, 74.0)]),
            part("Alto", vec![note(0.0, 2.0, 71.0)]),
        ],
    );
    let advice = choir_keys(&roster, &duet, &TransposeConfig::default()).unwrap();
    assert_eq!(advice.layout, ["S", "A"]);
    assert_eq!(advice.best_semitones, -2);
    let best = advice
        .keys
        .iter()
        .find(|k| k.transpose_semitones == -2)
        .unwrap();
    assert!(close(best.worst_mean_fit, 100.0));
    // As written, A is the worst section.
    let written = advice
        .keys
        .iter()
        .find(|k| k.transpose_semitones == 0)
        .unwrap();
    assert_eq!(written.worst_section, "A");
}

#[test]
fn choir_advice_needs_a_placement() {
    let roster = typical_choir();
    let error = choir_keys(&roster, &chorale(), &TransposeConfig::default()).unwrap_err();
    assert!(matches!(error, TransposeError::NoPlacement));
    assert!(error.to_string().contains("`section` column"));
}
