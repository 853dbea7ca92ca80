//! The order of a rehearsal's blocks: the rules, the objective and the two
//! searches (exact branch and bound, and a heuristic for long plans).
//!
//! The problem is posed on plain numbers: each work block has a length in
//! minutes and, per section, sung and high minutes spread evenly over the
//! block (a block's inner order is not known from the request). A warm-up
//! may open the rehearsal and breaks (blocks in which nobody sings) are
//! placed at the work boundary nearest their target time, so an order of the
//! work blocks fixes the whole timeline.
//!
//! **Cost**, compared in this order: the number of rules broken, then how
//! far they are broken (the sum over rules of the worst excess), then the
//! peak load (sung + high-weighted minutes of any section in any window).
//! Every part is a running maximum or a count along the timeline, so the
//! cost of a prefix never exceeds the cost of any plan it starts: the branch
//! and bound prunes on it soundly.
//!
//! Architecture invariant: knows nothing of scores, sections or singers; a
//! pure function of an [`OrderProblem`].

use serde::{Deserialize, Serialize};

/// Comparisons of minutes and shares allow this much rounding.
const EPSILON: f64 = 1e-9;

/// A work block to be placed: a piece or passage with its run-throughs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WorkBlock {
    pub minutes: f64,
    /// Sung minutes per section (in the problem's section order).
    pub sung_minutes: Vec<f64>,
    /// Minutes above each section's high reference, per section.
    pub high_minutes: Vec<f64>,
    /// For a sectional: the indices of the sections it needs.
    pub sectional: Option<Vec<usize>>,
    /// A fixed place among the work blocks (0-based).
    pub fixed_position: Option<usize>,
}

/// The rest-share rule: in every window of `window_minutes`, each section
/// is silent for at least `min_share` of the time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RestRule {
    pub window_minutes: f64,
    pub min_share: f64,
}

/// The rules; `None`/`false` switches one off.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct OrderRules {
    /// Without a warm-up, the first block is the one with the lowest load.
    pub start_gently: bool,
    /// No section sings high for more than this many minutes in a row.
    pub high_budget_minutes: Option<f64>,
    pub rest: Option<RestRule>,
    /// The hardest high block is not first (without a warm-up) and ends
    /// before the last this-many minutes (at most the last quarter of a
    /// shorter plan).
    pub hardest_high_last_stretch_minutes: Option<f64>,
    /// Two sectionals in a row share no section.
    pub interleave_sectionals: bool,
}

/// An ordering problem.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OrderProblem {
    /// How many sections each block's figures cover.
    pub sections: usize,
    pub blocks: Vec<WorkBlock>,
    /// The warm-up block, always first when present (its high minutes should be 0).
    pub warm_up: Option<WorkBlock>,
    pub breaks: usize,
    pub break_minutes: f64,
    /// Window of the peak-load objective.
    pub load_window_minutes: f64,
    /// How much a high minute adds to the load beyond being a sung minute.
    pub high_weight: f64,
    pub rules: OrderRules,
    /// Exact search up to this many work blocks; the heuristic above.
    pub exact_up_to: usize,
}

/// The rules by name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Rule {
    StartGently,
    HighBudget,
    RestShare,
    HardestHighPlacement,
    InterleaveSectionals,
}

impl Rule {
    pub const ALL: [Rule; 5] = [
        Rule::StartGently,
        Rule::HighBudget,
        Rule::RestShare,
        Rule::HardestHighPlacement,
        Rule::InterleaveSectionals,
    ];

    fn bit(self) -> u8 {
        1 << (self as u8)
    }

    /// The rule's name as shown to directors.
    pub fn label(self) -> &'static str {
        match self {
            Rule::StartGently => "begin with a warm-up or the lightest item",
            Rule::HighBudget => "high-singing budget",
            Rule::RestShare => "rest share in every window",
            Rule::HardestHighPlacement => "hardest high item after the warm-up, not at the end",
            Rule::InterleaveSectionals => "sectionals interleaved",
        }
    }
}

/// The cost of an order (lower is better, compared field by field).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Cost {
    pub rules_broken: u32,
    /// Sum over broken rules of the worst excess (minutes over budget, rest
    /// minutes missing, placements and adjacencies counted as 1 each).
    pub excess: f64,
    /// Peak load: the largest sung + weighted high minutes of any section
    /// in any window of the load window's length.
    pub peak_load: f64,
}

impl Cost {
    /// Whether `self` is strictly better than `other`.
    pub fn better_than(&self, other: &Cost) -> bool {
        if self.rules_broken != other.rules_broken {
            return self.rules_broken < other.rules_broken;
        }
        if (self.excess - other.excess).abs() > EPSILON {
            return self.excess < other.excess;
        }
        self.peak_load < other.peak_load - EPSILON
    }
}

