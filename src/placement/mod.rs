//! Placement: put every singer into exactly one section so that the total fit
//! is as high as possible, within section sizes, locks and exclusions.
//!
//! The solver is an exact minimum-cost flow (source → singer → section → sink)
//! solved by successive shortest paths with Johnson potentials, specialised
//! for the shape of a choir: many singers, few sections. See `flow.rs` and
//! docs/METHODS.md ("Placement"). When no placement exists, `diagnose.rs`
//! names the constraints that cannot be met together (Hoffman's circulation
//! theorem turns them into Hall-type conditions on sets of sections).
//!
//! **Architecture invariant:** placement knows nothing of music. It sees a
//! matrix of fits (0–100, `None` = not allowed) and constraints; how the
//! matrix was made (ranges, pieces, sung time) is the caller's business. The
//! caller may attach per-pair notes and beyond-range flags, which placement
//! only passes through into its explanations.

mod diagnose;
mod flow;

use std::collections::{HashMap, HashSet};

use serde::{Deserialize, Serialize};
use thiserror::Error;

pub use diagnose::{Infeasibility, InfeasibilityKind};

/// Fits are scaled to integers by this factor inside the solver, so that the
/// optimality of a placement is decided in exact integer arithmetic. Reported
/// figures are sums of the caller's `f64` fits.
pub const FIT_SCALE: f64 = 1e9;

/// Largest fit magnitude accepted (fits are meant to be 0–100; the headroom
/// lets callers weight them). Keeps every scaled cost well inside `i64`.
pub const MAX_ABS_FIT: f64 = 1e4;

/// Most singers in one problem. With `MAX_ABS_FIT` and `MAX_BALANCE` this
/// keeps every path length in the solver far inside `i128`.
pub const MAX_SINGERS: usize = 1_000_000;

/// Largest balance weight accepted, in fit points per extra seat.
pub const MAX_BALANCE: f64 = 1e4;

/// Inclusive bounds on the number of singers in one section.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct SizeLimit {
    pub min: usize,
    pub max: usize,
}

impl SizeLimit {
    /// No limit: any number of singers, including none.
    pub fn any() -> Self {
        SizeLimit {
            min: 0,
            max: usize::MAX,
        }
    }

    /// Exactly `count` singers.
    pub fn exactly(count: usize) -> Self {
        SizeLimit {
            min: count,
            max: count,
        }
    }
}

/// One placement problem: plain data, independent of how the fits were made.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlacementProblem {
    pub singers: Vec<String>,
    pub sections: Vec<String>,
    /// `fit[singer][section]`: 0–100, higher is better; `None` = not allowed.
    pub fit: Vec<Vec<Option<f64>>>,
    /// One limit per section.
    pub sizes: Vec<SizeLimit>,
    /// `(singer, section)` indices: the singer must sit in that section.
    #[serde(default)]
    pub locks: Vec<(usize, usize)>,
    /// `(singer, section)` indices: the singer must not sit in that section.
    #[serde(default)]
    pub exclusions: Vec<(usize, usize)>,
    /// Optional preference for even section sizes, in fit points: the k-th
    /// seat of a section costs `balance × (k − 1)`, so a section of `c`
    /// singers costs `balance × c(c − 1)/2`. The penalty is convex in the
    /// count, which keeps the problem an exact min-cost flow.
    #[serde(default)]
    pub balance: Option<f64>,
    /// Optional `[singer][section]` flags set by the caller when the pair
    /// sings beyond the singer's range somewhere; such a placement is at risk.
    /// Empty = nothing flagged.
    #[serde(default)]
    pub beyond_range: Vec<Vec<bool>>,
    /// Optional `[singer][section]` short texts from the caller that enrich
    /// explanations, e.g. "4 % of sung time above comfort". Empty = none.
    #[serde(default)]
    pub pair_notes: Vec<Vec<Option<String>>>,
}

/// Settings that shape the report, not the optimum.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PlacementConfig {
    /// A placed singer whose fit is below this is reported at risk.
    pub risk_threshold: f64,
}

impl Default for PlacementConfig {
    fn default() -> Self {
        PlacementConfig {
            risk_threshold: 50.0,
        }
    }
}

/// The best alternative section for a singer, for the explanation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunnerUp {
    pub section: String,
    pub section_index: usize,
    pub fit: f64,
}

/// Where one singer sits, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Assignment {
    pub singer: String,
    pub singer_index: usize,
    pub section: String,
    pub section_index: usize,
    pub fit: f64,
    pub locked: bool,
    pub runner_up: Option<RunnerUp>,
    /// e.g. "A1 over A2: fit 82 vs 61".
    pub explanation: String,
}

