//! Pieces screen: import a score (copied into the library with its part
//! analysis), the per-part view as `ambit parts --json`, the section
//! mapping with the director's overrides, notation excerpts.

use crate::error::AppError;
use std::collections::BTreeMap;
use std::path::PathBuf;

use ambit::usecases::Quiet;
use ambit::usecases::pieces::{
    ImportOptions, MappingChoice, PieceView, find_piece, import_piece, set_mapping, stored_view,
};
use serde::{Deserialize, Serialize};
use tauri::State;

use super::text;
use crate::state::AppState;

/// One row of the pieces list.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PieceRow {
    pub title: String,
    pub file: String,
    pub sha256: String,
    pub parts: usize,
}

#[tauri::command]
pub fn pieces_list(state: State<'_, AppState>) -> Result<Vec<PieceRow>, AppError> {
    state.with_library(|library| {
        let mut rows = Vec::new();
        for piece in library.pieces()? {
            let parts = library
                .piece_analysis(&piece.title)?
                .as_array()
                .map_or(0, Vec::len);
            rows.push(PieceRow {
                title: piece.title,
                file: piece.original_name,
                sha256: piece.sha256,
                parts,
            });
        }
        Ok(rows)
    })
}

/// Imports a score file: it is read, analysed, and stored in the library
/// under its title (the score's own, else the file name).
#[tauri::command(async)]
pub fn piece_import(
    state: State<'_, AppState>,
    path: PathBuf,
    layout: Option<String>,
) -> Result<PieceView, AppError> {
    let options = ImportOptions {
        mapping: layout.map(|layout| MappingChoice {
            layout: Some(layout),
            overrides: BTreeMap::new(),
        }),
        ..ImportOptions::default()
    };
    state.using(|library| {
        import_piece(library, &path, &options, &Quiet)
            .map(|imported| imported.view)
            .map_err(text)
    })
}

#[tauri::command(async)]
pub fn piece_analysis(
    state: State<'_, AppState>,
    title: String,
    layout: Option<String>,
) -> Result<PieceView, AppError> {
    state.using(|library| stored_view(library, &title, layout).map_err(text))
}

/// Stores the director's mapping (layout and part overrides) and returns
/// the piece under it.
#[tauri::command(async)]
pub fn piece_set_mapping(
    state: State<'_, AppState>,
    title: String,
    overrides: BTreeMap<String, Option<String>>,
    layout: Option<String>,
) -> Result<PieceView, AppError> {
    state.using(|library| set_mapping(library, &title, overrides, layout).map_err(text))
}

/// The bars `first_bar`…`last_bar` of one part of a stored MusicXML piece,
/// as a MusicXML document for the notation renderer.
#[tauri::command(async)]
pub fn notation_excerpt(
    state: State<'_, AppState>,
    title: String,
    part: String,
    first_bar: serde_json::Value,
    last_bar: serde_json::Value,
) -> Result<String, AppError> {
    // Printed bar numbers are text in MusicXML ("12", "12a"); the UI may send numbers.
    let bar = |value: &serde_json::Value| match value {
        serde_json::Value::String(text) => text.clone(),
        other => other.to_string(),
    };
    let record = state.with_library(|library| find_piece(library, &title))?;
    ambit::score::musicxml_excerpt(&record.path, &part, &bar(&first_bar), &bar(&last_bar))
        .map_err(text)
}