/// What fills a slot of the timeline.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind", content = "block")]
pub enum Slot {
    WarmUp,
    Work(usize),
    Break,
}

/// A slot with its time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Placed {
    pub slot: Slot,
    pub start_minute: f64,
    pub minutes: f64,
}

/// Which search found the order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Branch and bound: the optimum of the cost.
    Exact,
    /// Greedy construction and local search (swap and insertion moves).
    Heuristic,
    /// Every order tried (checks only).
    BruteForce,
}

/// A window of the timeline and a figure over it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Window {
    pub start_minute: f64,
    pub end_minute: f64,
    pub value: f64,
}

/// A section's figures over the ordered timeline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionFigures {
    pub sung_minutes: f64,
    pub high_minutes: f64,
    /// The most high minutes sung in consecutive blocks that all have high singing.
    pub longest_high_stretch_minutes: f64,
    /// The window with the largest load.
    pub peak_load: Window,
    /// The window with the least rest, and its rest share.
    pub least_rest: Window,
}

/// A broken rule, with what breaks it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Broken {
    pub rule: Rule,
    /// Plain words, with minutes; block indices are the problem's.
    pub detail: String,
    pub blocks: Vec<usize>,
    pub sections: Vec<usize>,
}

/// The result of a search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Ordered {
    /// Work block indices in order.
    pub order: Vec<usize>,
    pub timeline: Vec<Placed>,
    pub cost: Cost,
    pub method: Method,
    /// Partial orders (nodes) or whole orders the search looked at.
    pub examined: u64,
    pub sections: Vec<SectionFigures>,
    pub broken: Vec<Broken>,
    /// The planned length: warm-up, work blocks and breaks.
    pub total_minutes: f64,
    /// Breaks asked for that could not be placed (fewer than two work blocks).
    pub breaks_dropped: usize,
}

/// The state after a slot: running maxima and the rule flags.
#[derive(Debug, Clone, Copy, PartialEq)]
struct State {
    peak_load: f64,
    broken: u8,
    high_excess: f64,
    rest_deficit_minutes: f64,
    interleave_count: u32,
    placement_count: u32,
}

impl State {
    /// Before any slot: nothing sung, nothing broken.
    const EMPTY: State = State {
        peak_load: 0.0,
        broken: 0,
        high_excess: 0.0,
        rest_deficit_minutes: 0.0,
        interleave_count: 0,
        placement_count: 0,
    };

    fn cost(&self) -> Cost {
        Cost {
            rules_broken: self.broken.count_ones(),
            excess: self.high_excess
                + self.rest_deficit_minutes
                + f64::from(self.interleave_count)
                + f64::from(self.placement_count),
            peak_load: self.peak_load,
        }
    }
}

/// Facts of the problem that do not depend on the order.
struct Facts {
    sections: usize,
    total_minutes: f64,
    breaks: usize,
    load_window: f64,
    rest_window: f64,
    /// Load of each work block: its heaviest section's sung + weighted high minutes.
    block_load: Vec<f64>,
    lightest_load: f64,
    /// The block with the most high minutes in any section (none when no block sings high).
    hardest: Option<usize>,
    /// The last stretch starts here.
    last_stretch_from: f64,
    /// A lower bound on the peak load each block forces on its own.
    intrinsic_peak: Vec<f64>,
    sectional_masks: Vec<Option<u64>>,
    fixed_at: Vec<Option<usize>>,
    /// For identical blocks, the first of their kind (tried in index order only).
    twin_of: Vec<Option<usize>>,
}