/// One section's share of the placement.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionSummary {
    pub section: String,
    pub count: usize,
    /// Sum of the fits of the singers placed here.
    pub total_fit: f64,
    /// `None` for an empty section.
    pub mean_fit: Option<f64>,
}

/// Why a placed singer is flagged.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "reason", rename_all = "snake_case")]
pub enum RiskReason {
    /// The fit is below the configured threshold.
    LowFit { threshold: f64 },
    /// The caller flagged this pair as singing beyond the singer's range.
    BeyondRange,
}

impl RiskReason {
    /// The flag in words, as every front end shows it ("fit below 50").
    pub fn describe(&self) -> String {
        match self {
            RiskReason::LowFit { threshold } => format!("fit below {threshold:.0}"),
            RiskReason::BeyondRange => "sings beyond their range".into(),
        }
    }
}

/// A placed singer who needs the director's attention.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AtRisk {
    pub singer: String,
    pub singer_index: usize,
    pub section: String,
    pub fit: f64,
    pub reasons: Vec<RiskReason>,
}

/// A complete placement and its figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Placement {
    /// One per singer, in roster order.
    pub assignments: Vec<Assignment>,
    /// Sum of the assigned fits (the quantity maximised when there is no
    /// balance preference).
    pub objective: f64,
    /// `balance × Σ c(c − 1)/2` over sections; 0 without a balance preference.
    /// The solver maximises `objective − balance_penalty`.
    pub balance_penalty: f64,
    pub sections: Vec<SectionSummary>,
    pub at_risk: Vec<AtRisk>,
}

/// Everything wrong with a problem, or the reasons no placement exists.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum PlacementError {
    #[error("placement problem is malformed: {0}")]
    Invalid(String),
    #[error("no placement meets every constraint: {}", join_reasons(.reasons))]
    Infeasible { reasons: Vec<Infeasibility> },
}

fn join_reasons(reasons: &[Infeasibility]) -> String {
    reasons
        .iter()
        .map(|reason| reason.message.as_str())
        .collect::<Vec<_>>()
        .join("; ")
}

/// The exact optimum: every singer in exactly one allowed section, sizes,
/// locks and exclusions honoured, total fit (minus any balance penalty)
/// maximised. Ties are broken deterministically.
pub fn place(
    problem: &PlacementProblem,
    config: &PlacementConfig,
) -> Result<Placement, PlacementError> {
    validate(problem)?;
    let section_of = flow::solve(problem)?;
    evaluate(problem, &section_of, config)
}

/// Figures for a given assignment (`section_of[singer]` = section index),
/// without optimising: counts, means, objective, risks and explanations.
/// Does not require the assignment to honour the constraints (see
/// [`violations`]), only that every pair it uses has a fit.
pub fn evaluate(
    problem: &PlacementProblem,
    section_of: &[usize],
    config: &PlacementConfig,
) -> Result<Placement, PlacementError> {
    validate(problem)?;
    if section_of.len() != problem.singers.len() {
        return Err(PlacementError::Invalid(format!(
            "the assignment has {} entries for {} singers",
            section_of.len(),
            problem.singers.len()
        )));
    }
    let section_count = problem.sections.len();
    let mut counts = vec![0usize; section_count];
    let mut totals = vec![0.0f64; section_count];
    let mut assignments = Vec::with_capacity(section_of.len());
    let mut at_risk = Vec::new();
    let rules = PairRules::new(problem);
    for (singer, &section) in section_of.iter().enumerate() {
        let fit = pair_fit(problem, singer, section)?;
        counts[section] += 1;
        totals[section] += fit;
        let locked = rules.locks(singer).contains(&section);
        let runner_up = runner_up(problem, &rules, singer, section);
        let explanation = explain(problem, singer, section, fit, locked, runner_up.as_ref());
        let mut reasons = Vec::new();
        if fit < config.risk_threshold {
            reasons.push(RiskReason::LowFit {
                threshold: config.risk_threshold,
            });
        }
        if flagged_beyond_range(problem, singer, section) {
            reasons.push(RiskReason::BeyondRange);
        }
        if !reasons.is_empty() {
            at_risk.push(AtRisk {
                singer: problem.singers[singer].clone(),
                singer_index: singer,
                section: problem.sections[section].clone(),
                fit,
                reasons,
            });
        }
        assignments.push(Assignment {
            singer: problem.singers[singer].clone(),
            singer_index: singer,
            section: problem.sections[section].clone(),
            section_index: section,
            fit,
            locked,
            runner_up,
            explanation,
        });
    }
    let sections = (0..section_count)
        .map(|section| SectionSummary {
            section: problem.sections[section].clone(),
            count: counts[section],
            total_fit: totals[section],
            mean_fit: mean(totals[section], counts[section]),
        })
        .collect();
    let objective = assignments.iter().map(|assignment| assignment.fit).sum();
    Ok(Placement {
        assignments,
        objective,
        balance_penalty: balance_penalty(problem.balance, &counts),
        sections,
        at_risk,
    })
}

