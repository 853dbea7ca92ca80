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
//!
//! A register change happens between two stretches of phonation, so a jump
//! only counts where the voice is sounding at its full level on both sides
//! and goes on in the new register afterwards. At a glide's onset and
//! release the level falls by tens of decibels within a frame or two and
//! the analysis window straddles the edge of the sound; f0 read there is
//! unreliable and may leap by a semitone or more, which would otherwise be
//! taken for a break at the very top (or bottom) of the glide.

use serde::{Deserialize, Serialize};

use crate::pitch::Tuning;
use crate::track::Frame;

use super::timbre::SpectrumAnalyser;

/// The four registers of the trade (common practice): vocal fry (pulse
/// register), modal (chest; laryngeal mechanism M1), falsetto or head voice
/// (M2) and whistle (flageolet; M3). The mechanisms are those of Roubeau,
/// Henrich & Castellengo 2009 (M0 is fry).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Register {
    Fry,
    Modal,
    Falsetto,
    Whistle,
}

impl Register {
    pub const ALL: [Register; 4] = [
        Register::Fry,
        Register::Modal,
        Register::Falsetto,
        Register::Whistle,
    ];

    pub fn label(self) -> &'static str {
        match self {
            Register::Fry => "fry",
            Register::Modal => "modal",
            Register::Falsetto => "falsetto",
            Register::Whistle => "whistle",
        }
    }
}

/// Where the registers lie for one singer: the inputs of [`note_register`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RegisterBounds {
    /// Below this pitch an irregular note is fry.
    pub fry_max_midi: f64,
    /// Frame-to-frame irregularity (cents RMS) above which a low note is fry.
    pub fry_irregularity_cents: f64,
    /// The measured M1→M2 break, if a glide showed one: notes above it are
    /// falsetto (head voice), notes at or below it modal.
    pub break_midi: Option<f64>,
    /// At or above this pitch a note is whistle register.
    pub whistle_min_midi: f64,
}

/// The register of a sung note at `midi` with the given irregularity, or
/// `None` where modal and falsetto cannot be told apart (no measured break).
pub fn note_register(
    midi: f64,
    irregularity_cents: f64,
    bounds: &RegisterBounds,
) -> Option<Register> {
    if midi < bounds.fry_max_midi && irregularity_cents > bounds.fry_irregularity_cents {
        Some(Register::Fry)
    } else if midi >= bounds.whistle_min_midi {
        Some(Register::Whistle)
    } else {
        bounds.break_midi.map(|at| {
            if midi > at {
                Register::Falsetto
            } else {
                Register::Modal
            }
        })
    }
}

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
    /// Frames further than this below the median level of the voiced
    /// frames within ±0.25 s are an onset or a release, where f0 is not
    /// trusted: no break is read there.
    pub max_level_drop_db: f64,
    /// The voice must go on this long after the jump (voiced, at full
    /// level): a register is a stretch of phonation, not one frame.
    pub min_hold_seconds: f64,
}