impl Facts {
    fn of(problem: &OrderProblem) -> Facts {
        let n = problem.blocks.len();
        let breaks = problem.breaks.min(n.saturating_sub(1));
        let total_minutes = problem.warm_up.as_ref().map_or(0.0, |w| w.minutes)
            + problem.blocks.iter().map(|b| b.minutes).sum::<f64>()
            + breaks as f64 * problem.break_minutes;
        let load_window = problem.load_window_minutes.min(total_minutes).max(EPSILON);
        let rest_window = problem
            .rules
            .rest
            .map_or(load_window, |rest| rest.window_minutes)
            .min(total_minutes)
            .max(EPSILON);
        let load_of = |block: &WorkBlock| -> f64 {
            (0..problem.sections)
                .map(|s| {
                    block.sung_minutes.get(s).copied().unwrap_or(0.0)
                        + problem.high_weight * block.high_minutes.get(s).copied().unwrap_or(0.0)
                })
                .fold(0.0, f64::max)
        };
        let block_load: Vec<f64> = problem.blocks.iter().map(load_of).collect();
        let lightest_load = block_load.iter().copied().fold(f64::INFINITY, f64::min);
        let most_high = |block: &WorkBlock| block.high_minutes.iter().copied().fold(0.0, f64::max);
        let mut hardest: Option<usize> = None;
        for (index, block) in problem.blocks.iter().enumerate() {
            let high = most_high(block);
            if high > EPSILON && hardest.is_none_or(|best| high > most_high(&problem.blocks[best]))
            {
                hardest = Some(index);
            }
        }
        let intrinsic_peak = problem
            .blocks
            .iter()
            .zip(&block_load)
            .map(|(block, &load)| {
                if block.minutes > load_window {
                    load * load_window / block.minutes
                } else {
                    load
                }
            })
            .collect();
        let sectional_masks = problem
            .blocks
            .iter()
            .map(|block| {
                block.sectional.as_ref().map(|sections| {
                    sections
                        .iter()
                        .filter(|&&s| s < 64)
                        .fold(0u64, |mask, &s| mask | (1 << s))
                })
            })
            .collect();
        let mut fixed_at = vec![None; n];
        for (index, block) in problem.blocks.iter().enumerate() {
            if let Some(position) = block.fixed_position
                && let Some(slot) = fixed_at.get_mut(position)
                && slot.is_none()
            {
                *slot = Some(index);
            }
        }
        let twin_of = (0..n)
            .map(|i| (0..i).find(|&j| problem.blocks[j] == problem.blocks[i]))
            .collect();
        Facts {
            sections: problem.sections,
            total_minutes,
            breaks,
            load_window,
            rest_window,
            block_load,
            lightest_load,
            hardest,
            last_stretch_from: problem
                .rules
                .hardest_high_last_stretch_minutes
                .map_or(f64::INFINITY, |stretch| {
                    total_minutes - stretch.min(total_minutes / 4.0)
                }),
            intrinsic_peak,
            sectional_masks,
            fixed_at,
            twin_of,
        }
    }
}

/// The timeline of a partial order, extended and shortened one work block
/// at a time (the search's only evaluator, so every search and the final
/// report agree).
struct Timeline<'p> {
    problem: &'p OrderProblem,
    facts: &'p Facts,
    slots: Vec<Slot>,
    /// Slot boundaries; `times[0] = 0`.
    times: Vec<f64>,
    /// Cumulative load and sung minutes per section at each boundary (row-major).
    cumulative_load: Vec<f64>,
    cumulative_sung: Vec<f64>,
    /// Consecutive high minutes per section after each slot (row-major), and the longest so far.
    high_run: Vec<f64>,
    longest_high: Vec<f64>,
    states: Vec<State>,
    /// Slots pushed by each work step (a break may precede the block).
    steps: Vec<usize>,
    work_placed: usize,
    breaks_placed: usize,
}