fn mean(total: f64, count: usize) -> Option<f64> {
    (count > 0).then(|| total / count as f64)
}

fn balance_penalty(balance: Option<f64>, counts: &[usize]) -> f64 {
    let weight = balance.unwrap_or(0.0);
    counts.iter().map(|&count| weight * seat_pairs(count)).sum()
}

/// `c(c − 1)/2`: the balance penalty of a section of `c` singers, per unit weight.
fn seat_pairs(count: usize) -> f64 {
    let count = count as f64;
    count * (count - 1.0).max(0.0) / 2.0
}

fn pair_fit(
    problem: &PlacementProblem,
    singer: usize,
    section: usize,
) -> Result<f64, PlacementError> {
    let row = problem
        .fit
        .get(singer)
        .ok_or_else(|| PlacementError::Invalid(format!("singer index {singer} is out of range")))?;
    match row.get(section) {
        Some(Some(fit)) => Ok(*fit),
        Some(None) => Err(PlacementError::Invalid(format!(
            "{} is assigned to {}, which the fit matrix does not allow",
            problem.singers[singer], problem.sections[section]
        ))),
        None => Err(PlacementError::Invalid(format!(
            "section index {section} is out of range for {}",
            problem.singers[singer]
        ))),
    }
}

/// Locks and exclusions indexed for O(1) look-ups (problems may carry
/// thousands of them).
struct PairRules {
    excluded: HashSet<(usize, usize)>,
    locks_of: HashMap<usize, Vec<usize>>,
}

impl PairRules {
    fn new(problem: &PlacementProblem) -> PairRules {
        let mut locks_of: HashMap<usize, Vec<usize>> = HashMap::new();
        for &(singer, section) in &problem.locks {
            locks_of.entry(singer).or_default().push(section);
        }
        PairRules {
            excluded: problem.exclusions.iter().copied().collect(),
            locks_of,
        }
    }

    fn is_excluded(&self, singer: usize, section: usize) -> bool {
        self.excluded.contains(&(singer, section))
    }

    fn locks(&self, singer: usize) -> &[usize] {
        self.locks_of.get(&singer).map_or(&[], Vec::as_slice)
    }
}

fn flagged_beyond_range(problem: &PlacementProblem, singer: usize, section: usize) -> bool {
    problem
        .beyond_range
        .get(singer)
        .and_then(|row| row.get(section))
        .copied()
        .unwrap_or(false)
}

fn pair_note(problem: &PlacementProblem, singer: usize, section: usize) -> Option<&str> {
    problem
        .pair_notes
        .get(singer)
        .and_then(|row| row.get(section))
        .and_then(|note| note.as_deref())
}

/// The best section other than `chosen` that the singer could sit in by fit
/// and exclusions (locks aside, so a locked singer still sees the cost).
fn runner_up(
    problem: &PlacementProblem,
    rules: &PairRules,
    singer: usize,
    chosen: usize,
) -> Option<RunnerUp> {
    let row = problem.fit.get(singer)?;
    let mut best: Option<(usize, f64)> = None;
    for (section, fit) in row.iter().enumerate() {
        let Some(fit) = *fit else { continue };
        if section == chosen || rules.is_excluded(singer, section) {
            continue;
        }
        if best.is_none_or(|(_, best_fit)| fit > best_fit) {
            best = Some((section, fit));
        }
    }
    best.map(|(section, fit)| RunnerUp {
        section: problem.sections[section].clone(),
        section_index: section,
        fit,
    })
}

/// Fit figures without false precision: whole numbers unless that would
/// make two different figures look equal.
fn format_fits(first: f64, second: f64) -> (String, String) {
    let whole = |value: f64| format!("{value:.0}");
    if whole(first) == whole(second) && first != second {
        (format!("{first:.1}"), format!("{second:.1}"))
    } else {
        (whole(first), whole(second))
    }
}

