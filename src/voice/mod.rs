//! Singer profiles from an audition: range, comfort zone, passaggi, speaking
//! f0 and timbre, then a voice type and a choir section with reasons.
//!
//! An audition is a set of short recordings, each of one task (speech,
//! glide, scale, sustain, song; see docs/AUDITION.md). Each recording comes
//! in as samples plus its f0 track; this module finds stable notes, reads
//! the range from notes held ≥ 1 s (voice-range-profile practice: Schutte &
//! Seidner 1983; Patel et al. 2018), the comfort zone from the steady notes
//! of scales and songs, register breaks from the glides, the speaking f0
//! from speech, and weighs it all in a transparent likelihood over the
//! seven voice types.
//!
//! Architecture invariant: voice knows nothing about scores, parts or
//! placement. `profile` is a pure function of the recordings and a config;
//! only `load_recording` touches files.

pub mod notes;
pub mod registers;
mod stages;
pub mod timbre;
pub mod types;

use std::path::Path;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::audio::{self, DecodeOptions};
use crate::cautions::cautions;
use crate::pitch::{Tuning, nearest_name};
use crate::track::{self, Track, TrackConfig};

use notes::SegmentConfig;
use registers::{BreakConfig, Register};
use timbre::SpectralMeasures;

/// Sample rate recordings are analysed at.
pub const PROFILE_SAMPLE_RATE: u32 = audio::ANALYSIS_SAMPLE_RATE;
/// Longest recording of one audition task: 30 minutes, many times the
/// longest task (a song of a few minutes). A longer file is refused before
/// it is decoded when its header gives the length, and as soon as decoding
/// passes 30 minutes otherwise, so one task holds at most about 160 MB of
/// samples.
pub const MAX_TASK_SECONDS: f64 = 30.0 * 60.0;

/// The audition tasks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Task {
    Speech,
    Glide,
    Scale,
    Sustain,
    Song,
}

impl Task {
    pub const ALL: [Task; 5] = [
        Task::Speech,
        Task::Glide,
        Task::Scale,
        Task::Sustain,
        Task::Song,
    ];

    pub fn label(self) -> &'static str {
        match self {
            Task::Speech => "speech",
            Task::Glide => "glide",
            Task::Scale => "scale",
            Task::Sustain => "sustain",
            Task::Song => "song",
        }
    }

    fn is_sung(self) -> bool {
        self != Task::Speech
    }
}

/// One task recording, decoded and tracked.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Recording {
    pub task: Task,
    /// Where it came from, for messages.
    pub file: String,
    pub samples: Vec<f32>,
    pub sample_rate: u32,
    pub track: Track,
    /// Clipping and noise lower the confidence of what is measured.
    pub clipped_share: f64,
    pub noise_floor_db: f64,
    pub warnings: Vec<String>,
}

/// Profile settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ProfileConfig {
    pub tuning: Tuning,
    pub segment: SegmentConfig,
    pub breaks: BreakConfig,
    /// A pitch counts for the range when held at least this long within
    /// ±`segment.tolerance_cents` (voice-range-profile practice: 1 s).
    pub sustain_min_seconds: f64,
    /// Below this f0 an irregular note is vocal fry and is left out of the
    /// singing range (fry typically lies below ~70 Hz: common practice).
    pub fry_max_hz: f64,
    /// Frame-to-frame irregularity (cents RMS) above which a low note is fry.
    pub fry_irregularity_cents: f64,
    /// At or above this f0 a note is whistle register (M3). From memory:
    /// the whistle register lies above the soprano's usual top, about C6
    /// (1047 Hz) and higher; 1100 Hz keeps a soprano's C6 in head voice.
    pub whistle_min_hz: f64,
    /// A comfort-zone note must drift less than this (cents SD)...
    pub steady_drift_cents: f64,
    /// ...and keep its level within this SD (dB).
    pub steady_level_sd_db: f64,
    /// A scale, sustain or song recording is singing when at least
    /// `sung_share` of its voiced time lies in notes held this long...
    pub sung_note_seconds: f64,
    /// ...otherwise it is left out as speech or gliding.
    pub sung_share: f64,
}

