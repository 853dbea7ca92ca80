//! Fit, placement and transposition: the singer × part (or section) fit
//! matrix, the optimal placement (a job), what-if moves, saved scenarios,
//! the key sweep, and the cautions.

use std::collections::BTreeMap;
use std::path::PathBuf;

use ambit::cautions;
use ambit::fit::{FitConfig, SectionFitConfig, SectionFitMatrix, piece_fits, section_fit_matrix};
use ambit::library::{Library, ScenarioInput};
use ambit::placement::{
    PlacementConfig, PlacementError, SizeLimit, Violation, evaluate, place, what_if,
};
use ambit::plan::{PlanConstraints, ProgrammeConfig, divisi_choices, placement_problem};
use ambit::report::write_atomically;
use ambit::roster::Roster;
use ambit::score::Piece;
use ambit::sections::Layout;
use ambit::transpose::{TransposeConfig, choir_keys};
use ambit::views::{place_view, seating_to_csv};
use serde::{Deserialize, Serialize};
use tauri::{AppHandle, Runtime, State};

use super::pieces::{find_piece, read_stored};
use super::text;
use crate::state::{AppState, CurrentPlacement, lock};

/// The library's active roster and the stored pieces named in `titles`
/// (every piece when `titles` is empty), read back from their score files.
pub fn roster_and_programme(
    library: &Library,
    titles: &[String],
) -> Result<(Roster, Vec<String>, Vec<Piece>), String> {
    let (roster, left_out) = library.roster().map_err(text)?;
    let records = if titles.is_empty() {
        library.pieces().map_err(text)?
    } else {
        titles
            .iter()
            .map(|title| find_piece(library, title).map_err(text))
            .collect::<Result<Vec<_>, _>>()?
    };
    if records.is_empty() {
        return Err("the library has no pieces yet; import a score first".into());
    }
    let programme = records
        .iter()
        .map(read_stored)
        .collect::<Result<Vec<_>, _>>()?;
    Ok((roster, left_out, programme))
}

/// Where a singer's worst stretch of a line lies.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WorstView {
    pub piece: String,
    pub line: String,
    pub bars: String,
    pub seconds: f64,
    pub side: String,
}

/// The reserves (Herbst et al. 2012), in semitones: the singer's top minus
/// the line's top, the line's bottom minus the singer's bottom.
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

/// One cell of the fit heatmap with the figures behind it.
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

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
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

fn line_cell(piece: &str, line: &str, fit: &ambit::fit::PartFit) -> FitCell {
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
pub fn fit_by_part(roster: &Roster, programme: &[Piece]) -> FitMatrixView {
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
        left_out: Vec::new(),
        cautions: cautions::cautions(),
    }
}

/// Singer × section over the programme (the matrix the placement uses).
pub fn fit_by_section(matrix: &SectionFitMatrix) -> FitMatrixView {
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
        left_out: Vec::new(),
        cautions: cautions::cautions(),
    }
}

#[tauri::command(async)]
pub fn fit_matrix(
    state: State<'_, AppState>,
    pieces: Vec<String>,
    layout: String,
    by: String,
) -> Result<FitMatrixView, String> {
    let (roster, left_out, programme) =
        state.using(|library| roster_and_programme(library, &pieces))?;
    let mut view = match by.as_str() {
        "part" => fit_by_part(&roster, &programme),
        "section" => {
            let layout = Layout::parse(&layout).map_err(text)?;
            let matrix =
                section_fit_matrix(&roster, &programme, &layout, &SectionFitConfig::default())
                    .map_err(text)?;
            fit_by_section(&matrix)
        }
        other => {
            return Err(format!(
                "by must be \"part\" or \"section\", not \"{other}\""
            ));
        }
    };
    view.left_out = left_out;
    Ok(view)
}

/// The director's constraints as the UI sends them.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ConstraintsInput {
    /// Section → [min, max].
    #[serde(default)]
    pub sizes: BTreeMap<String, (usize, usize)>,
    /// Singer → section.
    #[serde(default)]
    pub locks: BTreeMap<String, String>,
    /// [singer, section] pairs.
    #[serde(default)]
    pub exclusions: Vec<(String, String)>,
}

