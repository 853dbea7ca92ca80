//! Pieces in the library: importing a score (read, analysed, copied in,
//! with the director's section mapping), reading stored pieces back, and
//! the per-part view with its mapping. The CLI (`ambit library add-piece`),
//! the app's Pieces screen and the demo seeding all import through
//! [`import_piece`], so a piece gets one title and one stored mapping
//! whichever way it came in.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::{Progress, UseCaseError};
use crate::fit::MappingSummary;
use crate::library::{Library, LibraryError, PieceInput, PieceRecord};
use crate::roster::Roster;
use crate::score::{Piece, ReadOptions, read_score};
use crate::sections::{Layout, MappingConfig, PartOverride, PieceMapping, map_piece};
use crate::tessitura::{TessituraConfig, analyse_piece};
use crate::views::{ScoreJson, score_view};

/// The layout a piece is mapped to when the director has not chosen one.
pub const DEFAULT_LAYOUT: &str = "SATB";

/// The director's mapping choice, as stored with a piece: the layout and,
/// by part name, the section that sings it (`None`: not sung by the choir).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct MappingChoice {
    pub layout: Option<String>,
    #[serde(default)]
    pub overrides: BTreeMap<String, Option<String>>,
}

impl MappingChoice {
    /// The layout to map with: the chosen one, else [`DEFAULT_LAYOUT`].
    pub fn layout_name(&self) -> String {
        self.layout
            .clone()
            .unwrap_or_else(|| DEFAULT_LAYOUT.to_string())
    }

    /// The engine's mapping configuration for this choice.
    pub fn mapping_config(&self) -> MappingConfig {
        MappingConfig {
            overrides: self
                .overrides
                .iter()
                .map(|(part, line)| PartOverride {
                    piece: None,
                    part: part.clone(),
                    line: line.clone(),
                })
                .collect(),
            ignore_divisi: false,
        }
    }

