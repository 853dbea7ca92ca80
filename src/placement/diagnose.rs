//! Why no placement exists, in the director's words.
//!
//! A placement is a flow with lower and upper bounds: every singer supplies
//! exactly one seat, section j takes between min_j and max_j. By Hoffman's
//! circulation theorem (Hoffman 1960) such a flow exists exactly when, for
//! every set T of sections,
//! - the singers who can sit only in T fit: |{v : N(v) ⊆ T}| ≤ Σ_{j∈T} max_j, and
//! - T's minima can be met: Σ_{j∈T} min_j ≤ |{v : N(v) ∩ T ≠ ∅}|,
//!
//! where N(v) is the set of sections singer v may sit in (fit allowed, not
//! excluded, the lock's section when locked). T = all sections gives "the
//! minima add up to more than the roster" and "the maxima add up to less";
//! T = one section gives "T1 needs 3 but only 2 can sing it". With up to
//! `MAX_ENUMERATED_SECTIONS` sections every T is checked (a subset-sum
//! transform over the 2^S masks, O(2^S·S + n)) and the smallest violated
//! sets are reported, so a diagnosis is complete, not a guess.

use serde::{Deserialize, Serialize};

use super::{PlacementProblem, flow::allowed_sections};

/// Beyond this many sections only single sections and the whole layout are checked.
const MAX_ENUMERATED_SECTIONS: usize = 20;
/// At most this many sets of each kind are reported.
const MAX_SETS_REPORTED: usize = 6;
/// At most this many singers are named in one message.
const MAX_NAMES: usize = 6;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum InfeasibilityKind {
    /// A singer is locked to a section they are excluded from.
    LockedAndExcluded,
    /// A singer is locked to a section the fit matrix does not allow.
    LockedToDisallowed,
    /// A singer is locked to two different sections.
    LockedTwice,
    /// A singer may sit in no section at all.
    NoSectionAllowed,
    /// A section's minimum is above its maximum.
    MinAboveMax,
    /// The minima of all sections add up to more singers than can be placed.
    MinimaExceedRoster,
    /// The maxima of all sections add up to fewer than the roster.
    MaximaBelowRoster,
    /// A set of sections needs more singers than can sing any of them.
    TooFewCanSing,
    /// More singers can sit only in a set of sections than it holds.
    TooManyOnlyFit,
    /// The solver found no placement but no named conflict was identified.
    Unexplained,
}

/// One constraint (or set of constraints) that cannot be met.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Infeasibility {
    pub kind: InfeasibilityKind,
    /// The sections involved, in layout order.
    pub sections: Vec<String>,
    /// The singers involved (may be empty when the set is "everyone").
    pub singers: Vec<String>,
    pub message: String,
}

/// Every conflicting constraint found, most specific first. Expects a
/// problem that passed `validate`; never empty.
pub(super) fn diagnose(problem: &PlacementProblem) -> Vec<Infeasibility> {
    let allowed = allowed_sections(problem);
    let mut found = singer_conflicts(problem, &allowed);
    for (section, limit) in problem.sizes.iter().enumerate() {
        if limit.min > limit.max {
            let name = &problem.sections[section];
            found.push(Infeasibility {
                kind: InfeasibilityKind::MinAboveMax,
                sections: vec![name.clone()],
                singers: Vec::new(),
                message: format!(
                    "{name} has a minimum of {} above its maximum of {}",
                    limit.min, limit.max
                ),
            });
        }
    }
    found.extend(set_conflicts(problem, &allowed));
    if found.is_empty() {
        found.push(Infeasibility {
            kind: InfeasibilityKind::Unexplained,
            sections: Vec::new(),
            singers: Vec::new(),
            message: if problem.sections.len() > MAX_ENUMERATED_SECTIONS {
                format!(
                    "the size limits cannot all be met; the conflict involves several of the {} \
                     sections together",
                    problem.sections.len()
                )
            } else {
                "no placement meets every constraint, yet no conflicting set of constraints \
                 was identified (this is a bug in Ambit; please report it)"
                    .into()
            },
        });
    }
    found
}

