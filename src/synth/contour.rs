//! Prosody: turns the list of segments into per-sample control tracks (f0 as
//! MIDI, amplitude, register weight, vowel) and records the ground truth.
//!
//! Pitch moves are shaped with a raised cosine, so f0 is smooth (no kinks
//! a tracker could not follow within a frame). Vibrato is a sinusoid in
//! cents with slowly drifting rate and extent, so a held note's mean over
//! whole vibrato cycles is the note's pitch.

use std::f64::consts::{PI, TAU};

use super::random::SplitMix64;
use super::{
    BreakTruth, Glide, NoteTruth, Register, Segment, SegmentSpan, SynthConfig, SynthError,
    TruthFrame, VOICED_ENVELOPE_SHARE, Voice, Vowel,
};

/// Duration of the f0 jump and spectrum change at a register break.
pub const BREAK_SECONDS: f64 = 0.015;

/// Per-sample controls and the truth recorded while planning.
pub struct Plan {
    /// f0 as a MIDI number; NaN where the voice is silent.
    pub pitch_midi: Vec<f64>,
    /// Linear amplitude of the voice source.
    pub gain: Vec<f32>,
    /// 0 = modal, 1 = falsetto.
    pub falsetto: Vec<f32>,
    /// Index into [`Vowel::ALL`].
    pub vowel: Vec<u8>,
    /// Ground-truth voicing of each sample.
    pub voiced: Vec<bool>,
    pub spans: Vec<SegmentSpan>,
    pub notes: Vec<NoteTruth>,
    pub breaks: Vec<BreakTruth>,
    pub sample_rate: f64,
}

/// Raised-cosine step: 0 at x ≤ 0, 1 at x ≥ 1.
fn smooth_step(x: f64) -> f64 {
    if x <= 0.0 {
        0.0
    } else if x >= 1.0 {
        1.0
    } else {
        0.5 - 0.5 * (PI * x).cos()
    }
}

fn vowel_index(vowel: Vowel) -> u8 {
    Vowel::ALL.iter().position(|v| *v == vowel).unwrap_or(0) as u8
}

fn other_register(register: Register) -> Register {
    match register {
        Register::Modal => Register::Falsetto,
        Register::Falsetto => Register::Modal,
    }
}

fn register_weight(register: Register) -> f64 {
    match register {
        Register::Modal => 0.0,
        Register::Falsetto => 1.0,
    }
}

/// Where a glide's break falls: (seconds from the glide's start, sweep rate
/// in semitones per second, direction ±1).
pub fn break_position(glide: &Glide) -> Result<(f64, f64, f64), &'static str> {
    let direction = if glide.to_midi >= glide.from_midi {
        1.0
    } else {
        -1.0
    };
    let jump = glide
        .register_break
        .map_or(0.0, |register_break| register_break.jump_semitones);
    if !(jump.is_finite() && (0.0..=12.0).contains(&jump)) {
        return Err("the jump must be 0–12 semitones");
    }
    let sweep = glide.to_midi - glide.from_midi - direction * jump;
    let rate = sweep / glide.duration_seconds;
    let Some(register_break) = glide.register_break else {
        return Ok((f64::INFINITY, rate, direction));
    };
    if sweep * direction <= 0.0 {
        return Err("the jump is as large as the whole glide");
    }
    let share = (register_break.at_midi - glide.from_midi) / sweep;
    if !(share.is_finite() && share > 0.0 && share < 1.0) {
        return Err(
            "the break must lie strictly inside the glide (before the jump's size from its end)",
        );
    }
    Ok((share * glide.duration_seconds, rate, direction))
}

/// Shortest time a voice takes to move `semitones` up (positive) or down
/// (negative): Xu & Sun, "Maximum speed of pitch change and how it may
/// relate to speech", JASA 111, 2002: about 89.6 + 8.7·d ms for a rise and
/// 100.0 + 5.8·d ms for a fall of d semitones (coefficients from memory).
/// Legato transitions never run faster than this, whatever
/// `portamento_seconds` asks.
pub fn fastest_transition_seconds(semitones: f64) -> f64 {
    let size = semitones.abs();
    if semitones >= 0.0 {
        (89.6 + 8.7 * size) / 1000.0
    } else {
        (100.0 + 5.8 * size) / 1000.0
    }
}