pub fn plan_constraints(input: &ConstraintsInput) -> Result<PlanConstraints, String> {
    let mut sizes = Vec::new();
    for (section, (min, max)) in &input.sizes {
        if min > max {
            return Err(format!(
                "size of {section}: the minimum {min} is above the maximum {max}"
            ));
        }
        sizes.push((
            section.clone(),
            SizeLimit {
                min: *min,
                max: *max,
            },
        ));
    }
    Ok(PlanConstraints {
        sizes,
        locks: input
            .locks
            .iter()
            .map(|(name, section)| (name.clone(), section.clone()))
            .collect(),
        exclusions: input.exclusions.clone(),
        balance: None,
    })
}

/// Poses and solves the placement; returns the current placement and its
/// `ambit place --json` view (with `leftOut`).
pub fn solve(
    roster: &Roster,
    left_out: &[String],
    programme: &[Piece],
    layout: &str,
    constraints: &ConstraintsInput,
    step: impl Fn(usize, usize, &str) -> Result<(), String>,
) -> Result<(CurrentPlacement, serde_json::Value), String> {
    let layout = Layout::parse(layout).map_err(text)?;
    let constraints = plan_constraints(constraints)?;
    step(0, 3, "fit")?;
    let matrix = section_fit_matrix(roster, programme, &layout, &SectionFitConfig::default())
        .map_err(text)?;
    step(1, 3, "placement")?;
    let problem = placement_problem(&matrix, &constraints).map_err(text)?;
    let placement = match place(&problem, &PlacementConfig::default()) {
        Ok(placement) => placement,
        Err(PlacementError::Infeasible { reasons }) => {
            let lines: Vec<String> = reasons
                .iter()
                .map(|reason| reason.message.clone())
                .collect();
            return Err(format!(
                "no placement meets every constraint: {}",
                lines.join("; ")
            ));
        }
        Err(error) => return Err(text(error)),
    };
    step(2, 3, "report")?;
    let divisi =
        divisi_choices(roster, &matrix, &placement, &ProgrammeConfig::default()).map_err(text)?;
    let mut view = serde_json::to_value(place_view(&matrix, &placement, &divisi)).map_err(text)?;
    if let Some(object) = view.as_object_mut() {
        object.insert("leftOut".into(), serde_json::json!(left_out));
    }
    Ok((
        CurrentPlacement {
            problem,
            placement,
            matrix,
            roster: roster.clone(),
        },
        view,
    ))
}

#[tauri::command]
pub fn place_solve<R: Runtime>(
    app: AppHandle<R>,
    state: State<'_, AppState>,
    pieces: Vec<String>,
    layout: String,
    sizes: Option<BTreeMap<String, (usize, usize)>>,
    locks: Option<BTreeMap<String, String>>,
    exclusions: Option<Vec<(String, String)>>,
) -> Result<u64, String> {
    let (roster, left_out, programme) =
        state.using(|library| roster_and_programme(library, &pieces))?;
    let constraints = ConstraintsInput {
        sizes: sizes.unwrap_or_default(),
        locks: locks.unwrap_or_default(),
        exclusions: exclusions.unwrap_or_default(),
    };
    state.jobs.spawn(&app, move |job| {
        let (current, view) = solve(
            &roster,
            &left_out,
            &programme,
            &layout,
            &constraints,
            |done, total, label| {
                job.check()?;
                job.progress(done, total, label);
                Ok(())
            },
        )?;
        job.check()?;
        if let Some(state) = tauri::Manager::try_state::<AppState>(job.app()) {
            *lock(&state.placement) = Some(current);
        }
        Ok(view)
    })
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MovedSinger {
    pub name: String,
    pub from: String,
    pub to: String,
    pub before: f64,
    pub after: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct SectionChange {
    pub section: String,
    pub count_before: usize,
    pub count_after: usize,
    pub mean_before: Option<f64>,
    pub mean_after: Option<f64>,
}

/// What a move changed; the move is applied to the current placement.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct MoveView {
    pub objective_delta: f64,
    pub objective_after: f64,
    pub singer: MovedSinger,
    pub sections: Vec<SectionChange>,
    pub at_risk_after: bool,
    /// Constraints the new seating breaks (empty = still valid).
    pub violations: Vec<Violation>,
    /// The whole placement after the move, as `ambit place --json`.
    pub placement: serde_json::Value,
}

pub fn apply_move(
    current: &mut CurrentPlacement,
    name: &str,
    section: &str,
) -> Result<MoveView, String> {
    let singer = current
        .problem
        .singers
        .iter()
        .position(|candidate| candidate == name.trim())
        .ok_or_else(|| format!("no singer called \"{name}\" in the placement"))?;
    let target = current
        .problem
        .sections
        .iter()
        .position(|candidate| candidate.eq_ignore_ascii_case(section.trim()))
        .ok_or_else(|| {
            format!(
                "no section \"{section}\" in the layout (sections: {})",
                current.problem.sections.join(", ")
            )
        })?;
    let config = PlacementConfig::default();
    let change = what_if(
        &current.problem,
        &current.placement,
        singer,
        target,
        &config,
    )
    .map_err(text)?;
    let mut section_of: Vec<usize> = current
        .placement
        .assignments
        .iter()
        .map(|assignment| assignment.section_index)
        .collect();
    if let Some(slot) = section_of.get_mut(singer) {
        *slot = target;
    }
    let moved = evaluate(&current.problem, &section_of, &config).map_err(text)?;
    let divisi = divisi_choices(
        &current.roster,
        &current.matrix,
        &moved,
        &ProgrammeConfig::default(),
    )
    .map_err(text)?;
    let view = serde_json::to_value(place_view(&current.matrix, &moved, &divisi)).map_err(text)?;
    current.placement = moved;
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
        placement: view,
    })
}

