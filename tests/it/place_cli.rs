//! `ambit place` argument errors: each names the option and what is wrong,
//! and nothing is printed on stdout.

use crate::common;

fn place_error(arguments: &[&str]) -> String {
    let mut all = vec!["place", "--roster", "roster.csv", "--layout", "SATB"];
    all.extend_from_slice(arguments);
    all.push("piece.musicxml");
    let (success, stdout, stderr) = common::run_ambit(&all);
    assert!(!success, "{all:?} should fail");
    assert!(stdout.is_empty(), "{all:?} printed {stdout}");
    stderr
}

#[test]
fn a_size_with_the_minimum_above_the_maximum_is_refused() {
    let stderr = place_error(&["--size", "T=5..3"]);
    assert!(
        stderr.contains("--size T=5..3: the minimum is above the maximum"),
        "{stderr}"
    );
}

#[test]
fn a_size_that_is_not_a_number_is_refused() {
    let stderr = place_error(&["--size", "T=three"]);
    assert!(
        stderr.contains("`three` is not a whole number of singers"),
        "{stderr}"
    );
}

#[test]
fn a_lock_without_a_section_is_refused() {
    let stderr = place_error(&["--lock", "Ilse Marrow"]);
    assert!(
        stderr.contains("--lock Ilse Marrow: expected NAME=SECTION"),
        "{stderr}"
    );
}

#[test]
fn a_missing_roster_is_named() {
    let stderr = place_error(&["--size", "T=1..3"]);
    assert!(stderr.contains("roster.csv"), "{stderr}");
}
