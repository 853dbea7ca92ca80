//! Fit, placement and transposition: the singer × part (or section) fit
//! matrix, the optimal placement (a job), what-if moves, saved scenarios,
//! the key sweep, and the cautions.

use crate::error::AppError;
use std::collections::BTreeMap;
use std::path::PathBuf;

use ambit::cautions;
use ambit::library::ScenarioInput;
use ambit::placement::SizeLimit;
use ambit::plan::PlanConstraints;
use ambit::report::write_atomically;
use ambit::sections::Layout;
use ambit::transpose::{TransposeConfig, choir_keys};
use ambit::usecases::pieces::roster_and_pieces;
use ambit::usecases::placement::{
    FitMatrixView, MoveView, PlacementSession, PlacementView, fit_by_part, fit_by_section,
};
use serde::{Deserialize, Serialize};
use tauri::{AppHandle, Runtime, State};

use super::text;
use crate::state::{AppState, lock};

#[tauri::command(async)]
pub fn fit_matrix(
    state: State<'_, AppState>,
    pieces: Vec<String>,
    layout: String,
    by: String,
) -> Result<FitMatrixView, AppError> {
    let (roster, left_out, programme) =
        state.using(|library| roster_and_pieces(library, &pieces).map_err(text))?;
    match by.as_str() {
        "part" => Ok(fit_by_part(&roster, &left_out, &programme)),
        "section" => {
            let layout = Layout::parse(&layout).map_err(text)?;
            fit_by_section(&roster, &left_out, &programme, &layout).map_err(text)
        }
        other => Err(AppError::invalid(format!(
            "by must be \"part\" or \"section\", not \"{other}\""
        ))),
    }
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

pub fn plan_constraints(input: &ConstraintsInput) -> Result<PlanConstraints, AppError> {
    let mut sizes = Vec::new();
    for (section, (min, max)) in &input.sizes {
        if min > max {
            return Err(AppError::invalid(format!(
                "size of {section}: the minimum {min} is above the maximum {max}"
            )));
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

#[tauri::command]
pub fn place_solve<R: Runtime>(
    app: AppHandle<R>,
    state: State<'_, AppState>,
    pieces: Vec<String>,
    layout: String,
    sizes: Option<BTreeMap<String, (usize, usize)>>,
    locks: Option<BTreeMap<String, String>>,
    exclusions: Option<Vec<(String, String)>>,
) -> Result<u64, AppError> {
    let (roster, left_out, programme) =
        state.using(|library| roster_and_pieces(library, &pieces).map_err(text))?;
    let constraints = plan_constraints(&ConstraintsInput {
        sizes: sizes.unwrap_or_default(),
        locks: locks.unwrap_or_default(),
        exclusions: exclusions.unwrap_or_default(),
    })?;
    let layout = Layout::parse(&layout).map_err(text)?;
    state.jobs.spawn(&app, move |job| {
        let session = PlacementSession::solve(
            &roster,
            &left_out,
            &programme,
            &layout,
            &constraints,
            &|done: usize, total: usize, label: &str| job.progress(done, total, label),
            &job.cancel_token(),
        )
        .map_err(text)?;
        let view = session.view().map_err(text)?;
        job.check()?;
        if let Some(state) = tauri::Manager::try_state::<AppState>(job.app()) {
            *lock(&state.placement) = Some(session);
        }
        serde_json::to_value(view).map_err(text)
    })
}

#[tauri::command]
pub fn place_move(
    state: State<'_, AppState>,
    name: String,
    section: String,
) -> Result<MoveView, AppError> {
    let mut guard = lock(&state.placement);
    let session = guard
        .as_mut()
        .ok_or_else(|| "no placement yet: run the optimiser first".to_string())?;
    session.move_singer(&name, &section).map_err(text)
}

/// Takes back the last move; `null` when there is nothing to undo.
#[tauri::command]
pub fn place_undo(state: State<'_, AppState>) -> Result<Option<PlacementView>, AppError> {
    let mut guard = lock(&state.placement);
    let session = guard
        .as_mut()
        .ok_or_else(|| "no placement yet: run the optimiser first".to_string())?;
    session.undo().map_err(text)
}

/// Makes the last undone move again; `null` when there is nothing to redo.
#[tauri::command]
pub fn place_redo(state: State<'_, AppState>) -> Result<Option<PlacementView>, AppError> {
    let mut guard = lock(&state.placement);
    let session = guard
        .as_mut()
        .ok_or_else(|| "no placement yet: run the optimiser first".to_string())?;
    session.redo().map_err(text)
}

/// Writes the seating list now on screen (the optimum with the moves made
/// since) as CSV (`ambit::views::seating_to_csv`), whole or not at all.
/// Returns the number of singers written.
#[tauri::command]
pub fn seating_export(state: State<'_, AppState>, path: PathBuf) -> Result<usize, AppError> {
    let (csv, rows) = {
        let guard = lock(&state.placement);
        let session = guard
            .as_ref()
            .ok_or_else(|| "no placement yet: run the optimiser first".to_string())?;
        let csv = session
            .seating_csv()
            .map_err(|error| format!("{}: {error}", path.display()))?;
        (csv, session.placement.assignments.len())
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
) -> Result<i64, AppError> {
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
pub fn scenarios_list(state: State<'_, AppState>) -> Result<Vec<ScenarioRow>, AppError> {
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
) -> Result<serde_json::Value, AppError> {
    let (roster, _, programme) = state
        .using(|library| roster_and_pieces(library, std::slice::from_ref(&title)).map_err(text))?;
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
