//! Same music in MIDI: music21 (PyPI, tests/reference/music21_midi.py) writes
//! Bach chorales from its bundled corpus as MIDI; Ambit reads that MIDI and
//! must find the same notes music21 holds for the score: per part, the sorted
//! multiset of (pitch, onset in quarters, duration in quarters), within 1e-6
//! quarter.
//!
//! music21's MIDI export expands repeats and joins tied notes
//! (music21.midi.translate: prepareStreamForMidi, stripTies(matchByPitch=True));
//! the script applies the same two steps to the score for the reference list.
//! MIDI carries no ties, so every Ambit note has `tied_from_previous == false`.

use crate::common;

use ambit::score::{ReadOptions, read_score};
use serde_json::Value;

/// Chorales asked for; the test requires at least 50 of them to be compared.
const CHORALES: usize = 55;
const TOLERANCE_QUARTERS: f64 = 1e-6;

type Notes = Vec<(i64, f64, f64)>;

fn sorted(mut notes: Notes) -> Notes {
    notes.sort_by(|a, b| a.partial_cmp(b).expect("finite values"));
    notes
}

fn reference_parts(chorale: &Value) -> Vec<(String, Notes)> {
    chorale["parts"]
        .as_array()
        .expect("parts")
        .iter()
        .map(|part| {
            let notes = part["notes"]
                .as_array()
                .expect("notes")
                .iter()
                .map(|note| {
                    (
                        note[0].as_i64().expect("midi"),
                        note[1].as_f64().expect("onset"),
                        note[2].as_f64().expect("duration"),
                    )
                })
                .collect();
            (
                part["name"].as_str().unwrap_or_default().to_string(),
                sorted(notes),
            )
        })
        .collect()
}

#[test]
fn chorales_written_as_midi_by_music21_read_back_with_the_same_notes() {
    let Some(python) = common::reference_python("music21 chorales as MIDI") else {
        return;
    };
    let directory = tempfile::tempdir().expect("a temporary directory");
    let out = directory.path().to_str().expect("a UTF-8 temporary path");
    let report = common::run_reference(&python, "music21_midi.py", &[out, &CHORALES.to_string()]);
    let chorales = report["chorales"].as_array().expect("chorales");
    for skipped in report["skipped"].as_array().into_iter().flatten() {
        eprintln!("music21 could not write {skipped}");
    }
    assert!(
        chorales.len() >= 50,
        "only {} chorales were written by music21",
        chorales.len()
    );
    let mut total_notes = 0;
    for chorale in chorales {
        let name = chorale["name"].as_str().expect("name");
        let path = chorale["midi_path"].as_str().expect("midi path");
        let piece = read_score(path.as_ref(), &ReadOptions::default())
            .unwrap_or_else(|error| panic!("{name}: Ambit cannot read music21's MIDI: {error}"));
        let expected = reference_parts(chorale);
        assert_eq!(
            piece.parts.len(),
            expected.len(),
            "{name}: part count (Ambit {:?})",
            piece.parts.iter().map(|p| &p.name).collect::<Vec<_>>()
        );
        for (part, (reference_name, reference_notes)) in piece.parts.iter().zip(&expected) {
            assert!(part.notes.iter().all(|note| !note.tied_from_previous));
            let ours = sorted(
                part.notes
                    .iter()
                    .map(|note| {
                        (
                            note.midi as i64,
                            note.onset_quarters,
                            note.duration_quarters,
                        )
                    })
                    .collect(),
            );
            assert_eq!(
                ours.len(),
                reference_notes.len(),
                "{name}, part {} ({reference_name}): note count",
                part.name
            );
            for (a, b) in ours.iter().zip(reference_notes) {
                assert!(
                    a.0 == b.0
                        && (a.1 - b.1).abs() < TOLERANCE_QUARTERS
                        && (a.2 - b.2).abs() < TOLERANCE_QUARTERS,
                    "{name}, part {}: Ambit {a:?}, music21 {b:?}",
                    part.name
                );
            }
            total_notes += ours.len();
        }
    }
    eprintln!(
        "music21 {}: {} chorales, {total_notes} notes agree",
        report["music21"],
        chorales.len()
    );
}