impl Default for ProfileConfig {
    fn default() -> Self {
        ProfileConfig {
            tuning: Tuning::default(),
            segment: SegmentConfig::default(),
            breaks: BreakConfig::default(),
            sustain_min_seconds: 1.0,
            fry_max_hz: 70.0,
            fry_irregularity_cents: 40.0,
            whistle_min_hz: 1100.0,
            steady_drift_cents: 25.0,
            steady_level_sd_db: 4.0,
            sung_note_seconds: 0.3,
            sung_share: 0.6,
        }
    }
}

/// A pitch span with names.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PitchSpan {
    pub low_midi: f64,
    pub high_midi: f64,
    pub low: String,
    pub high: String,
}

impl PitchSpan {
    pub fn new(low_midi: f64, high_midi: f64) -> PitchSpan {
        PitchSpan {
            low_midi,
            high_midi,
            low: nearest_name(low_midi),
            high: nearest_name(high_midi),
        }
    }
}

/// The comfort zone and how sure it is.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Comfort {
    #[serde(flatten)]
    pub span: PitchSpan,
    pub confidence: f64,
    /// How it was found, in a sentence.
    pub basis: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PassaggioKind {
    Primo,
    Secondo,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PassaggioSource {
    /// Found in this singer's glides.
    Measured,
    /// The usual value for the likely voice type: not measured.
    Typical,
}

/// A passaggio, measured or typical.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Passaggio {
    pub midi: f64,
    pub name: String,
    pub kind: PassaggioKind,
    pub source: PassaggioSource,
    pub confidence: f64,
    /// For measured ones: where the glides broke going up and coming down.
    pub upward_midi: Option<f64>,
    pub downward_midi: Option<f64>,
}

/// The sung notes of one register: where they lie and how long they were sung.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RegisterSpan {
    pub register: Register,
    #[serde(flatten)]
    pub span: PitchSpan,
    pub seconds: f64,
}

/// A ranked voice type.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TypeShare {
    pub label: String,
    pub confidence: f64,
}

/// The suggested voice type and its alternatives.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct VoiceTypeResult {
    pub label: String,
    pub confidence: f64,
    pub alternatives: Vec<TypeShare>,
}

/// A singer's profile from one audition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Profile {
    /// Lowest and highest pitch held ≥ 1 s (fry excluded).
    pub range: PitchSpan,
    /// Lower when no note was held the full time.
    pub range_confidence: f64,
    pub comfort: Comfort,
    /// Glide extremes: reached, not sustained.
    pub reached: Option<PitchSpan>,
    pub passaggi: Vec<Passaggio>,
    /// The sung notes by register (fry, modal, falsetto, whistle). Modal
    /// and falsetto are told apart only by a measured glide break.
    #[serde(default)]
    pub registers: Vec<RegisterSpan>,
    pub speaking_f0_hz: Option<f64>,
    pub timbre: Option<SpectralMeasures>,
    pub voice_type: VoiceTypeResult,
    pub section: String,
    pub section_runner_up: String,
    pub reasons: Vec<String>,
    pub cautions: Vec<String>,
    /// Tasks with no usable recording.
    pub missing_tasks: Vec<Task>,
    /// Problems with recordings, contradictions between tasks.
    pub warnings: Vec<String>,
}

impl Profile {
    pub fn passaggio(&self, kind: PassaggioKind) -> Option<&Passaggio> {
        self.passaggi.iter().find(|p| p.kind == kind)
    }
}

#[derive(Debug, Error)]
pub enum VoiceError {
    #[error(
        "no recordings were given: an audition needs at least one sung task (glide, scale, sustain or song)"
    )]
    NoRecordings,
    #[error("{file}: {message}")]
    Load { file: String, message: String },
    #[error("no usable singing in the audition: {0}")]
    NoSinging(String),
}

