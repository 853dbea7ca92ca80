//! `ambit fit` and `ambit transpose` at the command line: a bad roster is
//! reported with its file, line and column and a failing exit status, before
//! any score is read.

mod common;

use std::process::Command;

#[test]
fn fit_reports_a_bad_roster_row_and_fails() {
    let roster = common::project_root().join("tests/data/rosters/unknown_note.csv");
    let output = Command::new(common::ambit_binary())
        .args(["fit", "--roster"])
        .arg(&roster)
        .arg("missing-score.musicxml")
        .output()
        .expect("the ambit binary runs");
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    // H is not a letter of scientific pitch notation (ASA): line 3, range_high.
    for needle in ["unknown_note.csv", "line 3", "`range_high`", "`H4`"] {
        assert!(stderr.contains(needle), "`{needle}` missing from: {stderr}");
    }
    assert!(!stderr.contains("panicked"), "{stderr}");
}

#[test]
fn transpose_reports_an_empty_roster_and_fails() {
    let roster = common::project_root().join("tests/data/rosters/empty.csv");
    let output = Command::new(common::ambit_binary())
        .args(["transpose", "--roster"])
        .arg(&roster)
        .arg("missing-score.mid")
        .output()
        .expect("the ambit binary runs");
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("empty.csv") && stderr.contains("no singers"),
        "{stderr}"
    );
}
