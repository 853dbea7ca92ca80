//! Singers screen: the roster, typed-in singers, archive, delete (which
//! removes the recordings), roster CSV import and export, and a singer's
//! history of measured profiles.

use crate::error::AppError;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use ambit::library::{ImportPlan, RECORDINGS_DIR, SingerRecord, SingerSource};
use ambit::pitch::nearest_name;
use ambit::roster::{Roster, parse_roster_csv, roster_to_csv};
use ambit::voice::Profile;
use serde::{Deserialize, Serialize};
use tauri::State;

use super::text;
use crate::state::AppState;

/// One row of the roster table (`singers_list`): pitches as note names, and
/// as MIDI numbers for drawing.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct SingerRow {
    pub name: String,
    pub section: Option<String>,
    pub voice_type: Option<String>,
    pub range_low: Option<String>,
    pub range_high: Option<String>,
    pub comfort_low: Option<String>,
    pub comfort_high: Option<String>,
    pub primo: Option<String>,
    pub secondo: Option<String>,
    pub range_low_midi: Option<f64>,
    pub range_high_midi: Option<f64>,
    pub comfort_low_midi: Option<f64>,
    pub comfort_high_midi: Option<f64>,
    pub archived: bool,
    /// "measured", "typed" or "none".
    pub source: String,
    pub auditions: u64,
    pub notes: Option<String>,
}

pub fn singer_row(record: &SingerRecord) -> SingerRow {
    let current = record.current.as_ref();
    let name = |midi: Option<f64>| midi.map(nearest_name);
    SingerRow {
        name: record.name.clone(),
        section: current
            .and_then(|singer| singer.section.clone())
            .or_else(|| record.section.clone()),
        voice_type: current
            .and_then(|singer| singer.voice_type.clone())
            .or_else(|| record.voice_type.clone()),
        range_low: name(current.map(|singer| singer.range_low_midi)),
        range_high: name(current.map(|singer| singer.range_high_midi)),
        comfort_low: name(current.map(|singer| singer.comfort_low_midi)),
        comfort_high: name(current.map(|singer| singer.comfort_high_midi)),
        primo: name(current.and_then(|singer| singer.primo_midi)),
        secondo: name(current.and_then(|singer| singer.secondo_midi)),
        range_low_midi: current.map(|singer| singer.range_low_midi),
        range_high_midi: current.map(|singer| singer.range_high_midi),
        comfort_low_midi: current.map(|singer| singer.comfort_low_midi),
        comfort_high_midi: current.map(|singer| singer.comfort_high_midi),
        archived: record.archived,
        source: match record.source {
            SingerSource::Measured => "measured",
            SingerSource::Typed => "typed",
            SingerSource::None => "none",
        }
        .to_string(),
        auditions: record.auditions,
        notes: record.notes.clone(),
    }
}

#[tauri::command]
pub fn singers_list(
    state: State<'_, AppState>,
    include_archived: Option<bool>,
) -> Result<Vec<SingerRow>, AppError> {
    state.with_library(|library| {
        Ok(library
            .singers(include_archived.unwrap_or(false))?
            .iter()
            .map(singer_row)
            .collect())
    })
}

/// A singer typed in by hand: the columns of a roster CSV row, pitches as
/// note names or MIDI numbers.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct TypedRow {
    pub name: String,
    pub range_low: String,
    pub range_high: String,
    pub comfort_low: String,
    pub comfort_high: String,
    #[serde(default)]
    pub primo: Option<String>,
    #[serde(default)]
    pub secondo: Option<String>,
    #[serde(default)]
    pub voice_type: Option<String>,
    #[serde(default)]
    pub section: Option<String>,
    #[serde(default)]
    pub notes: Option<String>,
}

fn csv_field(value: &str) -> String {
    format!("\"{}\"", value.replace('"', "\"\""))
}