/// Decodes and tracks one task recording.
pub fn load_recording(task: Task, path: &Path) -> Result<Recording, VoiceError> {
    let file = path.display().to_string();
    let load_error = |message: String| VoiceError::Load {
        file: file.clone(),
        message,
    };
    let decoded = audio::decode_file(
        path,
        &DecodeOptions {
            target_sample_rate: Some(PROFILE_SAMPLE_RATE),
            max_duration_seconds: Some(MAX_TASK_SECONDS),
        },
    )
    .map_err(|error| load_error(format!("{} task: {error}", task.label())))?;
    let track = track::track_samples(
        &decoded.samples,
        decoded.sample_rate,
        &TrackConfig::default(),
    )
    .map_err(|error| load_error(format!("{} task: {error}", task.label())))?;
    Ok(Recording {
        task,
        file: file.clone(),
        samples: decoded.samples,
        sample_rate: decoded.sample_rate,
        track,
        clipped_share: decoded.report.clipped_share,
        noise_floor_db: decoded.report.noise_floor_db,
        warnings: decoded.report.warnings,
    })
}

/// Loads several recordings in parallel, keeping their order.
pub fn load_recordings(tasks: &[(Task, &Path)]) -> Vec<Result<Recording, VoiceError>> {
    tasks
        .par_iter()
        .map(|(task, path)| load_recording(*task, path))
        .collect()
}

/// How much a recording's clipping and background noise lower the
/// confidence of the figures read from it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RecordingQuality {
    /// 1 for a clean recording, down to `MIN_QUALITY`.
    pub factor: f64,
    /// The voice's level over the background's, dB: the median level of
    /// voiced frames less that of unvoiced frames (`None` without 0.2 s of
    /// unvoiced frames to measure the background in).
    pub snr_db: Option<f64>,
    /// What lowered it, in plain words.
    pub problems: Vec<String>,
}

/// The lowest quality factor: even a poor recording says something.
pub const MIN_QUALITY: f64 = 0.4;

/// Clipping and noise penalties (Ambit's own rule, not from a published
/// source):
/// - clipping: none up to 0.1 % of samples at full scale (where the decoder
///   starts to warn), then a quarter per tenfold, so 1 % gives 0.75 and
///   10 % gives 0.5. Clipped peaks add harmonics and flatten the spectrum, so
///   timbre and register cues suffer first.
/// - noise: none at 30 dB signal-to-noise or better, falling linearly to
///   0.5 at 10 dB. The tracker evaluation (METHODS.md, Tracker evaluation)
///   runs white noise at 40, 20 and 10 dB: at 10 dB voicing decisions and
///   the spectral measures are visibly worse than on clean singing.
///
/// The factors multiply, floored at [`MIN_QUALITY`].
pub fn recording_quality(recording: &Recording) -> RecordingQuality {
    let mut problems = Vec::new();
    let clipped = recording.clipped_share;
    let clip_factor = if clipped > 0.001 {
        let factor = (1.0 - 0.25 * (clipped / 0.001).log10()).max(0.5);
        problems.push(format!(
            "clipped: {:.1} % of samples are at full scale, so loud notes are distorted; every confidence read from it was lowered (×{factor:.2}). Record with more headroom.",
            100.0 * clipped
        ));
        factor
    } else {
        1.0
    };
    let mut voiced_levels = Vec::new();
    let mut unvoiced_levels = Vec::new();
    for frame in &recording.track.frames {
        if frame.voiced {
            voiced_levels.push(frame.level_db);
        } else {
            unvoiced_levels.push(frame.level_db);
        }
    }
    let median = |mut levels: Vec<f64>| -> Option<f64> {
        levels.sort_by(f64::total_cmp);
        levels.get(levels.len() / 2).copied()
    };
    let hop = recording.track.hop_seconds.max(1e-3);
    let snr_db = if unvoiced_levels.len() as f64 * hop >= 0.2 {
        median(voiced_levels)
            .zip(median(unvoiced_levels))
            .map(|(voice, background)| voice - background)
    } else {
        None
    };
    let noise_factor = match snr_db {
        Some(snr) if snr < 30.0 => {
            let factor = 0.5 + 0.5 * ((snr - 10.0) / 20.0).clamp(0.0, 1.0);
            problems.push(format!(
                "noisy: the voice is only {snr:.0} dB above the background noise, so pitch and timbre readings are less certain; every confidence read from it was lowered (×{factor:.2}). Record in a quieter room, closer to the microphone."
            ));
            factor
        }
        _ => 1.0,
    };
    RecordingQuality {
        factor: (clip_factor * noise_factor).max(MIN_QUALITY),
        snr_db,
        problems,
    }
}

