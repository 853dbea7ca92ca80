//! Note segmentation: stable sung notes from an f0 track.
//!
//! A held note sung with vibrato swings up to about ±1 semitone at 5.5–8 Hz,
//! so stability is judged on the contour smoothed over one slowest vibrato
//! cycle (1 / 5.5 Hz ≈ 0.18 s): a note is a stretch where that smoothed
//! pitch stays within ±`tolerance_cents` of the note's running mean. The
//! note's pitch is the mean of the raw contour over whole vibrato cycles
//! (between the first and last upward crossing of the smoothed line), so
//! a part-cycle at either end does not bias it.

use serde::{Deserialize, Serialize};

use crate::pitch::Tuning;
use crate::track::Frame;

/// Segmentation settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SegmentConfig {
    /// How far the vibrato-smoothed pitch may stray from the note's mean.
    pub tolerance_cents: f64,
    /// Shortest note kept.
    pub min_note_seconds: f64,
    /// Slowest vibrato rate expected; the smoothing window is one such cycle.
    pub slowest_vibrato_hz: f64,
    /// Unvoiced gaps up to this long inside a note are bridged.
    pub max_gap_seconds: f64,
}

impl Default for SegmentConfig {
    fn default() -> Self {
        SegmentConfig {
            tolerance_cents: 50.0,
            min_note_seconds: 0.12,
            slowest_vibrato_hz: 5.5,
            max_gap_seconds: 0.04,
        }
    }
}

/// One stable sung note.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SungNote {
    pub start_seconds: f64,
    pub end_seconds: f64,
    /// Mean pitch over whole vibrato cycles.
    pub midi: f64,
    /// SD of the vibrato-smoothed pitch: slow drift, in cents.
    pub drift_cents: f64,
    /// SD of the raw pitch around the smoothed line: vibrato and jitter, in cents.
    pub wobble_cents: f64,
    /// RMS of the frame-to-frame pitch change, cents: irregularity (high in fry).
    pub irregularity_cents: f64,
    /// Vibrato rate from the crossings of the smoothed line, when there is one.
    pub vibrato_hz: Option<f64>,
    pub mean_level_db: f64,
    /// SD of the frame level: an unsteady level is a sign of strain.
    pub level_sd_db: f64,
}

impl SungNote {
    pub fn seconds(&self) -> f64 {
        self.end_seconds - self.start_seconds
    }
}

/// A voiced frame reduced to what segmentation needs.
#[derive(Debug, Clone, Copy)]
struct Point {
    time: f64,
    midi: f64,
    level_db: f64,
}

/// Splits a track into voiced runs (short gaps bridged), as MIDI pitches.
fn voiced_runs(frames: &[Frame], tuning: &Tuning, max_gap_seconds: f64) -> Vec<Vec<Point>> {
    let mut runs: Vec<Vec<Point>> = Vec::new();
    let mut current: Vec<Point> = Vec::new();
    for frame in frames {
        let midi = frame
            .f0_hz
            .filter(|_| frame.voiced)
            .and_then(|hz| tuning.hz_to_midi(hz));
        let Some(midi) = midi else { continue };
        if let Some(last) = current.last()
            && frame.time - last.time > max_gap_seconds + 0.0105
        {
            runs.push(std::mem::take(&mut current));
        }
        current.push(Point {
            time: frame.time,
            midi,
            level_db: frame.level_db,
        });
    }
    if !current.is_empty() {
        runs.push(current);
    }
    runs
}

/// Centred moving average over `half_width` points each side.
fn smooth(values: &[f64], half_width: usize) -> Vec<f64> {
    let mut prefix = Vec::with_capacity(values.len() + 1);
    prefix.push(0.0);
    for value in values {
        prefix.push(prefix[prefix.len() - 1] + value);
    }
    (0..values.len())
        .map(|index| {
            let low = index.saturating_sub(half_width);
            let high = (index + half_width + 1).min(values.len());
            (prefix[high] - prefix[low]) / (high - low) as f64
        })
        .collect()
}

