//! `ambit place` chooses, per piece, who sings the upper and who the lower
//! line where a piece divides a section that the layout does not.
//!
//! Worked example: "The Tide Clock" (sample-scores/README.md: Soprano I/II
//! and Bass I/II as two voices in one staff, Alto I/II and Tenor I/II as
//! chords) placed into SATB, so every section divides. Each split is checked
//! against an independent brute force over every even split of the
//! section's members, from the per-line fits that `fit::piece_fits` (the
//! records `ambit fit` prints) gives for the same lines, and against the
//! trade: the higher voices of a section take the upper line (first
//! sopranos and first tenors are the higher voices; common practice).

use std::collections::BTreeSet;
use std::path::PathBuf;

use ambit::fit::{FitConfig, piece_fits};
use ambit::roster::parse_roster;
use ambit::score::{ReadOptions, read_score};
use ambit::sections::LineRole;

use crate::common;

/// Invented singers with typical choral ranges and comfort zones (from
/// memory: soprano about C4–A5, alto G3–D5, tenor C3–A4, bass E2–D4). Each
/// section mixes higher and lower voices, so the split has something to
/// decide.
const ROSTER: &str = "name,range_low,range_high,comfort_low,comfort_high
Ilse Marrow,D4,C6,G4,A5
Wren Halloway,C4,B5,F4,G5
Petra Lund,A3,A5,D4,E5
Noor Ashby,G3,G5,C4,D5
Dagny Ferrow,F3,E5,A3,C5
Oona Brisk,E3,D5,G3,B4
Hale Corrin,F3,F5,B3,D5
Tam Oakley,C3,C5,F3,A4
Ivo Penrith,B2,A4,E3,G4
Rune Calder,A2,G4,D3,F4
Bram Tilde,E2,E4,A2,D4
Esk Morrow,D2,D4,G2,C4
";

fn roster_file(test: &str) -> PathBuf {
    let path = std::env::temp_dir().join(format!("ambit-divisi-{test}-{}.csv", std::process::id()));
    std::fs::write(&path, ROSTER).expect("the roster is written");
    path
}

fn score() -> PathBuf {
    common::project_root().join("sample-scores/the-tide-clock.musicxml")
}

const SIZES: [&str; 8] = [
    "--size", "S=4", "--size", "A=3", "--size", "T=3", "--size", "B=2",
];

fn place_json(roster: &std::path::Path) -> serde_json::Value {
    let roster = roster.to_string_lossy();
    let score = score();
    let score = score.to_string_lossy();
    let mut arguments = vec!["place", "--roster", &roster, "--layout", "SATB", "--json"];
    arguments.extend_from_slice(&SIZES);
    arguments.push(&score);
    let (success, stdout, stderr) = common::run_ambit(&arguments);
    assert!(success, "ambit place failed: {stderr}");
    serde_json::from_str(&stdout).expect("place --json prints JSON")
}

fn strings(value: &serde_json::Value) -> Vec<String> {
    value
        .as_array()
        .expect("an array")
        .iter()
        .map(|name| name.as_str().expect("a name").to_string())
        .collect()
}

/// The best total fit over every split of `members` into an upper line of
/// ⌊n/2⌋ or ⌈n/2⌉ singers and a lower line of the rest, by enumerating all
/// subsets (n ≤ 12 here).
fn brute_force_best(members: &[String], fit: impl Fn(&str, LineRole) -> f64) -> f64 {
    let count = members.len();
    let mut best = f64::NEG_INFINITY;
    for mask in 0u32..(1 << count) {
        let upper_count = mask.count_ones() as usize;
        if upper_count != count / 2 && upper_count != count.div_ceil(2) {
            continue;
        }
        let total: f64 = members
            .iter()
            .enumerate()
            .map(|(index, name)| {
                let role = if mask & (1 << index) != 0 {
                    LineRole::Upper
                } else {
                    LineRole::Lower
                };
                fit(name, role)
            })
            .sum();
        best = best.max(total);
    }
    best
}

