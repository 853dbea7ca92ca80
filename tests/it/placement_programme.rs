//! From roster and programme to placement, through the engine: the fit
//! matrix (`fit`), the problem by name (`plan`) and the optimum
//! (`placement`).
//!
//! Facts of the trade checked: singers with typical soprano, alto, tenor and
//! bass ranges (typical choral ranges, from memory) are placed into the
//! sections you would expect for a piece whose parts sit in the usual
//! tessituras, and the director's constraints by name reach the solver.

use std::path::Path;

use ambit::fit::{SectionFitConfig, section_fit_matrix};
use ambit::pitch::parse_pitch;
use ambit::placement::{PlacementConfig, PlacementError, SizeLimit, place};
use ambit::plan::{PlanConstraints, PlanError, placement_problem};
use ambit::roster::parse_roster;
use ambit::score::{Measure, Note, Part, PartKind, Piece};
use ambit::sections::Layout;

const BAR_SECONDS: f64 = 2.0;

/// A part of whole-bar notes (4/4 at ♩ = 120), one per bar, by note name.
fn whole_bar_part(name: &str, pitches: &[&str]) -> Part {
    let notes = pitches
        .iter()
        .enumerate()
        .map(|(bar, pitch)| Note {
            onset_seconds: bar as f64 * BAR_SECONDS,
            duration_seconds: BAR_SECONDS,
            onset_quarters: bar as f64 * 4.0,
            duration_quarters: 4.0,
            midi: f64::from(parse_pitch(pitch).expect("a note name")),
            measure_index: bar,
            measure: (bar + 1).to_string(),
            voice: 1,
            staff: 1,
            dynamic: None,
            velocity: None,
            tied_from_previous: false,
            grace: false,
        })
        .collect();
    Part {
        name: name.into(),
        id: name.into(),
        kind: PartKind::Voice,
        notes,
    }
}

/// An invented four-part piece; each part sits in the middle of its
/// section's usual tessitura (common practice).
fn evening_round() -> Piece {
    Piece {
        title: Some("Evening Round".into()),
        parts: vec![
            whole_bar_part("Soprano", &["D5", "E5", "F5", "E5", "D5", "C5", "D5", "E5"]),
            whole_bar_part("Alto", &["A4", "G4", "A4", "B4", "A4", "G4", "F4", "G4"]),
            whole_bar_part("Tenor", &["F3", "G3", "A3", "G3", "F3", "E3", "F3", "G3"]),
            whole_bar_part("Bass", &["D3", "C3", "D3", "E3", "D3", "C3", "B2", "C3"]),
        ],
        measures: (0..8)
            .map(|bar| Measure {
                number: (bar + 1).to_string(),
                onset_seconds: bar as f64 * BAR_SECONDS,
                onset_quarters: bar as f64 * 4.0,
                duration_quarters: 4.0,
            })
            .collect(),
        key: None,
        warnings: Vec::new(),
    }
}

/// Invented singers, two per voice, with typical choral ranges and comfort
/// zones (from memory: soprano about C4–A5, alto G3–D5, tenor C3–A4,
/// bass E2–D4).
const ROSTER: &str = "name,range_low,range_high,comfort_low,comfort_high
Ilse Marrow,C4,C6,F4,A5
Petra Lund,B3,B5,E4,G5
Odile Fenn,F3,E5,A3,C5
Runa Sall,E3,D5,G3,B4
Tomas Brek,C3,B4,E3,G4
Aurel Penn,B2,A4,D3,F4
Gideon Harl,E2,E4,G2,C4
Baltus Crane,D2,D4,F2,B3
";

fn two_each() -> Vec<(String, SizeLimit)> {
    ["S", "A", "T", "B"]
        .iter()
        .map(|section| (section.to_string(), SizeLimit::exactly(2)))
        .collect()
}

fn matrix() -> ambit::fit::SectionFitMatrix {
    let roster = parse_roster(Path::new("roster.csv"), ROSTER.as_bytes()).expect("roster");
    let layout = Layout::parse("SATB").expect("layout");
    section_fit_matrix(
        &roster,
        &[evening_round()],
        &layout,
        &SectionFitConfig::default(),
    )
    .expect("the piece maps to SATB")
}

#[test]
fn typical_ranges_land_in_their_sections() {
    let constraints = PlanConstraints {
        sizes: two_each(),
        ..PlanConstraints::default()
    };
    let problem = placement_problem(&matrix(), &constraints).expect("names resolve");
    let placement = place(&problem, &PlacementConfig::default()).expect("feasible");
    let placed: Vec<(&str, &str)> = placement
        .assignments
        .iter()
        .map(|assignment| (assignment.singer.as_str(), assignment.section.as_str()))
        .collect();
    // Expected: each voice in its own section (typical ranges, from memory).
    assert_eq!(
        placed,
        vec![
            ("Ilse Marrow", "S"),
            ("Petra Lund", "S"),
            ("Odile Fenn", "A"),
            ("Runa Sall", "A"),
            ("Tomas Brek", "T"),
            ("Aurel Penn", "T"),
            ("Gideon Harl", "B"),
            ("Baltus Crane", "B"),
        ]
    );
    // The explanation carries the fit helper's sung-time figure.
    assert!(
        placement.assignments[0]
            .explanation
            .contains("% of sung time"),
        "{}",
        placement.assignments[0].explanation
    );
}

#[test]
fn constraints_by_name_reach_the_solver_and_its_diagnosis() {
    let matrix = matrix();
    // A lock moves Ilse to A; with two seats each someone else must go up.
    let locked = PlanConstraints {
        sizes: two_each(),
        locks: vec![("Ilse Marrow".into(), "a".into())],
        ..PlanConstraints::default()
    };
    let placement = place(
        &placement_problem(&matrix, &locked).expect("names resolve"),
        &PlacementConfig::default(),
    )
    .expect("feasible");
    assert_eq!(placement.assignments[0].section, "A");
    assert!(placement.assignments[0].locked);

    let contradictory = PlanConstraints {
        sizes: two_each(),
        locks: vec![("Ilse Marrow".into(), "S".into())],
        exclusions: vec![("Ilse Marrow".into(), "S".into())],
        balance: None,
    };
    let Err(PlacementError::Infeasible { reasons }) = place(
        &placement_problem(&matrix, &contradictory).expect("names resolve"),
        &PlacementConfig::default(),
    ) else {
        panic!("a lock and an exclusion on the same pair cannot both hold");
    };
    assert_eq!(
        reasons[0].message,
        "Ilse Marrow is locked to S but is excluded from it"
    );

    let unknown = PlanConstraints {
        locks: vec![("Nobody".into(), "S".into())],
        ..PlanConstraints::default()
    };
    assert_eq!(
        placement_problem(&matrix, &unknown),
        Err(PlanError::UnknownSinger {
            what: "lock Nobody=S".into(),
            name: "Nobody".into()
        })
    );
}
