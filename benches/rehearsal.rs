//! Rehearsal planning speed on the sample scores (read and mapped once,
//! outside the timing): a 30-item rehearsal (heuristic), a 9-item one
//! (exact search), and a week of three 10-item rehearsals and a concert.
//! Run: `cargo bench --bench rehearsal`.

use std::hint::black_box;
use std::path::PathBuf;

use ambit::rehearsal::load::BarRange;
use ambit::rehearsal::week::{DayPlan, WeekDay, plan_week};
use ambit::rehearsal::{
    RehearsalConfig, RehearsalItem, RehearsalPiece, RehearsalRequest, plan_rehearsal,
};
use ambit::score::{Piece, ReadOptions, read_score};
use ambit::sections::{Layout, MappingConfig, PieceMapping, Section, map_piece};
use criterion::{Criterion, criterion_group, criterion_main};

const SCORES: [&str; 4] = [
    "lanterns-on-the-quay.musicxml",
    "the-tide-clock.musicxml",
    "the-lamplighter.musicxml",
    "haul-away.musicxml",
];

fn loaded(layout: &Layout) -> Vec<(String, Piece, PieceMapping)> {
    SCORES
        .iter()
        .enumerate()
        .map(|(index, name)| {
            let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
                .join("sample-scores")
                .join(name);
            let piece = read_score(&path, &ReadOptions::default()).expect("sample score");
            let mapping = map_piece(&piece, index, layout, &MappingConfig::default())
                .expect("sample mapping");
            (name.to_string(), piece, mapping)
        })
        .collect()
}

/// `count` items cycling over the pieces: whole pieces and 8-bar passages,
/// 1–3 run-throughs, every fifth a tenor/bass sectional.
fn items(count: usize) -> Vec<RehearsalItem> {
    (0..count)
        .map(|i| RehearsalItem {
            piece: i % 4,
            bars: (i % 3 != 0).then_some(BarRange {
                first: 1 + (i as i64 % 2) * 4,
                last: 8 + (i as i64 % 2) * 4,
            }),
            run_throughs: 1 + (i % 3) as u32,
            sections: (i % 5 == 4).then(|| {
                vec![
                    Section::parse("T").expect("section"),
                    Section::parse("B").expect("section"),
                ]
            }),
            position: None,
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let layout = Layout::parse("SATB").expect("layout");
    let loaded = loaded(&layout);
    let pieces: Vec<RehearsalPiece> = loaded
        .iter()
        .map(|(name, piece, mapping)| RehearsalPiece {
            name,
            piece,
            mapping,
        })
        .collect();
    let config = RehearsalConfig::default();
    for (label, count, minutes) in [
        ("9 items (exact)", 9, 90.0),
        ("30 items (heuristic)", 30, 240.0),
    ] {
        let request = RehearsalRequest {
            minutes,
            items: items(count),
        };
        c.bench_function(&format!("rehearsal plan, {label}"), |b| {
            b.iter(|| plan_rehearsal(black_box(&pieces), &layout, &request, &config))
        });
    }
    let all = items(30);
    let mut days: Vec<WeekDay> = (0..3)
        .map(|d| WeekDay {
            day: 1 + 2 * d as u32,
            label: format!("rehearsal {}", d + 1),
            plan: DayPlan::Rehearsal {
                request: RehearsalRequest {
                    minutes: 120.0,
                    items: all[d * 10..(d + 1) * 10].to_vec(),
                },
            },
        })
        .collect();
    days.push(WeekDay {
        day: 6,
        label: "concert".to_string(),
        plan: DayPlan::Concert {
            items: (0..4)
                .map(|piece| RehearsalItem {
                    piece,
                    bars: None,
                    run_throughs: 1,
                    sections: None,
                    position: None,
                })
                .collect(),
        },
    });
    c.bench_function("rehearsal week, 3 × 10 items and a concert", |b| {
        b.iter(|| plan_week(black_box(&pieces), &layout, &days, &config))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