#[tauri::command]
pub fn place_move(
    state: State<'_, AppState>,
    name: String,
    section: String,
) -> Result<MoveView, String> {
    let mut guard = lock(&state.placement);
    let current = guard
        .as_mut()
        .ok_or_else(|| "no placement yet: run the optimiser first".to_string())?;
    apply_move(current, &name, &section)
}

/// Writes the seating list now on screen (the optimum with the moves made
/// since) as CSV (`ambit::views::seating_to_csv`), whole or not at all.
/// Returns the number of singers written.
#[tauri::command]
pub fn seating_export(state: State<'_, AppState>, path: PathBuf) -> Result<usize, String> {
    let (csv, rows) = {
        let guard = lock(&state.placement);
        let current = guard
            .as_ref()
            .ok_or_else(|| "no placement yet: run the optimiser first".to_string())?;
        let csv = seating_to_csv(&current.placement, &current.matrix.sections)
            .map_err(|error| format!("{}: {error}", path.display()))?;
        (csv, current.placement.assignments.len())
    };
    write_atomically(&path, csv.as_bytes()).map_err(text)?;
    Ok(rows)
}

#[tauri::command]
pub fn scenario_save(
    state: State<'_, AppState>,
    name: String,
    notes: Option<String>,
    result: serde_json::Value,
    constraints: Option<serde_json::Value>,
) -> Result<i64, String> {
    if name.trim().is_empty() {
        return Err("a scenario needs a name".into());
    }
    let layout = ambit::views::place_view_layout(&result);
    state.with_library(|library| {
        library.save_scenario(&ScenarioInput {
            name,
            programme: None,
            layout,
            constraints: constraints.unwrap_or(serde_json::Value::Null),
            result,
            notes: notes.filter(|notes| !notes.trim().is_empty()),
        })
    })
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct ScenarioRow {
    pub id: i64,
    pub name: String,
    pub saved_at: String,
    pub notes: Option<String>,
    pub objective: Option<f64>,
    pub result: serde_json::Value,
}

#[tauri::command]
pub fn scenarios_list(state: State<'_, AppState>) -> Result<Vec<ScenarioRow>, String> {
    state.with_library(|library| {
        Ok(library
            .scenarios()?
            .into_iter()
            .map(|scenario| ScenarioRow {
                id: scenario.id,
                objective: scenario
                    .result
                    .get("objective")
                    .and_then(|value| value.as_f64()),
                name: scenario.name,
                saved_at: scenario.saved_at,
                notes: scenario.notes,
                result: scenario.result,
            })
            .collect())
    })
}

/// The key sweep for the choir as placed (`ambit transpose --json`, choir mode).
#[tauri::command(async)]
pub fn transpose_advice(
    state: State<'_, AppState>,
    title: String,
) -> Result<serde_json::Value, String> {
    let (roster, _, programme) =
        state.using(|library| roster_and_programme(library, std::slice::from_ref(&title)))?;
    let piece = programme
        .first()
        .ok_or_else(|| format!("piece \"{title}\" not found"))?;
    let advice = choir_keys(&roster, piece, &TransposeConfig::default()).map_err(text)?;
    let mut value = serde_json::to_value(advice).map_err(text)?;
    if let Some(object) = value.as_object_mut() {
        object.insert("mode".into(), "choir".into());
        object.insert("file".into(), title.into());
        object.insert("cautions".into(), serde_json::json!(cautions::cautions()));
    }
    Ok(value)
}

#[tauri::command]
pub fn cautions() -> Vec<String> {
    cautions::cautions()
}
