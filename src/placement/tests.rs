//! Unit tests: worked examples checked by hand, an exhaustive brute force on
//! tiny instances, and property tests. The scipy comparison lives in
//! tests/it/placement_scipy.rs.

use super::*;
use crate::synth::random::SplitMix64;
use proptest::prelude::*;

fn names(prefix: &str, count: usize) -> Vec<String> {
    (0..count).map(|index| format!("{prefix}{index}")).collect()
}

fn problem(fit: Vec<Vec<Option<f64>>>, sizes: Vec<SizeLimit>) -> PlacementProblem {
    PlacementProblem {
        singers: names("singer", fit.len()),
        sections: names("section", sizes.len()),
        fit,
        sizes,
        locks: Vec::new(),
        exclusions: Vec::new(),
        balance: None,
        beyond_range: Vec::new(),
        pair_notes: Vec::new(),
    }
}

fn limit(min: usize, max: usize) -> SizeLimit {
    SizeLimit { min, max }
}

fn sections_of(placement: &Placement) -> Vec<usize> {
    placement
        .assignments
        .iter()
        .map(|assignment| assignment.section_index)
        .collect()
}

fn config() -> PlacementConfig {
    PlacementConfig::default()
}

/// Deterministic generator for the brute-force instances (SplitMix64,
/// Steele, Lea & Flood 2014).
struct SplitMix(SplitMix64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0.next_u64()
    }
    fn below(&mut self, bound: usize) -> usize {
        (self.next() % bound as u64) as usize
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn random_problem(
    random: &mut SplitMix,
    max_singers: usize,
    max_sections: usize,
) -> PlacementProblem {
    let singers = 1 + random.below(max_singers);
    let sections = 1 + random.below(max_sections);
    let fit = (0..singers)
        .map(|_| {
            (0..sections)
                .map(|_| (random.below(5) != 0).then(|| random.unit() * 100.0))
                .collect()
        })
        .collect();
    let sizes = (0..sections)
        .map(|_| {
            let min = random.below(3);
            limit(min, min + random.below(4))
        })
        .collect();
    let mut problem = problem(fit, sizes);
    for _ in 0..random.below(3) {
        problem
            .locks
            .push((random.below(singers), random.below(sections)));
    }
    for _ in 0..random.below(3) {
        problem
            .exclusions
            .push((random.below(singers), random.below(sections)));
    }
    if random.below(3) == 0 {
        problem.balance = Some(random.unit() * 10.0);
    }
    problem
}

/// The best `fit − balance penalty` over every assignment that honours all
/// constraints, by enumeration; `None` when there is none.
fn brute_force(problem: &PlacementProblem) -> Option<f64> {
    let singers = problem.singers.len();
    let sections = problem.sections.len();
    let mut section_of = vec![0usize; singers];
    let mut best: Option<f64> = None;
    loop {
        if violations(problem, &section_of).is_empty() {
            let fit: f64 = section_of
                .iter()
                .enumerate()
                .map(|(singer, &section)| problem.fit[singer][section].unwrap_or(f64::NAN))
                .sum();
            let mut counts = vec![0; sections];
            for &section in &section_of {
                counts[section] += 1;
            }
            let value = fit - balance_penalty(problem.balance, &counts);
            if best.is_none_or(|best| value > best) {
                best = Some(value);
            }
        }
        // Next assignment in base `sections`.
        let mut position = 0;
        loop {
            if position == singers {
                return best;
            }
            section_of[position] += 1;
            if section_of[position] < sections {
                break;
            }
            section_of[position] = 0;
            position += 1;
        }
    }
}

#[test]
fn two_singers_two_sections_take_their_better_seat_by_hand() {
    // By hand: singer0 prefers section0 (90 > 40), singer1 prefers
    // section1 (80 > 70); with one seat each the optimum is 90 + 80 = 170.
    let placement = place(
        &problem(
            vec![vec![Some(90.0), Some(40.0)], vec![Some(70.0), Some(80.0)]],
            vec![limit(1, 1), limit(1, 1)],
        ),
        &config(),
    )
    .unwrap();
    assert_eq!(sections_of(&placement), vec![0, 1]);
    assert_eq!(placement.objective, 170.0);
    assert_eq!(
        placement.assignments[0].explanation,
        "section0 over section1: fit 90 vs 40"
    );
}

#[test]
fn a_minimum_forces_the_global_not_the_greedy_choice() {
    // By hand: all three prefer section0, but section1 needs one singer.
    // Moving singer0 loses 50, singer1 loses 5, singer2 loses 30, so singer1
    // moves: 100 + 55 + 90 = 245.
    let placement = place(
        &problem(
            vec![
                vec![Some(100.0), Some(50.0)],
                vec![Some(60.0), Some(55.0)],
                vec![Some(90.0), Some(60.0)],
            ],
            vec![limit(0, 3), limit(1, 3)],
        ),
        &config(),
    )
    .unwrap();
    assert_eq!(sections_of(&placement), vec![0, 1, 0]);
    assert_eq!(placement.objective, 245.0);
    assert_eq!(
        placement.assignments[1].explanation,
        "section1 rather than section0 (fit 55 vs 60): the section sizes call for it"
    );
    assert_eq!(placement.sections[0].mean_fit, Some(95.0));
}

#[test]
fn balance_penalty_spreads_singers_when_it_outweighs_the_fit_gap() {
    // Two singers who both prefer section0 by 10 points. Without balance both
    // sit there (penalty 0). With balance 15 the second seat costs 15 > 10, so
    // one moves: fit 100 + 90 = 190, penalty 0; together 190 > 200 − 15 = 185.
    let mut two = problem(
        vec![vec![Some(100.0), Some(90.0)], vec![Some(100.0), Some(90.0)]],
        vec![SizeLimit::any(), SizeLimit::any()],
    );
    let unbalanced = place(&two, &config()).unwrap();
    assert_eq!(unbalanced.objective, 200.0);
    two.balance = Some(15.0);
    let balanced = place(&two, &config()).unwrap();
    assert_eq!(balanced.objective, 190.0);
    assert_eq!(balanced.balance_penalty, 0.0);
    // And at balance 5 staying together is worth 200 − 5 = 195 > 190.
    two.balance = Some(5.0);
    let mild = place(&two, &config()).unwrap();
    assert_eq!((mild.objective, mild.balance_penalty), (200.0, 5.0));
}

#[test]
fn locks_and_exclusions_are_obeyed() {
    let mut locked = problem(
        vec![vec![Some(90.0), Some(10.0)], vec![Some(80.0), Some(70.0)]],
        vec![SizeLimit::any(), SizeLimit::any()],
    );
    locked.locks.push((0, 1));
    locked.exclusions.push((1, 0));
    let placement = place(&locked, &config()).unwrap();
    assert_eq!(sections_of(&placement), vec![1, 1]);
    assert!(placement.assignments[0].locked);
    assert_eq!(
        placement.assignments[0].explanation,
        "section1: locked there (fit 10); section0 would be 90"
    );
    // singer1's only other section is excluded.
    assert_eq!(
        placement.assignments[1].explanation,
        "section1: the only section allowed (fit 70)"
    );
}

#[test]
fn caller_notes_enrich_the_explanation() {
    let mut noted = problem(
        vec![vec![Some(82.0), Some(61.0)]],
        vec![SizeLimit::any(), SizeLimit::any()],
    );
    noted.sections = vec!["A1".into(), "A2".into()];
    noted.pair_notes = vec![vec![
        Some("4 % of sung time above comfort".into()),
        Some("19 % of sung time above comfort".into()),
    ]];
    let placement = place(&noted, &config()).unwrap();
    assert_eq!(
        placement.assignments[0].explanation,
        "A1 over A2: fit 82 (4 % of sung time above comfort) vs 61 (19 % of sung time above comfort)"
    );
}

#[test]
fn at_risk_lists_low_fits_and_caller_flags() {
    let mut risky = problem(
        vec![vec![Some(40.0)], vec![Some(95.0)], vec![Some(90.0)]],
        vec![SizeLimit::any()],
    );
    risky.beyond_range = vec![vec![false], vec![false], vec![true]];
    let placement = place(&risky, &config()).unwrap();
    let flagged: Vec<(usize, Vec<RiskReason>)> = placement
        .at_risk
        .iter()
        .map(|risk| (risk.singer_index, risk.reasons.clone()))
        .collect();
    assert_eq!(
        flagged,
        vec![
            (0, vec![RiskReason::LowFit { threshold: 50.0 }]),
            (2, vec![RiskReason::BeyondRange])
        ]
    );
}

#[test]
fn infeasible_minimum_names_the_section_and_the_shortfall() {
    // T1 needs 3 but only two singers may sing it (the third is not allowed).
    let mut short = problem(
        vec![
            vec![Some(80.0), Some(50.0)],
            vec![Some(70.0), Some(60.0)],
            vec![None, Some(90.0)],
        ],
        vec![limit(3, 3), limit(0, 3)],
    );
    short.sections = vec!["T1".into(), "B1".into()];
    let Err(PlacementError::Infeasible { reasons }) = place(&short, &config()) else {
        panic!("three seats in T1 cannot be filled by two singers");
    };
    let messages: Vec<&str> = reasons
        .iter()
        .map(|reason| reason.message.as_str())
        .collect();
    assert_eq!(
        messages,
        vec!["T1 needs 3 singers but only 2 can sing it (allowed and not locked elsewhere)"]
    );
}

#[test]
fn infeasible_totals_are_named() {
    let fits = vec![vec![Some(50.0), Some(50.0)]; 4];
    let Err(PlacementError::Infeasible { reasons }) = place(
        &problem(fits.clone(), vec![limit(3, 5), limit(2, 5)]),
        &config(),
    ) else {
        panic!("minima 5 > 4 singers");
    };
    assert_eq!(reasons[0].kind, InfeasibilityKind::MinimaExceedRoster);
    assert_eq!(
        reasons[0].message,
        "the section minima add up to 5 but there are 4 singers"
    );
    let Err(PlacementError::Infeasible { reasons }) =
        place(&problem(fits, vec![limit(0, 1), limit(0, 2)]), &config())
    else {
        panic!("maxima 3 < 4 singers");
    };
    assert_eq!(
        reasons[0].message,
        "the section maxima add up to 3 but there are 4 singers to place"
    );
}

#[test]
fn locked_and_excluded_is_named_and_a_crowded_lock_too() {
    let mut contradictory = problem(
        vec![vec![Some(50.0), Some(50.0)]; 3],
        vec![limit(0, 1), limit(0, 3)],
    );
    contradictory.singers = vec!["Ada".into(), "Bea".into(), "Cleo".into()];
    contradictory.sections = vec!["A1".into(), "A2".into()];
    contradictory.locks = vec![(0, 1), (1, 0), (2, 0)];
    contradictory.exclusions = vec![(0, 1)];
    let Err(PlacementError::Infeasible { reasons }) = place(&contradictory, &config()) else {
        panic!("Ada is locked and excluded; A1 holds one of two locked singers");
    };
    let messages: Vec<&str> = reasons
        .iter()
        .map(|reason| reason.message.as_str())
        .collect();
    assert_eq!(
        messages,
        vec![
            "Ada is locked to A2 but is excluded from it",
            "2 singers can sit only in A1 (Bea and Cleo) but it holds at most 1",
        ]
    );
}

#[test]
fn a_pair_of_sections_short_together_is_found_by_the_subset_check() {
    // Each of S1, S2 alone can be staffed (two candidates each), but both
    // need 2 and only the same two singers can sing either: Hall's condition
    // fails for the pair {S1, S2} only.
    let mut pair = problem(
        vec![
            vec![Some(80.0), Some(80.0), Some(10.0)],
            vec![Some(80.0), Some(80.0), Some(10.0)],
            vec![None, None, Some(90.0)],
            vec![None, None, Some(90.0)],
        ],
        vec![limit(2, 2), limit(2, 2), limit(0, 4)],
    );
    pair.sections = vec!["S1".into(), "S2".into(), "A1".into()];
    let Err(PlacementError::Infeasible { reasons }) = place(&pair, &config()) else {
        panic!("S1 and S2 need four singers between two candidates");
    };
    assert_eq!(
        reasons
            .iter()
            .map(|reason| reason.message.as_str())
            .collect::<Vec<_>>(),
        vec![
            "S1 and S2 need 4 singers between them but only 2 can sing any of them \
             (allowed and not locked elsewhere)"
        ]
    );
}

#[test]
fn malformed_problems_are_errors_not_panics() {
    let empty = problem(Vec::new(), vec![SizeLimit::any()]);
    assert!(matches!(
        place(&empty, &config()),
        Err(PlacementError::Invalid(_))
    ));
    let mut ragged = problem(vec![vec![Some(1.0)]], vec![SizeLimit::any(); 2]);
    assert!(matches!(
        place(&ragged, &config()),
        Err(PlacementError::Invalid(_))
    ));
    ragged.fit = vec![vec![Some(f64::NAN), None]];
    assert!(matches!(
        place(&ragged, &config()),
        Err(PlacementError::Invalid(_))
    ));
    ragged.fit = vec![vec![Some(1.0), None]];
    ragged.locks = vec![(3, 0)];
    assert!(matches!(
        place(&ragged, &config()),
        Err(PlacementError::Invalid(_))
    ));
}

#[test]
fn brute_force_agrees_on_tiny_instances() {
    // Exhaustive enumeration of all sections^singers assignments (≤ 4^7).
    let mut random = SplitMix(SplitMix64::new(20_260_512));
    let (mut feasible, mut infeasible) = (0, 0);
    for _ in 0..600 {
        let problem = random_problem(&mut random, 7, 4);
        let expected = brute_force(&problem);
        match (place(&problem, &config()), expected) {
            (Ok(placement), Some(best)) => {
                feasible += 1;
                let value = placement.objective - placement.balance_penalty;
                assert!(
                    (value - best).abs() <= 1e-9 * best.abs().max(1.0),
                    "{problem:?}: solver {value}, brute force {best}"
                );
                assert!(violations(&problem, &sections_of(&placement)).is_empty());
            }
            (Err(PlacementError::Infeasible { reasons }), None) => {
                infeasible += 1;
                assert!(
                    reasons
                        .iter()
                        .all(|reason| reason.kind != InfeasibilityKind::Unexplained),
                    "{problem:?}: {reasons:?}"
                );
            }
            (got, expected) => panic!("{problem:?}: solver {got:?}, brute force {expected:?}"),
        }
    }
    // Both outcomes must actually have been exercised.
    assert!(
        feasible > 100 && infeasible > 100,
        "{feasible} feasible, {infeasible} infeasible"
    );
}

#[test]
fn divisi_even_split_puts_the_high_voices_on_top() {
    // By hand: members 0 and 2 gain most from the upper line (+30, +25),
    // members 1 and 3 lose on it (−20, −5); an even split takes 0 and 2 up.
    let members = names("member", 4);
    let upper = [Some(90.0), Some(50.0), Some(85.0), Some(70.0)];
    let lower = [Some(60.0), Some(70.0), Some(60.0), Some(75.0)];
    let split =
        split_divisi_lines(&members, &upper, &lower, DivisiBalance::Even, &config()).unwrap();
    assert_eq!(
        (split.upper.clone(), split.lower.clone()),
        (vec![0, 2], vec![1, 3])
    );
    assert_eq!(split.objective, 90.0 + 85.0 + 70.0 + 75.0);
    // With at least three on the lower line, member 2 (smallest loss, 25)
    // joins it rather than member 0 (30).
    let lopsided = split_divisi_lines(
        &members,
        &upper,
        &lower,
        DivisiBalance::AtLeast { upper: 1, lower: 3 },
        &config(),
    )
    .unwrap();
    assert_eq!(lopsided.upper, vec![0]);
}

#[test]
fn tied_divisi_splits_put_the_higher_voices_on_top_and_keep_the_total() {
    // By hand: members 0–2 fit both lines equally (80, 90, 70), so any even
    // split of them is optimal; member 3 fits the lower line much better
    // (40 vs 95) and must stay there whatever its height.
    let members = names("member", 4);
    let upper = [Some(80.0), Some(90.0), Some(70.0), Some(40.0)];
    let lower = [Some(80.0), Some(90.0), Some(70.0), Some(95.0)];
    let heights = [60.0, 64.0, 67.0, 70.0];
    let mut split =
        split_divisi_lines(&members, &upper, &lower, DivisiBalance::Even, &config()).unwrap();
    let objective = split.objective;
    raise_tied_divisi(&mut split, &upper, &lower, &heights);
    // The two highest of the tied members (2 at 67, 1 at 64) go up.
    assert_eq!(
        (split.upper.clone(), split.lower.clone()),
        (vec![1, 2], vec![0, 3])
    );
    let total: f64 = split.upper.iter().map(|&m| upper[m].unwrap()).sum::<f64>()
        + split.lower.iter().map(|&m| lower[m].unwrap()).sum::<f64>();
    assert_eq!(total, objective);
}

#[test]
fn what_if_reports_the_broken_minimum() {
    let placement_problem = problem(
        vec![vec![Some(80.0), Some(60.0)], vec![Some(40.0), Some(70.0)]],
        vec![limit(1, 2), limit(1, 2)],
    );
    let placement = place(&placement_problem, &config()).unwrap();
    let change = what_if(&placement_problem, &placement, 1, 0, &config()).unwrap();
    assert_eq!(change.objective_delta, -30.0);
    assert_eq!(
        change.violations,
        vec![Violation::BelowMinimum {
            section: "section1".into(),
            count: 0,
            min: 1
        }]
    );
    let relocked = place_with_lock(&placement_problem, 1, 0, &config());
    // With singer1 locked to section0, singer0 must fill section1: 60 + 40.
    assert_eq!(relocked.map(|placement| placement.objective), Ok(100.0));
}

fn arbitrary_problem() -> impl Strategy<Value = PlacementProblem> {
    (1usize..12, 1usize..5).prop_flat_map(|(singers, sections)| {
        (
            proptest::collection::vec(
                proptest::collection::vec(
                    proptest::option::weighted(0.85, 0.0..100.0f64),
                    sections,
                ),
                singers,
            ),
            proptest::collection::vec((0usize..4, 0usize..6), sections),
            proptest::collection::vec((0..singers, 0..sections), 0..3),
            proptest::collection::vec((0..singers, 0..sections), 0..4),
            proptest::option::of(0.0..20.0f64),
        )
            .prop_map(|(fit, sizes, locks, exclusions, balance)| {
                let sizes = sizes
                    .into_iter()
                    .map(|(min, extra)| limit(min, min + extra))
                    .collect();
                let mut problem = problem(fit, sizes);
                problem.locks = locks;
                problem.exclusions = exclusions;
                problem.balance = balance;
                problem
            })
    })
}

proptest! {
    #[test]
    fn every_constraint_holds_and_the_objective_is_the_sum(problem in arbitrary_problem()) {
        match place(&problem, &config()) {
            Ok(placement) => {
                let section_of = sections_of(&placement);
                prop_assert_eq!(violations(&problem, &section_of), Vec::new());
                let sum: f64 = section_of
                    .iter()
                    .enumerate()
                    .map(|(singer, &section)| problem.fit[singer][section].unwrap_or(f64::NAN))
                    .sum();
                prop_assert!((placement.objective - sum).abs() <= 1e-9 * sum.abs().max(1.0));
                let counted: usize = placement.sections.iter().map(|section| section.count).sum();
                prop_assert_eq!(counted, problem.singers.len());
            }
            Err(PlacementError::Infeasible { reasons }) => {
                prop_assert!(!reasons.is_empty());
                prop_assert!(reasons.iter().all(|reason| reason.kind != InfeasibilityKind::Unexplained));
            }
            Err(other) => prop_assert!(false, "unexpected error {other}"),
        }
    }

    #[test]
    fn what_if_deltas_equal_a_full_recomputation(
        problem in arbitrary_problem(),
        pick in 0usize..1000,
        to in 0usize..1000,
    ) {
        let Ok(placement) = place(&problem, &config()) else { return Ok(()) };
        let singer = pick % problem.singers.len();
        let new_section = to % problem.sections.len();
        let mut moved = sections_of(&placement);
        moved[singer] = new_section;
        let change = what_if(&problem, &placement, singer, new_section, &config());
        match evaluate(&problem, &moved, &config()) {
            Ok(after) => {
                let change = change.expect("an allowed move has a what-if");
                let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * a.abs().max(b.abs()).max(1.0);
                prop_assert!(close(change.objective_after, after.objective));
                prop_assert!(close(
                    change.balance_penalty_delta,
                    after.balance_penalty - placement.balance_penalty
                ));
                for (delta, section) in change.sections.iter().zip(&after.sections) {
                    prop_assert_eq!(delta.count_after, section.count);
                    match (delta.mean_fit_after, section.mean_fit) {
                        (Some(incremental), Some(full)) => prop_assert!(close(incremental, full)),
                        (incremental, full) => prop_assert_eq!(incremental, full),
                    }
                }
                prop_assert_eq!(change.violations, violations(&problem, &moved));
            }
            // The move uses a pair the fit matrix does not allow.
            Err(_) => prop_assert!(change.is_err()),
        }
    }
}

#[test]
fn minima_of_some_sections_above_the_roster_are_named_with_the_roster_size() {
    // By hand: S, A and T need 3 each (9) from 8 singers who can all sing
    // anything; B's minimum is 0, so the smallest violated set is {S, A, T}.
    let mut sized = problem(
        vec![vec![Some(50.0); 4]; 8],
        vec![limit(3, 3), limit(3, 3), limit(3, 3), limit(0, 8)],
    );
    sized.sections = vec!["S".into(), "A".into(), "T".into(), "B".into()];
    let Err(PlacementError::Infeasible { reasons }) = place(&sized, &config()) else {
        panic!("nine seats cannot be filled by eight singers");
    };
    assert_eq!(
        reasons[0].message,
        "S, A and T need 9 singers between them but there are only 8 singers"
    );
}

#[test]
fn a_tie_is_called_a_tie() {
    let tied = problem(
        vec![vec![Some(100.0), Some(100.0)]],
        vec![SizeLimit::any(), SizeLimit::any()],
    );
    let placement = place(&tied, &config()).unwrap();
    assert_eq!(
        placement.assignments[0].explanation,
        "section0, tied with section1: fit 100 vs 100"
    );
}
