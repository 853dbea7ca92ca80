//! Roster reading: one test per file of the bad-row corpus in
//! `tests/data/rosters/`, each checking that the error names the file, the
//! line and the column a director would have to fix.

use std::path::PathBuf;

use ambit::roster::{RosterError, read_roster};

fn corpus(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/rosters")
        .join(name)
}

/// Reads a corpus file, which must fail, and returns the message.
fn error_of(name: &str) -> (RosterError, String) {
    match read_roster(&corpus(name)) {
        Ok(roster) => panic!("{name} was accepted: {roster:?}"),
        Err(error) => {
            let message = error.to_string();
            assert!(
                message.contains(name),
                "{name}: message lacks the file: {message}"
            );
            (error, message)
        }
    }
}

fn assert_mentions(message: &str, needles: &[&str]) {
    for needle in needles {
        assert!(
            message.contains(needle),
            "`{needle}` missing from: {message}"
        );
    }
}

#[test]
fn unknown_note_name_is_named_with_line_and_column() {
    // H4 is the German name of B4; scientific pitch notation has no H.
    let (_, message) = error_of("unknown_note.csv");
    assert_mentions(
        &message,
        &[
            "line 3",
            "column 3 `range_high`",
            "`H4` is not a pitch name",
        ],
    );
}

#[test]
fn low_above_high_is_rejected() {
    let (_, message) = error_of("low_above_high.csv");
    assert_mentions(
        &message,
        &["line 3", "`range_low`", "A4 is above range_high C3"],
    );
}

#[test]
fn comfort_zone_outside_the_range_is_rejected() {
    // Comfort top B4 above the range top A4.
    let (_, message) = error_of("comfort_outside_range.csv");
    assert_mentions(&message, &["line 3", "`comfort_high`", "outside the range"]);
}

#[test]
fn duplicate_names_point_at_both_lines() {
    // Names compare without case: "marta quell" repeats "Marta Quell".
    let (_, message) = error_of("duplicate_name.csv");
    assert_mentions(
        &message,
        &["line 4", "`name`", "duplicate", "first on line 2"],
    );
}

#[test]
fn missing_required_column_is_named() {
    let (_, message) = error_of("missing_column.csv");
    assert_mentions(&message, &["line 1", "missing required column comfort_low"]);
}

#[test]
fn non_utf8_cell_is_located() {
    // Latin-1 "é" (0xE9) is not valid UTF-8.
    let (_, message) = error_of("not_utf8.csv");
    assert_mentions(&message, &["line 3", "`name`", "not valid UTF-8"]);
}

#[test]
fn header_only_roster_is_empty() {
    let (error, _) = error_of("empty.csv");
    assert!(matches!(error, RosterError::Empty { .. }), "{error:?}");
}

#[test]
fn utf16_file_is_told_to_be_saved_as_utf8() {
    let (_, message) = error_of("utf16.csv");
    assert_mentions(&message, &["UTF-16", "UTF-8"]);
}

#[test]
fn row_wider_than_the_header_is_rejected() {
    let (_, message) = error_of("too_many_cells.csv");
    assert_mentions(
        &message,
        &["line 2", "10 cells but the header has 5 columns"],
    );
}

#[test]
fn empty_required_cell_is_named() {
    let (_, message) = error_of("missing_value.csv");
    assert_mentions(
        &message,
        &["line 2", "column 4 `comfort_low`", "missing value"],
    );
}

#[test]
fn primo_above_secondo_is_rejected() {
    // The primo passaggio lies below the secondo by definition (Miller,
    // The Structure of Singing).
    let (_, message) = error_of("primo_above_secondo.csv");
    assert_mentions(&message, &["line 2", "`primo`", "G5 is above secondo E4"]);
}

#[test]
fn json_roster_gets_the_same_checks() {
    let (_, message) = error_of("comfort_reversed.json");
    assert_mentions(
        &message,
        &[
            "singer 1 `Marta Quell`",
            "comfort_low D6 is above comfort_high F5",
        ],
    );
}

#[test]
fn a_missing_file_is_an_io_error_naming_it() {
    let (error, _) = error_of("no_such_roster.csv");
    assert!(matches!(error, RosterError::Io { .. }), "{error:?}");
}
