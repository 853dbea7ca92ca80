//! Singing synthesiser: sung and spoken test recordings with exact ground
//! truth (f0 per frame, voicing, note spans, register breaks).
//!
//! Source–filter design (Fant's acoustic theory of speech production):
//! - source: a band-limited Rosenberg (1971) glottal pulse train, synthesised
//!   as one sinusoid per harmonic below the Nyquist frequency, in two
//!   registers (modal and falsetto, after Roubeau, Henrich & Castellengo
//!   2009), with jitter, shimmer and aspiration noise ([`glottal`]);
//! - filter: a cascade of five formant resonators (Klatt 1980) with vowel
//!   tables after Peterson & Barney (1952), an optional singer's-formant
//!   cluster (Sundberg 1974) and first-formant tuning at high f0
//!   (Joliveau, Smith & Wolfe 2004) ([`formants`]);
//! - prosody: notes with vibrato, scoops and portamento; glides (sirens)
//!   with an optional register break; speech-like syllables with
//!   declination ([`contour`]);
//! - degradations: room reverberation and additive noise at a set SNR
//!   ([`degrade`]).
//!
//! Architecture invariant: the synthesiser is a pure function of a
//! [`Voice`], a list of [`Segment`]s and a [`SynthConfig`] (seed included):
//! the same inputs give the same samples on every platform. It knows nothing
//! of the tracker or of singer profiles; the ground truth it returns is the
//! contour it rendered, not a measurement. It writes files only through
//! [`write_wav`] and [`write_truth_csv`].

mod contour;
mod degrade;
pub mod formants;
pub mod glottal;
pub mod random;
mod render;
#[cfg(test)]
mod tests;

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::pitch::Tuning;

pub use formants::{TractSize, Vowel};
pub use glottal::Register;

/// The f0 range the synthesiser accepts for a note or glide end point, in
/// hertz: a low bass's 55 Hz to a soprano's 1400 Hz, with a margin for
/// vibrato and scoops.
pub const F0_RANGE_HZ: (f64, f64) = (50.0, 1600.0);

/// Longest recording the synthesiser renders (bounds memory: about 10
/// control values per sample).
pub const MAX_SECONDS: f64 = 600.0;

/// Share of a voiced event's full amplitude (−20 dB) from which its frames
/// count as voiced in the ground truth; the fades of attacks and releases
/// below it are marked unvoiced.
pub const VOICED_ENVELOPE_SHARE: f64 = 0.1;

/// Regular vibrato with slow drift of rate and extent.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Vibrato {
    /// Mean rate, 5–7 Hz in trained singers (Sundberg, *The Science of the
    /// Singing Voice*, 1987; from memory).
    pub rate_hz: f64,
    /// Extent in cents either side of the note (±20–90 cents, same source).
    pub extent_cents: f64,
    /// Relative slow drift of rate and extent (0.05 = ±5 %).
    pub drift: f64,
    /// Time after the note's onset before vibrato begins.
    pub delay_seconds: f64,
    /// Time over which the extent then grows from zero to full.
    pub ramp_seconds: f64,
}

impl Default for Vibrato {
    fn default() -> Self {
        Vibrato {
            rate_hz: 5.8,
            extent_cents: 50.0,
            drift: 0.05,
            delay_seconds: 0.15,
            ramp_seconds: 0.25,
        }
    }
}

/// An onset approached from below.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Scoop {
    /// How far below the note the onset starts.
    pub depth_cents: f64,
    /// Time to reach the note.
    pub seconds: f64,
}

/// A singer's voice: everything that stays the same across a recording.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Voice {
    /// Formant table (men, women, children).
    pub tract: TractSize,
    /// Singer's-formant cluster (Sundberg 1974): centre in hertz and
    /// strength 0–1. `None` leaves F3–F5 at their speech values.
    pub singers_formant: Option<(f64, f64)>,
    /// Extra spectral slope of the source in dB per octave above 500 Hz
    /// (negative = darker, e.g. a soft or breathy voice).
    pub tilt_db_per_octave: f64,
    /// Local jitter in percent: mean absolute difference between
    /// consecutive periods over the mean period (healthy voices < 1 %,
    /// from memory).
    pub jitter_percent: f64,
    /// Local shimmer in percent, the same measure on cycle amplitudes
    /// (healthy voices < about 4 %, from memory).
    pub shimmer_percent: f64,
    /// Aspiration noise level relative to the voiced source, dB.
    pub breath_db: f64,
    pub vibrato: Option<Vibrato>,
    /// Scoop into notes that start after silence.
    pub scoop: Option<Scoop>,
    /// Length of the pitch transition between legato notes; never shorter
    /// than the fastest pitch change a voice can make (Xu & Sun 2002).
    pub portamento_seconds: f64,
    /// Raise F1 to follow f0 when f0 exceeds it (sopranos; Joliveau et al. 2004).
    pub formant_tuning: bool,
    pub attack_seconds: f64,
    pub release_seconds: f64,
}