impl<'p> Timeline<'p> {
    fn new(problem: &'p OrderProblem, facts: &'p Facts) -> Timeline<'p> {
        let s = facts.sections;
        let mut timeline = Timeline {
            problem,
            facts,
            slots: Vec::new(),
            times: vec![0.0],
            cumulative_load: vec![0.0; s],
            cumulative_sung: vec![0.0; s],
            high_run: vec![0.0; s],
            longest_high: vec![0.0; s],
            states: vec![State::EMPTY],
            steps: Vec::new(),
            work_placed: 0,
            breaks_placed: 0,
        };
        if let Some(warm_up) = &problem.warm_up {
            timeline.push_slot(Slot::WarmUp, warm_up.minutes, Some(warm_up));
        }
        timeline
    }

    fn now(&self) -> f64 {
        self.times.last().copied().unwrap_or(0.0)
    }

    fn state(&self) -> State {
        self.states.last().copied().unwrap_or(State::EMPTY)
    }

    /// Cumulative value of section `s` at minute `x` (linear within a slot).
    fn cumulative_at(&self, cumulative: &[f64], s: usize, x: f64) -> f64 {
        let sections = self.facts.sections;
        let k = self.times.partition_point(|&t| t <= x).max(1) - 1;
        let at = |i: usize| cumulative.get(i * sections + s).copied().unwrap_or(0.0);
        match self.times.get(k + 1) {
            Some(&next) if next > self.times[k] + EPSILON => {
                let share = ((x - self.times[k]) / (next - self.times[k])).clamp(0.0, 1.0);
                at(k) + share * (at(k + 1) - at(k))
            }
            _ => at(k),
        }
    }

    /// The largest window total of section `s` among windows of `width`
    /// ending in `(from, to]`. A window total is a difference of a piecewise
    /// linear function, so its maximum lies where an end of the window is a
    /// slot boundary: only those ends are tried.
    fn max_window(&self, cumulative: &[f64], s: usize, width: f64, from: f64, to: f64) -> Window {
        let mut best = Window {
            start_minute: 0.0,
            end_minute: 0.0,
            value: f64::NEG_INFINITY,
        };
        let mut consider = |end: f64| {
            if end + EPSILON < width || end > to + EPSILON || end <= from - EPSILON {
                return;
            }
            let start = (end - width).max(0.0);
            let value = self.cumulative_at(cumulative, s, end.min(to))
                - self.cumulative_at(cumulative, s, start);
            if value > best.value + EPSILON {
                best = Window {
                    start_minute: start,
                    end_minute: end.min(to),
                    value,
                };
            }
        };
        consider(to);
        // Only boundaries within `width` before `from` can end a window in range.
        let first = self.times.partition_point(|&t| t + width <= from);
        for &t in &self.times[first..] {
            if t >= to {
                break;
            }
            let end = t + width;
            if end > from && end < to {
                consider(end);
            }
            if t > from {
                consider(t);
            }
        }
        best
    }

    fn push_slot(&mut self, slot: Slot, minutes: f64, block: Option<&WorkBlock>) {
        let facts = self.facts;
        let sections = facts.sections;
        let start = self.now();
        let end = start + minutes.max(0.0);
        let mut state = self.state();
        let base = (self.times.len() - 1) * sections;
        for s in 0..sections {
            let sung = block
                .and_then(|b| b.sung_minutes.get(s).copied())
                .unwrap_or(0.0);
            let high = block
                .and_then(|b| b.high_minutes.get(s).copied())
                .unwrap_or(0.0);
            let previous_load = self.cumulative_load[base + s];
            let previous_sung = self.cumulative_sung[base + s];
            self.cumulative_load
                .push(previous_load + sung + self.problem.high_weight * high);
            self.cumulative_sung.push(previous_sung + sung);
            let run = if high > EPSILON {
                self.high_run[base + s] + high
            } else {
                0.0
            };
            self.high_run.push(run);
            self.longest_high[s] = self.longest_high[s].max(run);
            if let Some(budget) = self.problem.rules.high_budget_minutes
                && run > budget + EPSILON
            {
                state.broken |= Rule::HighBudget.bit();
                state.high_excess = state.high_excess.max(run - budget);
            }
        }
        self.times.push(end);
        self.slots.push(slot);
        for s in 0..sections {
            let load = self.max_window(&self.cumulative_load, s, facts.load_window, start, end);
            state.peak_load = state.peak_load.max(load.value);
            if let Some(rest) = self.problem.rules.rest {
                let sung = self.max_window(&self.cumulative_sung, s, facts.rest_window, start, end);
                if sung.value.is_finite() {
                    let deficit = sung.value - (1.0 - rest.min_share) * facts.rest_window;
                    if deficit > EPSILON {
                        state.broken |= Rule::RestShare.bit();
                        state.rest_deficit_minutes = state.rest_deficit_minutes.max(deficit);
                    }
                }
            }
        }
        if let Slot::Work(index) = slot {
            let rules = &self.problem.rules;
            let first = self.work_placed == 0;
            if rules.start_gently
                && first
                && self.problem.warm_up.is_none()
                && facts.block_load[index] > facts.lightest_load + EPSILON
            {
                state.broken |= Rule::StartGently.bit();
                state.placement_count += 1;
            }
            if rules.hardest_high_last_stretch_minutes.is_some() && facts.hardest == Some(index) {
                let too_early = first && self.problem.warm_up.is_none();
                let too_late = end > facts.last_stretch_from + EPSILON;
                if too_early || too_late {
                    state.broken |= Rule::HardestHighPlacement.bit();
                    state.placement_count += 1;
                }
            }
            if rules.interleave_sectionals
                && let Some(mask) = facts.sectional_masks[index]
                && let Some(&Slot::Work(previous)) = self.slots.iter().rev().nth(1)
                && let Some(previous_mask) = facts.sectional_masks[previous]
                && mask & previous_mask != 0
            {
                state.broken |= Rule::InterleaveSectionals.bit();
                state.interleave_count += 1;
            }
            self.work_placed += 1;
        }
        self.states.push(state);
    }

    fn pop_slot(&mut self) {
        let sections = self.facts.sections;
        if let Some(slot) = self.slots.pop() {
            self.times.pop();
            self.states.pop();
            let keep = self.times.len() * sections;
            self.cumulative_load.truncate(keep);
            self.cumulative_sung.truncate(keep);
            self.high_run.truncate(keep);
            match slot {
                Slot::Work(_) => self.work_placed -= 1,
                Slot::Break => self.breaks_placed -= 1,
                Slot::WarmUp => {}
            }
            // The longest high run is a running maximum over the runs kept.
            for s in 0..sections {
                self.longest_high[s] = self
                    .high_run
                    .iter()
                    .skip(s)
                    .step_by(sections)
                    .copied()
                    .fold(0.0, f64::max);
            }
        }
    }

    /// Places work block `index` next, with a break before it when one is due.
    fn push(&mut self, index: usize) {
        let block = &self.problem.blocks[index];
        let mut pushed = 0;
        let last = self.work_placed + 1 == self.problem.blocks.len();
        while self.breaks_placed < self.facts.breaks && self.work_placed > 0 {
            let k = (self.breaks_placed + 1) as f64;
            let target = self.facts.total_minutes * k / (self.facts.breaks as f64 + 1.0);
            let start = self.now();
            let due = (start - target).abs() <= (start + block.minutes - target).abs();
            if !(due || last) {
                break;
            }
            self.push_slot(Slot::Break, self.problem.break_minutes, None);
            self.breaks_placed += 1;
            pushed += 1;
        }
        self.push_slot(Slot::Work(index), block.minutes, Some(block));
        self.steps.push(pushed + 1);
    }

    fn pop(&mut self) {
        if let Some(count) = self.steps.pop() {
            for _ in 0..count {
                self.pop_slot();
            }
        }
    }

    fn order(&self) -> Vec<usize> {
        self.slots
            .iter()
            .filter_map(|slot| match slot {
                Slot::Work(index) => Some(*index),
                _ => None,
            })
            .collect()
    }

    /// A lower bound on the cost of every completion of this prefix.
    fn bound(&self, remaining: impl Iterator<Item = usize>) -> Cost {
        let mut cost = self.state().cost();
        for index in remaining {
            cost.peak_load = cost.peak_load.max(self.facts.intrinsic_peak[index]);
        }
        cost
    }

    /// The report of a complete timeline.
    fn finish(&self, method: Method, examined: u64) -> Ordered {
        let problem = self.problem;
        let facts = self.facts;
        let sections = facts.sections;
        let last = self.times.len() - 1;
        let timeline = self
            .slots
            .iter()
            .enumerate()
            .map(|(i, &slot)| Placed {
                slot,
                start_minute: self.times[i],
                minutes: self.times[i + 1] - self.times[i],
            })
            .collect();
        let figures: Vec<SectionFigures> = (0..sections)
            .map(|s| {
                let load = self.max_window(
                    &self.cumulative_load,
                    s,
                    facts.load_window,
                    0.0,
                    facts.total_minutes,
                );
                let sung = self.max_window(
                    &self.cumulative_sung,
                    s,
                    facts.rest_window,
                    0.0,
                    facts.total_minutes,
                );
                let high = problem
                    .blocks
                    .iter()
                    .map(|b| b.high_minutes.get(s).copied().unwrap_or(0.0))
                    .sum();
                SectionFigures {
                    sung_minutes: self.cumulative_sung[last * sections + s],
                    high_minutes: high,
                    longest_high_stretch_minutes: self.longest_high[s],
                    peak_load: load,
                    least_rest: Window {
                        value: if sung.value.is_finite() {
                            1.0 - sung.value / facts.rest_window
                        } else {
                            1.0
                        },
                        ..sung
                    },
                }
            })
            .collect();
        let broken = self.broken_rules(&figures);
        Ordered {
            order: self.order(),
            timeline,
            cost: self.state().cost(),
            method,
            examined,
            sections: figures,
            broken,
            total_minutes: facts.total_minutes,
            breaks_dropped: problem.breaks - facts.breaks,
        }
    }

    /// Each broken rule with what breaks it.
    fn broken_rules(&self, figures: &[SectionFigures]) -> Vec<Broken> {
        let problem = self.problem;
        let facts = self.facts;
        let flags = self.state().broken;
        let mut out = Vec::new();
        let order = self.order();
        let sections_where = |test: &dyn Fn(&SectionFigures) -> bool| -> Vec<usize> {
            figures
                .iter()
                .enumerate()
                .filter(|(_, f)| test(f))
                .map(|(s, _)| s)
                .collect()
        };
        for rule in Rule::ALL {
            if flags & rule.bit() == 0 {
                continue;
            }
            let broken = match rule {
                Rule::StartGently => Broken {
                    rule,
                    detail: format!(
                        "the first item's load is {:.1} min; the lightest item's is {:.1} min, and there is no warm-up",
                        order.first().map_or(0.0, |&i| facts.block_load[i]),
                        facts.lightest_load
                    ),
                    blocks: order.first().copied().into_iter().collect(),
                    sections: Vec::new(),
                },
                Rule::HighBudget => {
                    let budget = problem.rules.high_budget_minutes.unwrap_or(0.0);
                    let over =
                        sections_where(&|f| f.longest_high_stretch_minutes > budget + EPSILON);
                    let blocks = problem
                        .blocks
                        .iter()
                        .enumerate()
                        .filter(|(_, b)| {
                            over.iter().any(|&s| {
                                b.high_minutes.get(s).copied().unwrap_or(0.0) > budget + EPSILON
                            })
                        })
                        .map(|(i, _)| i)
                        .collect();
                    Broken {
                        rule,
                        detail: format!(
                            "high singing in a row reaches {:.1} min (budget {budget:.1} min)",
                            figures
                                .iter()
                                .map(|f| f.longest_high_stretch_minutes)
                                .fold(0.0, f64::max)
                        ),
                        blocks,
                        sections: over,
                    }
                }
                Rule::RestShare => {
                    let rest = problem.rules.rest.map_or(0.0, |r| r.min_share);
                    let short = sections_where(&|f| f.least_rest.value < rest - EPSILON);
                    let worst = figures
                        .iter()
                        .map(|f| f.least_rest)
                        .min_by(|a, b| a.value.total_cmp(&b.value));
                    Broken {
                        rule,
                        detail: worst.map_or_else(String::new, |w| {
                            format!(
                                "rest falls to {:.0} % in minutes {:.0}–{:.0} (at least {:.0} % asked)",
                                100.0 * w.value,
                                w.start_minute,
                                w.end_minute,
                                100.0 * rest
                            )
                        }),
                        blocks: Vec::new(),
                        sections: short,
                    }
                }
                Rule::HardestHighPlacement => Broken {
                    rule,
                    detail: match facts.hardest.and_then(|h| {
                        self.slots
                            .iter()
                            .position(|&slot| slot == Slot::Work(h))
                            .map(|p| (h, p))
                    }) {
                        Some((_, position)) => format!(
                            "the hardest high item runs minutes {:.0}–{:.0}; the last stretch starts at minute {:.0}{}",
                            self.times[position],
                            self.times[position + 1],
                            facts.last_stretch_from.max(0.0),
                            if problem.warm_up.is_none() && order.first() == facts.hardest.as_ref()
                            {
                                ", and it opens the rehearsal without a warm-up"
                            } else {
                                ""
                            }
                        ),
                        None => String::new(),
                    },
                    blocks: facts.hardest.into_iter().collect(),
                    sections: Vec::new(),
                },
                Rule::InterleaveSectionals => {
                    let mut blocks = Vec::new();
                    for pair in self.slots.windows(2) {
                        if let [Slot::Work(a), Slot::Work(b)] = *pair
                            && let (Some(x), Some(y)) =
                                (facts.sectional_masks[a], facts.sectional_masks[b])
                            && x & y != 0
                        {
                            blocks.extend([a, b]);
                        }
                    }
                    blocks.dedup();
                    Broken {
                        rule,
                        detail: format!(
                            "{} pair(s) of sectionals in a row need the same section",
                            self.state().interleave_count
                        ),
                        blocks,
                        sections: Vec::new(),
                    }
                }
            };
            out.push(broken);
        }
        out
    }
}

