//! Rehearsal planning by vocal load: which pieces and passages, in what
//! order and for how long, so that no section sings high for too long and
//! every section gets its rest.
//!
//! - [`load`]: the load of a passage per line, estimated from notation
//!   (sung time, time at or above the section's high reference, longest
//!   stretch without a rest).
//! - [`order`]: the rules, the objective and the searches (exact branch and
//!   bound for small plans, a heuristic for long ones) on plain numbers.
//! - [`week`]: several rehearsals and a concert: load per section per day.
//!
//! [`plan_rehearsal`] puts them together: the items' loads per section from
//! the pieces and their mapping to the layout, the warm-up and breaks, the
//! best order, and every figure and warning a run sheet shows. The method
//! and every default are in docs/METHODS.md ("Rehearsal plan").
//!
//! Architecture invariant: a pure function of the pieces (as read), their
//! section mappings, the layout, a request and a [`RehearsalConfig`]; it
//! reads no files and knows nothing of the front ends.

pub mod load;
pub mod order;
pub mod week;

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::pitch::name_with_cents;
use crate::score::Piece;
use crate::sections::{Layout, PieceMapping, Section, SectionSings};

use load::{BarRange, LineLoad, line_load, section_high_reference, select_passage};
use order::{Method, OrderProblem, OrderRules, RestRule, Rule, Slot, WorkBlock};

/// Settings of the load model, the timeline, the rules and the search.
/// Every default is documented in docs/METHODS.md with its source or mark.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RehearsalConfig {
    /// Share of a notated sung note that is voiced (consonants, breaths and
    /// releases take the rest). 0.85, chosen here.
    pub phonation_ratio: f64,
    /// Share of an item's time spent on stops, talk and notes rather than
    /// singing through. 0.4, chosen here.
    pub stop_share: f64,
    /// Length of the warm-up block (0 for none). 10 min, common practice.
    pub warm_up_minutes: f64,
    /// Share of the warm-up each section sings (none of it high). 0.5, chosen here.
    pub warm_up_sung_share: f64,
    /// Length of a break. 10 min, common practice.
    pub break_minutes: f64,
    /// How many breaks; `None`: one per full 75 minutes of rehearsal (chosen here).
    pub breaks: Option<usize>,
    /// What a high minute adds to the load beyond being a sung minute. 1, chosen here.
    pub high_weight: f64,
    /// Window of the peak-load objective. 20 min, chosen here.
    pub load_window_minutes: f64,
    /// High references by section label, overriding the typical secondo passaggio.
    pub high_from_midi: BTreeMap<String, f64>,
    pub rules: OrderRules,
    /// Exact search up to this many items; the heuristic above.
    pub exact_up_to: usize,
    /// The day before a concert is heavy when a section sings more than
    /// this share of its concert minutes (sung or high). 1.0, chosen here.
    pub heavy_before_concert_share: f64,
}

impl Default for RehearsalConfig {
    fn default() -> Self {
        RehearsalConfig {
            phonation_ratio: 0.85,
            stop_share: 0.4,
            warm_up_minutes: 10.0,
            warm_up_sung_share: 0.5,
            break_minutes: 10.0,
            breaks: None,
            high_weight: 1.0,
            load_window_minutes: 20.0,
            high_from_midi: BTreeMap::new(),
            rules: OrderRules {
                start_gently: true,
                // 5 min of high singing in a row, chosen here.
                high_budget_minutes: Some(5.0),
                // Half of every 30 min silent, chosen here after the
                // voicing/silence findings of Titze, Hunter & Švec (2007).
                rest: Some(RestRule {
                    window_minutes: 30.0,
                    min_share: 0.5,
                }),
                // The last 15 min, common practice.
                hardest_high_last_stretch_minutes: Some(15.0),
                interleave_sectionals: true,
            },
            exact_up_to: 9,
            heavy_before_concert_share: 1.0,
        }
    }
}