fn with_note(fit: String, note: Option<&str>) -> String {
    match note {
        Some(note) => format!("{fit} ({note})"),
        None => fit,
    }
}

fn explain(
    problem: &PlacementProblem,
    singer: usize,
    section: usize,
    fit: f64,
    locked: bool,
    runner_up: Option<&RunnerUp>,
) -> String {
    let name = &problem.sections[section];
    let note = pair_note(problem, singer, section);
    let Some(other) = runner_up else {
        let (text, _) = format_fits(fit, fit);
        return format!(
            "{name}: the only section allowed (fit {})",
            with_note(text, note)
        );
    };
    let other_note = pair_note(problem, singer, other.section_index);
    let (chosen_text, other_text) = format_fits(fit, other.fit);
    let chosen_text = with_note(chosen_text, note);
    let other_text = with_note(other_text, other_note);
    if locked {
        format!(
            "{name}: locked there (fit {chosen_text}); {} would be {other_text}",
            other.section
        )
    } else if fit == other.fit {
        format!(
            "{name}, tied with {}: fit {chosen_text} vs {other_text}",
            other.section
        )
    } else if fit > other.fit {
        format!(
            "{name} over {}: fit {chosen_text} vs {other_text}",
            other.section
        )
    } else {
        format!(
            "{name} rather than {} (fit {chosen_text} vs {other_text}): the section sizes{} call for it",
            other.section,
            if problem.balance.is_some() {
                " or the balance preference"
            } else {
                ""
            }
        )
    }
}

/// Checks the shape and values of a problem (not its feasibility).
pub fn validate(problem: &PlacementProblem) -> Result<(), PlacementError> {
    let invalid = |message: String| Err(PlacementError::Invalid(message));
    let singer_count = problem.singers.len();
    let section_count = problem.sections.len();
    if singer_count == 0 {
        return invalid("the roster is empty: there are no singers to place".into());
    }
    if section_count == 0 {
        return invalid("the layout has no sections".into());
    }
    if singer_count > MAX_SINGERS {
        return invalid(format!(
            "{singer_count} singers is more than the {MAX_SINGERS} that can be placed at once"
        ));
    }
    if problem.fit.len() != singer_count {
        return invalid(format!(
            "the fit matrix has {} rows for {singer_count} singers",
            problem.fit.len()
        ));
    }
    for (singer, row) in problem.fit.iter().enumerate() {
        if row.len() != section_count {
            return invalid(format!(
                "the fit row of {} has {} entries for {section_count} sections",
                problem.singers[singer],
                row.len()
            ));
        }
        for (section, fit) in row.iter().enumerate() {
            if let Some(fit) = fit
                && !(fit.is_finite() && fit.abs() <= MAX_ABS_FIT)
            {
                return invalid(format!(
                    "the fit of {} in {} is {fit}; fits must be finite and within ±{MAX_ABS_FIT}",
                    problem.singers[singer], problem.sections[section]
                ));
            }
        }
    }
    if problem.sizes.len() != section_count {
        return invalid(format!(
            "{} size limits for {section_count} sections",
            problem.sizes.len()
        ));
    }
    for (what, pairs) in [("lock", &problem.locks), ("exclusion", &problem.exclusions)] {
        for &(singer, section) in pairs {
            if singer >= singer_count || section >= section_count {
                return invalid(format!(
                    "the {what} ({singer}, {section}) names a singer or section that does not exist \
                     ({singer_count} singers, {section_count} sections)"
                ));
            }
        }
    }
    for (name, matrix_rows) in [
        ("beyond_range", problem.beyond_range.len()),
        ("pair_notes", problem.pair_notes.len()),
    ] {
        if matrix_rows != 0 && matrix_rows != singer_count {
            return invalid(format!(
                "{name} has {matrix_rows} rows for {singer_count} singers"
            ));
        }
    }
    if let Some(balance) = problem.balance
        && !(balance.is_finite() && (0.0..=MAX_BALANCE).contains(&balance))
    {
        return invalid(format!(
            "the balance weight is {balance}; it must be between 0 and {MAX_BALANCE}"
        ));
    }
    Ok(())
}

/// A constraint an assignment breaks (used by what-if).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Violation {
    /// The fit matrix does not allow the pair.
    NotAllowed { singer: String, section: String },
    /// The pair is excluded.
    Excluded { singer: String, section: String },
    /// The singer is locked elsewhere.
    BreaksLock { singer: String, locked_to: String },
    BelowMinimum {
        section: String,
        count: usize,
        min: usize,
    },
    AboveMaximum {
        section: String,
        count: usize,
        max: usize,
    },
}