impl Voice {
    /// A plain, healthy voice with moderate vibrato, light scoops and
    /// portamento.
    pub fn new(tract: TractSize) -> Voice {
        Voice {
            tract,
            singers_formant: None,
            tilt_db_per_octave: 0.0,
            jitter_percent: 0.5,
            shimmer_percent: 2.0,
            breath_db: -35.0,
            vibrato: Some(Vibrato::default()),
            scoop: Some(Scoop {
                depth_cents: 60.0,
                seconds: 0.08,
            }),
            portamento_seconds: 0.08,
            formant_tuning: true,
            attack_seconds: 0.04,
            release_seconds: 0.06,
        }
    }
}

/// A sung note.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Note {
    pub pitch_midi: f64,
    pub duration_seconds: f64,
    pub vowel: Vowel,
    /// Level relative to the recording's nominal level, dB.
    pub level_db: f64,
    pub register: Register,
}

/// Where a glide switches register (a passaggio crossed by a siren).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RegisterBreak {
    /// Pitch at which the break happens (the glide's pitch just before it).
    pub at_midi: f64,
    /// Size of the f0 jump, in the glide's direction, in semitones
    /// (a few semitones; Roubeau et al. 2009). Zero gives a change of
    /// source spectrum without a jump.
    pub jump_semitones: f64,
}

/// A continuous glide (siren), linear in semitones.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Glide {
    pub from_midi: f64,
    pub to_midi: f64,
    pub duration_seconds: f64,
    pub vowel: Vowel,
    pub level_db: f64,
    /// Register at the start; after a break the voice is in the other one.
    pub register: Register,
    pub register_break: Option<RegisterBreak>,
}

/// Speech-like voicing: syllables at a speaking pitch with declination.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Speech {
    /// Mean speaking pitch.
    pub speaking_midi: f64,
    pub duration_seconds: f64,
    /// About 4–6 syllables per second in read speech (from memory).
    pub syllables_per_second: f64,
    /// Fall of the baseline over the whole segment, semitones.
    pub declination_semitones: f64,
    pub level_db: f64,
}

/// One piece of a recording, played in order.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Segment {
    Note(Note),
    Glide(Glide),
    Speech(Speech),
    Rest { duration_seconds: f64 },
}

impl Segment {
    pub fn duration_seconds(&self) -> f64 {
        match self {
            Segment::Note(note) => note.duration_seconds,
            Segment::Glide(glide) => glide.duration_seconds,
            Segment::Speech(speech) => speech.duration_seconds,
            Segment::Rest { duration_seconds } => *duration_seconds,
        }
    }
}

/// Background noise colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum NoiseColour {
    White,
    /// 1/f noise (room and fan noise are closer to this than to white).
    Pink,
}

/// Additive noise at a signal-to-noise ratio measured over the voiced frames.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Noise {
    pub snr_db: f64,
    pub colour: NoiseColour,
}

/// A simple room: exponentially decaying noise tail after the direct sound.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Reverb {
    /// Time for the tail to decay by 60 dB (Sabine's RT60).
    pub rt60_seconds: f64,
    /// Energy of the direct sound over the tail, dB.
    pub direct_to_reverberant_db: f64,
}

/// How to render.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SynthConfig {
    pub sample_rate: u32,
    /// Ground-truth frame hop.
    pub hop_seconds: f64,
    pub seed: u64,
    pub tuning: Tuning,
    /// Silence before the first and after the last segment.
    pub lead_in_seconds: f64,
    pub tail_seconds: f64,
    pub reverb: Option<Reverb>,
    pub noise: Option<Noise>,
    /// Scale the result to this peak level (dBFS); `None` leaves the
    /// synthesiser's own scale.
    pub peak_dbfs: Option<f64>,
}

impl Default for SynthConfig {
    fn default() -> Self {
        SynthConfig {
            sample_rate: 44_100,
            hop_seconds: 0.01,
            seed: 1,
            tuning: Tuning::default(),
            lead_in_seconds: 0.3,
            tail_seconds: 0.3,
            reverb: None,
            noise: None,
            peak_dbfs: Some(-3.0),
        }
    }
}

/// Ground truth for one frame.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TruthFrame {
    /// Frame time, seconds from the start.
    pub time: f64,
    /// The rendered f0 contour (without the per-cycle jitter) at `time`.
    pub f0_hz: Option<f64>,
    pub voiced: bool,
}