fn singer_conflicts(problem: &PlacementProblem, allowed: &[Vec<usize>]) -> Vec<Infeasibility> {
    let mut found = Vec::new();
    for (singer, name) in problem.singers.iter().enumerate() {
        let mut locks: Vec<usize> = problem
            .locks
            .iter()
            .filter(|&&(locked, _)| locked == singer)
            .map(|&(_, section)| section)
            .collect();
        locks.sort_unstable();
        locks.dedup();
        let reported_before = found.len();
        if locks.len() > 1 {
            let sections: Vec<String> = locks
                .iter()
                .map(|&section| problem.sections[section].clone())
                .collect();
            found.push(Infeasibility {
                kind: InfeasibilityKind::LockedTwice,
                message: format!("{name} is locked to both {}", list(&sections, "and")),
                sections,
                singers: vec![name.clone()],
            });
        }
        for &section in &locks {
            let section_name = &problem.sections[section];
            if problem.exclusions.contains(&(singer, section)) {
                found.push(Infeasibility {
                    kind: InfeasibilityKind::LockedAndExcluded,
                    sections: vec![section_name.clone()],
                    singers: vec![name.clone()],
                    message: format!("{name} is locked to {section_name} but is excluded from it"),
                });
            }
            if matches!(problem.fit[singer].get(section), Some(None))
                && !problem.exclusions.contains(&(singer, section))
            {
                found.push(Infeasibility {
                    kind: InfeasibilityKind::LockedToDisallowed,
                    sections: vec![section_name.clone()],
                    singers: vec![name.clone()],
                    message: format!(
                        "{name} is locked to {section_name}, which the fit matrix does not allow for them"
                    ),
                });
            }
        }
        if found.len() == reported_before && allowed[singer].is_empty() {
            found.push(Infeasibility {
                kind: InfeasibilityKind::NoSectionAllowed,
                sections: Vec::new(),
                singers: vec![name.clone()],
                message: format!(
                    "{name} cannot sit in any section: every section is either not allowed or excluded"
                ),
            });
        }
    }
    found
}

/// The Hall-type conditions of the module comment, over sets of sections.
fn set_conflicts(problem: &PlacementProblem, allowed: &[Vec<usize>]) -> Vec<Infeasibility> {
    let section_count = problem.sections.len();
    let candidates: Vec<Vec<usize>> = if section_count <= MAX_ENUMERATED_SECTIONS {
        violated_masks(problem, allowed)
    } else {
        let mut sets: Vec<Vec<usize>> = (0..section_count).map(|section| vec![section]).collect();
        sets.push((0..section_count).collect());
        sets
    };
    let mut found = Vec::new();
    for set in candidates {
        found.extend(check_set(problem, allowed, &set));
    }
    found
}

/// Sets of sections violating either condition, smallest first, keeping
/// only those with no violated proper subset of the same kind.
fn violated_masks(problem: &PlacementProblem, allowed: &[Vec<usize>]) -> Vec<Vec<usize>> {
    let section_count = problem.sections.len();
    let full: usize = (1 << section_count) - 1;
    // within[T] = number of singers whose allowed set is a subset of T
    // (subset-sum / "sum over subsets" transform).
    let mut within = vec![0usize; full + 1];
    for sections in allowed {
        let mask = sections
            .iter()
            .fold(0usize, |mask, &section| mask | 1 << section);
        within[mask] += 1;
    }
    let nowhere = within[0];
    for bit in 0..section_count {
        for mask in 0..=full {
            if mask & (1 << bit) != 0 {
                within[mask] += within[mask ^ (1 << bit)];
            }
        }
    }
    let singer_count = allowed.len();
    let mut order: Vec<usize> = (1..=full).collect();
    order.sort_by_key(|&mask| (mask.count_ones(), mask));
    let mut short: Vec<usize> = Vec::new();
    let mut overfull: Vec<usize> = Vec::new();
    for mask in order {
        let members = |mask: usize| (0..section_count).filter(move |&bit| mask & (1 << bit) != 0);
        let needed = members(mask).fold(0usize, |sum, section| {
            sum.saturating_add(problem.sizes[section].min)
        });
        let holds = members(mask).fold(0usize, |sum, section| {
            sum.saturating_add(problem.sizes[section].max)
        });
        let can_sing = singer_count - within[full & !mask];
        let only_here = within[mask] - nowhere;
        let minimal = |kept: &[usize]| kept.iter().all(|&smaller| smaller & mask != smaller);
        if needed > can_sing && short.len() < MAX_SETS_REPORTED && minimal(&short) {
            short.push(mask);
        }
        if only_here > holds && overfull.len() < MAX_SETS_REPORTED && minimal(&overfull) {
            overfull.push(mask);
        }
    }
    let mut masks = short;
    masks.extend(overfull);
    masks.sort_by_key(|&mask| (mask.count_ones(), mask));
    masks.dedup();
    masks
        .into_iter()
        .map(|mask| {
            (0..section_count)
                .filter(|&bit| mask & (1 << bit) != 0)
                .collect()
        })
        .collect()
}

