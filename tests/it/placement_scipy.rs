//! Placement optimality against scipy, live.
//!
//! Random placement problems (seeded, so every run checks the same 200) are
//! written to a temporary JSON file and solved by
//! `tests/reference/placement_scipy.py` with scipy (version pinned in
//! tests/reference/requirements.txt):
//! - `scipy.optimize.linear_sum_assignment` on seat-expanded columns for
//!   fixed sizes (min = max), the Hungarian-method formulation (Kuhn 1955;
//!   Munkres 1957; scipy implements the Crouse 2016 shortest-augmenting-path
//!   variant);
//! - `scipy.optimize.milp` (HiGHS) on the binary assignment model for every
//!   instance: size ranges, locks, exclusions and the convex balance penalty.
//!
//! Ambit's optimum must equal scipy's within 1e-9 relative, and an instance
//! must be infeasible for Ambit exactly when it is for scipy.

use crate::common;

use ambit::placement::{PlacementConfig, PlacementError, PlacementProblem, SizeLimit, place};
use ambit::synth::random::SplitMix64;

/// SplitMix64 (Steele, Lea & Flood 2014): a tiny seeded generator.
struct SplitMix(SplitMix64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0.next_u64()
    }
    fn below(&mut self, bound: usize) -> usize {
        (self.next() % bound as u64) as usize
    }
    fn between(&mut self, low: usize, high: usize) -> usize {
        low + self.below(high - low + 1)
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// One instance: 2–40 singers, 2–8 sections, about 15 % forbidden pairs,
/// up to 3 locks and 4 exclusions; a third have fixed sizes (the
/// linear_sum_assignment case), the rest ranges, some with a balance weight.
fn instance(random: &mut SplitMix, index: usize) -> PlacementProblem {
    let singers = random.between(2, 40);
    let sections = random.between(2, 8);
    let fit: Vec<Vec<Option<f64>>> = (0..singers)
        .map(|_| {
            (0..sections)
                .map(|_| (random.below(100) >= 15).then(|| random.unit() * 100.0))
                .collect()
        })
        .collect();
    let sizes: Vec<SizeLimit> = if index.is_multiple_of(3) {
        // A random composition of the roster, sometimes off by one singer
        // so that some fixed-size instances are infeasible.
        let mut counts = vec![0usize; sections];
        for _ in 0..singers {
            counts[random.below(sections)] += 1;
        }
        if random.below(8) == 0 {
            counts[0] += 1;
        }
        counts.into_iter().map(SizeLimit::exactly).collect()
    } else {
        let share = singers / sections;
        (0..sections)
            .map(|_| {
                let min = random.below(share + 1);
                SizeLimit {
                    min,
                    max: min + 1 + random.below(share + 3),
                }
            })
            .collect()
    };
    // Locks mostly on allowed pairs (a lock on a forbidden pair is simply
    // infeasible, which a few instances still test).
    let locks = (0..random.below(4))
        .map(|_| {
            let singer = random.below(singers);
            let allowed: Vec<usize> = (0..sections)
                .filter(|&section| fit[singer][section].is_some())
                .collect();
            let section = if allowed.is_empty() || random.below(6) == 0 {
                random.below(sections)
            } else {
                allowed[random.below(allowed.len())]
            };
            (singer, section)
        })
        .collect();
    let exclusions = (0..random.below(5))
        .map(|_| (random.below(singers), random.below(sections)))
        .collect();
    let balance = (!index.is_multiple_of(3) && random.below(3) == 0).then(|| random.unit() * 5.0);
    PlacementProblem {
        singers: (0..singers)
            .map(|singer| format!("singer{singer}"))
            .collect(),
        sections: (0..sections)
            .map(|section| format!("section{section}"))
            .collect(),
        fit,
        sizes,
        locks,
        exclusions,
        balance,
        beyond_range: Vec::new(),
        pair_notes: Vec::new(),
    }
}

fn close(ours: f64, reference: f64) -> bool {
    (ours - reference).abs() <= 1e-9 * reference.abs().max(1.0)
}

#[test]
fn placement_optimum_equals_scipy() {
    let Some(python) = common::reference_python("placement_optimum_equals_scipy") else {
        return;
    };
    let mut random = SplitMix(SplitMix64::new(0x00A1_B175));
    let instances: Vec<PlacementProblem> =
        (0..200).map(|index| instance(&mut random, index)).collect();
    let file = tempfile::NamedTempFile::new().expect("a temporary file");
    serde_json::to_writer(file.as_file(), &instances).expect("instances serialise");
    let path = file.path().to_str().expect("a UTF-8 temporary path");
    let reference = common::run_reference(&python, "placement_scipy.py", &[path]);
    let results = reference.as_array().expect("a list of results");
    assert_eq!(results.len(), instances.len());

    let config = PlacementConfig::default();
    let (mut lsa_feasible, mut lsa_infeasible) = (0, 0);
    let (mut milp_feasible, mut milp_infeasible) = (0, 0);
    let mut balanced_optima = 0;
    for (index, (problem, result)) in instances.iter().zip(results).enumerate() {
        let ours = place(problem, &config);
        let methods = [
            ("linear_sum_assignment", &result["lsa"]),
            ("milp", &result["milp"]),
        ];
        for (method, answer) in methods {
            if answer.is_null() {
                continue; // linear_sum_assignment only for fixed sizes
            }
            let feasible = answer["feasible"].as_bool().expect("feasible flag");
            match (&ours, feasible) {
                (Ok(placement), true) => {
                    // With a balance weight the optimised figure is fit − penalty;
                    // ties in it may pick different fit totals, so compare that.
                    let reference_net = answer["net"].as_f64().expect("net");
                    let ours_net = placement.objective - placement.balance_penalty;
                    assert!(
                        close(ours_net, reference_net),
                        "instance {index}: Ambit {ours_net}, scipy {method} {reference_net}\n{problem:?}"
                    );
                    if problem.balance.is_some() && method == "milp" {
                        balanced_optima += 1;
                    }
                    if problem.balance.is_none() {
                        let reference_fit = answer["fit_total"].as_f64().expect("fit_total");
                        assert!(
                            close(placement.objective, reference_fit),
                            "instance {index}"
                        );
                    }
                    if method == "milp" {
                        milp_feasible += 1
                    } else {
                        lsa_feasible += 1
                    }
                }
                (Err(PlacementError::Infeasible { reasons }), false) => {
                    assert!(!reasons.is_empty(), "instance {index}: no reason given");
                    if method == "milp" {
                        milp_infeasible += 1
                    } else {
                        lsa_infeasible += 1
                    }
                }
                (ours, _) => panic!(
                    "instance {index}: Ambit {ours:?} but scipy {method} says feasible = {feasible}\n{problem:?}"
                ),
            }
        }
    }
    eprintln!(
        "placement vs scipy: linear_sum_assignment agreed on {lsa_feasible} optima and \
         {lsa_infeasible} infeasible; milp agreed on {milp_feasible} optima and \
         {milp_infeasible} infeasible ({balanced_optima} optima with a balance weight) \
         of {} instances",
        instances.len()
    );
    // Every instance was compared by milp, and both outcomes occur.
    assert_eq!(milp_feasible + milp_infeasible, instances.len());
    assert!(milp_feasible >= 120 && milp_infeasible >= 10);
    assert!(balanced_optima >= 10);
    assert!(lsa_feasible >= 30 && lsa_infeasible >= 5);
}