/// A rendered note.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NoteTruth {
    pub segment_index: usize,
    pub start_seconds: f64,
    pub end_seconds: f64,
    pub pitch_midi: f64,
    pub register: Register,
}

/// A rendered register break.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BreakTruth {
    pub segment_index: usize,
    /// Start of the jump.
    pub time_seconds: f64,
    pub midi_before: f64,
    pub midi_after: f64,
    pub from_register: Register,
    pub to_register: Register,
}

/// Where each segment lies in the recording.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SegmentSpan {
    pub start_seconds: f64,
    pub end_seconds: f64,
}

/// A rendered recording and its ground truth.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Synthesis {
    pub samples: Vec<f32>,
    pub sample_rate: u32,
    pub hop_seconds: f64,
    pub truth: Vec<TruthFrame>,
    pub segments: Vec<SegmentSpan>,
    pub notes: Vec<NoteTruth>,
    pub register_breaks: Vec<BreakTruth>,
    /// SNR over the voiced frames after the noise was added.
    pub snr_db: Option<f64>,
}

#[derive(Debug, Error)]
pub enum SynthError {
    #[error("synthesis setting {name} = {value} is not usable: {reason}")]
    BadConfig {
        name: &'static str,
        value: f64,
        reason: &'static str,
    },
    #[error("segment {index}: {message}")]
    BadSegment { index: usize, message: String },
    #[error("{}: cannot write: {message}", path.display())]
    Write { path: PathBuf, message: String },
}

/// Renders `segments` sung by `voice`.
pub fn synthesize(
    voice: &Voice,
    segments: &[Segment],
    config: &SynthConfig,
) -> Result<Synthesis, SynthError> {
    validate(voice, segments, config)?;
    let sample_rate = f64::from(config.sample_rate);
    let plan = contour::plan(voice, segments, config)?;
    let mut signal = render::render(voice, &plan, sample_rate, config.seed, config.tuning);
    let truth = contour::truth_frames(&plan, config);
    if let Some(reverb) = config.reverb {
        degrade::add_reverb(&mut signal, &reverb, sample_rate, config.seed);
    }
    let voiced_mask =
        degrade::voiced_sample_mask(&truth, config.hop_seconds, sample_rate, signal.len());
    let snr_db = config
        .noise
        .map(|noise| degrade::add_noise(&mut signal, &voiced_mask, &noise, config.seed));
    if let Some(peak_dbfs) = config.peak_dbfs {
        let peak = signal.iter().fold(0.0f64, |peak, x| peak.max(x.abs()));
        if peak > 0.0 {
            let gain = 10f64.powf(peak_dbfs / 20.0) / peak;
            signal.iter_mut().for_each(|x| *x *= gain);
        }
    }
    Ok(Synthesis {
        samples: signal.iter().map(|&x| x as f32).collect(),
        sample_rate: config.sample_rate,
        hop_seconds: config.hop_seconds,
        truth,
        segments: plan.spans,
        notes: plan.notes,
        register_breaks: plan.breaks,
        snr_db,
    })
}

fn bad_config(name: &'static str, value: f64, reason: &'static str) -> SynthError {
    SynthError::BadConfig {
        name,
        value,
        reason,
    }
}

