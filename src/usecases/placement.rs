//! Fit matrices as the front ends show them, and a placement session: the
//! optimum for a programme, then the director's what-if moves with undo
//! and redo, the divisi chosen for the seating now on screen, and the
//! seating list as CSV.
//!
//! Every figure comes from `fit`, `plan` and `placement`; this module only
//! keeps the state of a session and joins their outputs into views.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::{Cancel, Progress, UseCaseError};
use crate::fit::{
    FitConfig, PartFit, SectionFitConfig, SectionFitMatrix, piece_fits, section_fit_matrix,
};
use crate::placement::{
    Placement, PlacementConfig, PlacementProblem, Violation, evaluate, what_if,
};
use crate::plan::{PlanConstraints, ProgrammeConfig, divisi_choices, place_programme};
use crate::roster::Roster;
use crate::score::Piece;
use crate::sections::Layout;
use crate::views::{PlaceJson, place_view, seating_to_csv};

/// Where a singer's worst stretch of a line lies.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WorstView {
    pub piece: String,
    pub line: String,
    pub bars: String,
    pub seconds: f64,
    pub side: String,
}

/// The reserves (Herbst, Duus, Jers & Švec 2012), in semitones: the
/// singer's top minus the line's top, the line's bottom minus the singer's
/// bottom.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ReserveView {
    pub upper: Option<f64>,
    pub lower: Option<f64>,
}

/// The smaller of two reserves (`None` counts as unknown, not as small).
fn tighter(a: Option<f64>, b: Option<f64>) -> Option<f64> {
    match (a, b) {
        (Some(a), Some(b)) => Some(a.min(b)),
        (a, b) => a.or(b),
    }
}

/// One cell of a fit matrix with the figures behind it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct FitCell {
    /// 0–100.
    pub fit: f64,
    pub outside_share: f64,
    /// Seconds outside the comfort zone (per line; `null` over a programme of sections).
    pub outside_seconds: Option<f64>,
    pub severity: f64,
    pub beyond_range_seconds: f64,
    pub sung_seconds: f64,
    /// Over a programme, the tightest reserve of any line the section sings.
    pub reserves: ReserveView,
    pub worst: Vec<WorstView>,
}

/// A singer × column fit matrix (columns are parts or sections).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct FitMatrixView {
    pub rows: Vec<String>,
    pub columns: Vec<String>,
    /// `null` where the pair is not allowed or the singer has no such line.
    pub cells: Vec<Vec<Option<FitCell>>>,
    /// Why a `null` cell is not allowed, by "singer / column".
    pub not_allowed: BTreeMap<String, String>,
    /// Singers with no range yet, left out.
    pub left_out: Vec<String>,
    pub cautions: Vec<String>,
}

fn line_cell(piece: &str, line: &str, fit: &PartFit) -> FitCell {
    FitCell {
        fit: fit.fit,
        outside_share: fit.outside_comfort_share,
        outside_seconds: Some(fit.outside_comfort_seconds),
        severity: fit.severity_semitones,
        beyond_range_seconds: fit.beyond_range_seconds,
        sung_seconds: fit.sung_seconds,
        reserves: ReserveView {
            upper: fit.upper_reserve_semitones,
            lower: fit.lower_reserve_semitones,
        },
        worst: fit
            .worst_passages
            .iter()
            .map(|passage| WorstView {
                piece: piece.to_string(),
                line: line.to_string(),
                bars: passage.bars.clone(),
                seconds: passage.outside_seconds,
                side: passage.side.clone(),
            })
            .collect(),
    }
}

/// Singer × part: every sung line of every piece (divisi lines included).
/// Columns are "Title: Part" over several pieces, the part alone for one.
pub fn fit_by_part(roster: &Roster, left_out: &[String], programme: &[Piece]) -> FitMatrixView {
    let config = FitConfig::default();
    let rows: Vec<String> = roster
        .singers
        .iter()
        .map(|singer| singer.name.clone())
        .collect();
    let mut columns: Vec<String> = Vec::new();
    let mut cells: Vec<Vec<Option<FitCell>>> = vec![Vec::new(); rows.len()];
    for piece in programme {
        let records = piece_fits(roster, piece, &config);
        let mut piece_columns: Vec<String> = Vec::new();
        for record in &records {
            if !piece_columns.contains(&record.part) {
                piece_columns.push(record.part.clone());
            }
        }
        for (row, singer) in rows.iter().enumerate() {
            for part in &piece_columns {
                let cell = records
                    .iter()
                    .find(|record| &record.singer == singer && &record.part == part)
                    .map(|record| line_cell(&record.piece, &record.part, &record.fit));
                if let Some(cells) = cells.get_mut(row) {
                    cells.push(cell);
                }
            }
        }
        let title = piece.title.clone().unwrap_or_default();
        columns.extend(piece_columns.into_iter().map(|part| {
            if programme.len() == 1 {
                part
            } else {
                format!("{title}: {part}")
            }
        }));
    }
    FitMatrixView {
        rows,
        columns,
        cells,
        not_allowed: BTreeMap::new(),
        left_out: left_out.to_vec(),
        cautions: crate::cautions::cautions(),
    }
}