/// Orders the work blocks: exact up to `exact_up_to` blocks, the heuristic above.
pub fn order(problem: &OrderProblem) -> Ordered {
    if problem.blocks.len() <= problem.exact_up_to {
        exact(problem)
    } else {
        heuristic(problem)
    }
}

/// Branch and bound over orders, started from the heuristic's order as the
/// bound. Identical blocks are tried in index order only, and a prefix is
/// dropped as soon as its cost (plus the peak each remaining block forces
/// alone) is no better than the best complete order.
pub fn exact(problem: &OrderProblem) -> Ordered {
    let start = heuristic(problem);
    let facts = Facts::of(problem);
    let mut timeline = Timeline::new(problem, &facts);
    let mut search = Search {
        best_cost: start.cost,
        best_order: start.order.clone(),
        used: vec![false; problem.blocks.len()],
        examined: 0,
    };
    search.branch(&mut timeline);
    let examined = search.examined + start.examined;
    replay(problem, &facts, &search.best_order, Method::Exact, examined)
}

struct Search {
    best_cost: Cost,
    best_order: Vec<usize>,
    used: Vec<bool>,
    examined: u64,
}

impl Search {
    fn branch(&mut self, timeline: &mut Timeline) {
        self.examined += 1;
        let n = self.used.len();
        let depth = timeline.work_placed;
        if depth == n {
            let cost = timeline.state().cost();
            if cost.better_than(&self.best_cost) {
                self.best_cost = cost;
                self.best_order = timeline.order();
            }
            return;
        }
        let candidates: Vec<usize> = match timeline.facts.fixed_at[depth] {
            Some(index) if !self.used[index] => vec![index],
            Some(_) => Vec::new(),
            None => (0..n)
                .filter(|&i| !self.used[i] && timeline.facts.fixed_at.iter().all(|f| *f != Some(i)))
                .filter(|&i| timeline.facts.twin_of[i].is_none_or(|twin| self.used[twin]))
                .collect(),
        };
        for index in candidates {
            self.used[index] = true;
            timeline.push(index);
            let used = &self.used;
            let bound = timeline.bound((0..n).filter(|&i| !used[i]));
            if bound.better_than(&self.best_cost) {
                self.branch(timeline);
            }
            timeline.pop();
            self.used[index] = false;
        }
    }
}