    /// Reads a stored mapping. Libraries written before the mapping choice
    /// was the one stored form hold the engine's whole `PieceMapping` (from
    /// the CLI and the demo): its sections give the layout, with no
    /// overrides.
    pub fn from_stored(value: serde_json::Value) -> Result<Self, String> {
        if let Ok(mapping) = serde_json::from_value::<PieceMapping>(value.clone()) {
            let labels: Vec<String> = mapping
                .sections
                .iter()
                .map(|(section, _)| section.to_string())
                .collect();
            return Ok(Self {
                layout: Some(Layout::name_of(&labels)),
                overrides: BTreeMap::new(),
            });
        }
        serde_json::from_value(value).map_err(|error| error.to_string())
    }
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
    let layout_text = choice.layout_name();
    let mapped = Layout::parse(&layout_text)
        .map_err(|error| error.to_string())
        .and_then(|layout| {
            map_piece(piece, 0, &layout, &choice.mapping_config()).map_err(|e| e.to_string())
        });
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

/// What to import and how.
#[derive(Debug, Clone, Default)]
pub struct ImportOptions {
    /// The title; default: the score's own (when not blank), else the file
    /// name without its extension.
    pub title: Option<String>,
    /// Append the piece to this programme (created if new).
    pub programme: Option<String>,
    /// The section mapping to store; `None` stores none (the default
    /// layout is used when the piece is shown).
    pub mapping: Option<MappingChoice>,
}

/// A piece just imported.
#[derive(Debug, Clone, Serialize)]
pub struct ImportedPiece {
    pub id: i64,
    pub title: String,
    pub view: PieceView,
}

/// The title a piece is stored under: the one given, else the score's own
/// when it is not blank, else the file name without its extension.
pub fn piece_title(explicit: Option<&str>, piece: &Piece, path: &Path) -> String {
    explicit
        .map(str::trim)
        .filter(|title| !title.is_empty())
        .map(str::to_string)
        .or_else(|| {
            piece
                .title
                .as_deref()
                .map(str::trim)
                .filter(|title| !title.is_empty())
                .map(str::to_string)
        })
        .unwrap_or_else(|| file_title(path))
}

fn file_title(path: &Path) -> String {
    path.file_stem().map_or_else(
        || "untitled".to_string(),
        |stem| stem.to_string_lossy().into_owned(),
    )
}

/// Reads, analyses and stores a score with the mapping choice (if any).
pub fn import_piece(
    library: &mut Library,
    path: &Path,
    options: &ImportOptions,
    progress: &dyn Progress,
) -> Result<ImportedPiece, UseCaseError> {
    progress.step(0, 2, &format!("Reading {}", path.display()));
    let piece = read_score(path, &ReadOptions::default())?;
    let title = piece_title(options.title.as_deref(), &piece, path);
    let analysis = analyse_piece(&piece, &TessituraConfig::default());
    let choice = options.mapping.clone().unwrap_or_default();
    let file = path.file_name().map_or_else(
        || path.display().to_string(),
        |name| name.to_string_lossy().into_owned(),
    );
    // A mapping that cannot be made does not stop the import: the view
    // carries the reason (`mapping_error`) and every front end shows it, so
    // the director can choose who sings what.
    let view = piece_view(&title, &file, &piece, &choice);
    let to_json = |value: serde_json::Result<serde_json::Value>| {
        value.map_err(|error| UseCaseError::Invalid(format!("{}: {error}", path.display())))
    };
    let input = PieceInput {
        title: title.clone(),
        score: path.to_path_buf(),
        analysis: to_json(serde_json::to_value(&analysis))?,
        mapping: options
            .mapping
            .as_ref()
            .map(|choice| to_json(serde_json::to_value(choice)))
            .transpose()?,
    };
    let id = library.add_piece(&input, options.programme.as_deref())?;
    progress.step(2, 2, &format!("Stored \"{title}\""));
    Ok(ImportedPiece { id, title, view })
}

/// A stored piece by title.
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

/// Reads a stored piece's score file back, titled as stored.
pub fn read_stored(record: &PieceRecord) -> Result<Piece, UseCaseError> {
    let mut piece = read_score(&record.path, &ReadOptions::default()).map_err(|error| {
        UseCaseError::Invalid(format!(
            "{} ({}): {error}",
            record.title, record.original_name
        ))
    })?;
    piece.title = Some(record.title.clone());
    Ok(piece)
}

/// The stored mapping choice of a piece (the default when none is stored).
pub fn stored_choice(library: &Library, title: &str) -> Result<MappingChoice, UseCaseError> {
    match library.piece_mapping(title)? {
        None => Ok(MappingChoice::default()),
        Some(value) => MappingChoice::from_stored(value).map_err(|error| {
            UseCaseError::Invalid(format!(
                "the section mapping of {title} cannot be read: {error}"
            ))
        }),
    }
}

/// The view of a stored piece under a mapping choice.
pub fn view_with(
    library: &Library,
    title: &str,
    choice: &MappingChoice,
) -> Result<PieceView, UseCaseError> {
    let record = find_piece(library, title)?;
    let piece = read_stored(&record)?;
    Ok(piece_view(
        &record.title,
        &record.original_name,
        &piece,
        choice,
    ))
}

/// The view of a stored piece; `layout` (when given) replaces the stored
/// choice's for this view.
pub fn stored_view(
    library: &Library,
    title: &str,
    layout: Option<String>,
) -> Result<PieceView, UseCaseError> {
    let mut choice = stored_choice(library, title)?;
    if layout.is_some() {
        choice.layout = layout;
    }
    view_with(library, title, &choice)
}

/// Stores the director's mapping (overrides, and the layout when given)
/// and returns the piece under it; a mapping that cannot be made is refused.
pub fn set_mapping(
    library: &mut Library,
    title: &str,
    overrides: BTreeMap<String, Option<String>>,
    layout: Option<String>,
) -> Result<PieceView, UseCaseError> {
    let mut choice = stored_choice(library, title)?;
    choice.overrides = overrides;
    if layout.is_some() {
        choice.layout = layout;
    }
    let view = view_with(library, title, &choice)?;
    if let Some(error) = &view.mapping_error {
        return Err(UseCaseError::Invalid(error.clone()));
    }
    let value = serde_json::to_value(&choice)
        .map_err(|error| UseCaseError::Invalid(format!("the mapping of {title}: {error}")))?;
    library.set_piece_mapping(title, Some(&value))?;
    Ok(view)
}

/// The library's active roster (and the singers left out for want of a
/// range) with the stored pieces named in `titles`, in that order, read
/// back from their score files; every piece when `titles` is empty.
pub fn roster_and_pieces(
    library: &Library,
    titles: &[String],
) -> Result<(Roster, Vec<String>, Vec<Piece>), UseCaseError> {
    let (roster, left_out) = library.roster()?;
    let records = if titles.is_empty() {
        library.pieces()?
    } else {
        titles
            .iter()
            .map(|title| find_piece(library, title))
            .collect::<Result<Vec<_>, _>>()?
    };
    if records.is_empty() {
        return Err(UseCaseError::Invalid(
            "the library has no pieces yet; import a score first".into(),
        ));
    }
    let programme = records
        .iter()
        .map(read_stored)
        .collect::<Result<Vec<_>, _>>()?;
    Ok((roster, left_out, programme))
}

/// The score files of a stored programme, in order.
pub fn programme_files(library: &Library, name: &str) -> Result<Vec<PathBuf>, UseCaseError> {
    Ok(library
        .programme(name)?
        .into_iter()
        .map(|piece| piece.path)
        .collect())
}