/// Singer × section over the programme: the matrix the placement uses.
pub fn fit_by_section(
    roster: &Roster,
    left_out: &[String],
    programme: &[Piece],
    layout: &Layout,
) -> Result<FitMatrixView, UseCaseError> {
    let matrix = section_fit_matrix(roster, programme, layout, &SectionFitConfig::default())?;
    Ok(section_matrix_view(&matrix, left_out))
}

/// The view of a section-fit matrix.
pub fn section_matrix_view(matrix: &SectionFitMatrix, left_out: &[String]) -> FitMatrixView {
    let mut not_allowed = BTreeMap::new();
    let cells = matrix
        .details
        .iter()
        .map(|row| {
            row.iter()
                .map(|detail| {
                    let Some(fit) = detail.fit else {
                        if let Some(reason) = &detail.not_allowed {
                            not_allowed.insert(
                                format!("{} / {}", detail.singer, detail.section),
                                reason.clone(),
                            );
                        }
                        return None;
                    };
                    let mut reserves = ReserveView::default();
                    let mut worst = Vec::new();
                    for piece in &detail.pieces {
                        for line in &piece.lines {
                            let cell = line_cell(&piece.piece, &line.line, &line.fit);
                            reserves.upper = tighter(reserves.upper, cell.reserves.upper);
                            reserves.lower = tighter(reserves.lower, cell.reserves.lower);
                            worst.extend(cell.worst);
                        }
                    }
                    Some(FitCell {
                        fit,
                        outside_share: detail.outside_comfort_share,
                        outside_seconds: None,
                        severity: detail.severity_semitones,
                        beyond_range_seconds: detail.beyond_range_seconds,
                        sung_seconds: detail.sung_seconds,
                        reserves,
                        worst,
                    })
                })
                .collect()
        })
        .collect();
    FitMatrixView {
        rows: matrix.singers.clone(),
        columns: matrix.sections.clone(),
        cells,
        not_allowed,
        left_out: left_out.to_vec(),
        cautions: crate::cautions::cautions(),
    }
}

/// A placement as the front ends show it: `ambit place --json`, with the
/// singers left out for want of a range.
#[derive(Debug, Clone, Serialize)]
pub struct PlacementView {
    #[serde(flatten)]
    pub placement: PlaceJson,
    #[serde(rename = "leftOut")]
    pub left_out: Vec<String>,
    /// Moves that can be undone and redone now.
    #[serde(rename = "canUndo")]
    pub can_undo: bool,
    #[serde(rename = "canRedo")]
    pub can_redo: bool,
}

/// The moved singer's fit before and after a move.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MovedSinger {
    pub name: String,
    pub from: String,
    pub to: String,
    pub before: f64,
    pub after: f64,
}

/// One section's size and mean fit before and after a move.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct SectionChange {
    pub section: String,
    pub count_before: usize,
    pub count_after: usize,
    pub mean_before: Option<f64>,
    pub mean_after: Option<f64>,
}

/// What a move changed; the move has been applied to the session.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct MoveView {
    pub objective_delta: f64,
    pub objective_after: f64,
    pub singer: MovedSinger,
    pub sections: Vec<SectionChange>,
    pub at_risk_after: bool,
    /// Constraints the new seating breaks (empty = still valid).
    pub violations: Vec<Violation>,
    /// The whole placement after the move.
    pub placement: PlacementView,
}

/// The optimum for a programme and the director's moves since.
#[derive(Debug, Clone)]
pub struct PlacementSession {
    pub roster: Roster,
    pub left_out: Vec<String>,
    pub matrix: SectionFitMatrix,
    pub problem: PlacementProblem,
    /// The seating now on screen: the optimum with the moves made since.
    pub placement: Placement,
    undo: Vec<Placement>,
    redo: Vec<Placement>,
}