/// The typed row through the one roster parser, so a typed singer is
/// checked exactly like a roster file's row.
pub fn typed_roster(row: &TypedRow) -> Result<Roster, AppError> {
    let optional = |value: &Option<String>| value.clone().unwrap_or_default();
    let fields = [
        row.name.clone(),
        row.range_low.clone(),
        row.range_high.clone(),
        row.comfort_low.clone(),
        row.comfort_high.clone(),
        optional(&row.primo),
        optional(&row.secondo),
        optional(&row.voice_type),
        optional(&row.section),
        optional(&row.notes),
    ];
    let line: Vec<String> = fields.iter().map(|field| csv_field(field)).collect();
    let csv = format!(
        "name,range_low,range_high,comfort_low,comfort_high,primo,secondo,voice_type,section,notes\n{}\n",
        line.join(",")
    );
    parse_roster_csv(Path::new("typed-in singer"), csv.as_bytes()).map_err(text)
}

#[tauri::command]
pub fn singer_add_typed(state: State<'_, AppState>, row: TypedRow) -> Result<SingerRow, AppError> {
    let roster = typed_roster(&row)?;
    state.with_library(|library| {
        library.import_roster(&roster)?;
        let name = row.name.trim().to_lowercase();
        library
            .singers(true)?
            .iter()
            .find(|record| record.name.to_lowercase() == name)
            .map(singer_row)
            .ok_or_else(|| ambit::library::LibraryError::UnknownSinger {
                file: library.database_path().to_path_buf(),
                name: row.name.clone(),
            })
    })
}

#[tauri::command]
pub fn singer_set_archived(
    state: State<'_, AppState>,
    name: String,
    archived: bool,
) -> Result<(), AppError> {
    state.with_library(|library| library.set_archived(&name, archived))
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct Deleted {
    /// The recording files deleted from disk.
    pub removed_files: Vec<PathBuf>,
}

fn files_in(folder: &Path) -> BTreeSet<PathBuf> {
    std::fs::read_dir(folder)
        .map(|entries| {
            entries
                .filter_map(|entry| entry.ok().map(|entry| entry.path()))
                .collect()
        })
        .unwrap_or_default()
}

/// Deletes the singer and every recording only they used; returns the
/// files that are gone from disk.
#[tauri::command]
pub fn singer_delete(state: State<'_, AppState>, name: String) -> Result<Deleted, AppError> {
    state.with_library(|library| {
        let recordings = library.folder().join(RECORDINGS_DIR);
        let before = files_in(&recordings);
        library.delete_singer(&name)?;
        let after = files_in(&recordings);
        Ok(Deleted {
            removed_files: before.difference(&after).cloned().collect(),
        })
    })
}

/// What a roster import does (`{ add, change, skip }`), with each change's fields.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ImportView {
    pub add: Vec<String>,
    pub change: Vec<String>,
    pub skip: Vec<String>,
    pub changes: Vec<ambit::library::Change>,
}

fn import_view(plan: ImportPlan) -> ImportView {
    ImportView {
        add: plan.added,
        change: plan
            .changed
            .iter()
            .map(|change| change.name.clone())
            .collect(),
        skip: plan.skipped,
        changes: plan.changed,
    }
}

#[tauri::command(async)]
pub fn roster_import_preview(
    state: State<'_, AppState>,
    path: PathBuf,
) -> Result<ImportView, AppError> {
    state.with_library(|library| library.import_roster_file(&path, true).map(import_view))
}

#[tauri::command(async)]
pub fn roster_import_commit(
    state: State<'_, AppState>,
    path: PathBuf,
) -> Result<ImportView, AppError> {
    state.with_library(|library| library.import_roster_file(&path, false).map(import_view))
}

#[tauri::command(async)]
pub fn roster_export(state: State<'_, AppState>, path: PathBuf) -> Result<(), AppError> {
    let (roster, _) = state.with_library(|library| library.roster())?;
    let csv = roster_to_csv(&roster).map_err(|error| format!("{}: {error}", path.display()))?;
    ambit::report::write_atomically(&path, csv.as_bytes()).map_err(super::text)
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HistoryPoint {
    pub date: String,
    pub profile: Profile,
}

#[tauri::command]
pub fn singer_history(
    state: State<'_, AppState>,
    name: String,
) -> Result<Vec<HistoryPoint>, AppError> {
    state.with_library(|library| {
        Ok(library
            .history(&name)?
            .into_iter()
            .map(|entry| HistoryPoint {
                date: entry.held_on,
                profile: entry.profile,
            })
            .collect())
    })
}