fn replay(
    problem: &OrderProblem,
    facts: &Facts,
    order: &[usize],
    method: Method,
    examined: u64,
) -> Ordered {
    let mut timeline = Timeline::new(problem, facts);
    for &index in order {
        timeline.push(index);
    }
    timeline.finish(method, examined)
}

/// The heuristic for long plans (iterated local search):
/// 1. greedy construction: at each place, the block whose addition gives the
///    lowest prefix cost (fixed blocks at their places), started from each
///    of the best first choices;
/// 2. local search to a local optimum under two moves among the movable
///    blocks: swapping two, and moving one to another place (best
///    improvement per pass; above 12 blocks only moves of up to 8 places);
/// 3. kicks: a random segment of the best order reversed, then step 2
///    again, kept when better (20 kicks up to 12 blocks, 4 above; a fixed
///    seed, so the result is deterministic).
///
/// Orders are evaluated by extending the common prefix of the previous
/// candidate, and candidates are visited from the end of the order, so most
/// of the timeline is reused.
pub fn heuristic(problem: &OrderProblem) -> Ordered {
    let facts = Facts::of(problem);
    let n = problem.blocks.len();
    let large = n > 12;
    let mut evaluator = Evaluator {
        timeline: Timeline::new(problem, &facts),
        current: Vec::new(),
        examined: 0,
    };
    let mut first_choices: Vec<(Cost, usize)> = Vec::new();
    let candidates: Vec<usize> = match facts.fixed_at.first().copied().flatten() {
        Some(index) => vec![index],
        None => (0..n)
            .filter(|&i| facts.fixed_at.iter().all(|f| *f != Some(i)))
            .filter(|&i| facts.twin_of[i].is_none())
            .collect(),
    };
    for index in candidates {
        let cost = evaluator.cost(&[index]);
        first_choices.push((cost, index));
    }
    first_choices.sort_by(|a, b| {
        if a.0.better_than(&b.0) {
            std::cmp::Ordering::Less
        } else if b.0.better_than(&a.0) {
            std::cmp::Ordering::Greater
        } else {
            a.1.cmp(&b.1)
        }
    });
    let movable: Vec<usize> = (0..n)
        .filter(|&p| facts.fixed_at.get(p).copied().flatten().is_none())
        .collect();
    let reach = if large { 8 } else { n };
    let mut best: Option<(Cost, Vec<usize>)> = None;
    for &(_, first) in first_choices.iter().take(if large { 2 } else { 3 }) {
        let greedy = greedy_from(problem, &facts, first, &mut evaluator);
        let (cost, order) = local_search(problem, &movable, reach, greedy, &mut evaluator);
        if best
            .as_ref()
            .is_none_or(|(best_cost, _)| cost.better_than(best_cost))
        {
            best = Some((cost, order));
        }
    }
    let mut random = 0x2545_f491_4f6c_dd1du64;
    let kicks = if large { 4 } else { 20 };
    if movable.len() >= 3 {
        for _ in 0..kicks {
            let Some((best_cost, best_order)) = best.clone() else {
                break;
            };
            let mut next = |bound: usize| {
                random ^= random << 13;
                random ^= random >> 7;
                random ^= random << 17;
                (random % bound as u64) as usize
            };
            let a = next(movable.len());
            let b = next(movable.len());
            let (a, b) = (a.min(b), a.max(b));
            if b - a < 2 {
                continue;
            }
            let mut kicked = best_order.clone();
            let mut values: Vec<usize> = movable[a..=b].iter().map(|&m| best_order[m]).collect();
            values.reverse();
            for (&m, value) in movable[a..=b].iter().zip(values) {
                kicked[m] = value;
            }
            let (cost, order) = local_search(problem, &movable, reach, kicked, &mut evaluator);
            if cost.better_than(&best_cost) {
                best = Some((cost, order));
            }
        }
    }
    let order = best.map_or_else(Vec::new, |(_, order)| order);
    let examined = evaluator.examined;
    replay(problem, &facts, &order, Method::Heuristic, examined)
}

