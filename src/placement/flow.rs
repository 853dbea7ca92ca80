//! The exact solver: minimum-cost flow by successive shortest paths with
//! Johnson potentials, specialised for many singers and few sections.
//!
//! Network: source → singer (capacity 1) → section (cost −fit) → sink. The
//! sink arcs of a section are one arc per seat: seat k costs −M when
//! k ≤ min (a "required" seat, M larger than any possible difference in
//! total fit and balance penalty, so an optimum fills every required seat
//! whenever that is possible) plus `balance × (k − 1)`; seats beyond max do
//! not exist. Seat costs are non-decreasing in k, so the seats of a section
//! fill in order and a section's next seat is the only sink arc that matters.
//!
//! Singers are added one at a time (as in the Hungarian method of Kuhn 1955
//! and the shortest-augmenting-path form of Jonker & Volgenant 1987). Adding
//! singer u means one shortest path from u to the sink in the residual graph.
//! Apart from u's own arcs, every residual path runs section → section: the
//! arc a → b exists when some singer v now in a may sing b, and costs
//! `cost(v, b) − cost(v, a)`, the cheapest such v being the top of a heap
//! kept per ordered pair (a, b). Dijkstra over the S sections and the sink,
//! with reduced costs `w + π(a) − π(b) ≥ 0`, takes O(S²) per singer plus
//! O(S log n) heap work for each of the ≤ S singers moved along the path:
//! O(n·S²·log n) in all, instead of O(n³) for a Hungarian method on n seats.
//!
//! All costs are integers (fits × `FIT_SCALE`, rounded), so optimality is
//! decided exactly; path lengths and potentials are `i128`.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use super::{FIT_SCALE, PlacementError, PlacementProblem, diagnose};

const FORBIDDEN: i64 = i64::MAX;
const UNREACHED: i128 = i128::MAX;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Predecessor {
    None,
    /// Reached directly from the singer being added.
    Start,
    /// Reached from section `from` by moving `singer` out of it.
    Move {
        from: usize,
        singer: u32,
    },
    /// The sink, reached through the next seat of section `from`.
    Seat {
        from: usize,
    },
}

/// (key = cost(v, b) − cost(v, a), singer v, v's move stamp when pushed).
type MoveEntry = Reverse<(i64, u32, u32)>;

struct Solver {
    sections: usize,
    /// `cost[singer * sections + section]`: −fit scaled, or FORBIDDEN.
    cost: Vec<i64>,
    /// Per singer, the sections it may sit in (fit allowed, not excluded,
    /// and the lock's section only when locked).
    allowed: Vec<Vec<usize>>,
    section_of: Vec<usize>,
    /// Bumped whenever a singer moves; heap entries with an older stamp are stale.
    stamp: Vec<u32>,
    /// `moves[a * sections + b]`: singers in a who may sing b.
    moves: Vec<BinaryHeap<MoveEntry>>,
    count: Vec<usize>,
    min: Vec<usize>,
    max: Vec<usize>,
    required_bonus: i128,
    balance_scaled: i128,
    /// Johnson potentials of the sections and (last) the sink.
    potential: Vec<i128>,
    distance: Vec<i128>,
    predecessor: Vec<Predecessor>,
    settled: Vec<bool>,
}

fn scale(fit: f64) -> i64 {
    // validate() bounds |fit| by MAX_ABS_FIT, so this cannot overflow.
    (fit * FIT_SCALE).round() as i64
}

/// Per singer, the sections allowed by the fit matrix, the exclusions and the locks.
pub(super) fn allowed_sections(problem: &PlacementProblem) -> Vec<Vec<usize>> {
    let sections = problem.sections.len();
    let mut excluded = vec![false; problem.singers.len() * sections];
    for &(singer, section) in &problem.exclusions {
        excluded[singer * sections + section] = true;
    }
    let mut locked_to: Vec<Option<usize>> = vec![None; problem.singers.len()];
    let mut conflicting_locks = vec![false; problem.singers.len()];
    for &(singer, section) in &problem.locks {
        match locked_to[singer] {
            Some(earlier) if earlier != section => conflicting_locks[singer] = true,
            _ => locked_to[singer] = Some(section),
        }
    }
    problem
        .fit
        .iter()
        .enumerate()
        .map(|(singer, row)| {
            if conflicting_locks[singer] {
                return Vec::new();
            }
            row.iter()
                .enumerate()
                .filter(|&(section, fit)| {
                    fit.is_some()
                        && !excluded[singer * sections + section]
                        && locked_to[singer].is_none_or(|lock| lock == section)
                })
                .map(|(section, _)| section)
                .collect()
        })
        .collect()
}

