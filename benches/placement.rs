//! Placement speed: the exact optimum for 5,000 and 200 singers over 8
//! sections, one what-if move at 200 singers, and a re-optimised what-if.
//!
//! Run: `cargo bench --bench placement`. Figures in docs/PERFORMANCE.md.

use ambit::synth::random::SplitMix64;
use std::hint::black_box;

use ambit::placement::{
    PlacementConfig, PlacementProblem, SizeLimit, place, place_with_lock, what_if,
};
use criterion::{Criterion, criterion_group, criterion_main};

/// The engine's SplitMix64, seeded, so every run times the same problems.
struct SplitMix(SplitMix64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0.next_u64()
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// A choir-shaped problem: each singer has a "home" section (its voice),
/// fits fall off with distance from it, sections two or more steps away are
/// not allowed; sizes are 60–140 % of an even share; 1 % of singers locked.
fn choir(singers: usize, sections: usize, seed: u64) -> PlacementProblem {
    let mut random = SplitMix(SplitMix64::new(seed));
    let mut fit = Vec::with_capacity(singers);
    let mut locks = Vec::new();
    for singer in 0..singers {
        let home = (random.unit() * sections as f64) as usize % sections;
        let row: Vec<Option<f64>> = (0..sections)
            .map(|section| {
                let distance = section.abs_diff(home);
                (distance <= 1).then(|| 100.0 - 30.0 * distance as f64 - 25.0 * random.unit())
            })
            .collect();
        if singer % 100 == 7 {
            locks.push((singer, home));
        }
        fit.push(row);
    }
    let share = singers as f64 / sections as f64;
    PlacementProblem {
        singers: (0..singers)
            .map(|singer| format!("singer{singer}"))
            .collect(),
        sections: (0..sections)
            .map(|section| format!("section{section}"))
            .collect(),
        fit,
        sizes: vec![
            SizeLimit {
                min: (share * 0.6) as usize,
                max: (share * 1.4).ceil() as usize,
            };
            sections
        ],
        locks,
        exclusions: Vec::new(),
        balance: None,
        beyond_range: Vec::new(),
        pair_notes: Vec::new(),
    }
}

fn benches(criterion: &mut Criterion) {
    let config = PlacementConfig::default();
    let large = choir(5_000, 8, 1);
    let small = choir(200, 8, 2);
    let mut balanced = choir(5_000, 8, 3);
    balanced.balance = Some(0.5);

    let mut group = criterion.benchmark_group("placement");
    group.sample_size(20);
    group.bench_function("place 5000 singers x 8 sections", |bench| {
        bench.iter(|| place(black_box(&large), &config).expect("feasible"))
    });
    group.bench_function("place 5000 singers x 8 sections, balance", |bench| {
        bench.iter(|| place(black_box(&balanced), &config).expect("feasible"))
    });
    group.bench_function("place 200 singers x 8 sections", |bench| {
        bench.iter(|| place(black_box(&small), &config).expect("feasible"))
    });
    let placement = place(&small, &config).expect("feasible");
    let singer = 17;
    let to = (placement.assignments[singer].section_index + 1) % 8;
    group.bench_function("what-if one move at 200 singers", |bench| {
        bench.iter(|| what_if(black_box(&small), &placement, singer, to, &config))
    });
    group.bench_function("re-optimised what-if (lock) at 200 singers", |bench| {
        bench.iter(|| place_with_lock(black_box(&small), singer, to, &config))
    });
    group.finish();
}

criterion_group!(placement_benches, benches);
criterion_main!(placement_benches);
