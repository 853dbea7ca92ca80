//! `ambit fit` and `ambit transpose` at the command line: a bad roster is
//! reported with its file, line and column and a failing exit status, before
//! any score is read.

use crate::common;

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

/// Typical choral tenor and bass, from memory (common practice, as in
/// tests/it/fit.rs): tenor comfort D3–G4, range B2–B4; bass comfort G2–C4,
/// range E2–E4. Sections T and B as the current placement.
fn tenor_and_bass_roster(directory: &std::path::Path) -> std::path::PathBuf {
    let path = directory.join("men.csv");
    std::fs::write(
        &path,
        "name,range_low,range_high,comfort_low,comfort_high,section\n\
         Typical tenor,B2,B4,D3,G4,T\n\
         Typical bass,E2,E4,G2,C4,B\n",
    )
    .expect("write the roster");
    path
}

fn json_of(arguments: &[&std::ffi::OsStr]) -> serde_json::Value {
    let output = Command::new(common::ambit_binary())
        .args(arguments)
        .output()
        .expect("the ambit binary runs");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("JSON on stdout")
}

#[test]
fn fit_json_on_a_sample_score_puts_tenor_and_bass_where_expected() {
    let directory = tempfile::tempdir().expect("a temporary directory");
    let roster = tenor_and_bass_roster(directory.path());
    let score = common::project_root().join("sample-scores/haul-away.mid");
    let json = json_of(&[
        "fit".as_ref(),
        "--roster".as_ref(),
        roster.as_os_str(),
        score.as_os_str(),
        "--json".as_ref(),
    ]);
    let records = json["records"].as_array().expect("records");
    let fit = |singer: &str, part: &str| {
        records
            .iter()
            .find(|r| r["singer"] == singer && r["part"] == part)
            .and_then(|r| r["fit"]["fit"].as_f64())
            .unwrap_or_else(|| panic!("no record for {singer} on {part}"))
    };
    // Facts of the trade (common practice): the top tenor line suits a
    // tenor better than a bass, the bottom bass line a bass better than a tenor.
    assert!(fit("Typical tenor", "Tenor I") > fit("Typical bass", "Tenor I"));
    assert!(fit("Typical bass", "Bass II") > fit("Typical tenor", "Bass II"));
    assert!(!json["cautions"].as_array().expect("cautions").is_empty());
}

#[test]
fn transpose_json_for_the_placed_choir_follows_its_rule() {
    let directory = tempfile::tempdir().expect("a temporary directory");
    let roster = tenor_and_bass_roster(directory.path());
    let score = common::project_root().join("sample-scores/haul-away.mid");
    let json = json_of(&[
        "transpose".as_ref(),
        "--roster".as_ref(),
        roster.as_os_str(),
        score.as_os_str(),
        "--json".as_ref(),
    ]);
    assert_eq!(json["mode"], "choir");
    let keys = json["keys"].as_array().expect("keys");
    // The brief's sweep: −6…+6 semitones.
    assert_eq!(keys.len(), 13);
    let best = json["best_semitones"].as_i64().expect("best");
    let worst_of = |key: &serde_json::Value| key["worst_mean_fit"].as_f64().unwrap_or(f64::NAN);
    let chosen = keys
        .iter()
        .find(|key| key["transpose_semitones"].as_i64() == Some(best))
        .expect("the best key is one of the sweep");
    // The rule (docs/METHODS.md, Transposition): no key beats the chosen
    // one's worst-section mean by more than the 1-point tie margin.
    for key in keys {
        assert!(
            worst_of(key) <= worst_of(chosen) + 1.0 + 1e-9,
            "{key} beats {chosen}"
        );
    }
    assert!(!json["cautions"].as_array().expect("cautions").is_empty());
}