impl Default for BreakConfig {
    fn default() -> Self {
        BreakConfig {
            min_jump_semitones: 1.2,
            max_jump_seconds: 0.035,
            max_gap_seconds: 0.12,
            max_level_drop_db: 20.0,
            min_hold_seconds: 0.05,
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
    /// Change of spectral tilt as the alpha ratio (dB) from the lower to the
    /// upper side: negative when the upper side's spectrum is steeper.
    #[serde(default)]
    pub alpha_ratio_change_db: Option<f64>,
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
    let voiced: Vec<(f64, f64, f64)> = frames
        .iter()
        .filter(|frame| frame.voiced)
        .filter_map(|frame| Some((frame.time, tuning.hz_to_midi(frame.f0_hz?)?, frame.level_db)))
        .collect();
    let full_level = sounding_fully(&voiced, config.max_level_drop_db);
    let mut analyser = SpectrumAnalyser::new(sample_rate);
    let mut breaks = Vec::new();
    let mut index = 1;
    while index < voiced.len() {
        let (time_before, before, _) = voiced[index - 1];
        let (time_after, after, _) = voiced[index];
        let gap = time_after - time_before;
        let jump = after - before;
        let quick = gap <= config.max_jump_seconds + 1e-9 || gap <= config.max_gap_seconds;
        // Both sides at full level, and the new register held afterwards.
        let phonated = full_level.get(index - 1).copied().unwrap_or(false)
            && held_after(&voiced, &full_level, index, config);
        if quick && phonated && jump.abs() >= config.min_jump_semitones && jump.abs() <= 12.5 {
            // The glide's direction around the jump: the trend over the
            // quarter second before it.
            let trend_start = voiced[..index]
                .iter()
                .rev()
                .take_while(|(time, _, _)| time_before - time <= 0.25)
                .last()
                .map_or(before, |&(_, midi, _)| midi);
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
                let alpha_ratio_change_db = lower
                    .zip(upper)
                    .and_then(|(l, u)| Some(u.alpha_ratio_db? - l.alpha_ratio_db?))
                    .filter(|change| change.is_finite());
                // Confidence: the jump size (1.2 st → 0.4, ≥ 3 st → 0.7) plus
                // up to 0.2 when H1–H2 rises into the upper register and up
                // to 0.1 when its spectrum is steeper (alpha ratio falls):
                // both mark the change from M1 to M2 (Roubeau, Henrich &
                // Castellengo 2009; Salomão & Sundberg 2008).
                let jump_part = 0.4 + 0.3 * ((jump.abs() - 1.2) / 1.8).clamp(0.0, 1.0);
                let spectral_part = h1_h2_change_db
                    .map_or(0.0, |change| 0.2 * (change / 6.0).clamp(0.0, 1.0))
                    + alpha_ratio_change_db
                        .map_or(0.0, |change| 0.1 * (-change / 6.0).clamp(0.0, 1.0));
                breaks.push(RegisterBreak {
                    time_seconds: (time_before + time_after) / 2.0,
                    direction,
                    from_midi: before,
                    to_midi: after,
                    midi: (before + after) / 2.0,
                    h1_h2_change_db,
                    centroid_change_hz,
                    alpha_ratio_change_db,
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

/// For each voiced frame: whether its level is within `max_drop_db` of the
/// median level of the voiced frames within ±0.25 s (not an onset or a
/// release).
fn sounding_fully(voiced: &[(f64, f64, f64)], max_drop_db: f64) -> Vec<bool> {
    let mut window: Vec<f64> = Vec::new();
    let (mut low, mut high) = (0, 0);
    voiced
        .iter()
        .map(|&(time, _, level_db)| {
            while high < voiced.len() && voiced[high].0 <= time + 0.25 {
                high += 1;
            }
            while low < high && voiced[low].0 < time - 0.25 {
                low += 1;
            }
            window.clear();
            window.extend(voiced[low..high].iter().map(|&(_, _, level)| level));
            window.sort_by(f64::total_cmp);
            let median = window.get(window.len() / 2).copied().unwrap_or(level_db);
            level_db >= median - max_drop_db
        })
        .collect()
}

/// Whether the voice goes on at full level for `min_hold_seconds` from
/// frame `index` on, without an unvoiced gap longer than `max_gap_seconds`.
fn held_after(
    voiced: &[(f64, f64, f64)],
    full_level: &[bool],
    index: usize,
    config: &BreakConfig,
) -> bool {
    let Some(&(start, _, _)) = voiced.get(index) else {
        return false;
    };
    let mut previous = start;
    for (offset, &(time, _, _)) in voiced.iter().enumerate().skip(index) {
        if time - previous > config.max_gap_seconds
            || !full_level.get(offset).copied().unwrap_or(false)
        {
            return false;
        }
        if time - start >= config.min_hold_seconds - 1e-9 {
            return true;
        }
        previous = time;
    }
    false
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

    fn frame(time: f64, midi: f64, level_db: f64) -> Frame {
        Frame {
            time,
            f0_hz: Some(440.0 * 2f64.powf((midi - 69.0) / 12.0)),
            voiced: true,
            confidence: 0.9,
            level_db,
        }
    }

    fn breaks_in(frames: &[Frame]) -> Vec<RegisterBreak> {
        find_breaks(
            frames,
            &[],
            22050,
            &Tuning::default(),
            &BreakConfig::default(),
        )
    }

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
                frame(t, midi, -20.0)
            })
            .collect()
    }

    #[test]
    fn finds_both_breaks_of_a_siren_with_hysteresis() {
        // Up through G4 (67) and down through E4 (64), 2-semitone jumps.
        let frames = siren(55.0, 76.0, 4.0, 67.0, 64.0, 2.0);
        let breaks = breaks_in(&frames);
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
    fn a_leap_in_the_release_of_a_siren_is_not_a_break() {
        // A smooth siren up to A4 (69) whose last three frames fade out
        // (−30, −50, −70 dB against −20 dB) while the f0 read from them leaps
        // 1.5 semitones: the analysis window straddles the end of the sound.
        // The voice does not go on in a new register, so it is no break.
        let mut frames = siren(57.0, 69.0, 2.0, 200.0, 200.0, 0.0);
        frames.truncate(100);
        let last_midi = 57.0 + 12.0 * 0.99;
        for (step, level_db) in [-30.0, -50.0, -70.0].into_iter().enumerate() {
            let midi = last_midi + 0.1 + 1.5 * step as f64;
            frames.push(frame(1.0 + 0.01 * step as f64, midi, level_db));
        }
        let breaks = breaks_in(&frames);
        assert!(breaks.is_empty(), "{breaks:?}");
        // The same leap at full level, with the voice going on above it,
        // is a break.
        for frame in frames.iter_mut().skip(100) {
            frame.level_db = -20.0;
        }
        for step in 3..10 {
            let midi = last_midi + 3.1 + 0.12 * f64::from(step - 2);
            frames.push(frame(1.0 + 0.01 * f64::from(step), midi, -20.0));
        }
        let breaks = breaks_in(&frames);
        assert_eq!(breaks.len(), 1, "{breaks:?}");
    }

    #[test]
    fn notes_fall_into_the_four_registers() {
        // Fry below 70 Hz when irregular; whistle from 1100 Hz (C#6) up;
        // modal and falsetto either side of a break measured at G4 (67).
        let bounds = RegisterBounds {
            fry_max_midi: 37.1, // 70 Hz
            fry_irregularity_cents: 40.0,
            break_midi: Some(67.0),
            whistle_min_midi: 85.1, // 1100 Hz
        };
        // A 55 Hz (A1, MIDI 33) creak with 80 cents of frame-to-frame
        // irregularity is fry; the same pitch sung steadily is modal.
        assert_eq!(note_register(33.0, 80.0, &bounds), Some(Register::Fry));
        assert_eq!(note_register(33.0, 5.0, &bounds), Some(Register::Modal));
        assert_eq!(note_register(60.0, 5.0, &bounds), Some(Register::Modal));
        assert_eq!(note_register(71.0, 5.0, &bounds), Some(Register::Falsetto));
        // F6 (1397 Hz, MIDI 89): whistle.
        assert_eq!(note_register(89.0, 5.0, &bounds), Some(Register::Whistle));
        // Without a measured break, modal and falsetto are not told apart.
        let unmeasured = RegisterBounds {
            break_midi: None,
            ..bounds
        };
        assert_eq!(note_register(71.0, 5.0, &unmeasured), None);
        assert_eq!(Register::ALL.len(), 4);
    }

    #[test]
    fn a_smooth_siren_has_no_break() {
        let frames = siren(50.0, 74.0, 4.0, 200.0, 200.0, 0.0);
        let breaks = breaks_in(&frames);
        assert!(breaks.is_empty(), "{breaks:?}");
    }
}
