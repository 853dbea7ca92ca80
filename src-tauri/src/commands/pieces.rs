//! Pieces screen: import a score (copied into the library with its part
//! analysis), the per-part view as `ambit parts --json`, the section
//! mapping with the director's overrides, notation excerpts.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use ambit::fit::MappingSummary;
use ambit::library::{Library, LibraryError, PieceInput, PieceRecord};
use ambit::score::{Piece, ReadOptions, read_score};
use ambit::sections::{Layout, MappingConfig, PartOverride, PieceMapping, map_piece};
use ambit::tessitura::{TessituraConfig, analyse_piece};
use ambit::views::{ScoreJson, score_view};
use serde::{Deserialize, Serialize};
use tauri::State;

use super::text;
use crate::state::AppState;

/// Layout a piece is mapped to when the director has not chosen one.
pub const DEFAULT_LAYOUT: &str = "SATB";

/// One row of the pieces list.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PieceRow {
    pub title: String,
    pub file: String,
    pub sha256: String,
    pub parts: usize,
}

/// The director's mapping choice, as stored with the piece.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct MappingChoice {
    pub layout: Option<String>,
    /// Part name → section (`null` = the part is not sung by the choir).
    #[serde(default)]
    pub overrides: BTreeMap<String, Option<String>>,
}

/// A piece as the Pieces screen shows it: `ambit parts --json` plus the
/// section mapping.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct PieceView {
    #[serde(flatten)]
    pub score: ScoreJson,
    pub layout: String,
    pub overrides: BTreeMap<String, Option<String>>,
    /// Part name → the sections that sing it (empty when the mapping failed).
    pub mapping: BTreeMap<String, Vec<String>>,
    /// The whole mapping: what each section sings, what is left out, and how
    /// the parts were recognised.
    pub mapping_detail: Option<MappingSummary>,
    /// Why the parts could not be mapped to the layout, when they could not.
    pub mapping_error: Option<String>,
}

/// The view of `piece`, titled `title`, under the mapping choice.
pub fn piece_view(title: &str, file: &str, piece: &Piece, choice: &MappingChoice) -> PieceView {
    let parts = analyse_piece(piece, &TessituraConfig::default());
    let mut score = score_view(file, piece, &parts);
    score.title = Some(title.to_string());
    let layout_text = choice
        .layout
        .clone()
        .unwrap_or_else(|| DEFAULT_LAYOUT.to_string());
    let config = MappingConfig {
        overrides: choice
            .overrides
            .iter()
            .map(|(part, line)| PartOverride {
                piece: None,
                part: part.clone(),
                line: line.clone(),
            })
            .collect(),
        ignore_divisi: false,
    };
    let mapped = Layout::parse(&layout_text)
        .map_err(text)
        .and_then(|layout| map_piece(piece, 0, &layout, &config).map_err(text));
    let mut sections_of: BTreeMap<String, Vec<String>> = BTreeMap::new();
    let (mapping_detail, mapping_error) = match mapped {
        Ok(mapping) => {
            for (section, sings) in &mapping.sections {
                for line in sings.lines() {
                    if let Some(part) = piece.parts.get(line.part_index) {
                        let sections = sections_of.entry(part.name.clone()).or_default();
                        let label = section.to_string();
                        if !sections.contains(&label) {
                            sections.push(label);
                        }
                    }
                }
            }
            (Some(MappingSummary::of(&mapping)), None)
        }
        Err(error) => (None, Some(error)),
    };
    PieceView {
        score,
        layout: layout_text,
        overrides: choice.overrides.clone(),
        mapping: sections_of,
        mapping_detail,
        mapping_error,
    }
}

fn file_title(path: &Path) -> String {
    path.file_stem().map_or_else(
        || "untitled".to_string(),
        |stem| stem.to_string_lossy().into_owned(),
    )
}

pub fn find_piece(library: &Library, title: &str) -> Result<PieceRecord, LibraryError> {
    library
        .pieces()?
        .into_iter()
        .find(|piece| piece.title == title.trim())
        .ok_or_else(|| LibraryError::NotFound {
            file: library.database_path().to_path_buf(),
            what: "piece",
            name: title.to_string(),
        })
}

/// Reads a stored piece's score file back.
pub fn read_stored(record: &PieceRecord) -> Result<Piece, String> {
    let mut piece = read_score(&record.path, &ReadOptions::default())
        .map_err(|error| format!("{} ({}): {error}", record.title, record.original_name))?;
    piece.title = Some(record.title.clone());
    Ok(piece)
}

