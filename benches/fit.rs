//! Section-fit matrix speed: the input the placement solver needs, for a
//! programme of 20 SSAATTBB pieces (8 lines × 240 notes each, 2 minutes)
//! and 200 or 5,000 singers. Run: `cargo bench --bench fit`.

use std::hint::black_box;

use ambit::fit::{FitConfig, SectionFitConfig, piece_fits, section_fit_matrix};
use ambit::roster::{Roster, Singer};
use ambit::score::{Measure, Note, Part, PartKind, Piece};
use ambit::sections::Layout;
use criterion::{Criterion, criterion_group, criterion_main};

/// A deterministic stepwise line around `centre_midi` (a small linear
/// congruential generator picks steps of −2…+2 semitones).
fn line(centre_midi: f64, seed: u64) -> Vec<Note> {
    let mut state = seed;
    let mut midi = centre_midi;
    (0..240)
        .map(|index| {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let step = ((state >> 33) % 5) as f64 - 2.0;
            midi = (midi + step).clamp(centre_midi - 6.0, centre_midi + 6.0);
            let onset_seconds = index as f64 * 0.5;
            Note {
                onset_seconds,
                duration_seconds: 0.5,
                onset_quarters: index as f64,
                duration_quarters: 1.0,
                midi,
                measure_index: index / 4,
                measure: (index / 4 + 1).to_string(),
                voice: 1,
                staff: 1,
                dynamic: None,
                velocity: None,
                tied_from_previous: false,
                grace: false,
            }
        })
        .collect()
}

fn programme() -> Vec<Piece> {
    let parts = [
        ("Soprano 1", 74.0),
        ("Soprano 2", 70.0),
        ("Alto 1", 66.0),
        ("Alto 2", 62.0),
        ("Tenor 1", 60.0),
        ("Tenor 2", 56.0),
        ("Bass 1", 52.0),
        ("Bass 2", 46.0),
    ];
    (0..20)
        .map(|piece_index| Piece {
            title: Some(format!("Piece {}", piece_index + 1)),
            parts: parts
                .iter()
                .enumerate()
                .map(|(part_index, (name, centre))| Part {
                    name: name.to_string(),
                    id: format!("P{part_index}"),
                    kind: PartKind::Voice,
                    notes: line(
                        *centre + (piece_index % 3) as f64,
                        (piece_index * 8 + part_index) as u64,
                    ),
                })
                .collect(),
            measures: (0..60)
                .map(|index| Measure {
                    number: (index + 1).to_string(),
                    onset_seconds: 2.0 * index as f64,
                    onset_quarters: 4.0 * index as f64,
                    duration_quarters: 4.0,
                })
                .collect(),
            key: None,
            warnings: Vec::new(),
        })
        .collect()
}

fn roster(count: usize) -> Roster {
    Roster {
        singers: (0..count)
            .map(|index| {
                let low = 40.0 + (index % 30) as f64;
                Singer {
                    name: format!("Singer {index}"),
                    range_low_midi: low,
                    range_high_midi: low + 24.0,
                    comfort_low_midi: low + 3.0,
                    comfort_high_midi: low + 19.0,
                    primo_midi: Some(low + 9.0),
                    secondo_midi: Some(low + 16.0),
                    voice_type: None,
                    section: None,
                    notes: None,
                }
            })
            .collect(),
    }
}

fn bench_matrix(c: &mut Criterion) {
    let programme = programme();
    let layout = Layout::parse("SSAATTBB").expect("a valid layout");
    let config = SectionFitConfig::default();
    let mut group = c.benchmark_group("section_fit_matrix");
    group.sample_size(10);
    let lean = SectionFitConfig {
        skip_piece_details: true,
        ..SectionFitConfig::default()
    };
    for count in [200, 5000] {
        let singers = roster(count);
        group.bench_function(format!("{count} singers × 8 sections × 20 pieces"), |b| {
            b.iter(|| section_fit_matrix(black_box(&singers), &programme, &layout, &config))
        });
        group.bench_function(
            format!("{count} singers × 8 sections × 20 pieces, no per-piece details"),
            |b| b.iter(|| section_fit_matrix(black_box(&singers), &programme, &layout, &lean)),
        );
    }
    group.finish();
    let singers = roster(40);
    let piece = &programme[0];
    c.bench_function(
        "piece_fits 40 singers × 8 lines with worst passages",
        |b| b.iter(|| piece_fits(black_box(&singers), piece, &FitConfig::default())),
    );
}

criterion_group!(benches, bench_matrix);
criterion_main!(benches);
