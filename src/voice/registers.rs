//! Register breaks in glides: where the voice jumps between registers.
//!
//! A siren glides smoothly, about an octave a second; a register change
//! shows as an abrupt f0 jump (or a short break in voicing with a pitch
//! change) together with a change of source spectrum: H1–H2 rises and the
//! spectral centroid falls when the voice goes from modal into falsetto or
//! head register (Roubeau, Henrich & Castellengo 2009; Salomão & Sundberg
//! 2008). The jump on the way up usually sits higher than on the way down
//! (hysteresis), so both directions are reported and the passaggio is
//! placed between them.

use serde::{Deserialize, Serialize};

use crate::pitch::Tuning;
use crate::track::Frame;

use super::timbre::SpectrumAnalyser;

/// Detection settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BreakConfig {
    /// Smallest pitch jump counted as a break, semitones.
    pub min_jump_semitones: f64,
    /// Longest time the jump may take (one or two frames of a smooth glide
    /// move a fraction of a semitone).
    pub max_jump_seconds: f64,
    /// Longest unvoiced gap across which a jump still counts.
    pub max_gap_seconds: f64,
}

impl Default for BreakConfig {
    fn default() -> Self {
        BreakConfig {
            min_jump_semitones: 1.2,
            max_jump_seconds: 0.035,
            max_gap_seconds: 0.12,
        }
    }
}

/// Which way the glide was going.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    Up,
    Down,
}

/// One register break found in a glide.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RegisterBreak {
    pub time_seconds: f64,
    pub direction: Direction,
    pub from_midi: f64,
    pub to_midi: f64,
    /// Where the break sits: the midpoint of the jump.
    pub midi: f64,
    /// Change of H1–H2 (dB) from the lower to the upper register side.
    pub h1_h2_change_db: Option<f64>,
    /// Change of spectral centroid (Hz) from the lower to the upper side.
    pub centroid_change_hz: Option<f64>,
    /// 0–1: a larger jump and a spectral change in the expected direction
    /// raise it.
    pub confidence: f64,
}

/// Finds register breaks in the frames of one glide recording.
pub fn find_breaks(
    frames: &[Frame],
    samples: &[f32],
    sample_rate: u32,
    tuning: &Tuning,
    config: &BreakConfig,
) -> Vec<RegisterBreak> {
    let voiced: Vec<(f64, f64)> = frames
        .iter()
        .filter(|frame| frame.voiced)
        .filter_map(|frame| Some((frame.time, tuning.hz_to_midi(frame.f0_hz?)?)))
        .collect();
    let mut analyser = SpectrumAnalyser::new(sample_rate);
    let mut breaks = Vec::new();
    let mut index = 1;
    while index < voiced.len() {
        let (time_before, before) = voiced[index - 1];
        let (time_after, after) = voiced[index];
        let gap = time_after - time_before;
        let jump = after - before;
        let quick = gap <= config.max_jump_seconds + 1e-9 || gap <= config.max_gap_seconds;
        if quick && jump.abs() >= config.min_jump_semitones && jump.abs() <= 12.5 {
            // The glide's direction around the jump: the trend over the
            // quarter second before it.
            let trend_start = voiced[..index]
                .iter()
                .rev()
                .take_while(|(time, _)| time_before - time <= 0.25)
                .last()
                .map_or(before, |&(_, midi)| midi);
            let trend = before - trend_start;
            let direction = if jump > 0.0 {
                Direction::Up
            } else {
                Direction::Down
            };
            // A jump against the glide's direction is a crack or a tracking
            // error, not a register change.
            let agrees = match direction {
                Direction::Up => trend >= -0.2,
                Direction::Down => trend <= 0.2,
            };
            if agrees {
                let (lower_time, upper_time, lower_hz, upper_hz) = match direction {
                    Direction::Up => (time_before - 0.06, time_after + 0.06, before, after),
                    Direction::Down => (time_after + 0.06, time_before - 0.06, after, before),
                };
                let measure = |analyser: &mut SpectrumAnalyser, time: f64, midi: f64| {
                    analyser.measure(samples, time, tuning.midi_to_hz(midi))
                };
                let lower = measure(&mut analyser, lower_time, lower_hz);
                let upper = measure(&mut analyser, upper_time, upper_hz);
                let h1_h2_change_db = lower.zip(upper).map(|(l, u)| u.h1_h2_db - l.h1_h2_db);
                let centroid_change_hz =
                    lower.zip(upper).map(|(l, u)| u.centroid_hz - l.centroid_hz);
                // Confidence: the jump size (1.2 st → 0.4, ≥ 3 st → 0.7) plus
                // up to 0.3 when H1–H2 rises into the upper register.
                let jump_part = 0.4 + 0.3 * ((jump.abs() - 1.2) / 1.8).clamp(0.0, 1.0);
                let spectral_part =
                    h1_h2_change_db.map_or(0.0, |change| 0.3 * (change / 6.0).clamp(0.0, 1.0));
                breaks.push(RegisterBreak {
                    time_seconds: (time_before + time_after) / 2.0,
                    direction,
                    from_midi: before,
                    to_midi: after,
                    midi: (before + after) / 2.0,
                    h1_h2_change_db,
                    centroid_change_hz,
                    confidence: (jump_part + spectral_part).min(1.0),
                });
                // Skip the frames right after this break.
                while index < voiced.len() && voiced[index].0 - time_after < 0.15 {
                    index += 1;
                }
                continue;
            }
        }
        index += 1;
    }
    breaks
}