fn stored_choice(library: &Library, title: &str) -> Result<MappingChoice, String> {
    let Some(value) = library.piece_mapping(title).map_err(text)? else {
        return Ok(MappingChoice::default());
    };
    // The CLI and the demo seeding store the engine's whole mapping: keep
    // its layout (the sections it maps to), with no overrides.
    if let Ok(mapping) = serde_json::from_value::<PieceMapping>(value.clone()) {
        let labels: Vec<String> = mapping
            .sections
            .iter()
            .map(|(section, _)| section.to_string())
            .collect();
        // Named as the layout that has exactly these sections, when one does.
        let named = ["SATB", "SSAATTBB", "SSA", "SSAA", "TTBB", "SAB"]
            .into_iter()
            .find(|name| Layout::parse(name).is_ok_and(|layout| layout.labels() == labels))
            .map_or_else(|| labels.join(","), str::to_string);
        return Ok(MappingChoice {
            layout: Some(named),
            overrides: BTreeMap::new(),
        });
    }
    serde_json::from_value(value)
        .map_err(|error| format!("the section mapping of {title} cannot be read: {error}"))
}

#[tauri::command]
pub fn pieces_list(state: State<'_, AppState>) -> Result<Vec<PieceRow>, String> {
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
pub fn import(
    library: &mut Library,
    path: &Path,
    layout: Option<String>,
) -> Result<PieceView, String> {
    let piece = read_score(path, &ReadOptions::default()).map_err(text)?;
    let title = piece
        .title
        .clone()
        .filter(|title| !title.trim().is_empty())
        .unwrap_or_else(|| file_title(path));
    let analysis = analyse_piece(&piece, &TessituraConfig::default());
    let choice = MappingChoice {
        layout,
        overrides: BTreeMap::new(),
    };
    let input = PieceInput {
        title: title.clone(),
        score: path.to_path_buf(),
        analysis: serde_json::to_value(&analysis).map_err(text)?,
        mapping: choice
            .layout
            .as_ref()
            .map(|_| serde_json::to_value(&choice))
            .transpose()
            .map_err(text)?,
    };
    library.add_piece(&input, None).map_err(text)?;
    let file = path.file_name().map_or_else(
        || path.display().to_string(),
        |name| name.to_string_lossy().into_owned(),
    );
    Ok(piece_view(&title, &file, &piece, &choice))
}

#[tauri::command(async)]
pub fn piece_import(
    state: State<'_, AppState>,
    path: PathBuf,
    layout: Option<String>,
) -> Result<PieceView, String> {
    state.using(|library| import(library, &path, layout))
}

/// The view of a stored piece under a mapping choice.
fn view_with(library: &Library, title: &str, choice: &MappingChoice) -> Result<PieceView, String> {
    let record = find_piece(library, title).map_err(text)?;
    let piece = read_stored(&record)?;
    Ok(piece_view(
        &record.title,
        &record.original_name,
        &piece,
        choice,
    ))
}

/// The view of a stored piece; `layout` (when given) replaces the stored choice for this view.
pub fn stored_view(
    library: &Library,
    title: &str,
    layout: Option<String>,
) -> Result<PieceView, String> {
    let mut choice = stored_choice(library, title)?;
    if layout.is_some() {
        choice.layout = layout;
    }
    view_with(library, title, &choice)
}

#[tauri::command(async)]
pub fn piece_analysis(
    state: State<'_, AppState>,
    title: String,
    layout: Option<String>,
) -> Result<PieceView, String> {
    state.using(|library| stored_view(library, &title, layout))
}

/// Stores the director's mapping (layout and part overrides) and returns
/// the piece under it.
#[tauri::command(async)]
pub fn piece_set_mapping(
    state: State<'_, AppState>,
    title: String,
    overrides: BTreeMap<String, Option<String>>,
    layout: Option<String>,
) -> Result<PieceView, String> {
    state.using(|library| {
        let mut choice = stored_choice(library, &title)?;
        choice.overrides = overrides;
        if layout.is_some() {
            choice.layout = layout;
        }
        let view = view_with(library, &title, &choice)?;
        if let Some(error) = &view.mapping_error {
            return Err(error.clone());
        }
        let value = serde_json::to_value(&choice).map_err(text)?;
        library
            .set_piece_mapping(&title, Some(&value))
            .map_err(text)?;
        Ok(view)
    })
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
) -> Result<String, String> {
    // Printed bar numbers are text in MusicXML ("12", "12a"); the UI may send numbers.
    let bar = |value: &serde_json::Value| match value {
        serde_json::Value::String(text) => text.clone(),
        other => other.to_string(),
    };
    let record = state.with_library(|library| find_piece(library, &title))?;
    ambit::score::musicxml_excerpt(&record.path, &part, &bar(&first_bar), &bar(&last_bar))
        .map_err(text)
}