fn validate(voice: &Voice, segments: &[Segment], config: &SynthConfig) -> Result<(), SynthError> {
    let rate = f64::from(config.sample_rate);
    if !(8_000.0..=192_000.0).contains(&rate) {
        return Err(bad_config("sample_rate", rate, "expected 8000–192000 Hz"));
    }
    if !(config.hop_seconds.is_finite() && (0.001..=0.1).contains(&config.hop_seconds)) {
        return Err(bad_config(
            "hop_seconds",
            config.hop_seconds,
            "expected 0.001–0.1 s",
        ));
    }
    for (name, value) in [
        ("lead_in_seconds", config.lead_in_seconds),
        ("tail_seconds", config.tail_seconds),
        ("portamento_seconds", voice.portamento_seconds),
        ("attack_seconds", voice.attack_seconds),
        ("release_seconds", voice.release_seconds),
        ("jitter_percent", voice.jitter_percent),
        ("shimmer_percent", voice.shimmer_percent),
    ] {
        if !(value.is_finite() && (0.0..=60.0).contains(&value)) {
            return Err(bad_config(name, value, "expected a finite value 0–60"));
        }
    }
    for (name, value) in [
        ("breath_db", voice.breath_db),
        ("tilt_db_per_octave", voice.tilt_db_per_octave),
    ] {
        if !(value.is_finite() && (-120.0..=20.0).contains(&value)) {
            return Err(bad_config(name, value, "expected a finite value −120–20"));
        }
    }
    if let Some(vibrato) = voice.vibrato {
        if !(vibrato.rate_hz.is_finite() && (0.5..=15.0).contains(&vibrato.rate_hz)) {
            return Err(bad_config(
                "vibrato.rate_hz",
                vibrato.rate_hz,
                "expected 0.5–15 Hz",
            ));
        }
        if !(vibrato.extent_cents.is_finite() && (0.0..=200.0).contains(&vibrato.extent_cents)) {
            return Err(bad_config(
                "vibrato.extent_cents",
                vibrato.extent_cents,
                "expected 0–200 cents",
            ));
        }
        if !(vibrato.drift.is_finite() && (0.0..=0.5).contains(&vibrato.drift)) {
            return Err(bad_config("vibrato.drift", vibrato.drift, "expected 0–0.5"));
        }
    }
    if let Some(reverb) = config.reverb
        && !(reverb.rt60_seconds.is_finite() && (0.01..=5.0).contains(&reverb.rt60_seconds))
    {
        return Err(bad_config(
            "reverb.rt60_seconds",
            reverb.rt60_seconds,
            "expected 0.01–5 s",
        ));
    }
    if let Some(noise) = config.noise
        && !(noise.snr_db.is_finite() && (-20.0..=120.0).contains(&noise.snr_db))
    {
        return Err(bad_config(
            "noise.snr_db",
            noise.snr_db,
            "expected −20–120 dB",
        ));
    }
    let mut total_seconds = config.lead_in_seconds + config.tail_seconds;
    for (index, segment) in segments.iter().enumerate() {
        let duration = segment.duration_seconds();
        if !(duration.is_finite() && duration > 0.0) {
            return Err(SynthError::BadSegment {
                index,
                message: format!("duration {duration} s is not a positive number of seconds"),
            });
        }
        total_seconds += duration;
        let pitches: Vec<f64> = match segment {
            Segment::Note(note) => vec![note.pitch_midi],
            Segment::Glide(glide) => vec![glide.from_midi, glide.to_midi],
            Segment::Speech(speech) => vec![speech.speaking_midi],
            Segment::Rest { .. } => vec![],
        };
        for pitch_midi in pitches {
            let hz = config.tuning.midi_to_hz(pitch_midi);
            if !(hz.is_finite() && (F0_RANGE_HZ.0..=F0_RANGE_HZ.1).contains(&hz)) {
                return Err(SynthError::BadSegment {
                    index,
                    message: format!(
                        "pitch MIDI {pitch_midi} ({hz:.1} Hz) lies outside {}–{} Hz",
                        F0_RANGE_HZ.0, F0_RANGE_HZ.1
                    ),
                });
            }
        }
        if let Segment::Glide(glide) = segment
            && let Some(register_break) = glide.register_break
        {
            contour::break_position(glide).map_err(|message| SynthError::BadSegment {
                index,
                message: format!(
                    "register break at MIDI {}: {message}",
                    register_break.at_midi
                ),
            })?;
        }
    }
    if total_seconds > MAX_SECONDS {
        return Err(bad_config(
            "total duration",
            total_seconds,
            "longer than MAX_SECONDS (600 s)",
        ));
    }
    Ok(())
}

/// Writes the samples as a 16-bit PCM mono WAV file.
pub fn write_wav(path: &Path, synthesis: &Synthesis) -> Result<(), SynthError> {
    let error = |message: String| SynthError::Write {
        path: path.to_path_buf(),
        message,
    };
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: synthesis.sample_rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut writer = hound::WavWriter::create(path, spec).map_err(|e| error(e.to_string()))?;
    for &sample in &synthesis.samples {
        let value = (f64::from(sample) * 32767.0)
            .round()
            .clamp(-32768.0, 32767.0) as i16;
        writer
            .write_sample(value)
            .map_err(|e| error(e.to_string()))?;
    }
    writer.finalize().map_err(|e| error(e.to_string()))
}

/// Writes the ground truth as `time_seconds,f0_hz` rows, 0 Hz meaning
/// unvoiced (the convention of mir_eval's melody loaders).
pub fn write_truth_csv(path: &Path, synthesis: &Synthesis) -> Result<(), SynthError> {
    let mut text = String::from("time_seconds,f0_hz\n");
    for frame in &synthesis.truth {
        let f0_hz = if frame.voiced {
            frame.f0_hz.unwrap_or(0.0)
        } else {
            0.0
        };
        text.push_str(&format!("{:.6},{:.6}\n", frame.time, f0_hz));
    }
    std::fs::write(path, text).map_err(|e| SynthError::Write {
        path: path.to_path_buf(),
        message: e.to_string(),
    })
}