/// The optimal section of every singer, or the reasons there is none.
/// Expects a problem that passed `validate`.
pub(super) fn solve(problem: &PlacementProblem) -> Result<Vec<usize>, PlacementError> {
    let Some(mut solver) = Solver::new(problem) else {
        return Err(infeasible(problem));
    };
    for singer in 0..problem.singers.len() {
        if !solver.add_singer(singer) {
            return Err(infeasible(problem));
        }
    }
    if (0..solver.sections).any(|section| solver.count[section] < solver.min[section]) {
        return Err(infeasible(problem));
    }
    Ok(solver.section_of)
}

fn infeasible(problem: &PlacementProblem) -> PlacementError {
    PlacementError::Infeasible {
        reasons: diagnose::diagnose(problem),
    }
}

impl Solver {
    /// `None` when some section's minimum exceeds its maximum (no seat
    /// numbering exists); the diagnosis reports it.
    fn new(problem: &PlacementProblem) -> Option<Solver> {
        let singers = problem.singers.len();
        let sections = problem.sections.len();
        let min: Vec<usize> = problem.sizes.iter().map(|limit| limit.min).collect();
        let max: Vec<usize> = problem.sizes.iter().map(|limit| limit.max).collect();
        if min.iter().zip(&max).any(|(low, high)| low > high) {
            return None;
        }
        let allowed = allowed_sections(problem);
        let mut cost = vec![FORBIDDEN; singers * sections];
        let (mut lowest, mut highest) = (i64::MAX, i64::MIN);
        for (singer, row) in allowed.iter().enumerate() {
            for &section in row {
                if let Some(Some(fit)) = problem.fit[singer].get(section) {
                    let scaled = -scale(*fit);
                    cost[singer * sections + section] = scaled;
                    lowest = lowest.min(scaled);
                    highest = highest.max(scaled);
                }
            }
        }
        let fit_range = if lowest <= highest {
            i128::from(highest) - i128::from(lowest)
        } else {
            0
        };
        let balance_scaled = i128::from(scale(problem.balance.unwrap_or(0.0)));
        let singer_count = singers as i128;
        // Any two placements differ by less than n·(fit range) in fit and by
        // less than balance·n² in penalty; one more filled required seat
        // must outweigh both.
        let required_bonus = singer_count * (fit_range + balance_scaled * singer_count) + 1;
        // Start with π = 0 on sections and π(sink) ≤ every first seat's cost,
        // so every initial sink arc has a non-negative reduced cost.
        let mut potential = vec![0i128; sections + 1];
        potential[sections] = (0..sections)
            .filter(|&section| max[section] > 0)
            .map(|section| if min[section] > 0 { -required_bonus } else { 0 })
            .min()
            .unwrap_or(0);
        Some(Solver {
            sections,
            cost,
            allowed,
            section_of: vec![usize::MAX; singers],
            stamp: vec![0; singers],
            moves: (0..sections * sections)
                .map(|_| BinaryHeap::new())
                .collect(),
            count: vec![0; sections],
            min,
            max,
            required_bonus,
            balance_scaled,
            potential,
            distance: vec![UNREACHED; sections + 1],
            predecessor: vec![Predecessor::None; sections + 1],
            settled: vec![false; sections + 1],
        })
    }

    /// Cost of seat number `seat` (1-based) in `section`.
    fn seat_cost(&self, section: usize, seat: usize) -> i128 {
        let required = if seat <= self.min[section] {
            -self.required_bonus
        } else {
            0
        };
        required + self.balance_scaled * (seat as i128 - 1)
    }