/// One thing to rehearse.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct RehearsalItem {
    /// Index into the pieces given to [`plan_rehearsal`].
    pub piece: usize,
    /// A passage by printed bars; `None` for the whole piece.
    pub bars: Option<BarRange>,
    pub run_throughs: u32,
    /// For a sectional: the sections it needs (the others rest).
    pub sections: Option<Vec<Section>>,
    /// A fixed place among the items, 1-based.
    pub position: Option<usize>,
}

/// What the director asks for.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RehearsalRequest {
    pub minutes: f64,
    pub items: Vec<RehearsalItem>,
}

/// A piece as the planner sees it: its notes and its mapping to the layout.
#[derive(Debug, Clone, Copy)]
pub struct RehearsalPiece<'a> {
    /// The name shown on the run sheet (file name or title).
    pub name: &'a str,
    pub piece: &'a Piece,
    pub mapping: &'a PieceMapping,
}

/// What a block of the run sheet is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BlockKind {
    WarmUp,
    Work,
    Break,
    Sectional,
}

/// One section's load in one block, estimated from notation.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct ItemLoad {
    pub sung_minutes: f64,
    pub high_minutes: f64,
    /// The longest stretch without a rest in one run-through.
    pub longest_unbroken_minutes: f64,
}

/// A block of the run sheet.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlanBlock {
    pub start_minute: f64,
    pub minutes: f64,
    pub kind: BlockKind,
    pub piece: Option<String>,
    pub bars: Option<String>,
    pub run_throughs: u32,
    /// The sections that sing in it.
    pub sections: Vec<String>,
    /// Load per section label (sections that sing only).
    pub load: BTreeMap<String, ItemLoad>,
    /// Index of the request item (work and sectional blocks).
    pub request_item: Option<usize>,
}

/// One section over the whole rehearsal.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionSummary {
    pub sung_minutes: f64,
    pub high_minutes: f64,
    pub longest_high_stretch_minutes: f64,
    /// Share of the planned time the section is silent.
    pub rest_share: f64,
    /// The least rest share of any rest window, and where.
    pub least_window_rest_share: f64,
    pub least_rest_window: (f64, f64),
    /// The largest load (sung + weighted high minutes) of any load window, and where.
    pub peak_window_load_minutes: f64,
    pub peak_load_window: (f64, f64),
    /// The high reference: note name, MIDI number and source.
    pub high_from: String,
    pub high_from_midi: f64,
    pub high_from_source: String,
}

/// A rule, its setting, its source and whether the plan meets it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RuleOutcome {
    pub rule: Rule,
    pub label: String,
    pub setting: String,
    pub source: String,
    pub met: bool,
    pub detail: Option<String>,
}

/// How the order was found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SearchSummary {
    pub method: Method,
    pub examined: u64,
    pub peak_load_minutes: f64,
    pub rules_broken: u32,
}

/// A rehearsal plan: the run sheet, the loads and what to watch.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RehearsalPlan {
    /// The rehearsal's length as asked.
    pub minutes: f64,
    /// Warm-up, items and breaks as planned.
    pub planned_minutes: f64,
    pub spare_minutes: f64,
    /// Section labels in layout order.
    pub layout: Vec<String>,
    pub items: Vec<PlanBlock>,
    pub sections: BTreeMap<String, SectionSummary>,
    pub rules: Vec<RuleOutcome>,
    pub search: SearchSummary,
    /// How the load figures are estimated, in words.
    pub estimate: Vec<String>,
    pub warnings: Vec<String>,
    pub cautions: Vec<String>,
    /// With a roster: each singer's own high minutes (empty without one).
    #[serde(default)]
    pub singers: Vec<SingerLoad>,
}

#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum RehearsalError {
    #[error("rehearsal: nothing to rehearse (no items)")]
    NoItems,
    #[error("rehearsal: the length must be a positive number of minutes (got {0})")]
    BadMinutes(String),
    #[error("rehearsal item {item}: {message}")]
    BadItem { item: String, message: String },
    #[error("rehearsal: setting {setting}: {message}")]
    BadConfig { setting: String, message: String },
}

