//! Live pitch latency of the recording path, from a fed test signal.
//!
//! Feeds the app's `LivePitch` (the recorder's tracker, same configuration)
//! in 10 ms blocks, as an audio callback would deliver them at 48 kHz:
//! 1 s of silence, then a 220 Hz tone (A3: 440 · 2^(−12/12), ISO 16, equal
//! temperament) with a few harmonics. Reports
//! - the tracker's own latency figure (half a frame ahead + Viterbi lag),
//! - the signal latency: audio time delivered when the first voiced frame
//!   near 220 Hz comes out, minus the tone's onset,
//! - the frame-time lag: audio time delivered when each frame comes out,
//!   minus that frame's centre time (median, max),
//! - the wall-clock time to process one 10 ms block (median, max).
//!
//! `cargo run -p ambit-app --example live_latency [LAG_SECONDS…]`
//! measures the app's live configuration, then each Viterbi lag given.

use std::time::Instant;

use ambit_app::recorder::{LivePitch, live_config};

fn main() -> Result<(), String> {
    let lags: Vec<f64> = std::env::args()
        .skip(1)
        .map(|text| {
            text.parse::<f64>()
                .map_err(|error| format!("{text}: {error}"))
        })
        .collect::<Result<_, _>>()?;
    println!("== the app's live configuration");
    measure(LivePitch::new(48_000)?)?;
    for lag in lags {
        println!("== Viterbi lag {:.0} ms", lag * 1000.0);
        let config = ambit::track::TrackConfig {
            viterbi_lag_seconds: lag,
            ..live_config()
        };
        measure(LivePitch::with_config(48_000, &config)?)?;
    }
    Ok(())
}

fn measure(mut live: LivePitch) -> Result<(), String> {
    let rate = 48_000u32;
    let block = (rate / 100) as usize; // 10 ms
    let onset_seconds = 1.0;
    let total_seconds = 4.0;
    let mut delivered = 0usize;
    let mut first_voiced: Option<f64> = None;
    let mut frame_lags = Vec::new();
    let mut block_seconds = Vec::new();
    let total = (total_seconds * f64::from(rate)) as usize;
    while delivered < total {
        let samples: Vec<f32> = (delivered..delivered + block)
            .map(|index| {
                let time = index as f64 / f64::from(rate);
                if time < onset_seconds {
                    0.0
                } else {
                    let phase = 2.0 * std::f64::consts::PI * 220.0 * time;
                    (0.3 * phase.sin() + 0.15 * (2.0 * phase).sin() + 0.08 * (3.0 * phase).sin())
                        as f32
                }
            })
            .collect();
        let started = Instant::now();
        let frames = live.push(&samples);
        block_seconds.push(started.elapsed().as_secs_f64());
        delivered += block;
        let now = delivered as f64 / f64::from(rate);
        for frame in frames {
            frame_lags.push(now - frame.time);
            let near_a3 = frame
                .f0_hz
                .is_some_and(|hz| (hz / 220.0).log2().abs() < 0.03);
            if first_voiced.is_none() && near_a3 {
                first_voiced = Some(now - onset_seconds);
            }
        }
    }
    let median = |values: &mut Vec<f64>| {
        values.sort_by(f64::total_cmp);
        values.get(values.len() / 2).copied().unwrap_or(f64::NAN)
    };
    let max = |values: &[f64]| values.iter().copied().fold(f64::NAN, f64::max);
    println!("block                      10 ms at {rate} Hz");
    println!(
        "tracker latency figure     {:.1} ms",
        live.latency_seconds() * 1000.0
    );
    match first_voiced {
        Some(seconds) => println!("onset → first A3 frame     {:.1} ms", seconds * 1000.0),
        None => println!("onset → first A3 frame     never (no voiced frame near 220 Hz)"),
    }
    let worst_lag = max(&frame_lags);
    println!(
        "frame centre → emitted     median {:.1} ms, max {:.1} ms",
        median(&mut frame_lags) * 1000.0,
        worst_lag * 1000.0
    );
    let worst_block = max(&block_seconds);
    println!(
        "processing per 10 ms block median {:.3} ms, max {:.3} ms",
        median(&mut block_seconds) * 1000.0,
        worst_block * 1000.0
    );
    Ok(())
}