/// Every constraint `section_of` breaks, in a stable order: pairs first
/// (by singer), then section sizes (by section).
pub fn violations(problem: &PlacementProblem, section_of: &[usize]) -> Vec<Violation> {
    let mut found = Vec::new();
    let rules = PairRules::new(problem);
    let mut counts = vec![0usize; problem.sections.len()];
    for (singer, &section) in section_of.iter().enumerate() {
        if let Some(count) = counts.get_mut(section) {
            *count += 1;
        }
        found.extend(pair_violations(problem, &rules, singer, section));
    }
    for (section, &count) in counts.iter().enumerate() {
        found.extend(size_violations(problem, section, count));
    }
    found
}

fn pair_violations(
    problem: &PlacementProblem,
    rules: &PairRules,
    singer: usize,
    section: usize,
) -> Vec<Violation> {
    let mut found = Vec::new();
    let singer_name = || problem.singers[singer].clone();
    let section_name = || problem.sections[section].clone();
    if !matches!(
        problem.fit.get(singer).and_then(|row| row.get(section)),
        Some(Some(_))
    ) {
        found.push(Violation::NotAllowed {
            singer: singer_name(),
            section: section_name(),
        });
    }
    if rules.is_excluded(singer, section) {
        found.push(Violation::Excluded {
            singer: singer_name(),
            section: section_name(),
        });
    }
    for &locked_section in rules.locks(singer) {
        if locked_section != section {
            found.push(Violation::BreaksLock {
                singer: singer_name(),
                locked_to: problem.sections[locked_section].clone(),
            });
        }
    }
    found
}

fn size_violations(problem: &PlacementProblem, section: usize, count: usize) -> Option<Violation> {
    let limit = problem.sizes.get(section)?;
    let name = problem.sections[section].clone();
    if count < limit.min {
        Some(Violation::BelowMinimum {
            section: name,
            count,
            min: limit.min,
        })
    } else if count > limit.max {
        Some(Violation::AboveMaximum {
            section: name,
            count,
            max: limit.max,
        })
    } else {
        None
    }
}

/// One section before and after a what-if move.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionDelta {
    pub section: String,
    pub count_before: usize,
    pub count_after: usize,
    pub mean_fit_before: Option<f64>,
    pub mean_fit_after: Option<f64>,
    /// `None` when the section is empty before or after.
    pub mean_fit_delta: Option<f64>,
}

/// The change in every figure when one singer moves.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WhatIf {
    pub singer: String,
    pub from_section: String,
    pub to_section: String,
    pub fit_before: f64,
    pub fit_after: f64,
    pub objective_before: f64,
    pub objective_after: f64,
    pub objective_delta: f64,
    pub balance_penalty_delta: f64,
    /// Every section, in layout order (unchanged sections have equal counts).
    pub sections: Vec<SectionDelta>,
    /// Whether the moved singer would be at risk after the move.
    pub at_risk_after: bool,
    /// Constraints the move newly breaks (empty = still a valid placement).
    pub violations: Vec<Violation>,
}