/// The rehearsal cautions: the vocal-health cautions, and rest.
pub fn rehearsal_cautions() -> Vec<String> {
    let mut all = crate::cautions::cautions();
    all.push(crate::cautions::REST_WHEN_TIRED.to_string());
    all
}

/// An item as written on a command line: `SCORE`, `SCORE:FIRST-LAST`, each
/// optionally followed by `:xK` for K run-throughs (`lanterns.musicxml:34-52:x3`).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ItemSpec {
    pub score: String,
    pub bars: Option<BarRange>,
    pub run_throughs: u32,
}

impl ItemSpec {
    /// Parses an item; the suffixes are taken from the right, so a score
    /// path may itself contain colons.
    pub fn parse(text: &str) -> Result<ItemSpec, RehearsalError> {
        let bad = |message: &str| RehearsalError::BadItem {
            item: text.to_string(),
            message: message.to_string(),
        };
        let mut rest = text.trim();
        let mut run_throughs = 1;
        if let Some((head, tail)) = rest.rsplit_once(':')
            && let Some(count) = tail.strip_prefix('x').or_else(|| tail.strip_prefix('X'))
        {
            run_throughs = count
                .parse::<u32>()
                .ok()
                .filter(|k| (1..=20).contains(k))
                .ok_or_else(|| bad("run-throughs must be :x1 to :x20"))?;
            rest = head;
        }
        let mut bars = None;
        if let Some((head, tail)) = rest.rsplit_once(':')
            && let Some((first, last)) = tail.split_once('-')
            && !first.is_empty()
            && first.chars().all(|c| c.is_ascii_digit())
        {
            let number = |s: &str| s.trim().parse::<i64>().ok();
            match (number(first), number(last)) {
                (Some(first), Some(last)) if first <= last => {
                    bars = Some(BarRange { first, last });
                    rest = head;
                }
                _ => {
                    return Err(bad(
                        "bars must be FIRST-LAST with FIRST ≤ LAST (e.g. 34-52)",
                    ));
                }
            }
        }
        if rest.is_empty() {
            return Err(bad("no score file named"));
        }
        Ok(ItemSpec {
            score: rest.to_string(),
            bars,
            run_throughs,
        })
    }
}

/// One item's figures per section (layout order), before ordering.
struct ItemFigures {
    minutes: f64,
    bars: Option<String>,
    /// Per section: load as planned (run-throughs and phonation applied).
    loads: Vec<ItemLoad>,
    sings: Vec<bool>,
}

fn check_config(config: &RehearsalConfig) -> Result<(), RehearsalError> {
    let bad = |setting: &str, message: &str| {
        Err(RehearsalError::BadConfig {
            setting: setting.to_string(),
            message: message.to_string(),
        })
    };
    let share = |x: f64| x.is_finite() && (0.0..=1.0).contains(&x);
    if !share(config.phonation_ratio) {
        return bad("phonation ratio", "must be between 0 and 1");
    }
    if !(config.stop_share.is_finite() && (0.0..0.95).contains(&config.stop_share)) {
        return bad("stop share", "must be at least 0 and below 0.95");
    }
    if !share(config.warm_up_sung_share) {
        return bad("warm-up sung share", "must be between 0 and 1");
    }
    for (setting, minutes) in [
        ("warm-up minutes", config.warm_up_minutes),
        ("break minutes", config.break_minutes),
        ("high weight", config.high_weight),
    ] {
        if !(minutes.is_finite() && minutes >= 0.0) {
            return bad(setting, "must be a number ≥ 0");
        }
    }
    if !(config.load_window_minutes.is_finite() && config.load_window_minutes > 0.0) {
        return bad("load window", "must be a positive number of minutes");
    }
    if let Some(budget) = config.rules.high_budget_minutes
        && !(budget.is_finite() && budget >= 0.0)
    {
        return bad("high budget", "must be a number of minutes ≥ 0");
    }
    if let Some(rest) = config.rules.rest
        && !(rest.window_minutes.is_finite() && rest.window_minutes > 0.0 && share(rest.min_share))
    {
        return bad(
            "rest rule",
            "the window must be positive and the share between 0 and 1",
        );
    }
    if let Some(stretch) = config.rules.hardest_high_last_stretch_minutes
        && !(stretch.is_finite() && stretch >= 0.0)
    {
        return bad("last stretch", "must be a number of minutes ≥ 0");
    }
    Ok(())
}

