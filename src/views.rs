//! JSON views of engine results, with note names: the one shape that the
//! CLI's `--json` output and the desktop app's commands both return, so that
//! one set of TypeScript types serves both.
//!
//! Architecture invariant: formatting only. Every figure here was computed
//! by an analysis module; a view renames, rounds to note names (through
//! `pitch`) and flattens, and never computes a new figure.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::cautions::cautions;
use crate::fit::SectionFitMatrix;
use crate::pitch::midi_name_in_key;
use crate::placement::{Placement, RiskReason};
use crate::plan::DivisiChoice;
use crate::score::{PartKind, Piece};
use crate::tessitura::{HotSpotKind, PERCENTILES, PartTessitura};

#[derive(Debug, Clone, Serialize)]
pub struct ScoreJson {
    pub file: String,
    pub title: Option<String>,
    pub parts: Vec<PartJson>,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct PartJson {
    pub name: String,
    pub kind: PartKind,
    pub notes: usize,
    pub sung_seconds: f64,
    pub sung_quarters: f64,
    pub lowest_midi: i64,
    pub highest_midi: i64,
    pub lowest: String,
    pub highest: String,
    pub mean_midi: f64,
    pub sd_semitones: f64,
    pub percentiles_midi: BTreeMap<String, f64>,
    pub mean_midi_quarters: f64,
    pub sd_semitones_quarters: f64,
    pub histogram_seconds: BTreeMap<String, f64>,
    pub histogram_quarters: BTreeMap<String, f64>,
    pub longest_note: LongestJson,
    pub hot_spots: Vec<HotSpotJson>,
    pub time_dose_seconds: f64,
    pub cycle_dose: f64,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub divisi: Vec<PartJson>,
}

#[derive(Debug, Clone, Serialize)]
pub struct LongestJson {
    pub midi: f64,
    pub name: String,
    pub seconds: f64,
    pub bars: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct HotSpotJson {
    pub kind: HotSpotKind,
    pub bars: String,
    pub start_seconds: f64,
    pub end_seconds: f64,
    pub mean_midi: f64,
}

pub fn part_json(part: &PartTessitura, fifths: i32) -> PartJson {
    let name = |midi: f64| midi_name_in_key(midi.round() as i32, fifths);
    let keyed = |histogram: &BTreeMap<i32, f64>| {
        histogram
            .iter()
            .map(|(midi, weight)| (midi.to_string(), *weight))
            .collect()
    };
    PartJson {
        name: part.name.clone(),
        kind: part.kind,
        notes: part.notes,
        sung_seconds: part.sung_seconds,
        sung_quarters: part.sung_quarters,
        lowest_midi: part.lowest_midi.round() as i64,
        highest_midi: part.highest_midi.round() as i64,
        lowest: name(part.lowest_midi),
        highest: name(part.highest_midi),
        mean_midi: part.over_seconds.mean_midi,
        sd_semitones: part.over_seconds.sd_semitones,
        percentiles_midi: PERCENTILES
            .iter()
            .zip(part.over_seconds.percentiles_midi)
            .map(|(p, midi)| (format!("{p:.0}"), midi))
            .collect(),
        mean_midi_quarters: part.over_quarters.mean_midi,
        sd_semitones_quarters: part.over_quarters.sd_semitones,
        histogram_seconds: keyed(&part.histogram_seconds),
        histogram_quarters: keyed(&part.histogram_quarters),
        longest_note: LongestJson {
            midi: part.longest_note.midi,
            name: name(part.longest_note.midi),
            seconds: part.longest_note.seconds,
            bars: part.longest_note.bars.clone(),
        },
        hot_spots: part
            .hot_spots
            .iter()
            .map(|spot| HotSpotJson {
                kind: spot.kind,
                bars: spot.bars.clone(),
                start_seconds: spot.start_seconds,
                end_seconds: spot.end_seconds,
                mean_midi: spot.mean_midi,
            })
            .collect(),
        time_dose_seconds: part.time_dose_seconds,
        cycle_dose: part.cycle_dose,
        divisi: part
            .divisi
            .iter()
            .map(|line| part_json(line, fifths))
            .collect(),
    }
}

/// The `ambit parts --json` view of one score: `parts` is
/// `tessitura::analyse_piece` of `piece`, names spelled in the piece's key.
pub fn score_view(file: &str, piece: &Piece, parts: &[PartTessitura]) -> ScoreJson {
    let fifths = piece.key.map_or(0, |key| key.fifths);
    ScoreJson {
        file: file.to_string(),
        title: piece.title.clone(),
        parts: parts.iter().map(|part| part_json(part, fifths)).collect(),
        warnings: piece.warnings.clone(),
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct PlaceJson {
    pub layout: Vec<String>,
    pub section_fit: Vec<PairJson>,
    pub assignments: Vec<AssignmentJson>,
    pub objective: f64,
    pub sections: Vec<SectionJson>,
    pub at_risk: Vec<AtRiskJson>,
    pub cautions: Vec<String>,
    /// Who sings the upper and who the lower line of each divisi.
    pub divisi: Vec<DivisiChoice>,
}

#[derive(Debug, Clone, Serialize)]
pub struct PairJson {
    pub singer: String,
    pub section: String,
    pub fit: Option<f64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct AssignmentJson {
    pub singer: String,
    pub section: String,
    pub fit: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct SectionJson {
    pub section: String,
    pub count: usize,
    /// `null` for an empty section.
    pub mean_fit: Option<f64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct AtRiskJson {
    pub singer: String,
    pub section: String,
    pub fit: f64,
    pub reasons: Vec<String>,
}

/// The `ambit place --json` view of a placement over `matrix`, with the
/// per-piece divisi choices made for it.
pub fn place_view(
    matrix: &SectionFitMatrix,
    placement: &Placement,
    divisi: &[DivisiChoice],
) -> PlaceJson {
    PlaceJson {
        layout: matrix.sections.clone(),
        section_fit: matrix
            .singers
            .iter()
            .zip(&matrix.fit)
            .flat_map(|(singer, row)| {
                matrix
                    .sections
                    .iter()
                    .zip(row)
                    .map(|(section, fit)| PairJson {
                        singer: singer.clone(),
                        section: section.clone(),
                        fit: *fit,
                    })
            })
            .collect(),
        assignments: placement
            .assignments
            .iter()
            .map(|assignment| AssignmentJson {
                singer: assignment.singer.clone(),
                section: assignment.section.clone(),
                fit: assignment.fit,
            })
            .collect(),
        objective: placement.objective,
        sections: placement
            .sections
            .iter()
            .map(|section| SectionJson {
                section: section.section.clone(),
                count: section.count,
                mean_fit: section.mean_fit,
            })
            .collect(),
        at_risk: placement
            .at_risk
            .iter()
            .map(|risk| AtRiskJson {
                singer: risk.singer.clone(),
                section: risk.section.clone(),
                fit: risk.fit,
                reasons: risk.reasons.iter().map(RiskReason::describe).collect(),
            })
            .collect(),
        cautions: cautions(),
        divisi: divisi.to_vec(),
    }
}

/// The layout of a stored `ambit place --json` view, as a comma list
/// ("S,A,T,B"), for labelling a saved scenario.
pub fn place_view_layout(view: &serde_json::Value) -> Option<String> {
    view.get("layout")
        .and_then(|layout| layout.as_array())
        .map(|sections| {
            sections
                .iter()
                .filter_map(|section| section.as_str())
                .collect::<Vec<_>>()
                .join(",")
        })
}

/// The seating list as CSV, `section,singer,fit`: sections in the order of
/// `sections` (the layout's), singers by name within each, fits to one
/// decimal.
pub fn seating_to_csv(placement: &Placement, sections: &[String]) -> Result<String, csv::Error> {
    let position = |section: &str| sections.iter().position(|name| name == section);
    let mut rows: Vec<_> = placement.assignments.iter().collect();
    rows.sort_by(|a, b| {
        position(&a.section)
            .cmp(&position(&b.section))
            .then_with(|| a.singer.cmp(&b.singer))
    });
    let mut writer = csv::Writer::from_writer(Vec::new());
    writer.write_record(["section", "singer", "fit"])?;
    for assignment in rows {
        // Spreadsheet-safe cells (OWASP CSV injection), as in every CSV Ambit writes.
        writer.write_record([
            crate::text::csv_cell(&assignment.section).as_ref(),
            crate::text::csv_cell(&assignment.singer).as_ref(),
            crate::text::csv_cell(&format!("{:.1}", assignment.fit)).as_ref(),
        ])?;
    }
    let bytes = writer
        .into_inner()
        .map_err(|error| csv::Error::from(error.into_error()))?;
    String::from_utf8(bytes).map_err(|error| {
        csv::Error::from(std::io::Error::new(std::io::ErrorKind::InvalidData, error))
    })
}