/// How a voiced event begins.
#[derive(Clone, Copy)]
enum Onset {
    /// From silence, with an optional scoop (depth in semitones, seconds).
    Attack { scoop: Option<(f64, f64)> },
    /// Tied to the previous event: pitch, level and register weight glide
    /// from its last values.
    Legato {
        pitch_midi: f64,
        level: f64,
        falsetto: f64,
    },
}

struct Builder<'a> {
    plan: Plan,
    voice: &'a Voice,
    vibrato_phase: Vec<f64>,
    /// Relative drift of vibrato extent, per sample (−1…1).
    extent_drift: Vec<f32>,
}

impl Builder<'_> {
    /// Fills samples `start..end` with one voiced event whose intended
    /// contour is `base(τ) = (pitch MIDI, falsetto weight)`, τ in seconds
    /// from the event's start. Returns the last (pitch, level, weight).
    #[allow(clippy::too_many_arguments)]
    fn voiced_event(
        &mut self,
        start: usize,
        end: usize,
        base: &dyn Fn(f64) -> (f64, f64),
        level: f64,
        vowel: Vowel,
        onset: Onset,
        release: bool,
        vibrato: bool,
    ) -> (f64, f64, f64) {
        let rate = self.plan.sample_rate;
        let duration = (end - start) as f64 / rate;
        let voice = self.voice;
        let (base_start_pitch, _) = base(0.0);
        let mut last = (f64::NAN, level, 0.0);
        let end = end.min(self.plan.pitch_midi.len());
        for n in start..end {
            let tau = (n - start) as f64 / rate;
            let (mut pitch, mut weight) = base(tau);
            let mut amplitude = level;
            let mut envelope = 1.0;
            match onset {
                Onset::Attack { scoop } => {
                    if voice.attack_seconds > 0.0 {
                        envelope *= smooth_step(tau / voice.attack_seconds);
                    }
                    if let Some((depth, seconds)) = scoop {
                        pitch -= depth * (1.0 - smooth_step(tau / seconds));
                    }
                }
                Onset::Legato {
                    pitch_midi,
                    level: previous_level,
                    falsetto,
                } => {
                    let seconds = voice
                        .portamento_seconds
                        .max(fastest_transition_seconds(base_start_pitch - pitch_midi));
                    let x = smooth_step(tau / seconds);
                    pitch += (pitch_midi - base_start_pitch) * (1.0 - x);
                    amplitude = previous_level + (level - previous_level) * x;
                    weight = falsetto + (weight - falsetto) * x;
                }
            }
            if release && voice.release_seconds > 0.0 {
                envelope *= smooth_step((duration - tau) / voice.release_seconds);
            }
            if vibrato && let Some(settings) = voice.vibrato {
                let grow = ((tau - settings.delay_seconds) / settings.ramp_seconds.max(1e-6))
                    .clamp(0.0, 1.0);
                let extent = settings.extent_cents / 100.0
                    * (1.0 + settings.drift * f64::from(self.extent_drift[n]));
                pitch += grow * extent * self.vibrato_phase[n].sin();
            }
            self.plan.pitch_midi[n] = pitch;
            self.plan.gain[n] = (amplitude * envelope) as f32;
            self.plan.falsetto[n] = weight as f32;
            self.plan.vowel[n] = vowel_index(vowel);
            self.plan.voiced[n] = envelope >= VOICED_ENVELOPE_SHARE;
            last = (pitch, amplitude, weight);
        }
        last
    }
}

fn decibels_to_gain(level_db: f64) -> f64 {
    10f64.powf(level_db / 20.0)
}