fn mean(values: impl Iterator<Item = f64>) -> (f64, usize) {
    let (sum, count) = values.fold((0.0, 0usize), |(sum, count), value| {
        (sum + value, count + 1)
    });
    if count == 0 {
        (0.0, 0)
    } else {
        (sum / count as f64, count)
    }
}

fn sd(values: &[f64]) -> f64 {
    let (average, count) = mean(values.iter().copied());
    if count < 2 {
        return 0.0;
    }
    (values.iter().map(|v| (v - average).powi(2)).sum::<f64>() / count as f64).sqrt()
}

/// Finds the stable notes in a track.
pub fn segment_notes(frames: &[Frame], tuning: &Tuning, config: &SegmentConfig) -> Vec<SungNote> {
    let hop = frames
        .windows(2)
        .map(|pair| pair[1].time - pair[0].time)
        .find(|step| *step > 0.0)
        .unwrap_or(0.01);
    let half_width = ((0.5 / config.slowest_vibrato_hz) / hop).round().max(1.0) as usize;
    let tolerance = config.tolerance_cents / 100.0;
    let mut notes = Vec::new();
    for run in voiced_runs(frames, tuning, config.max_gap_seconds) {
        let raw: Vec<f64> = run.iter().map(|point| point.midi).collect();
        let smoothed = smooth(&raw, half_width);
        let mut start = 0;
        let mut sum = 0.0;
        for index in 0..=run.len() {
            let closes = index == run.len() || {
                let count = (index - start) as f64;
                count > 0.0 && (smoothed[index] - sum / count).abs() > tolerance
            };
            if closes {
                if let Some(note) =
                    describe(&run[start..index], &smoothed[start..index], hop, config)
                {
                    notes.push(note);
                }
                start = index;
                sum = 0.0;
            }
            if index < run.len() {
                sum += smoothed[index];
            }
        }
    }
    notes
}