    fn cost(&self, singer: usize, section: usize) -> i64 {
        self.cost[singer * self.sections + section]
    }

    /// The cheapest valid singer who can move from `from` to `to`.
    fn cheapest_move(&mut self, from: usize, to: usize) -> Option<(i64, u32)> {
        let heap = &mut self.moves[from * self.sections + to];
        while let Some(&Reverse((key, singer, stamp))) = heap.peek() {
            if self.stamp[singer as usize] == stamp {
                return Some((key, singer));
            }
            heap.pop();
        }
        None
    }

    fn relax(&mut self, node: usize, length: i128, via: Predecessor) {
        if !self.settled[node] && length < self.distance[node] {
            self.distance[node] = length;
            self.predecessor[node] = via;
        }
    }

    /// Places `singer` along a shortest augmenting path; false when no path
    /// reaches the sink (the singers so far cannot all be placed).
    fn add_singer(&mut self, singer: usize) -> bool {
        let sink = self.sections;
        self.distance.fill(UNREACHED);
        self.predecessor.fill(Predecessor::None);
        self.settled.fill(false);
        // Dijkstra is exact with arbitrary starting labels as long as the
        // arcs between labelled nodes have non-negative reduced costs.
        for index in 0..self.allowed[singer].len() {
            let section = self.allowed[singer][index];
            let label = i128::from(self.cost(singer, section)) - self.potential[section];
            self.relax(section, label, Predecessor::Start);
        }
        while let Some(node) = (0..=sink)
            .filter(|&node| !self.settled[node] && self.distance[node] != UNREACHED)
            .min_by_key(|&node| self.distance[node])
        {
            self.settled[node] = true;
            if node == sink {
                break;
            }
            let here = self.distance[node];
            if self.count[node] < self.max[node] {
                let arc = self.seat_cost(node, self.count[node] + 1) + self.potential[node]
                    - self.potential[sink];
                debug_assert!(arc >= 0, "negative reduced seat cost {arc}");
                self.relax(sink, here + arc, Predecessor::Seat { from: node });
            }
            for next in 0..self.sections {
                if next == node || self.settled[next] {
                    continue;
                }
                if let Some((key, mover)) = self.cheapest_move(node, next) {
                    let arc = i128::from(key) + self.potential[node] - self.potential[next];
                    debug_assert!(arc >= 0, "negative reduced move cost {arc}");
                    self.relax(
                        next,
                        here + arc,
                        Predecessor::Move {
                            from: node,
                            singer: mover,
                        },
                    );
                }
            }
        }
        if !self.settled[sink] {
            return false;
        }
        // Johnson update, capped at the sink's distance: keeps every
        // residual arc's reduced cost non-negative (nodes beyond the sink
        // move by the sink's distance).
        let reach = self.distance[sink];
        for node in 0..=sink {
            self.potential[node] += self.distance[node].min(reach);
        }
        // Walk the path back from the sink, moving singers as it says.
        let Predecessor::Seat { from: last } = self.predecessor[sink] else {
            return false;
        };
        self.count[last] += 1;
        let mut node = last;
        loop {
            match self.predecessor[node] {
                Predecessor::Start => {
                    self.seat(singer, node);
                    return true;
                }
                Predecessor::Move {
                    from,
                    singer: mover,
                } => {
                    self.seat(mover as usize, node);
                    node = from;
                }
                Predecessor::Seat { .. } | Predecessor::None => return false,
            }
        }
    }

    /// Puts `singer` in `section` and offers it for moves out of there.
    fn seat(&mut self, singer: usize, section: usize) {
        self.section_of[singer] = section;
        self.stamp[singer] = self.stamp[singer].wrapping_add(1);
        let stamp = self.stamp[singer];
        let here = self.cost(singer, section);
        for index in 0..self.allowed[singer].len() {
            let other = self.allowed[singer][index];
            if other != section {
                let key = self.cost(singer, other) - here;
                self.moves[section * self.sections + other].push(Reverse((
                    key,
                    singer as u32,
                    stamp,
                )));
            }
        }
    }
}