#[test]
fn every_divided_section_is_split_evenly_and_optimally_with_the_high_voices_on_top() {
    let roster_path = roster_file("split");
    let json = place_json(&roster_path);
    let roster = parse_roster(std::path::Path::new("roster.csv"), ROSTER.as_bytes())
        .expect("the roster parses");
    let piece = read_score(&score(), &ReadOptions::default()).expect("the sample score reads");
    // The per-line fits, from the `ambit fit` records: one per singer and
    // line, the divisi lines marked upper or lower.
    let records = piece_fits(&roster, &piece, &FitConfig::default());

    // The documented keys stay as they were; "divisi" is added.
    for key in [
        "layout",
        "section_fit",
        "assignments",
        "objective",
        "sections",
        "at_risk",
        "cautions",
        "divisi",
    ] {
        assert!(json.get(key).is_some(), "place --json lacks {key}");
    }
    let assignments = json["assignments"].as_array().expect("assignments");
    let divisi = json["divisi"].as_array().expect("a divisi array");
    // Every section of SATB divides in this piece (sample-scores/README.md).
    let sections: Vec<&str> = divisi
        .iter()
        .map(|choice| choice["section"].as_str().expect("a section"))
        .collect();
    assert_eq!(sections, ["S", "A", "T", "B"]);

    let comfort_centre = |name: &str| {
        let singer = roster
            .singers
            .iter()
            .find(|singer| singer.name == name)
            .expect("a roster singer");
        (singer.comfort_low_midi + singer.comfort_high_midi) / 2.0
    };
    for choice in divisi {
        let section = choice["section"].as_str().expect("a section");
        let upper = strings(&choice["upper"]);
        let lower = strings(&choice["lower"]);
        let members: Vec<String> = assignments
            .iter()
            .filter(|assignment| assignment["section"] == section)
            .map(|assignment| assignment["singer"].as_str().expect("a name").to_string())
            .collect();

        // Every member on exactly one line.
        let on_lines: BTreeSet<&String> = upper.iter().chain(&lower).collect();
        assert_eq!(
            on_lines.len(),
            upper.len() + lower.len(),
            "{section}: twice"
        );
        assert_eq!(
            on_lines,
            members.iter().collect::<BTreeSet<_>>(),
            "{section}: the lines hold exactly the section's members"
        );
        // An even split.
        assert!(
            upper.len().abs_diff(lower.len()) <= 1,
            "{section}: {choice}"
        );

        // Optimal: the chosen split's total fit equals the brute-force best.
        let upper_line = choice["upper_line"].as_str().expect("a line label");
        let lower_line = choice["lower_line"].as_str().expect("a line label");
        let fit = |name: &str, role: LineRole| {
            let line = if role == LineRole::Upper {
                upper_line
            } else {
                lower_line
            };
            records
                .iter()
                .find(|record| record.singer == name && record.part == line && record.role == role)
                .unwrap_or_else(|| panic!("no fit record for {name} on {line}"))
                .fit
                .fit
        };
        let chosen: f64 = upper
            .iter()
            .map(|name| fit(name, LineRole::Upper))
            .chain(lower.iter().map(|name| fit(name, LineRole::Lower)))
            .sum();
        let best = brute_force_best(&members, fit);
        assert!(
            (chosen - best).abs() <= 1e-9 * best.abs().max(1.0),
            "{section}: chosen split totals {chosen}, the best even split {best}"
        );
        let reported = choice["total_fit"].as_f64().expect("total_fit");
        assert!((reported - best).abs() <= 1e-9 * best.abs().max(1.0));

        // The trade: the higher voices take the upper line. Compared on
        // the mean comfort-zone centre of each line's singers.
        let mean = |names: &[String]| {
            names.iter().map(|name| comfort_centre(name)).sum::<f64>() / names.len() as f64
        };
        assert!(
            mean(&upper) >= mean(&lower),
            "{section}: upper line {upper:?} sits lower than {lower:?}"
        );
    }

    // In the soprano section the two highest comfort zones (Ilse Marrow,
    // G4–A5; Wren Halloway, F4–G5) face the two lowest (C4–D5, D4–E5), a gap
    // of two semitones or more at both ends; the split puts them on top.
    let soprano = &divisi[0];
    let upper: BTreeSet<String> = strings(&soprano["upper"]).into_iter().collect();
    let expected: BTreeSet<String> = ["Ilse Marrow", "Wren Halloway"]
        .map(String::from)
        .into_iter()
        .collect();
    assert_eq!(upper, expected);
    std::fs::remove_file(&roster_path).ok();
}

#[test]
fn the_table_and_the_report_show_who_sings_which_line() {
    let roster_path = roster_file("shown");
    let json = place_json(&roster_path);
    let report_path =
        std::env::temp_dir().join(format!("ambit-divisi-{}.html", std::process::id()));
    let roster = roster_path.to_string_lossy();
    let report = report_path.to_string_lossy();
    let score = score();
    let score = score.to_string_lossy();
    let mut arguments = vec![
        "place", "--roster", &roster, "--layout", "SATB", "--report", &report,
    ];
    arguments.extend_from_slice(&SIZES);
    arguments.push(&score);
    let (success, table, stderr) = common::run_ambit(&arguments);
    assert!(success, "ambit place failed: {stderr}");
    let html = std::fs::read_to_string(&report_path).expect("the report is written");
    assert!(table.contains("divisi:"), "{table}");
    assert!(html.contains("Divisi: who sings which line"));
    for choice in json["divisi"].as_array().expect("a divisi array") {
        let upper = strings(&choice["upper"]).join(", ");
        let lower = strings(&choice["lower"]).join(", ");
        let upper_line = choice["upper_line"].as_str().expect("a line");
        let lower_line = choice["lower_line"].as_str().expect("a line");
        assert!(
            table.contains(&format!("upper line ({upper_line}): {upper}")),
            "{table}"
        );
        assert!(
            table.contains(&format!("lower line ({lower_line}): {lower}")),
            "{table}"
        );
        assert!(html.contains(&upper), "the report names {upper}");
        assert!(html.contains(&lower), "the report names {lower}");
    }
    std::fs::remove_file(&roster_path).ok();
    std::fs::remove_file(&report_path).ok();
}