impl PlacementSession {
    /// Poses and solves the placement of `roster` over `programme` under
    /// `constraints` (`plan::place_programme`).
    pub fn solve(
        roster: &Roster,
        left_out: &[String],
        programme: &[Piece],
        layout: &Layout,
        constraints: &PlanConstraints,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Self, UseCaseError> {
        if programme.is_empty() {
            return Err(UseCaseError::Invalid(
                "the programme has no pieces; add a score first".into(),
            ));
        }
        cancel.check()?;
        progress.step(0, 2, "Fit and placement");
        let placed = place_programme(
            roster,
            programme,
            layout,
            constraints,
            &ProgrammeConfig::default(),
        )?;
        cancel.check()?;
        progress.step(2, 2, "Placed");
        Ok(Self {
            roster: roster.clone(),
            left_out: left_out.to_vec(),
            matrix: placed.matrix,
            problem: placed.problem,
            placement: placed.placement,
            undo: Vec::new(),
            redo: Vec::new(),
        })
    }

    /// The seating now on screen, with the divisi chosen for it.
    pub fn view(&self) -> Result<PlacementView, UseCaseError> {
        let divisi = divisi_choices(
            &self.roster,
            &self.matrix,
            &self.placement,
            &ProgrammeConfig::default(),
        )?;
        Ok(PlacementView {
            placement: place_view(&self.matrix, &self.placement, &divisi),
            left_out: self.left_out.clone(),
            can_undo: !self.undo.is_empty(),
            can_redo: !self.redo.is_empty(),
        })
    }

    /// Moves `name` to `section` (a what-if the director keeps), whatever
    /// the constraints say; what it breaks is in the answer.
    pub fn move_singer(&mut self, name: &str, section: &str) -> Result<MoveView, UseCaseError> {
        let singer = self
            .problem
            .singers
            .iter()
            .position(|candidate| candidate == name.trim())
            .ok_or_else(|| {
                UseCaseError::NotFound(format!("no singer called \"{name}\" in the placement"))
            })?;
        let target = self
            .problem
            .sections
            .iter()
            .position(|candidate| candidate.eq_ignore_ascii_case(section.trim()))
            .ok_or_else(|| {
                UseCaseError::NotFound(format!(
                    "no section \"{section}\" in the layout (sections: {})",
                    self.problem.sections.join(", ")
                ))
            })?;
        let config = PlacementConfig::default();
        let change = what_if(&self.problem, &self.placement, singer, target, &config)?;
        let mut section_of: Vec<usize> = self
            .placement
            .assignments
            .iter()
            .map(|assignment| assignment.section_index)
            .collect();
        if let Some(slot) = section_of.get_mut(singer) {
            *slot = target;
        }
        let moved = evaluate(&self.problem, &section_of, &config)?;
        let before = std::mem::replace(&mut self.placement, moved);
        self.undo.push(before);
        self.redo.clear();
        Ok(MoveView {
            objective_delta: change.objective_delta,
            objective_after: change.objective_after,
            singer: MovedSinger {
                name: change.singer,
                from: change.from_section,
                to: change.to_section,
                before: change.fit_before,
                after: change.fit_after,
            },
            sections: change
                .sections
                .into_iter()
                .map(|delta| SectionChange {
                    section: delta.section,
                    count_before: delta.count_before,
                    count_after: delta.count_after,
                    mean_before: delta.mean_fit_before,
                    mean_after: delta.mean_fit_after,
                })
                .collect(),
            at_risk_after: change.at_risk_after,
            violations: change.violations,
            placement: self.view()?,
        })
    }

    /// Takes back the last move; `None` when there is nothing to undo.
    pub fn undo(&mut self) -> Result<Option<PlacementView>, UseCaseError> {
        let Some(previous) = self.undo.pop() else {
            return Ok(None);
        };
        let current = std::mem::replace(&mut self.placement, previous);
        self.redo.push(current);
        self.view().map(Some)
    }

    /// Makes the last undone move again; `None` when there is nothing to redo.
    pub fn redo(&mut self) -> Result<Option<PlacementView>, UseCaseError> {
        let Some(next) = self.redo.pop() else {
            return Ok(None);
        };
        let current = std::mem::replace(&mut self.placement, next);
        self.undo.push(current);
        self.view().map(Some)
    }

    /// The seating now on screen as CSV (`views::seating_to_csv`).
    pub fn seating_csv(&self) -> Result<String, UseCaseError> {
        seating_to_csv(&self.placement, &self.matrix.sections)
            .map_err(|error| UseCaseError::Invalid(format!("the seating list: {error}")))
    }
}
