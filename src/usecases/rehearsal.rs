//! Plan a rehearsal from score files: read each score once, map it to the
//! layout, and hand everything to [`crate::rehearsal::plan_rehearsal`]. The
//! CLI (`ambit rehearsal`) and the app call this one function, so both show
//! the same figures.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::{Cancel, Progress, UseCaseError};
use crate::library::Library;
use crate::rehearsal::week::{DayPlan, WeekDay, WeekPlan, plan_week};
use crate::rehearsal::{
    ItemSpec, RehearsalConfig, RehearsalItem, RehearsalPiece, RehearsalPlan, RehearsalRequest,
    plan_rehearsal, singer_loads,
};
use crate::roster::Roster;
use crate::score::{Piece, ReadOptions, read_score};
use crate::sections::{Layout, MappingConfig, PieceMapping, Section, map_piece};

/// One item as a front end gives it: a score file with optional bars and
/// run-throughs, and optionally the sections of a sectional and a fixed place.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ItemInput {
    pub spec: ItemSpec,
    /// Section labels of a sectional (`["T", "B"]`); `None` for the full choir.
    pub sections: Option<Vec<String>>,
    /// A fixed place among the items, 1-based.
    pub position: Option<usize>,
    /// The name shown for the piece (default: the score's file name).
    #[serde(default)]
    pub label: Option<String>,
}

impl ItemInput {
    /// An item from its command-line form (`SCORE[:FIRST-LAST][:xK]`).
    pub fn parse(text: &str) -> Result<ItemInput, UseCaseError> {
        Ok(ItemInput {
            spec: ItemSpec::parse(text)?,
            sections: None,
            position: None,
            label: None,
        })
    }
}

/// The pieces of a programme stored in the library, in order, as whole-piece
/// items sung once each and labelled by their titles.
pub fn programme_items(library: &Library, name: &str) -> Result<Vec<ItemInput>, UseCaseError> {
    Ok(library
        .programme(name)?
        .into_iter()
        .map(|piece| ItemInput {
            spec: ItemSpec {
                score: piece.path.display().to_string(),
                bars: None,
                run_throughs: 1,
            },
            sections: None,
            position: None,
            label: Some(piece.title),
        })
        .collect())
}

/// The scores read and mapped once each, in first-use order.
struct Loaded {
    names: Vec<String>,
    pieces: Vec<Piece>,
    mappings: Vec<PieceMapping>,
    index_of: BTreeMap<PathBuf, usize>,
}

impl Loaded {
    fn planner_pieces(&self) -> Vec<RehearsalPiece<'_>> {
        self.names
            .iter()
            .zip(&self.pieces)
            .zip(&self.mappings)
            .map(|((name, piece), mapping)| RehearsalPiece {
                name,
                piece,
                mapping,
            })
            .collect()
    }
}

fn load_scores<'a>(
    paths: impl Iterator<Item = (&'a str, Option<&'a str>)>,
    layout: &Layout,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Loaded, UseCaseError> {
    let mut unique: Vec<PathBuf> = Vec::new();
    let mut labels: Vec<Option<&str>> = Vec::new();
    for (path, label) in paths {
        let path = PathBuf::from(path);
        if !unique.contains(&path) {
            unique.push(path);
            labels.push(label);
        }
    }
    let mut loaded = Loaded {
        names: Vec::new(),
        pieces: Vec::new(),
        mappings: Vec::new(),
        index_of: BTreeMap::new(),
    };
    for (index, path) in unique.iter().enumerate() {
        cancel.check()?;
        progress.step(index, unique.len(), &path.display().to_string());
        let mut piece = read_score(path, &ReadOptions::default())?;
        let name = labels
            .get(index)
            .copied()
            .flatten()
            .map_or_else(|| file_name(path), str::to_string);
        if piece.title.as_deref().is_none_or(|t| t.trim().is_empty()) {
            piece.title = Some(name.clone());
        }
        let mapping = map_piece(&piece, index, layout, &MappingConfig::default())?;
        loaded.index_of.insert(path.clone(), index);
        loaded.names.push(name);
        loaded.pieces.push(piece);
        loaded.mappings.push(mapping);
    }
    progress.step(unique.len(), unique.len(), "planning");
    Ok(loaded)
}

fn file_name(path: &Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

fn request_items(items: &[ItemInput], loaded: &Loaded) -> Result<Vec<RehearsalItem>, UseCaseError> {
    items
        .iter()
        .map(|item| {
            let piece = loaded
                .index_of
                .get(Path::new(&item.spec.score))
                .copied()
                .ok_or_else(|| UseCaseError::Invalid(format!("{}: not read", item.spec.score)))?;
            let sections = item
                .sections
                .as_ref()
                .map(|labels| {
                    labels
                        .iter()
                        .map(|label| Section::parse(label))
                        .collect::<Result<Vec<_>, _>>()
                })
                .transpose()?;
            Ok(RehearsalItem {
                piece,
                bars: item.spec.bars,
                run_throughs: item.spec.run_throughs,
                sections,
                position: item.position,
            })
        })
        .collect()
}

/// Plans a rehearsal of `minutes` from score files for `layout`. With a
/// roster (its `section` column is the placement), each singer's own
/// minutes above their secondo are added, with a warning for a singer far
/// above their section.
pub fn plan_rehearsal_files(
    items: &[ItemInput],
    layout: &Layout,
    minutes: f64,
    roster: Option<&Roster>,
    config: &RehearsalConfig,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<RehearsalPlan, UseCaseError> {
    let loaded = load_scores(
        items
            .iter()
            .map(|i| (i.spec.score.as_str(), i.label.as_deref())),
        layout,
        progress,
        cancel,
    )?;
    let request = RehearsalRequest {
        minutes,
        items: request_items(items, &loaded)?,
    };
    let pieces = loaded.planner_pieces();
    let mut plan = plan_rehearsal(&pieces, layout, &request, config)?;
    if let Some(roster) = roster {
        let (singers, warnings) = singer_loads(&pieces, layout, &request, &plan, roster, config)?;
        plan.singers = singers;
        plan.warnings.extend(warnings);
    }
    Ok(plan)
}

/// One day of a week as a front end gives it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DayInput {
    pub day: u32,
    pub label: String,
    /// `None` for the concert day (its items are sung once each, without stops).
    pub minutes: Option<f64>,
    pub items: Vec<ItemInput>,
}

/// Plans a week of rehearsals and a concert from score files.
pub fn plan_week_files(
    days: &[DayInput],
    layout: &Layout,
    config: &RehearsalConfig,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<WeekPlan, UseCaseError> {
    let loaded = load_scores(
        days.iter().flat_map(|d| {
            d.items
                .iter()
                .map(|i| (i.spec.score.as_str(), i.label.as_deref()))
        }),
        layout,
        progress,
        cancel,
    )?;
    let week: Vec<WeekDay> = days
        .iter()
        .map(|day| {
            let items = request_items(&day.items, &loaded)?;
            Ok(WeekDay {
                day: day.day,
                label: day.label.clone(),
                plan: match day.minutes {
                    Some(minutes) => DayPlan::Rehearsal {
                        request: RehearsalRequest { minutes, items },
                    },
                    None => DayPlan::Concert { items },
                },
            })
        })
        .collect::<Result<_, UseCaseError>>()?;
    Ok(plan_week(&loaded.planner_pieces(), layout, &week, config)?)
}