/// The high reference of each layout section: the override, else the typical secondo.
fn high_references(layout: &Layout, config: &RehearsalConfig) -> Vec<(f64, String)> {
    layout
        .sections
        .iter()
        .map(
            |section| match config.high_from_midi.get(&section.to_string()) {
                Some(&midi) => (midi, "set by the director".to_string()),
                None => {
                    let reference = section_high_reference(section);
                    (reference.midi, reference.source)
                }
            },
        )
        .collect()
}

/// The load of one run-through of `passage` for `section`: its line, or
/// the heavier line of a divisi; `None` when the section is tacet.
fn section_line_load(
    mapping: &PieceMapping,
    section: &Section,
    passage: &load::Passage,
    high_from_midi: f64,
) -> Option<LineLoad> {
    let sings = mapping.sings(section)?;
    if matches!(sings, SectionSings::Tacet) {
        return None;
    }
    sings
        .lines()
        .into_iter()
        .map(|line| line_load(&line.part, passage, high_from_midi))
        .reduce(LineLoad::heavier)
}

/// Each item's length and per-section load. `rehearsing` adds the stop
/// share to the length (a concert has none).
fn item_figures(
    pieces: &[RehearsalPiece],
    layout: &Layout,
    items: &[RehearsalItem],
    config: &RehearsalConfig,
    references: &[(f64, String)],
    rehearsing: bool,
    warnings: &mut Vec<String>,
) -> Result<Vec<ItemFigures>, RehearsalError> {
    let mut out = Vec::with_capacity(items.len());
    for (index, item) in items.iter().enumerate() {
        let name = |item: &RehearsalItem| {
            pieces
                .get(item.piece)
                .map_or_else(|| format!("#{}", index + 1), |p| p.name.to_string())
        };
        let bad = |message: String| RehearsalError::BadItem {
            item: format!(
                "{}{}",
                name(item),
                item.bars.map_or_else(String::new, |b| format!(":{b}"))
            ),
            message,
        };
        let piece = pieces
            .get(item.piece)
            .ok_or_else(|| bad(format!("no piece number {}", item.piece + 1)))?;
        if item.run_throughs == 0 {
            return Err(bad("run-throughs must be at least 1".to_string()));
        }
        if let Some(position) = item.position
            && !(1..=items.len()).contains(&position)
        {
            return Err(bad(format!(
                "position {position} is outside 1–{}",
                items.len()
            )));
        }
        let passage = select_passage(piece.piece, item.bars).map_err(bad)?;
        if passage.seconds <= 0.0 {
            return Err(bad(
                "the passage takes no time at the written tempo".to_string()
            ));
        }
        if let Some(needed) = &item.sections {
            if needed.is_empty() {
                return Err(bad("a sectional needs at least one section".to_string()));
            }
            for section in needed {
                if !layout.sections.contains(section) {
                    return Err(bad(format!(
                        "section {section} is not in layout {}",
                        layout.name
                    )));
                }
            }
        }
        let run_throughs = f64::from(item.run_throughs);
        let stop_factor = if rehearsing {
            1.0 / (1.0 - config.stop_share)
        } else {
            1.0
        };
        let mut loads = Vec::with_capacity(layout.sections.len());
        let mut sings = Vec::with_capacity(layout.sections.len());
        for (section, (high_from, _)) in layout.sections.iter().zip(references) {
            let needed = item
                .sections
                .as_ref()
                .is_none_or(|needed| needed.contains(section));
            let line = section_line_load(piece.mapping, section, &passage, *high_from);
            if !needed {
                loads.push(ItemLoad::default());
                sings.push(false);
                continue;
            }
            match line {
                Some(line) if line.sung_seconds > 0.0 => {
                    let voiced = run_throughs * config.phonation_ratio / 60.0;
                    loads.push(ItemLoad {
                        sung_minutes: line.sung_seconds * voiced,
                        high_minutes: line.high_seconds * voiced,
                        longest_unbroken_minutes: line.longest_unbroken_seconds / 60.0,
                    });
                    sings.push(true);
                }
                _ => {
                    if item.sections.is_some() {
                        warnings.push(format!(
                            "{}{}: section {section} is called to the sectional but has nothing to sing there",
                            piece.name,
                            passage.bars.as_ref().map_or_else(String::new, |b| format!(" bars {b}"))
                        ));
                    }
                    loads.push(ItemLoad::default());
                    sings.push(false);
                }
            }
        }
        out.push(ItemFigures {
            minutes: run_throughs * passage.seconds / 60.0 * stop_factor,
            bars: passage.bars,
            loads,
            sings,
        });
    }
    Ok(out)
}