fn describe(
    points: &[Point],
    smoothed: &[f64],
    hop: f64,
    config: &SegmentConfig,
) -> Option<SungNote> {
    let first = points.first()?;
    let last = points.last()?;
    let start_seconds = first.time - hop / 2.0;
    let end_seconds = last.time + hop / 2.0;
    if end_seconds - start_seconds < config.min_note_seconds {
        return None;
    }
    // Upward crossings of the raw contour through the smoothed line mark
    // whole vibrato cycles.
    let deviation: Vec<f64> = points
        .iter()
        .zip(smoothed)
        .map(|(point, line)| point.midi - line)
        .collect();
    let crossings: Vec<usize> = (1..deviation.len())
        .filter(|&i| deviation[i - 1] < 0.0 && deviation[i] >= 0.0)
        .collect();
    let (midi, vibrato_hz) = match (crossings.first(), crossings.last()) {
        (Some(&a), Some(&b)) if b > a && crossings.len() >= 2 => {
            let (cycle_mean, _) = mean(points[a..b].iter().map(|p| p.midi));
            let cycles = (crossings.len() - 1) as f64;
            let rate = cycles / (points[b].time - points[a].time);
            // Only call it vibrato when the rate is in the sung range and the
            // swing is wider than jitter.
            let vibrato = (4.0..=9.0).contains(&rate) && sd(&deviation) * 100.0 > 8.0;
            (cycle_mean, vibrato.then_some(rate))
        }
        _ => (mean(points.iter().map(|p| p.midi)).0, None),
    };
    // Without a whole vibrato cycle the smoothing window spans the note
    // itself, so judge the raw contour: most of it must lie within the
    // tolerance (speech and glides slide through; a short scoop is allowed).
    if vibrato_hz.is_none() {
        let tolerance = config.tolerance_cents / 100.0;
        let within = points
            .iter()
            .filter(|p| (p.midi - midi).abs() <= tolerance)
            .count();
        if (within as f64) < 0.8 * points.len() as f64 {
            return None;
        }
    }
    let differences: Vec<f64> = points
        .windows(2)
        .map(|pair| (pair[1].midi - pair[0].midi) * 100.0)
        .collect();
    let irregularity_cents = if differences.is_empty() {
        0.0
    } else {
        (differences.iter().map(|d| d * d).sum::<f64>() / differences.len() as f64).sqrt()
    };
    let levels: Vec<f64> = points.iter().map(|p| p.level_db).collect();
    Some(SungNote {
        start_seconds,
        end_seconds,
        midi,
        drift_cents: sd(smoothed) * 100.0,
        wobble_cents: sd(&deviation) * 100.0,
        irregularity_cents,
        vibrato_hz,
        mean_level_db: mean(levels.iter().copied()).0,
        level_sd_db: sd(&levels),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn frames_of(contour: impl Fn(f64) -> Option<f64>, seconds: f64) -> Vec<Frame> {
        (0..(seconds / 0.01) as usize)
            .map(|index| {
                let time = index as f64 * 0.01;
                let f0_hz = contour(time);
                Frame {
                    time,
                    f0_hz,
                    voiced: f0_hz.is_some(),
                    confidence: if f0_hz.is_some() { 0.9 } else { 0.1 },
                    level_db: -20.0,
                }
            })
            .collect()
    }

    #[test]
    fn a_vibrato_note_is_one_note_at_its_centre_pitch() {
        // A4 = 440 Hz (ISO 16) with a 6 Hz vibrato of ±80 cents, 2 s long:
        // wider than the ±50-cent tolerance, yet one note whose mean over
        // whole cycles is A4 (MIDI 69).
        let frames = frames_of(
            |t| Some(440.0 * 2f64.powf(0.8 * (2.0 * std::f64::consts::PI * 6.0 * t).sin() / 12.0)),
            2.0,
        );
        let notes = segment_notes(&frames, &Tuning::default(), &SegmentConfig::default());
        assert_eq!(notes.len(), 1, "{notes:?}");
        assert!((notes[0].midi - 69.0).abs() < 0.03, "{}", notes[0].midi);
        let rate = notes[0].vibrato_hz.expect("vibrato found");
        assert!((rate - 6.0).abs() < 0.3, "{rate}");
        assert!(notes[0].seconds() > 1.9);
    }

    #[test]
    fn steps_of_a_scale_become_separate_notes() {
        // C4 D4 E4 F4 G4, 0.4 s each (equal temperament, A4 = 440 Hz).
        let steps = [60.0, 62.0, 64.0, 65.0, 67.0];
        let frames = frames_of(
            |t| {
                let step = steps[((t / 0.4) as usize).min(4)];
                Some(440.0 * 2f64.powf((step - 69.0) / 12.0))
            },
            2.0,
        );
        let notes = segment_notes(&frames, &Tuning::default(), &SegmentConfig::default());
        let pitches: Vec<i32> = notes.iter().map(|n| n.midi.round() as i32).collect();
        assert_eq!(pitches, vec![60, 62, 64, 65, 67]);
    }

    #[test]
    fn unvoiced_gaps_split_notes_and_glides_give_no_long_note() {
        // An octave glide in one second never holds a pitch for 0.12 s
        // within ±50 cents long enough to count as a stable note... except
        // that a semitone takes 1/12 s, so nothing reaches 0.12 s.
        let frames = frames_of(|t| Some(220.0 * 2f64.powf(t)), 1.0);
        let notes = segment_notes(&frames, &Tuning::default(), &SegmentConfig::default());
        assert!(notes.iter().all(|n| n.seconds() < 0.3), "{notes:?}");
        // Silence gives nothing.
        let silence = frames_of(|_| None, 1.0);
        assert!(segment_notes(&silence, &Tuning::default(), &SegmentConfig::default()).is_empty());
    }
}