/// Plans the whole recording.
pub fn plan(voice: &Voice, segments: &[Segment], config: &SynthConfig) -> Result<Plan, SynthError> {
    let rate = f64::from(config.sample_rate);
    let total_seconds = config.lead_in_seconds
        + config.tail_seconds
        + segments.iter().map(Segment::duration_seconds).sum::<f64>();
    let length = (total_seconds * rate).ceil() as usize;

    // Vibrato oscillator runs through the whole recording, as a singer's
    // vibrato does; rate and extent drift with two slow incommensurate
    // sinusoids of random phase (0.23 and 0.37 Hz, an arbitrary choice).
    let mut random = SplitMix64::stream(config.seed, 1);
    let phases = [
        random.range(0.0, TAU),
        random.range(0.0, TAU),
        random.range(0.0, TAU),
        random.range(0.0, TAU),
    ];
    let mut vibrato_phase = vec![0.0; length];
    let mut extent_drift = vec![0.0f32; length];
    if let Some(vibrato) = voice.vibrato {
        let mut phase = random.range(0.0, TAU);
        for n in 0..length {
            let t = n as f64 / rate;
            let slow_rate =
                0.5 * ((TAU * 0.23 * t + phases[0]).sin() + (TAU * 0.37 * t + phases[1]).sin());
            let slow_extent =
                0.5 * ((TAU * 0.19 * t + phases[2]).sin() + (TAU * 0.31 * t + phases[3]).sin());
            vibrato_phase[n] = phase;
            extent_drift[n] = slow_extent as f32;
            phase += TAU * vibrato.rate_hz * (1.0 + vibrato.drift * slow_rate) / rate;
            if phase > TAU {
                phase -= TAU;
            }
        }
    }

    let mut builder = Builder {
        plan: Plan {
            pitch_midi: vec![f64::NAN; length],
            gain: vec![0.0; length],
            falsetto: vec![0.0; length],
            vowel: vec![0; length],
            voiced: vec![false; length],
            spans: Vec::with_capacity(segments.len()),
            notes: Vec::new(),
            breaks: Vec::new(),
            sample_rate: rate,
        },
        voice,
        vibrato_phase,
        extent_drift,
    };

    let to_sample = |seconds: f64| ((seconds * rate).round() as usize).min(length);
    let mut cursor = config.lead_in_seconds;
    let mut previous: Option<(f64, f64, f64)> = None;
    let scoop = voice
        .scoop
        .map(|scoop| (scoop.depth_cents / 100.0, scoop.seconds.max(1e-6)));
    for (index, segment) in segments.iter().enumerate() {
        let start_seconds = cursor;
        let end_seconds = cursor + segment.duration_seconds();
        cursor = end_seconds;
        builder.plan.spans.push(SegmentSpan {
            start_seconds,
            end_seconds,
        });
        let (start, end) = (to_sample(start_seconds), to_sample(end_seconds));
        let sung_next = matches!(
            segments.get(index + 1),
            Some(Segment::Note(_) | Segment::Glide(_))
        );
        let onset = match previous {
            Some((pitch_midi, level, falsetto)) => Onset::Legato {
                pitch_midi,
                level,
                falsetto,
            },
            None => Onset::Attack { scoop },
        };
        match segment {
            Segment::Note(note) => {
                let weight = register_weight(note.register);
                let pitch = note.pitch_midi;
                let base = move |_tau: f64| (pitch, weight);
                previous = Some(builder.voiced_event(
                    start,
                    end,
                    &base,
                    decibels_to_gain(note.level_db),
                    note.vowel,
                    onset,
                    !sung_next,
                    true,
                ));
                builder.plan.notes.push(NoteTruth {
                    segment_index: index,
                    start_seconds,
                    end_seconds,
                    pitch_midi: note.pitch_midi,
                    register: note.register,
                });
            }
            Segment::Glide(glide) => {
                let (break_seconds, sweep_rate, direction) =
                    break_position(glide).map_err(|message| SynthError::BadSegment {
                        index,
                        message: message.to_string(),
                    })?;
                let jump = glide.register_break.map_or(0.0, |b| b.jump_semitones);
                let before = register_weight(glide.register);
                let after = register_weight(other_register(glide.register));
                let from_midi = glide.from_midi;
                let base = move |tau: f64| {
                    let x = smooth_step((tau - break_seconds) / BREAK_SECONDS);
                    (
                        from_midi + sweep_rate * tau + direction * jump * x,
                        before + (after - before) * x,
                    )
                };
                // Glides start on their first pitch without a scoop.
                let onset = match onset {
                    Onset::Attack { .. } => Onset::Attack { scoop: None },
                    legato => legato,
                };
                previous = Some(builder.voiced_event(
                    start,
                    end,
                    &base,
                    decibels_to_gain(glide.level_db),
                    glide.vowel,
                    onset,
                    !sung_next,
                    false,
                ));
                if let Some(register_break) = glide.register_break {
                    builder.plan.breaks.push(BreakTruth {
                        segment_index: index,
                        time_seconds: start_seconds + break_seconds,
                        midi_before: register_break.at_midi,
                        midi_after: register_break.at_midi + direction * jump,
                        from_register: glide.register,
                        to_register: other_register(glide.register),
                    });
                }
            }
            Segment::Speech(speech) => {
                previous = None;
                let mut random = SplitMix64::stream(config.seed, 100 + index as u64);
                let mut syllable_start = 0.0;
                let speaking = speech.speaking_midi;
                let declination = speech.declination_semitones;
                let duration = speech.duration_seconds;
                while syllable_start < duration {
                    let length_seconds =
                        random.range(0.8, 1.2) / speech.syllables_per_second.max(0.5);
                    let voiced_seconds =
                        (length_seconds * random.range(0.55, 0.8)).min(duration - syllable_start);
                    if voiced_seconds < 0.04 {
                        break;
                    }
                    // A rise-fall accent on some syllables (from memory: a
                    // few semitones in read speech), on a falling baseline.
                    let accent = random.range(-0.5, 2.5);
                    let vowel = Vowel::ALL[(random.next_u64() % 5) as usize];
                    let level = decibels_to_gain(speech.level_db + random.range(-4.0, 0.0));
                    let offset = syllable_start;
                    let base = move |tau: f64| {
                        let t = offset + tau;
                        let baseline = speaking + declination / 2.0 - declination * t / duration;
                        (baseline + accent * (PI * tau / voiced_seconds).sin(), 0.0)
                    };
                    let syllable_first = to_sample(start_seconds + syllable_start);
                    let syllable_last = to_sample(start_seconds + syllable_start + voiced_seconds);
                    builder.voiced_event(
                        syllable_first,
                        syllable_last,
                        &base,
                        level,
                        vowel,
                        Onset::Attack { scoop: None },
                        true,
                        false,
                    );
                    syllable_start += length_seconds;
                }
            }
            Segment::Rest { .. } => previous = None,
        }
        if !sung_next {
            previous = None;
        }
    }
    Ok(builder.plan)
}

/// Samples the plan at the truth hop.
pub fn truth_frames(plan: &Plan, config: &SynthConfig) -> Vec<TruthFrame> {
    let length = plan.pitch_midi.len();
    let duration = length as f64 / plan.sample_rate;
    let count = (duration / config.hop_seconds).floor() as usize + 1;
    (0..count)
        .map(|index| {
            let time = index as f64 * config.hop_seconds;
            let n = ((time * plan.sample_rate).round() as usize).min(length.saturating_sub(1));
            let pitch = plan.pitch_midi.get(n).copied().unwrap_or(f64::NAN);
            let voiced = plan.voiced.get(n).copied().unwrap_or(false) && pitch.is_finite();
            TruthFrame {
                time,
                f0_hz: voiced.then(|| config.tuning.midi_to_hz(pitch)),
                voiced,
            }
        })
        .collect()
}