/// The number of breaks for a rehearsal of `minutes` when none is set.
fn default_breaks(minutes: f64) -> usize {
    (minutes / 75.0).floor().max(0.0) as usize
}

/// Plans a rehearsal: the items' loads, the warm-up and breaks, the order
/// that meets the rules and then has the lowest peak load, and the run sheet.
pub fn plan_rehearsal(
    pieces: &[RehearsalPiece],
    layout: &Layout,
    request: &RehearsalRequest,
    config: &RehearsalConfig,
) -> Result<RehearsalPlan, RehearsalError> {
    check_config(config)?;
    if !(request.minutes.is_finite() && request.minutes > 0.0) {
        return Err(RehearsalError::BadMinutes(request.minutes.to_string()));
    }
    if request.items.is_empty() {
        return Err(RehearsalError::NoItems);
    }
    let mut taken: BTreeMap<usize, usize> = BTreeMap::new();
    for (index, item) in request.items.iter().enumerate() {
        if let Some(position) = item.position
            && let Some(other) = taken.insert(position, index)
        {
            return Err(RehearsalError::BadItem {
                item: format!("#{}", index + 1),
                message: format!(
                    "position {position} is already given to item #{}",
                    other + 1
                ),
            });
        }
    }
    let mut warnings = Vec::new();
    let references = high_references(layout, config);
    let figures = item_figures(
        pieces,
        layout,
        &request.items,
        config,
        &references,
        true,
        &mut warnings,
    )?;
    let sections = layout.sections.len();
    let warm_up = (config.warm_up_minutes > 0.0).then(|| WorkBlock {
        minutes: config.warm_up_minutes,
        sung_minutes: vec![config.warm_up_minutes * config.warm_up_sung_share; sections],
        high_minutes: vec![0.0; sections],
        sectional: None,
        fixed_position: None,
    });
    let problem = OrderProblem {
        sections,
        blocks: figures
            .iter()
            .zip(&request.items)
            .map(|(figures, item)| WorkBlock {
                minutes: figures.minutes,
                sung_minutes: figures.loads.iter().map(|l| l.sung_minutes).collect(),
                high_minutes: figures.loads.iter().map(|l| l.high_minutes).collect(),
                sectional: item.sections.as_ref().map(|needed| {
                    layout
                        .sections
                        .iter()
                        .enumerate()
                        .filter(|(_, s)| needed.contains(s))
                        .map(|(i, _)| i)
                        .collect()
                }),
                fixed_position: item.position.map(|p| p - 1),
            })
            .collect(),
        warm_up,
        breaks: config
            .breaks
            .unwrap_or_else(|| default_breaks(request.minutes)),
        break_minutes: config.break_minutes,
        load_window_minutes: config.load_window_minutes,
        high_weight: config.high_weight,
        rules: config.rules,
        exact_up_to: config.exact_up_to,
    };
    let ordered = order::order(&problem);
    let labels = layout.labels();

    // The run sheet.
    let warm_up_load: BTreeMap<String, ItemLoad> = labels
        .iter()
        .map(|label| {
            (
                label.clone(),
                ItemLoad {
                    sung_minutes: config.warm_up_minutes * config.warm_up_sung_share,
                    high_minutes: 0.0,
                    longest_unbroken_minutes: 0.0,
                },
            )
        })
        .collect();
    let items: Vec<PlanBlock> = ordered
        .timeline
        .iter()
        .map(|placed| {
            let base = PlanBlock {
                start_minute: placed.start_minute,
                minutes: placed.minutes,
                kind: BlockKind::Break,
                piece: None,
                bars: None,
                run_throughs: 0,
                sections: Vec::new(),
                load: BTreeMap::new(),
                request_item: None,
            };
            match placed.slot {
                Slot::Break => base,
                Slot::WarmUp => PlanBlock {
                    kind: BlockKind::WarmUp,
                    sections: labels.clone(),
                    load: warm_up_load.clone(),
                    ..base
                },
                Slot::Work(index) => {
                    let item = &request.items[index];
                    let figures = &figures[index];
                    let singing: Vec<usize> = (0..sections).filter(|&s| figures.sings[s]).collect();
                    PlanBlock {
                        kind: if item.sections.is_some() {
                            BlockKind::Sectional
                        } else {
                            BlockKind::Work
                        },
                        piece: pieces.get(item.piece).map(|p| p.name.to_string()),
                        bars: figures.bars.clone(),
                        run_throughs: item.run_throughs,
                        sections: singing.iter().map(|&s| labels[s].clone()).collect(),
                        load: singing
                            .iter()
                            .map(|&s| (labels[s].clone(), figures.loads[s]))
                            .collect(),
                        request_item: Some(index),
                        ..base
                    }
                }
            }
        })
        .collect();

    let planned = ordered.total_minutes;
    let section_summaries: BTreeMap<String, SectionSummary> = labels
        .iter()
        .enumerate()
        .map(|(s, label)| {
            let f = &ordered.sections[s];
            let (high_from_midi, source) = references[s].clone();
            (
                label.clone(),
                SectionSummary {
                    sung_minutes: f.sung_minutes,
                    high_minutes: f.high_minutes,
                    longest_high_stretch_minutes: f.longest_high_stretch_minutes,
                    rest_share: if planned > 0.0 {
                        1.0 - f.sung_minutes / planned
                    } else {
                        1.0
                    },
                    least_window_rest_share: f.least_rest.value,
                    least_rest_window: (f.least_rest.start_minute, f.least_rest.end_minute),
                    peak_window_load_minutes: f.peak_load.value.max(0.0),
                    peak_load_window: (f.peak_load.start_minute, f.peak_load.end_minute),
                    high_from: name_with_cents(high_from_midi),
                    high_from_midi,
                    high_from_source: source,
                },
            )
        })
        .collect();

    // Rules, met or not, each with its setting and source.
    let item_name = |index: usize| -> String {
        let item = &request.items[index];
        format!(
            "{}{}{}",
            pieces.get(item.piece).map_or("?", |p| p.name),
            figures[index]
                .bars
                .as_ref()
                .map_or_else(String::new, |b| format!(" bars {b}")),
            if item.run_throughs > 1 {
                format!(" ×{}", item.run_throughs)
            } else {
                String::new()
            }
        )
    };
    let rules = rule_outcomes(config, &ordered.broken, &labels, &item_name);
    for outcome in rules.iter().filter(|o| !o.met) {
        warnings.push(format!(
            "rule \"{}\" cannot be met: {}",
            outcome.label,
            outcome.detail.clone().unwrap_or_default()
        ));
    }
    if planned > request.minutes + 1e-6 {
        warnings.insert(
            0,
            format!(
                "does not fit: the plan needs {:.0} min (warm-up, {} item(s) with their stops, {} break(s)) but the rehearsal has {:.0} min; {:.0} min too many: drop or shorten an item or run it fewer times",
                planned,
                request.items.len(),
                ordered.timeline.iter().filter(|p| p.slot == Slot::Break).count(),
                request.minutes,
                planned - request.minutes
            ),
        );
    }
    if ordered.breaks_dropped > 0 {
        warnings.push(format!(
            "{} break(s) left out: a break needs an item on each side",
            ordered.breaks_dropped
        ));
    }
    let estimate = vec![
        "Loads are estimated from the notation, not measured: a note counts as sung for its written length at the written tempo.".to_string(),
        format!(
            "Sung minutes = the line's notated sung time × run-throughs × a phonation ratio of {:.2} (chosen here).",
            config.phonation_ratio
        ),
        format!(
            "An item lasts its run-throughs at the written tempo plus {:.0} % for stops, talk and notes (chosen here).",
            100.0 * config.stop_share
        ),
        "High minutes: sung minutes at or above the section's high reference (the typical secondo passaggio of its voice type unless set).".to_string(),
        "A divisi section carries the heavier of its two lines.".to_string(),
    ];
    Ok(RehearsalPlan {
        minutes: request.minutes,
        planned_minutes: planned,
        spare_minutes: (request.minutes - planned).max(0.0),
        layout: labels,
        items,
        sections: section_summaries,
        rules,
        search: SearchSummary {
            method: ordered.method,
            examined: ordered.examined,
            peak_load_minutes: ordered.cost.peak_load,
            rules_broken: ordered.cost.rules_broken,
        },
        estimate,
        warnings,
        cautions: rehearsal_cautions(),
        singers: Vec::new(),
    })
}

