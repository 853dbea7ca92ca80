//! A track in the figures a person reads: duration, voiced share, median
//! pitch, and the lowest and highest *stable* pitch.
//!
//! A stable pitch is one held: over at least `min_hold_seconds` of
//! consecutive voiced frames, the pitch smoothed over `smoothing_seconds`
//! (one vibrato cycle at 5 Hz, so vibrato up to ±1 semitone does not break
//! the hold) stays within ±`tolerance_cents` of the stretch's centre. Its
//! value is the mean MIDI pitch of the stretch — the mean over whole vibrato
//! cycles. (Voice-range-profile practice counts a sustained pitch at ≥ 1 s
//! within ±50 cents; this summary is a quick look, so it holds for 0.5 s.)
//!
//! Invariant: a pure function of a [`Track`] and a [`SummaryConfig`].

use serde::{Deserialize, Serialize};

use super::Track;
use crate::pitch;

/// What counts as a stable pitch.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct SummaryConfig {
    pub min_hold_seconds: f64,
    pub tolerance_cents: f64,
    pub smoothing_seconds: f64,
}

impl Default for SummaryConfig {
    fn default() -> Self {
        SummaryConfig {
            min_hold_seconds: 0.5,
            tolerance_cents: 50.0,
            smoothing_seconds: 0.2,
        }
    }
}

/// A held pitch.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct StablePitch {
    /// Mean pitch of the held stretch, MIDI number (A4 = 440 Hz).
    pub midi: f64,
    pub f0_hz: f64,
    pub start_seconds: f64,
    pub duration_seconds: f64,
}

/// The summary of a track.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TrackSummary {
    pub duration_seconds: f64,
    pub voiced_seconds: f64,
    /// Share of frames that are voiced, 0–1.
    pub voiced_share: f64,
    /// Median f0 over voiced frames (median of MIDI numbers, as Hz).
    pub median_f0_hz: Option<f64>,
    pub median_midi: Option<f64>,
    pub lowest_stable: Option<StablePitch>,
    pub highest_stable: Option<StablePitch>,
    /// Plain-language warnings about the track.
    pub warnings: Vec<String>,
}

/// Summary with the default [`SummaryConfig`].
pub fn summarise(track: &Track) -> TrackSummary {
    summarise_with(track, &SummaryConfig::default())
}

pub fn summarise_with(track: &Track, config: &SummaryConfig) -> TrackSummary {
    let hop = track.hop_seconds;
    let frame_count = track.frames.len();
    let pitches: Vec<Option<f64>> = track
        .frames
        .iter()
        .map(|frame| {
            frame
                .f0_hz
                .filter(|_| frame.voiced)
                .and_then(pitch::hz_to_midi)
        })
        .collect();
    let mut voiced: Vec<f64> = pitches.iter().flatten().copied().collect();
    voiced.sort_by(f64::total_cmp);
    let median_midi = median(&voiced);
    let voiced_share = if frame_count > 0 {
        voiced.len() as f64 / frame_count as f64
    } else {
        0.0
    };

    let (lowest_stable, highest_stable) = stable_extremes(&pitches, hop, config);
    let mut warnings = Vec::new();
    if voiced.is_empty() {
        warnings.push("no voiced frames: this sounds like noise or silence".to_string());
    } else if lowest_stable.is_none() {
        warnings.push(format!(
            "no pitch is held for {} s within ±{} cents, so there is no stable range",
            config.min_hold_seconds, config.tolerance_cents
        ));
    }
    TrackSummary {
        duration_seconds: frame_count as f64 * hop,
        voiced_seconds: voiced.len() as f64 * hop,
        voiced_share,
        median_f0_hz: median_midi.map(pitch::midi_to_hz),
        median_midi,
        lowest_stable,
        highest_stable,
        warnings,
    }
}

fn median(sorted: &[f64]) -> Option<f64> {
    let count = sorted.len();
    match count {
        0 => None,
        _ if count % 2 == 1 => sorted.get(count / 2).copied(),
        _ => Some(0.5 * (sorted[count / 2 - 1] + sorted[count / 2])),
    }
}

/// Lowest and highest held pitch. Within each run of voiced frames, the
/// pitch is smoothed by a centred moving average; a two-pointer sweep finds,
/// for each start, the longest stretch whose smoothed pitch spans at most
/// 2 × tolerance, and every stretch at least `min_hold_seconds` long counts.
fn stable_extremes(
    pitches: &[Option<f64>],
    hop: f64,
    config: &SummaryConfig,
) -> (Option<StablePitch>, Option<StablePitch>) {
    let min_frames = ((config.min_hold_seconds / hop).ceil() as usize).max(1);
    let half_smoothing = (config.smoothing_seconds / hop / 2.0).round().max(0.0) as usize;
    let span_limit = 2.0 * config.tolerance_cents / 100.0;
    let mut lowest: Option<StablePitch> = None;
    let mut highest: Option<StablePitch> = None;

    let mut index = 0;
    while index < pitches.len() {
        if pitches[index].is_none() {
            index += 1;
            continue;
        }
        let run_start = index;
        while index < pitches.len() && pitches[index].is_some() {
            index += 1;
        }
        let run: Vec<f64> = pitches[run_start..index]
            .iter()
            .flatten()
            .copied()
            .collect();
        if run.len() < min_frames {
            continue;
        }
        // Centred moving average within the run (shrinking at its ends).
        let mut prefix = vec![0.0; run.len() + 1];
        for (position, value) in run.iter().enumerate() {
            prefix[position + 1] = prefix[position] + value;
        }
        let smoothed: Vec<f64> = (0..run.len())
            .map(|position| {
                let from = position.saturating_sub(half_smoothing);
                let to = (position + half_smoothing + 1).min(run.len());
                (prefix[to] - prefix[from]) / (to - from) as f64
            })
            .collect();
        // Two pointers with monotone deques for the window's min and max.
        let mut minima: std::collections::VecDeque<usize> = Default::default();
        let mut maxima: std::collections::VecDeque<usize> = Default::default();
        let mut end = 0;
        for start in 0..run.len() {
            while end < run.len() {
                let value = smoothed[end];
                let low = minima.front().map_or(value, |&i| smoothed[i].min(value));
                let high = maxima.front().map_or(value, |&i| smoothed[i].max(value));
                if high - low > span_limit {
                    break;
                }
                while minima.back().is_some_and(|&i| smoothed[i] >= value) {
                    minima.pop_back();
                }
                minima.push_back(end);
                while maxima.back().is_some_and(|&i| smoothed[i] <= value) {
                    maxima.pop_back();
                }
                maxima.push_back(end);
                end += 1;
            }
            if end - start >= min_frames {
                let mean = (prefix[end] - prefix[start]) / (end - start) as f64;
                let stretch = StablePitch {
                    midi: mean,
                    f0_hz: pitch::midi_to_hz(mean),
                    start_seconds: (run_start + start) as f64 * hop,
                    duration_seconds: (end - start) as f64 * hop,
                };
                if lowest.is_none_or(|current| mean < current.midi) {
                    lowest = Some(stretch);
                }
                if highest.is_none_or(|current| mean > current.midi) {
                    highest = Some(stretch);
                }
            }
            if minima.front() == Some(&start) {
                minima.pop_front();
            }
            if maxima.front() == Some(&start) {
                maxima.pop_front();
            }
        }
    }
    (lowest, highest)
}