/// What changes if `singer` moves to `new_section`, computed from the
/// placement's section totals in O(sections) without re-solving.
pub fn what_if(
    problem: &PlacementProblem,
    placement: &Placement,
    singer: usize,
    new_section: usize,
    config: &PlacementConfig,
) -> Result<WhatIf, PlacementError> {
    let section_count = problem.sections.len();
    if placement.sections.len() != section_count
        || placement.assignments.len() != problem.singers.len()
    {
        return Err(PlacementError::Invalid(
            "the placement does not belong to this problem".into(),
        ));
    }
    let assignment = placement
        .assignments
        .get(singer)
        .ok_or_else(|| PlacementError::Invalid(format!("singer index {singer} is out of range")))?;
    if new_section >= section_count {
        return Err(PlacementError::Invalid(format!(
            "section index {new_section} is out of range"
        )));
    }
    let from = assignment.section_index;
    let fit_before = assignment.fit;
    let fit_after = pair_fit(problem, singer, new_section)?;
    let mut sections = Vec::with_capacity(section_count);
    let mut violations = pair_violations(problem, &PairRules::new(problem), singer, new_section);
    let mut penalty_delta = 0.0;
    for (section, summary) in placement.sections.iter().enumerate() {
        let (count_after, total_after) = if from == new_section {
            (summary.count, summary.total_fit)
        } else if section == from {
            (
                summary.count.saturating_sub(1),
                summary.total_fit - fit_before,
            )
        } else if section == new_section {
            (summary.count + 1, summary.total_fit + fit_after)
        } else {
            (summary.count, summary.total_fit)
        };
        let mean_before = summary.mean_fit;
        let mean_after = mean(total_after, count_after);
        if count_after != summary.count {
            // Only the two touched sections can newly break a size limit.
            violations.extend(size_violations(problem, section, count_after));
            penalty_delta += problem.balance.unwrap_or(0.0)
                * (seat_pairs(count_after) - seat_pairs(summary.count));
        }
        sections.push(SectionDelta {
            section: summary.section.clone(),
            count_before: summary.count,
            count_after,
            mean_fit_before: mean_before,
            mean_fit_after: mean_after,
            mean_fit_delta: mean_before
                .zip(mean_after)
                .map(|(before, after)| after - before),
        });
    }
    let objective_delta = fit_after - fit_before;
    Ok(WhatIf {
        singer: problem.singers[singer].clone(),
        from_section: problem.sections[from].clone(),
        to_section: problem.sections[new_section].clone(),
        fit_before,
        fit_after,
        objective_before: placement.objective,
        objective_after: placement.objective + objective_delta,
        objective_delta,
        balance_penalty_delta: penalty_delta,
        sections,
        at_risk_after: fit_after < config.risk_threshold
            || flagged_beyond_range(problem, singer, new_section),
        violations,
    })
}

/// The best placement with `singer` locked to `section` (any earlier lock of
/// that singer replaced): the re-optimised answer to a what-if.
pub fn place_with_lock(
    problem: &PlacementProblem,
    singer: usize,
    section: usize,
    config: &PlacementConfig,
) -> Result<Placement, PlacementError> {
    let mut locked = problem.clone();
    locked
        .locks
        .retain(|&(locked_singer, _)| locked_singer != singer);
    locked.locks.push((singer, section));
    place(&locked, config)
}

/// How a divided section's members are shared between the two lines.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum DivisiBalance {
    /// The two lines differ by at most one singer.
    Even,
    /// At least this many on each line.
    AtLeast { upper: usize, lower: usize },
}

/// Who sings the upper and who the lower line of a divisi.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DivisiSplit {
    /// Member indices on the upper line, ascending.
    pub upper: Vec<usize>,
    /// Member indices on the lower line, ascending.
    pub lower: Vec<usize>,
    pub objective: f64,
    /// The full placement over the two lines ("upper", "lower").
    pub placement: Placement,
}

/// The divisi split that maximises the members' total fit, with the two
/// lines' sizes constrained by `balance`. Same exact solver as [`place`].
pub fn split_divisi_lines(
    members: &[String],
    upper_fit: &[Option<f64>],
    lower_fit: &[Option<f64>],
    balance: DivisiBalance,
    config: &PlacementConfig,
) -> Result<DivisiSplit, PlacementError> {
    if upper_fit.len() != members.len() || lower_fit.len() != members.len() {
        return Err(PlacementError::Invalid(format!(
            "{} members but {} upper-line and {} lower-line fits",
            members.len(),
            upper_fit.len(),
            lower_fit.len()
        )));
    }
    let count = members.len();
    let sizes = match balance {
        DivisiBalance::Even => {
            let limit = SizeLimit {
                min: count / 2,
                max: count.div_ceil(2),
            };
            vec![limit, limit]
        }
        DivisiBalance::AtLeast { upper, lower } => vec![
            SizeLimit {
                min: upper,
                max: usize::MAX,
            },
            SizeLimit {
                min: lower,
                max: usize::MAX,
            },
        ],
    };
    let problem = PlacementProblem {
        singers: members.to_vec(),
        sections: vec!["upper".into(), "lower".into()],
        fit: upper_fit
            .iter()
            .zip(lower_fit)
            .map(|(&upper, &lower)| vec![upper, lower])
            .collect(),
        sizes,
        locks: Vec::new(),
        exclusions: Vec::new(),
        balance: None,
        beyond_range: Vec::new(),
        pair_notes: Vec::new(),
    };
    let placement = place(&problem, config)?;
    let line = |section: usize| {
        placement
            .assignments
            .iter()
            .filter(|assignment| assignment.section_index == section)
            .map(|assignment| assignment.singer_index)
            .collect()
    };
    Ok(DivisiSplit {
        upper: line(0),
        lower: line(1),
        objective: placement.objective,
        placement,
    })
}

#[cfg(test)]
mod tests;