/// Every rule with its setting, source and outcome.
fn rule_outcomes(
    config: &RehearsalConfig,
    broken: &[order::Broken],
    labels: &[String],
    item_name: &dyn Fn(usize) -> String,
) -> Vec<RuleOutcome> {
    let rules = &config.rules;
    let describe = |rule: Rule| -> Option<(String, String)> {
        match rule {
            Rule::StartGently => rules.start_gently.then(|| {
                (
                    if config.warm_up_minutes > 0.0 {
                        format!("warm-up of {:.0} min", config.warm_up_minutes)
                    } else {
                        "no warm-up: the lightest item first".to_string()
                    },
                    "common practice".to_string(),
                )
            }),
            Rule::HighBudget => rules.high_budget_minutes.map(|budget| {
                (
                    format!("at most {budget:.1} high minutes in a row per section"),
                    "chosen here; high singing in a row is what tires a voice (Titze & Hunter 2015 on dose and recovery)".to_string(),
                )
            }),
            Rule::RestShare => rules.rest.map(|rest| {
                (
                    format!(
                        "each section silent ≥ {:.0} % of every {:.0} min",
                        100.0 * rest.min_share,
                        rest.window_minutes
                    ),
                    "share chosen here; silence periods for recovery after Titze, Hunter & Švec (2007) and Titze & Hunter (2015)".to_string(),
                )
            }),
            Rule::HardestHighPlacement => rules.hardest_high_last_stretch_minutes.map(|stretch| {
                (
                    format!("after the warm-up, ending before the last {stretch:.0} min"),
                    "common practice".to_string(),
                )
            }),
            Rule::InterleaveSectionals => rules.interleave_sectionals.then(|| {
                (
                    "two sectionals in a row share no section".to_string(),
                    "common practice".to_string(),
                )
            }),
        }
    };
    Rule::ALL
        .iter()
        .filter_map(|&rule| {
            let (setting, source) = describe(rule)?;
            let broken = broken.iter().find(|b| b.rule == rule);
            Some(RuleOutcome {
                rule,
                label: rule.label().to_string(),
                setting,
                source,
                met: broken.is_none(),
                detail: broken.map(|b| {
                    let mut detail = b.detail.clone();
                    if !b.sections.is_empty() {
                        detail.push_str(&format!(
                            "; sections {}",
                            b.sections
                                .iter()
                                .filter_map(|&s| labels.get(s).cloned())
                                .collect::<Vec<_>>()
                                .join(", ")
                        ));
                    }
                    if !b.blocks.is_empty() {
                        detail.push_str(&format!(
                            "; items {}",
                            b.blocks
                                .iter()
                                .map(|&i| item_name(i))
                                .collect::<Vec<_>>()
                                .join(", ")
                        ));
                    }
                    detail
                }),
            })
        })
        .collect()
}