/// Notes of one recording with the recording they came from.
fn weighted_percentile(mut items: Vec<(f64, f64)>, p: f64) -> Option<f64> {
    items.sort_by(|a, b| a.0.total_cmp(&b.0));
    let total: f64 = items.iter().map(|(_, w)| w).sum();
    if total <= 0.0 {
        return None;
    }
    let mut cumulative = 0.0;
    for (value, weight) in &items {
        cumulative += weight;
        if cumulative >= p / 100.0 * total - 1e-12 {
            return Some(*value);
        }
    }
    items.last().map(|(value, _)| *value)
}

/// Builds a profile from an audition's recordings, stage by stage (see
/// [`stages`]: intake, range, glide reach, comfort zone, speech and timbre,
/// passaggi and voice type, registers, section).
pub fn profile(recordings: &[Recording], config: &ProfileConfig) -> Result<Profile, VoiceError> {
    if recordings.is_empty() {
        return Err(VoiceError::NoRecordings);
    }
    let mut intake = stages::intake(recordings, config);
    let range = stages::measure_range(&mut intake, config)?;
    let reached = stages::glide_reach(&mut intake, config, &range.range);
    let comfort = stages::comfort_zone(&intake, config, &range);
    let speaking_f0_hz = stages::speaking_f0(&intake);
    let timbre = stages::timbre(&intake);
    let typed = stages::classify_with_passaggi(
        &intake,
        config,
        &range.range,
        &comfort,
        speaking_f0_hz,
        timbre.as_ref(),
    );
    let registers = stages::sung_registers(&intake, config, &range, &typed.breaks);
    let sections = stages::suggest_section(typed.best, &comfort);

    let best = typed.best;
    let best_typical = best.typical();
    let mut reasons = typed.classification.reasons.clone();
    for passaggio in typed
        .passaggi
        .iter()
        .filter(|p| p.source == PassaggioSource::Typical)
    {
        reasons.push(format!(
            "{} passaggio not measured (no clear break in the glides); {} is typical of a {} ({}), not measured",
            match passaggio.kind {
                PassaggioKind::Primo => "primo",
                PassaggioKind::Secondo => "secondo",
            },
            passaggio.name,
            best.label(),
            best_typical.passaggi_source,
        ));
    }
    if let Some(choice) = sections.ranked.first() {
        reasons.push(format!(
            "section {}: its usual tessitura sits best in the comfort zone {}–{} (runner-up {})",
            choice.section,
            comfort.span.low,
            comfort.span.high,
            sections.runner_up()
        ));
    }

    let overall_quality = intake.quality_of(&Task::ALL);
    let alternatives = typed.classification.ranked[1..]
        .iter()
        .filter(|c| c.confidence >= 0.01)
        .map(|c| TypeShare {
            label: c.voice_type.label().into(),
            confidence: c.confidence * overall_quality,
        })
        .collect();
    let mut profile_cautions = cautions();
    profile_cautions.push("This profile is provisional: re-check it after a few rehearsals, and sooner for a young or changing voice.".into());

    Ok(Profile {
        range: range.range,
        range_confidence: range.confidence * intake.sung_quality(),
        comfort,
        reached,
        passaggi: typed.passaggi,
        registers,
        speaking_f0_hz,
        timbre,
        voice_type: VoiceTypeResult {
            label: best.label().into(),
            confidence: typed.confidence,
            alternatives,
        },
        section: sections.section(),
        section_runner_up: sections.runner_up(),
        reasons,
        cautions: profile_cautions,
        missing_tasks: intake.missing_tasks,
        warnings: intake.warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::pitch::hz_to_midi;
    use crate::track::Frame;

    const HOP: f64 = 0.01;

    fn hz(midi: f64) -> f64 {
        440.0 * 2f64.powf((midi - 69.0) / 12.0)
    }

    /// A recording whose f0 track follows `contour` (MIDI, or `None` for unvoiced).
    fn recording(task: Task, seconds: f64, contour: impl Fn(f64) -> Option<f64>) -> Recording {
        let frames = (0..(seconds / HOP) as usize)
            .map(|i| {
                let time = i as f64 * HOP;
                let f0_hz = contour(time).map(hz);
                Frame {
                    time,
                    f0_hz,
                    voiced: f0_hz.is_some(),
                    confidence: if f0_hz.is_some() { 0.95 } else { 0.05 },
                    level_db: -18.0,
                }
            })
            .collect();
        Recording {
            task,
            file: format!("{}.wav", task.label()),
            samples: Vec::new(),
            sample_rate: PROFILE_SAMPLE_RATE,
            track: Track {
                sample_rate: PROFILE_SAMPLE_RATE,
                hop_seconds: HOP,
                frames,
            },
            clipped_share: 0.0,
            noise_floor_db: -70.0,
            warnings: Vec::new(),
        }
    }

    /// Notes one after another, each `(midi, seconds)`, with 0.1 s breaths.
    fn sung(task: Task, notes: &[(f64, f64)]) -> Recording {
        let mut spans = Vec::new();
        let mut t = 0.1;
        for &(midi, seconds) in notes {
            spans.push((t, t + seconds, midi));
            t += seconds + 0.1;
        }
        recording(task, t + 0.1, move |time| {
            spans
                .iter()
                .find(|(start, end, _)| time >= *start && time < *end)
                .map(|&(_, _, midi)| midi + 0.3 * (2.0 * std::f64::consts::PI * 6.0 * time).sin())
        })
    }

    /// A tenor-like audition: holds C3 and B4 (48, 71), scales over E3–G4,
    /// a siren breaking up at G#4 and down at F#4, speech at 125 Hz.
    fn tenor_audition() -> Vec<Recording> {
        let scale: Vec<(f64, f64)> = [
            52.0, 54.0, 56.0, 57.0, 59.0, 57.0, 56.0, 54.0, 52.0, 59.0, 61.0, 63.0, 64.0, 66.0,
            67.0, 66.0, 64.0, 63.0, 61.0, 59.0,
        ]
        .iter()
        .map(|&m| (m, 0.5))
        .collect();
        let glide = recording(Task::Glide, 6.0, |t| {
            let up = t < 3.0;
            let smooth = if up {
                48.0 + 24.0 * t / 3.0
            } else {
                72.0 - 24.0 * (t - 3.0) / 3.0
            };
            let (break_up, break_down) = (68.0, 66.0);
            Some(
                if (up && smooth >= break_up) || (!up && smooth >= break_down) {
                    smooth + 2.0
                } else {
                    smooth
                },
            )
        });
        let speech = recording(Task::Speech, 3.0, |t| {
            let syllable = (t * 4.0).fract() < 0.7;
            syllable.then(|| hz_to_midi(125.0).unwrap() + 1.5 * (t * 4.0).fract() - 0.04 * t * 12.0)
        });
        vec![
            speech,
            glide,
            sung(Task::Scale, &scale),
            sung(Task::Sustain, &[(48.0, 2.0), (71.0, 2.0)]),
            sung(
                Task::Song,
                &[
                    (55.0, 0.6),
                    (57.0, 0.6),
                    (59.0, 1.2),
                    (62.0, 0.6),
                    (60.0, 0.6),
                    (59.0, 1.2),
                ],
            ),
        ]
    }

    #[test]
    fn a_tenor_audition_reads_as_a_tenor() {
        let profile = profile(&tenor_audition(), &ProfileConfig::default()).unwrap();
        // The held extremes C3 and B4 are the range (voice-range-profile
        // practice: sustained ≥ 1 s).
        assert!(
            (profile.range.low_midi - 48.0).abs() < 0.5,
            "{:?}",
            profile.range
        );
        assert!(
            (profile.range.high_midi - 71.0).abs() < 0.5,
            "{:?}",
            profile.range
        );
        // The steady scale and song notes span E3–G4.
        assert!(
            (profile.comfort.span.low_midi - 52.0).abs() <= 1.0,
            "{:?}",
            profile.comfort
        );
        assert!(
            (profile.comfort.span.high_midi - 67.0).abs() <= 1.0,
            "{:?}",
            profile.comfort
        );
        // The glide broke at G#4 going up (68→70, midpoint 69) and F#4 coming
        // down (midpoint 67): a measured passaggio near G#4, typical of a
        // tenor's secondo (Miller: G4).
        let secondo = profile.passaggio(PassaggioKind::Secondo).unwrap();
        assert_eq!(secondo.source, PassaggioSource::Measured);
        assert!((secondo.midi - 68.0).abs() <= 1.0, "{secondo:?}");
        assert!(secondo.upward_midi.unwrap() > secondo.downward_midi.unwrap());
        let primo = profile.passaggio(PassaggioKind::Primo).unwrap();
        assert_eq!(primo.source, PassaggioSource::Typical);
        assert_eq!(
            profile.voice_type.label, "tenor",
            "{:?}",
            profile.voice_type
        );
        assert!(profile.section.starts_with('T'), "{}", profile.section);
        let speaking = profile.speaking_f0_hz.unwrap();
        assert!((100.0..150.0).contains(&speaking), "{speaking}");
        assert!(profile.missing_tasks.is_empty());
        assert!(profile.cautions.iter().any(|c| c.contains("not a medical")));
        assert!(!profile.reasons.is_empty());
    }

    #[test]
    fn fry_is_left_out_of_the_range_and_registers_are_reported() {
        // The tenor audition plus a second sustain: 1.5 s of creak at 60 Hz
        // (MIDI 34.5) whose pitch alternates ±40 cents frame to frame. Fry
        // is not part of the singing range (voice-range-profile practice;
        // common practice), but it is reported as a register.
        let mut recordings = tenor_audition();
        let mut creak = recording(Task::Sustain, 1.8, |t| {
            let frame = (t / HOP).round() as i64;
            (t > 0.1 && t < 1.6).then(|| 34.5 + if frame % 2 == 0 { 0.4 } else { -0.4 })
        });
        creak.file = "creak.wav".into();
        recordings.push(creak);
        let profile = profile(&recordings, &ProfileConfig::default()).unwrap();
        assert!(
            (profile.range.low_midi - 48.0).abs() < 0.5,
            "{:?}",
            profile.range
        );
        let span = |register: Register| {
            profile
                .registers
                .iter()
                .find(|r| r.register == register)
                .unwrap_or_else(|| panic!("no {register:?} in {:?}", profile.registers))
        };
        assert!((span(Register::Fry).span.low_midi - 34.5).abs() < 0.2);
        // The glide broke near G#4 (68), so the held C3 is modal and the
        // held B4 (71) falsetto.
        assert!((span(Register::Modal).span.low_midi - 48.0).abs() < 0.5);
        assert!((span(Register::Falsetto).span.high_midi - 71.0).abs() < 0.5);
        assert!(span(Register::Modal).span.high_midi < 69.0);
        assert!(
            !profile
                .registers
                .iter()
                .any(|r| r.register == Register::Whistle)
        );
    }

    #[test]
    fn missing_tasks_degrade_gracefully() {
        // Without the glide the passaggi are typical, not measured; without
        // speech there is no speaking f0; the output says what was missing.
        let recordings: Vec<Recording> = tenor_audition()
            .into_iter()
            .filter(|r| !matches!(r.task, Task::Glide | Task::Speech))
            .collect();
        let profile = profile(&recordings, &ProfileConfig::default()).unwrap();
        assert!(
            profile
                .passaggi
                .iter()
                .all(|p| p.source == PassaggioSource::Typical)
        );
        assert_eq!(profile.speaking_f0_hz, None);
        assert_eq!(profile.missing_tasks, vec![Task::Speech, Task::Glide]);
        assert!(
            profile
                .warnings
                .iter()
                .any(|w| w.contains("missing tasks: speech, glide"))
        );
    }

    #[test]
    fn no_recordings_or_no_singing_is_an_error() {
        assert!(matches!(
            profile(&[], &ProfileConfig::default()),
            Err(VoiceError::NoRecordings)
        ));
        let silent = recording(Task::Sustain, 3.0, |_| None);
        let error = profile(&[silent], &ProfileConfig::default()).unwrap_err();
        assert!(matches!(error, VoiceError::NoSinging(_)));
        assert!(error.to_string().contains("sustain.wav"), "{error}");
    }

    #[test]
    fn speech_where_singing_was_asked_is_reported() {
        let mut recordings = tenor_audition();
        // The "song" file holds speech.
        // Syllables of 0.175 s with unvoiced gaps, each falling two
        // semitones: the pitch never holds still the way a sung note does.
        let speech_like = recording(Task::Song, 3.0, |t| {
            let position = (t * 4.0).fract();
            (position < 0.7).then(|| 50.0 - 2.0 * position / 0.7)
        });
        recordings.retain(|r| r.task != Task::Song);
        recordings.push(speech_like);
        let profile = profile(&recordings, &ProfileConfig::default()).unwrap();
        assert!(
            profile
                .warnings
                .iter()
                .any(|w| w.contains("song.wav (song)") && w.contains("not singing")),
            "{:?}",
            profile.warnings
        );
        assert!(profile.missing_tasks.contains(&Task::Song));
    }

    #[test]
    fn quality_falls_with_noise_and_clipping_but_not_with_a_quiet_clean_take() {
        // A sustain whose voiced frames sit `snr` dB over its unvoiced ones.
        let take = |snr_db: f64, clipped_share: f64| {
            let mut recording = sung(Task::Sustain, &[(60.0, 2.0), (67.0, 2.0)]);
            for frame in &mut recording.track.frames {
                frame.level_db = if frame.voiced { -40.0 } else { -40.0 - snr_db };
            }
            recording.clipped_share = clipped_share;
            recording_quality(&recording)
        };
        // Quiet (−40 dBFS) but 50 dB over the background: nothing to lower.
        let clean = take(50.0, 0.0);
        assert_eq!(clean.factor, 1.0);
        assert!(clean.problems.is_empty(), "{:?}", clean.problems);
        // Worse SNR, lower factor; each problem is named.
        let (twenty, ten) = (take(20.0, 0.0), take(10.0, 0.0));
        assert!(ten.factor < twenty.factor && twenty.factor < 1.0);
        assert!(ten.problems.iter().any(|p| p.starts_with("noisy")));
        let (one, ten_percent) = (take(50.0, 0.01), take(50.0, 0.1));
        assert!(ten_percent.factor < one.factor && one.factor < 1.0);
        assert!(one.problems.iter().any(|p| p.starts_with("clipped")));
        assert!(take(5.0, 0.5).factor >= MIN_QUALITY);
    }

    #[test]
    fn a_glide_far_above_every_held_note_is_reported() {
        let mut recordings = tenor_audition();
        recordings.retain(|r| r.task != Task::Glide);
        recordings.push(recording(Task::Glide, 4.0, |t| {
            Some(50.0 + 30.0 * (t / 4.0))
        }));
        let profile = profile(&recordings, &ProfileConfig::default()).unwrap();
        assert!(
            profile
                .warnings
                .iter()
                .any(|w| w.contains("the glide reached")),
            "{:?}",
            profile.warnings
        );
    }
}