/// Costs of whole or partial orders on one timeline, reusing the prefix
/// shared with the order evaluated before.
struct Evaluator<'p> {
    timeline: Timeline<'p>,
    current: Vec<usize>,
    examined: u64,
}

impl Evaluator<'_> {
    fn cost(&mut self, order: &[usize]) -> Cost {
        self.examined += 1;
        let common = self
            .current
            .iter()
            .zip(order)
            .take_while(|(a, b)| a == b)
            .count();
        while self.current.len() > common {
            self.timeline.pop();
            self.current.pop();
        }
        for &index in &order[common..] {
            self.timeline.push(index);
            self.current.push(index);
        }
        self.timeline.state().cost()
    }
}

fn greedy_from(
    problem: &OrderProblem,
    facts: &Facts,
    first: usize,
    evaluator: &mut Evaluator,
) -> Vec<usize> {
    let n = problem.blocks.len();
    if n == 0 {
        return Vec::new();
    }
    let mut order = vec![first];
    let mut used = vec![false; n];
    used[first] = true;
    while order.len() < n {
        let depth = order.len();
        let candidates: Vec<usize> = match facts.fixed_at[depth] {
            Some(index) if !used[index] => vec![index],
            _ => (0..n)
                .filter(|&i| !used[i] && facts.fixed_at.iter().all(|f| *f != Some(i)))
                .filter(|&i| facts.twin_of[i].is_none_or(|twin| used[twin]))
                .collect(),
        };
        let mut choice: Option<(Cost, usize)> = None;
        for index in candidates {
            order.push(index);
            let cost = evaluator.cost(&order);
            order.pop();
            if choice
                .as_ref()
                .is_none_or(|(best, _)| cost.better_than(best))
            {
                choice = Some((cost, index));
            }
        }
        // Only a fixed block placed elsewhere could leave no candidate; fall
        // back to any unused block so the order is complete.
        let index = choice
            .map(|(_, index)| index)
            .or_else(|| (0..n).find(|&i| !used[i]))
            .unwrap_or(0);
        used[index] = true;
        order.push(index);
    }
    order
}