/// Messages for whichever condition `set` violates (possibly both, or none).
fn check_set(
    problem: &PlacementProblem,
    allowed: &[Vec<usize>],
    set: &[usize],
) -> Vec<Infeasibility> {
    let mut found = Vec::new();
    let in_set = |section: &usize| set.contains(section);
    let names: Vec<String> = set
        .iter()
        .map(|&section| problem.sections[section].clone())
        .collect();
    let whole_layout = set.len() == problem.sections.len();
    let singer_count = problem.singers.len();
    let needed = set.iter().fold(0usize, |sum, &section| {
        sum.saturating_add(problem.sizes[section].min)
    });
    let holds = set.iter().fold(0usize, |sum, &section| {
        sum.saturating_add(problem.sizes[section].max)
    });
    let can_sing = allowed
        .iter()
        .filter(|sections| sections.iter().any(in_set))
        .count();
    let only_here: Vec<String> = allowed
        .iter()
        .zip(&problem.singers)
        .filter(|(sections, _)| !sections.is_empty() && sections.iter().all(in_set))
        .map(|(_, name)| name.clone())
        .collect();
    if needed > can_sing {
        let message = if whole_layout && can_sing == singer_count {
            format!("the section minima add up to {needed} but there are {singer_count} singers")
        } else if whole_layout {
            format!(
                "the section minima add up to {needed} but only {can_sing} of the \
                 {singer_count} singers can sit in any section"
            )
        } else if can_sing == singer_count {
            format!(
                "{} need{} {needed} singers{} but there are only {singer_count} singers",
                list(&names, "and"),
                if set.len() == 1 { "s" } else { "" },
                if set.len() == 1 { "" } else { " between them" }
            )
        } else if set.len() == 1 {
            format!(
                "{} needs {needed} singer{} but only {can_sing} can sing it (allowed and not locked elsewhere)",
                names[0],
                plural(needed)
            )
        } else {
            format!(
                "{} need {needed} singers between them but only {can_sing} can sing any of them \
                 (allowed and not locked elsewhere)",
                list(&names, "and")
            )
        };
        found.push(Infeasibility {
            kind: if whole_layout {
                InfeasibilityKind::MinimaExceedRoster
            } else {
                InfeasibilityKind::TooFewCanSing
            },
            sections: names.clone(),
            singers: Vec::new(),
            message,
        });
    }
    if only_here.len() > holds {
        let count = only_here.len();
        let message = if whole_layout {
            format!("the section maxima add up to {holds} but there are {count} singers to place")
        } else if set.len() == 1 {
            format!(
                "{count} singers can sit only in {} ({}) but it holds at most {holds}",
                names[0],
                named(&only_here)
            )
        } else {
            format!(
                "{count} singers can sit only in {} ({}) but together they hold at most {holds}",
                list(&names, "or"),
                named(&only_here)
            )
        };
        found.push(Infeasibility {
            kind: if whole_layout {
                InfeasibilityKind::MaximaBelowRoster
            } else {
                InfeasibilityKind::TooManyOnlyFit
            },
            sections: names,
            singers: only_here,
            message,
        });
    }
    found
}

fn plural(count: usize) -> &'static str {
    if count == 1 { "" } else { "s" }
}

/// "A, B and C".
fn list(items: &[String], conjunction: &str) -> String {
    match items {
        [] => String::new(),
        [only] => only.clone(),
        [init @ .., last] => format!("{} {conjunction} {last}", init.join(", ")),
    }
}

/// Up to `MAX_NAMES` names, then "and N more".
fn named(names: &[String]) -> String {
    if names.len() <= MAX_NAMES {
        list(names, "and")
    } else {
        format!(
            "{} and {} more",
            names[..MAX_NAMES].join(", "),
            names.len() - MAX_NAMES
        )
    }
}