/// A singer's own high load over a rehearsal.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SingerLoad {
    pub name: String,
    pub section: String,
    /// The singer's secondo passaggio, the reference for their high minutes.
    pub secondo: String,
    /// Minutes at or above the singer's own secondo (a divisi: the heavier line).
    pub high_minutes: f64,
    /// The section's high minutes (at or above the section's reference).
    pub section_high_minutes: f64,
}

/// A singer's high minutes are "far above" their section's when they exceed
/// it by this factor and by at least [`FAR_ABOVE_MINUTES`] (both chosen here).
pub const FAR_ABOVE_FACTOR: f64 = 2.0;
/// See [`FAR_ABOVE_FACTOR`].
pub const FAR_ABOVE_MINUTES: f64 = 1.0;

/// Each placed singer's minutes above their own secondo passaggio over the
/// plan's items, and a warning for every singer far above their section
/// (e.g. a light voice on a heavy line) and every singer who cannot be
/// counted (no section in the layout, no secondo).
pub fn singer_loads(
    pieces: &[RehearsalPiece],
    layout: &Layout,
    request: &RehearsalRequest,
    plan: &RehearsalPlan,
    roster: &crate::roster::Roster,
    config: &RehearsalConfig,
) -> Result<(Vec<SingerLoad>, Vec<String>), RehearsalError> {
    let mut loads = Vec::new();
    let mut warnings = Vec::new();
    let mut passages = Vec::with_capacity(request.items.len());
    for item in &request.items {
        let piece = pieces
            .get(item.piece)
            .ok_or_else(|| RehearsalError::BadItem {
                item: format!("#{}", item.piece + 1),
                message: "no such piece".to_string(),
            })?;
        let passage =
            select_passage(piece.piece, item.bars).map_err(|message| RehearsalError::BadItem {
                item: piece.name.to_string(),
                message,
            })?;
        passages.push((piece, passage));
    }
    for singer in &roster.singers {
        let Some(label) = singer
            .section
            .as_deref()
            .map(str::trim)
            .filter(|s| !s.is_empty())
        else {
            warnings.push(format!(
                "{}: no section in the roster; not counted",
                singer.name
            ));
            continue;
        };
        let Some(section) = Section::parse(label)
            .ok()
            .filter(|s| layout.sections.contains(s))
        else {
            warnings.push(format!(
                "{}: section {label} is not in layout {}; not counted",
                singer.name, layout.name
            ));
            continue;
        };
        let Some(secondo) = singer.secondo_midi else {
            warnings.push(format!(
                "{}: no secondo passaggio in the roster; own high minutes not counted",
                singer.name
            ));
            continue;
        };
        let mut high_seconds = 0.0;
        for (item, (piece, passage)) in request.items.iter().zip(&passages) {
            let called = item
                .sections
                .as_ref()
                .is_none_or(|needed| needed.contains(&section));
            if !called {
                continue;
            }
            if let Some(line) = section_line_load(piece.mapping, &section, passage, secondo) {
                high_seconds += line.high_seconds * f64::from(item.run_throughs);
            }
        }
        let high_minutes = high_seconds * config.phonation_ratio / 60.0;
        let section_high_minutes = plan
            .sections
            .get(&section.to_string())
            .map_or(0.0, |s| s.high_minutes);
        if high_minutes > FAR_ABOVE_FACTOR * section_high_minutes
            && high_minutes >= section_high_minutes + FAR_ABOVE_MINUTES
        {
            warnings.push(format!(
                "{} sings {high_minutes:.1} min above their secondo ({}) against {section_high_minutes:.1} high min for section {section}: a heavy line for this voice",
                singer.name,
                name_with_cents(secondo)
            ));
        }
        loads.push(SingerLoad {
            name: singer.name.clone(),
            section: section.to_string(),
            secondo: name_with_cents(secondo),
            high_minutes,
            section_high_minutes,
        });
    }
    Ok((loads, warnings))
}