fn local_search(
    problem: &OrderProblem,
    movable: &[usize],
    reach: usize,
    mut order: Vec<usize>,
    evaluator: &mut Evaluator,
) -> (Cost, Vec<usize>) {
    let mut cost = evaluator.cost(&order);
    loop {
        let mut best_move: Option<(Cost, Vec<usize>)> = None;
        // Candidates by the first place they change, from the end, so the
        // evaluator keeps the longest prefix.
        for a in (0..movable.len()).rev() {
            let p = movable[a];
            let far = (a + reach + 1).min(movable.len());
            let mut candidates: Vec<Vec<usize>> = Vec::new();
            for &q in &movable[a + 1..far] {
                if problem.blocks[order[p]] != problem.blocks[order[q]] {
                    let mut candidate = order.clone();
                    candidate.swap(p, q);
                    candidates.push(candidate);
                }
            }
            // Moves whose first changed place is p: the block at p moved
            // later, or a later block moved to p.
            for b in a + 2..far {
                for (from, to) in [(a, b), (b, a)] {
                    let mut values: Vec<usize> = movable.iter().map(|&m| order[m]).collect();
                    let moved = values.remove(from);
                    values.insert(to, moved);
                    let mut candidate = order.clone();
                    for (&m, &value) in movable.iter().zip(&values) {
                        candidate[m] = value;
                    }
                    candidates.push(candidate);
                }
            }
            for candidate in candidates {
                let candidate_cost = evaluator.cost(&candidate);
                let target = best_move.as_ref().map_or(cost, |(c, _)| *c);
                if candidate_cost.better_than(&target) {
                    best_move = Some((candidate_cost, candidate));
                }
            }
        }
        match best_move {
            Some((better, candidate)) => {
                cost = better;
                order = candidate;
            }
            None => return (cost, order),
        }
    }
}

/// Every order tried, for checking the searches. Refuses (returns `None`)
/// above 9 work blocks: 9! orders is the most a check should try.
pub fn brute_force(problem: &OrderProblem) -> Option<Ordered> {
    let n = problem.blocks.len();
    if n > 9 {
        return None;
    }
    let facts = Facts::of(problem);
    let mut order: Vec<usize> = (0..n).collect();
    let mut best: Option<(Cost, Vec<usize>)> = None;
    let mut evaluator = Evaluator {
        timeline: Timeline::new(problem, &facts),
        current: Vec::new(),
        examined: 0,
    };
    permute(&mut order, 0, &mut |candidate| {
        let fixed_ok = facts
            .fixed_at
            .iter()
            .zip(candidate)
            .all(|(fixed, &i)| fixed.is_none_or(|f| f == i));
        if !fixed_ok {
            return;
        }
        let cost = evaluator.cost(candidate);
        if best.as_ref().is_none_or(|(b, _)| cost.better_than(b)) {
            best = Some((cost, candidate.to_vec()));
        }
    });
    let (_, order) = best?;
    let examined = evaluator.examined;
    Some(replay(
        problem,
        &facts,
        &order,
        Method::BruteForce,
        examined,
    ))
}

fn permute(items: &mut Vec<usize>, k: usize, visit: &mut dyn FnMut(&[usize])) {
    if k == items.len() {
        visit(items);
        return;
    }
    for i in k..items.len() {
        items.swap(k, i);
        permute(items, k + 1, visit);
        items.swap(k, i);
    }
}