/// A passaggio placed from the breaks of one or more glides.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MeasuredPassaggio {
    pub midi: f64,
    pub upward_midi: Option<f64>,
    pub downward_midi: Option<f64>,
    pub confidence: f64,
    pub count: usize,
}

/// Groups breaks that lie within `window` semitones of each other into
/// passaggi, strongest first. Each group's pitch is the mean of its upward
/// and downward means (so hysteresis does not bias it to one side).
pub fn group_breaks(breaks: &[RegisterBreak], window: f64) -> Vec<MeasuredPassaggio> {
    let mut sorted: Vec<&RegisterBreak> = breaks.iter().collect();
    sorted.sort_by(|a, b| a.midi.total_cmp(&b.midi));
    let mut groups: Vec<Vec<&RegisterBreak>> = Vec::new();
    for item in sorted {
        match groups.last_mut() {
            Some(group)
                if group
                    .first()
                    .is_some_and(|first| item.midi - first.midi <= window) =>
            {
                group.push(item)
            }
            _ => groups.push(vec![item]),
        }
    }
    let mean = |values: Vec<f64>| -> Option<f64> {
        (!values.is_empty()).then(|| values.iter().sum::<f64>() / values.len() as f64)
    };
    let mut passaggi: Vec<MeasuredPassaggio> = groups
        .into_iter()
        .map(|group| {
            let upward_midi = mean(
                group
                    .iter()
                    .filter(|b| b.direction == Direction::Up)
                    .map(|b| b.midi)
                    .collect(),
            );
            let downward_midi = mean(
                group
                    .iter()
                    .filter(|b| b.direction == Direction::Down)
                    .map(|b| b.midi)
                    .collect(),
            );
            let midi = match (upward_midi, downward_midi) {
                (Some(up), Some(down)) => (up + down) / 2.0,
                (Some(one), None) | (None, Some(one)) => one,
                (None, None) => 0.0,
            };
            let best = group.iter().map(|b| b.confidence).fold(0.0, f64::max);
            // Seeing the same break both ways, or more than once, confirms it.
            let both_ways = upward_midi.is_some() && downward_midi.is_some();
            let confidence =
                (best + if both_ways { 0.15 } else { 0.0 } + 0.05 * (group.len() as f64 - 1.0))
                    .min(0.95);
            MeasuredPassaggio {
                midi,
                upward_midi,
                downward_midi,
                confidence,
                count: group.len(),
            }
        })
        .collect();
    passaggi.sort_by(|a, b| {
        b.confidence
            .total_cmp(&a.confidence)
            .then(b.count.cmp(&a.count))
    });
    passaggi
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A siren from `low` to `high` and back over `seconds`, with register
    /// jumps of `jump` semitones at `up_at` going up and `down_at` coming down.
    fn siren(low: f64, high: f64, seconds: f64, up_at: f64, down_at: f64, jump: f64) -> Vec<Frame> {
        let half = seconds / 2.0;
        (0..(seconds / 0.01) as usize)
            .map(|i| {
                let t = i as f64 * 0.01;
                let smooth = if t < half {
                    low + (high - low) * t / half
                } else {
                    high - (high - low) * (t - half) / half
                };
                // Above the break the voice sits `jump` higher going up; on
                // the way down it stays up until `down_at`.
                let midi = if t < half {
                    if smooth >= up_at {
                        smooth + jump
                    } else {
                        smooth
                    }
                } else if smooth >= down_at {
                    smooth + jump
                } else {
                    smooth
                };
                Frame {
                    time: t,
                    f0_hz: Some(440.0 * 2f64.powf((midi - 69.0) / 12.0)),
                    voiced: true,
                    confidence: 0.9,
                    level_db: -20.0,
                }
            })
            .collect()
    }

    #[test]
    fn finds_both_breaks_of_a_siren_with_hysteresis() {
        // Up through G4 (67) and down through E4 (64), 2-semitone jumps.
        let frames = siren(55.0, 76.0, 4.0, 67.0, 64.0, 2.0);
        let breaks = find_breaks(
            &frames,
            &[],
            22050,
            &Tuning::default(),
            &BreakConfig::default(),
        );
        assert_eq!(breaks.len(), 2, "{breaks:?}");
        let up = breaks
            .iter()
            .find(|b| b.direction == Direction::Up)
            .unwrap();
        let down = breaks
            .iter()
            .find(|b| b.direction == Direction::Down)
            .unwrap();
        assert!((up.midi - 68.0).abs() < 0.3, "{up:?}");
        assert!((down.midi - 65.0).abs() < 0.3, "{down:?}");
        assert!(
            up.midi > down.midi,
            "hysteresis: the upward break sits higher"
        );
        let passaggi = group_breaks(&breaks, 4.0);
        assert_eq!(passaggi.len(), 1);
        assert!((passaggi[0].midi - 66.5).abs() < 0.3);
    }

    #[test]
    fn a_smooth_siren_has_no_break() {
        let frames = siren(50.0, 74.0, 4.0, 200.0, 200.0, 0.0);
        let breaks = find_breaks(
            &frames,
            &[],
            22050,
            &Tuning::default(),
            &BreakConfig::default(),
        );
        assert!(breaks.is_empty(), "{breaks:?}");
    }
}
