//! Pitch tracker speed: one frame's YIN difference function (the inner
//! loop), one frame's full pYIN analysis, and a whole 10 s signal.
//!
//! Run: `cargo bench --bench track`. Figures and the comparison with librosa
//! are in docs/PERFORMANCE.md ("Pitch tracker speed").

use std::hint::black_box;

use ambit::track::yin::{FrameAnalyser, FrameLayout};
use ambit::track::{self, TrackConfig, TrackMethod};
use criterion::{Criterion, criterion_group, criterion_main};

const RATE: u32 = 22_050;

/// A sung-like test signal: 220 Hz with 5.5 Hz vibrato, harmonics 1–8.
fn voice(seconds: f64) -> Vec<f32> {
    let count = (seconds * f64::from(RATE)) as usize;
    let mut phase = 0.0f64;
    (0..count)
        .map(|index| {
            let time = index as f64 / f64::from(RATE);
            let f0 =
                220.0 * 2f64.powf(0.5 / 12.0 * (2.0 * std::f64::consts::PI * 5.5 * time).sin());
            phase += 2.0 * std::f64::consts::PI * f0 / f64::from(RATE);
            let value: f64 = (1..=8).map(|k| (k as f64 * phase).sin() / k as f64).sum();
            (0.3 * value) as f32
        })
        .collect()
}

fn benches(criterion: &mut Criterion) {
    let config = TrackConfig::default();
    let layout = FrameLayout::new(
        RATE,
        config.fmin_hz,
        config.fmax_hz,
        config.integration_periods,
    );
    let signal = voice(10.0);
    let frame = &signal[10_000..10_000 + layout.frame_samples];
    let mut analyser = FrameAnalyser::new(layout);
    criterion.bench_function(
        "yin difference function, one frame (22.05 kHz, 50 Hz floor)",
        |b| b.iter(|| black_box(analyser.difference_function(black_box(frame)))),
    );
    let mut candidates = Vec::new();
    criterion.bench_function(
        "pyin frame analysis (difference, troughs, candidates)",
        |b| {
            b.iter(|| {
                candidates.clear();
                black_box(analyser.analyse(black_box(frame), 0.1, &mut candidates))
            })
        },
    );
    let pool = rayon::ThreadPoolBuilder::new().num_threads(1).build();
    let Ok(pool) = pool else { return };
    let mut group = criterion.benchmark_group("whole signal, 10 s, one thread");
    group.sample_size(20);
    for method in [TrackMethod::Pyin, TrackMethod::Yin] {
        let config = TrackConfig {
            method,
            ..TrackConfig::default()
        };
        group.bench_function(format!("{method:?}"), |b| {
            b.iter(|| pool.install(|| black_box(track::track_samples(&signal, RATE, &config))))
        });
    }
    group.finish();
}

criterion_group!(track_benches, benches);
criterion_main!(track_benches);
