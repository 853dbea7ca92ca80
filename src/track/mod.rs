//! Pitch tracking: f0 per frame from mono samples, by YIN (de Cheveigné &
//! Kawahara 2002) and its probabilistic extension pYIN (Mauch & Dixon 2014).
//!
//! Architecture invariant: track takes samples, not files (apart from the
//! thin [`track_file`]/[`track_files`] wrappers over `audio::decode_file`),
//! and knows nothing about notes, ranges or singers. Every frame's analysis
//! is a pure function of the (causally low-passed) samples up to its end and
//! the [`TrackConfig`]; the offline tracker is the streaming tracker run over
//! the whole signal, so the two give identical frames.
//!
//! Layout: `filter` band-limits the signal; `yin` analyses one frame (FFT
//! difference function, candidates); `hmm` decodes pitch × voicing;
//! `summary` turns a track into the figures a person reads (duration, voiced
//! share, median and stable pitches).

mod filter;
mod hmm;
mod summary;
pub mod yin;

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::audio::{self, AudioError, DecodeOptions, SignalReport};

pub use summary::{StablePitch, SummaryConfig, TrackSummary, summarise, summarise_with};
use yin::{Candidate, FrameAnalyser, FrameLayout};

/// The rate audio is resampled to before tracking: 22 050 Hz keeps the top
/// of the search range (2100 Hz) and its first four harmonics below Nyquist
/// while halving the work of 44.1 kHz. The audio module owns the figure.
pub use crate::audio::ANALYSIS_SAMPLE_RATE;

/// Lowest sample rate accepted (telephone band).
pub const MIN_SAMPLE_RATE: u32 = 8_000;
/// Highest sample rate accepted (studio rates go to 384 kHz).
pub const MAX_SAMPLE_RATE: u32 = 384_000;
/// Lowest fmin accepted: below 30 Hz lies only vocal fry, and the frame
/// would grow past 65 ms.
pub const MIN_FMIN_HZ: f64 = 30.0;

/// Which estimator decides each frame.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TrackMethod {
    /// pYIN: candidates with probabilities, HMM over pitch × voicing.
    #[default]
    Pyin,
    /// Plain YIN with an absolute threshold, frame by frame.
    Yin,
}

/// Tracker settings. Every field is documented with its default in
/// docs/METHODS.md ("Pitch tracking").
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct TrackConfig {
    pub fmin_hz: f64,
    pub fmax_hz: f64,
    pub hop_seconds: f64,
    pub method: TrackMethod,
    /// YIN's absolute threshold on the normalised difference (plain YIN
    /// only; the paper's and librosa.yin's 0.1).
    pub yin_threshold: f64,
    /// Integration window, in periods of `fmin_hz` (YIN's W; the paper
    /// uses W = τmax, i.e. 1).
    pub integration_periods: f64,
    /// HMM pitch resolution: 5 bins per semitone = 20-cent bins.
    pub bins_per_semitone: u32,
    /// Fastest pitch change the HMM allows, octaves per second (librosa's
    /// `max_transition_rate`, 35.92).
    pub max_transition_octaves_per_second: f64,
    /// Probability of switching between voiced and unvoiced per frame.
    pub switch_probability: f64,
    /// Fixed Viterbi lag: each frame is decided once this much later audio
    /// has been seen.
    pub viterbi_lag_seconds: f64,
    /// Frames quieter than this (dBFS, RMS of the integration window) are
    /// unvoiced whatever their periodicity; `None` switches the gate off.
    pub voicing_gate_db: Option<f64>,
    /// Per-frame probability of a voiced jump of exactly one octave (each
    /// way), an addition to pYIN's HMM so octave leaps are followed at once
    /// instead of after the triangle's slow climb. Off (0) by default: on
    /// real singing it costs more in octave errors than it gains (see
    /// docs/METHODS.md).
    pub octave_jump_probability: f64,
    /// Weight c on the candidates in the HMM's emissions: voiced bins get
    /// c × candidate probability, unvoiced bins (1 − c × voicing
    /// probability)/n. librosa uses 1, which makes a fully periodic frame
    /// impossible to call unvoiced, so after an instantaneous octave leap the
    /// path can stay on the sub-octave for ever; below 1 the path can always
    /// pass through unvoiced frames (see docs/METHODS.md).
    pub candidate_trust: f64,
    /// Viterbi beam, in nats (natural-log units of probability): after each
    /// frame, HMM states this far below the best are dropped. `None` keeps
    /// every state that can still be on the best path (exact decoding).
    /// See docs/METHODS.md for the measured effect.
    pub viterbi_beam_nats: Option<f64>,
    /// Cutoff of the low-pass filter in front of the analysis, Hz (4th-order
    /// Butterworth). It is raised to 2 × `fmax_hz` when below it, so the
    /// first two harmonics of the highest f0 searched always pass, and no
    /// filter runs when the cutoff reaches 0.9 × Nyquist. `None` analyses the
    /// full band. See docs/METHODS.md for why and what it gains.
    pub lowpass_hz: Option<f64>,
}

impl Default for TrackConfig {
    fn default() -> Self {
        TrackConfig {
            fmin_hz: 50.0,
            fmax_hz: 2100.0,
            hop_seconds: 0.01,
            method: TrackMethod::Pyin,
            yin_threshold: 0.1,
            integration_periods: 1.0,
            bins_per_semitone: 5,
            max_transition_octaves_per_second: 35.92,
            switch_probability: 0.01,
            viterbi_lag_seconds: 0.25,
            voicing_gate_db: Some(-70.0),
            octave_jump_probability: 0.0,
            candidate_trust: 0.9,
            viterbi_beam_nats: Some(80.0),
            lowpass_hz: Some(5000.0),
        }
    }
}

/// One analysis frame.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Frame {
    /// Centre of the frame, seconds from the start of the file.
    pub time: f64,
    pub f0_hz: Option<f64>,
    pub voiced: bool,
    /// Voicing probability, 0–1.
    pub confidence: f64,
    /// Frame RMS level, dBFS.
    pub level_db: f64,
}

/// The f0 track of one recording.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Track {
    pub sample_rate: u32,
    pub hop_seconds: f64,
    pub frames: Vec<Frame>,
}

#[derive(Debug, Clone, PartialEq, Error)]
pub enum TrackError {
    #[error("{0}")]
    BadConfig(String),
    #[error("{0}")]
    BadInput(String),
}

/// Checks a configuration against a sample rate.
pub fn validate(sample_rate: u32, config: &TrackConfig) -> Result<(), TrackError> {
    let bad = |message: String| Err(TrackError::BadConfig(message));
    if !(MIN_SAMPLE_RATE..=MAX_SAMPLE_RATE).contains(&sample_rate) {
        return bad(format!(
            "sample rate {sample_rate} Hz is outside the usable {MIN_SAMPLE_RATE}–{MAX_SAMPLE_RATE} Hz"
        ));
    }
    let (fmin, fmax) = (config.fmin_hz, config.fmax_hz);
    if !(fmin.is_finite() && fmax.is_finite()) {
        return bad(format!("fmin {fmin} Hz and fmax {fmax} Hz must be numbers"));
    }
    if fmin < MIN_FMIN_HZ {
        return bad(format!(
            "fmin {fmin} Hz is below {MIN_FMIN_HZ} Hz (only vocal fry lies there)"
        ));
    }
    if fmin >= fmax {
        return bad(format!("fmin {fmin} Hz must be below fmax {fmax} Hz"));
    }
    let nyquist = f64::from(sample_rate) / 2.0;
    if fmax > nyquist {
        return bad(format!(
            "fmax {fmax} Hz is above the Nyquist frequency {nyquist} Hz of a {sample_rate} Hz signal"
        ));
    }
    let hop = config.hop_seconds;
    if !(hop.is_finite() && hop * f64::from(sample_rate) >= 1.0 && hop <= 1.0) {
        return bad(format!(
            "hop {hop} s must be between one sample and one second"
        ));
    }
    if !(config.integration_periods.is_finite()
        && (0.25..=8.0).contains(&config.integration_periods))
    {
        return bad(format!(
            "integration window of {} periods must be 0.25–8",
            config.integration_periods
        ));
    }
    if !(1..=20).contains(&config.bins_per_semitone) {
        return bad(format!(
            "{} pitch bins per semitone must be 1–20",
            config.bins_per_semitone
        ));
    }
    let unit = |value: f64| value.is_finite() && value > 0.0 && value < 1.0;
    if !(unit(config.candidate_trust) || config.candidate_trust == 1.0) {
        return bad("the candidate trust must lie in (0, 1]".into());
    }
    if !(config.octave_jump_probability.is_finite()
        && (0.0..0.5).contains(&config.octave_jump_probability))
    {
        return bad("the octave jump probability must lie in 0–0.5".into());
    }
    if !unit(config.switch_probability) || !unit(config.yin_threshold) {
        return bad(
            "the switch probability and YIN threshold must lie strictly between 0 and 1".into(),
        );
    }
    if !(config.max_transition_octaves_per_second.is_finite()
        && config.max_transition_octaves_per_second > 0.0)
    {
        return bad("the maximum transition rate must be positive".into());
    }
    if !(config.viterbi_lag_seconds.is_finite() && config.viterbi_lag_seconds >= 0.0)
        && config.viterbi_lag_seconds != f64::INFINITY
    {
        return bad("the Viterbi lag must be zero or more seconds".into());
    }
    if let Some(cutoff) = config.lowpass_hz
        && !(cutoff.is_finite() && cutoff > 0.0)
    {
        return bad(format!(
            "the low-pass cutoff {cutoff} Hz must be a positive frequency"
        ));
    }
    if let Some(beam) = config.viterbi_beam_nats
        && !(beam.is_finite() && beam > 0.0)
    {
        return bad("the Viterbi beam must be a positive number of nats".into());
    }
    if let Some(gate) = config.voicing_gate_db
        && !gate.is_finite()
    {
        return bad("the voicing gate must be a level in dBFS".into());
    }
    Ok(())
}

/// Derived, validated settings shared by the offline and streaming paths.
#[derive(Debug, Clone, Copy)]
struct Plan {
    config: TrackConfig,
    layout: FrameLayout,
    /// Frame index in the frame buffer that sits on the frame's centre time.
    centre_offset: usize,
    hmm: hmm::HmmParameters,
    /// Effective low-pass cutoff, when a filter runs.
    lowpass_hz: Option<f64>,
}

impl Plan {
    fn new(sample_rate: u32, config: &TrackConfig) -> Result<Plan, TrackError> {
        validate(sample_rate, config)?;
        let layout = FrameLayout::new(
            sample_rate,
            config.fmin_hz,
            config.fmax_hz,
            config.integration_periods,
        );
        let semitones_per_frame =
            config.max_transition_octaves_per_second * 12.0 * config.hop_seconds;
        // As librosa.pyin: the triangle spans `semitones_per_frame` in all,
        // i.e. half of it each way.
        let half_width = ((semitones_per_frame * f64::from(config.bins_per_semitone) / 2.0).round()
            as usize)
            .max(1);
        let lag_frames = (config.viterbi_lag_seconds / config.hop_seconds)
            .round()
            .min(u32::MAX as f64) as usize;
        let nyquist = f64::from(sample_rate) / 2.0;
        let lowpass_hz = config
            .lowpass_hz
            .map(|cutoff| cutoff.max(2.0 * config.fmax_hz))
            .filter(|&cutoff| cutoff < 0.9 * nyquist);
        Ok(Plan {
            lowpass_hz,
            config: *config,
            layout,
            centre_offset: layout.window_start + layout.integration_samples / 2,
            hmm: hmm::HmmParameters {
                fmin_hz: config.fmin_hz,
                fmax_hz: config.fmax_hz,
                bins_per_semitone: config.bins_per_semitone,
                transition_half_width: half_width,
                switch_probability: config.switch_probability,
                lag_frames,
                octave_jump_probability: config.octave_jump_probability,
                candidate_trust: config.candidate_trust,
                beam_nats: config.viterbi_beam_nats.unwrap_or(f64::INFINITY),
                exhaustive: false,
            },
        })
    }

    fn low_pass(&self) -> Option<filter::LowPass> {
        self.lowpass_hz
            .map(|cutoff| filter::LowPass::new(cutoff, self.layout.sample_rate))
    }

    /// Sample index of frame `index`'s centre: frames sit at exact multiples
    /// of the hop in time, on the nearest sample (≤ half a sample off).
    fn centre_sample(&self, index: usize) -> i64 {
        (index as f64 * self.config.hop_seconds * f64::from(self.layout.sample_rate)).round() as i64
    }

    fn frame_time(&self, index: usize) -> f64 {
        // Rounded to the nanosecond so 0.03 prints as 0.03, not 0.030000000000000002.
        (index as f64 * self.config.hop_seconds * 1e9).round() / 1e9
    }

    /// Number of frames whose centre lies within a signal of `length` samples.
    fn frame_count(&self, length: usize) -> usize {
        if length == 0 {
            return 0;
        }
        let per_sample = 1.0 / (self.config.hop_seconds * f64::from(self.layout.sample_rate));
        let mut count = ((length - 1) as f64 * per_sample).floor() as usize + 1;
        while count > 0 && self.centre_sample(count - 1) > (length - 1) as i64 {
            count -= 1;
        }
        while self.centre_sample(count) <= (length - 1) as i64 {
            count += 1;
        }
        count
    }

    /// First sample (absolute; may be negative) of frame `index`'s buffer.
    fn frame_start(&self, index: usize) -> i64 {
        self.centre_sample(index) - self.centre_offset as i64
    }
}

/// Copies frame `index` out of `source` (which holds absolute samples
/// `source_start..source_start + source.len()`), with zeros outside
/// `0..signal_end`.
fn fill_frame(
    plan: &Plan,
    index: usize,
    source: &[f32],
    source_start: i64,
    signal_end: i64,
    frame: &mut [f32],
) {
    let start = plan.frame_start(index);
    let end = start + frame.len() as i64;
    // Absolute samples both in the signal and in `source`, clipped to the frame.
    let first = start.max(0).max(source_start).min(end);
    let last = end
        .min(signal_end)
        .min(source_start + source.len() as i64)
        .max(first);
    frame.fill(0.0);
    if let (Ok(into), Ok(from), Ok(count)) = (
        usize::try_from(first - start),
        usize::try_from(first - source_start),
        usize::try_from(last - first),
    ) && let (Some(to), Some(samples)) = (
        frame.get_mut(into..into + count),
        source.get(from..from + count),
    ) {
        to.copy_from_slice(samples);
    }
}

/// Frame `index` as a slice of `source` (absolute samples `source_start..`),
/// when all its samples lie inside both `source` and the signal
/// `0..signal_end`: the same samples [`fill_frame`] would copy, without the
/// copy. `None` at the signal's edges, where zeros pad the frame.
fn inner_frame<'a>(
    plan: &Plan,
    index: usize,
    source: &'a [f32],
    source_start: i64,
    signal_end: i64,
) -> Option<&'a [f32]> {
    let start = plan.frame_start(index);
    let end = start + plan.layout.frame_samples as i64;
    if start < 0 || end > signal_end {
        return None;
    }
    let from = usize::try_from(start - source_start).ok()?;
    source.get(from..from + plan.layout.frame_samples)
}

/// One frame's observation, before decoding.
struct Observation {
    level_db: f64,
    voiced_probability: f64,
    yin: Option<Candidate>,
}

fn observe(
    plan: &Plan,
    analyser: &mut FrameAnalyser,
    frame: &[f32],
    candidates: &mut Vec<Candidate>,
) -> Observation {
    let start = candidates.len();
    let summary = analyser.analyse(frame, plan.config.yin_threshold, candidates);
    let gated = plan
        .config
        .voicing_gate_db
        .is_some_and(|gate| summary.level_db < gate);
    if gated {
        candidates.truncate(start);
    }
    Observation {
        level_db: summary.level_db,
        voiced_probability: if gated {
            0.0
        } else {
            summary.voiced_probability
        },
        yin: if gated { None } else { summary.yin },
    }
}

/// The per-frame decision stage: pYIN's HMM or plain YIN's threshold.
enum Decision {
    Pyin(Box<hmm::Decoder>),
    Yin { threshold: f64 },
}

impl Decision {
    fn new(plan: &Plan) -> Decision {
        match plan.config.method {
            TrackMethod::Pyin => Decision::Pyin(Box::new(hmm::Decoder::new(plan.hmm))),
            TrackMethod::Yin => Decision::Yin {
                threshold: plan.config.yin_threshold,
            },
        }
    }

    /// Feeds one frame; decided frames go to `out`. Returns the provisional
    /// estimate of this frame.
    fn push(
        &mut self,
        time: f64,
        observation: &Observation,
        candidates: &[Candidate],
        out: &mut Vec<Frame>,
    ) -> Frame {
        match self {
            Decision::Pyin(decoder) => decoder.push(
                time,
                observation.level_db,
                observation.voiced_probability,
                candidates,
                out,
            ),
            Decision::Yin { threshold } => {
                let voiced = observation
                    .yin
                    .is_some_and(|estimate| estimate.aperiodicity < *threshold);
                let frame = Frame {
                    time,
                    f0_hz: if voiced {
                        observation.yin.map(|estimate| estimate.f0_hz)
                    } else {
                        None
                    },
                    voiced,
                    confidence: observation.yin.map_or(0.0, |estimate| {
                        (1.0 - estimate.aperiodicity).clamp(0.0, 1.0)
                    }),
                    level_db: observation.level_db,
                };
                out.push(frame);
                frame
            }
        }
    }

    fn finish(&mut self, out: &mut Vec<Frame>) {
        if let Decision::Pyin(decoder) = self {
            decoder.finish(out);
        }
    }
}

/// Checks that every sample is a number (naming the first that is not) and
/// that there is at least one.
fn check_samples(samples: &[f32], sample_rate: u32) -> Result<(), TrackError> {
    // A branch-free pass per chunk (it vectorises); the search for the first
    // bad sample runs only when there is one.
    let all_finite = samples.chunks(4096).all(|chunk| {
        chunk
            .iter()
            .fold(true, |finite, sample| finite & sample.is_finite())
    });
    if !all_finite && let Some(index) = samples.iter().position(|sample| !sample.is_finite()) {
        let value = samples.get(index).copied().unwrap_or(f32::NAN);
        return Err(TrackError::BadInput(format!(
            "sample {index} (at {:.3} s) is {value}, not a number; the signal cannot be tracked",
            index as f64 / f64::from(sample_rate)
        )));
    }
    if samples.is_empty() {
        return Err(TrackError::BadInput(
            "the signal is empty: there is nothing to track".into(),
        ));
    }
    Ok(())
}

/// Frames analysed per parallel work item in [`track_samples`].
const BLOCK_FRAMES: usize = 256;

/// Tracks a whole signal offline.
///
/// Frame analysis runs in parallel (rayon) over blocks of frames; decoding
/// runs in order through the same fixed-lag decoder the
/// [`StreamingTracker`] uses, so the result equals streaming the signal
/// through it, frame for frame.
pub fn track_samples(
    samples: &[f32],
    sample_rate: u32,
    config: &TrackConfig,
) -> Result<Track, TrackError> {
    let plan = Plan::new(sample_rate, config)?;
    check_samples(samples, sample_rate)?;
    Ok(track_checked(&plan, samples, plan.low_pass()))
}

/// The offline tracker over checked samples; `low_pass`, when given, is run
/// over the signal round by round into a buffer of its own.
fn track_checked(plan: &Plan, samples: &[f32], mut low_pass: Option<filter::LowPass>) -> Track {
    let plan = *plan;
    let frame_count = plan.frame_count(samples.len());
    let signal_end = samples.len() as i64;
    // The band-limited signal is made round by round, one causal pass in
    // order (as the streaming tracker filters sample by sample), holding
    // only the samples the round's frames need: absolute samples
    // `filtered_start .. filtered_start + filtered.len()`.
    let mut filtered: Vec<f32> = Vec::new();
    let mut filtered_start: i64 = 0;
    let mut decision = Decision::new(&plan);
    let mut frames = Vec::with_capacity(frame_count);
    let block_count = frame_count.div_ceil(BLOCK_FRAMES);
    // Bounded memory: at most this many blocks' candidates are held at once.
    let blocks_per_round = 64;
    let mut first_block = 0;
    while first_block < block_count {
        let last_block = (first_block + blocks_per_round).min(block_count);
        let (source, source_start): (&[f32], i64) = match &mut low_pass {
            Some(low_pass) => {
                let first_frame = first_block * BLOCK_FRAMES;
                let last_frame = (last_block * BLOCK_FRAMES).min(frame_count).max(1) - 1;
                let needed_from = plan.frame_start(first_frame).clamp(0, signal_end);
                let needed_to = (plan.frame_start(last_frame) + plan.layout.frame_samples as i64)
                    .clamp(0, signal_end);
                let stale = usize::try_from(needed_from - filtered_start)
                    .unwrap_or(0)
                    .min(filtered.len());
                filtered.drain(..stale);
                filtered_start += stale as i64;
                let filtered_end = filtered_start + filtered.len() as i64;
                if let (Ok(from), Ok(to)) =
                    (usize::try_from(filtered_end), usize::try_from(needed_to))
                    && let Some(fresh) = samples.get(from..to)
                {
                    let begin = filtered.len();
                    filtered.extend_from_slice(fresh);
                    low_pass.process(&mut filtered[begin..]);
                }
                (&filtered[..], filtered_start)
            }
            None => (samples, 0),
        };
        let analysed: Vec<(Vec<Observation>, Vec<Candidate>, Vec<usize>)> = (first_block
            ..last_block)
            .into_par_iter()
            .map_init(
                || {
                    (
                        FrameAnalyser::new(plan.layout),
                        vec![0.0f32; plan.layout.frame_samples],
                    )
                },
                |(analyser, frame), block| {
                    let start = block * BLOCK_FRAMES;
                    let end = (start + BLOCK_FRAMES).min(frame_count);
                    let mut observations = Vec::with_capacity(end - start);
                    let mut candidates = Vec::new();
                    let mut bounds = Vec::with_capacity(end - start + 1);
                    bounds.push(0);
                    for index in start..end {
                        let samples =
                            match inner_frame(&plan, index, source, source_start, signal_end) {
                                Some(samples) => samples,
                                None => {
                                    fill_frame(
                                        &plan,
                                        index,
                                        source,
                                        source_start,
                                        signal_end,
                                        frame,
                                    );
                                    &frame[..]
                                }
                            };
                        observations.push(observe(&plan, analyser, samples, &mut candidates));
                        bounds.push(candidates.len());
                    }
                    (observations, candidates, bounds)
                },
            )
            .collect();
        for (block_offset, (observations, candidates, bounds)) in analysed.iter().enumerate() {
            let first_frame = (first_block + block_offset) * BLOCK_FRAMES;
            for (position, observation) in observations.iter().enumerate() {
                let range = bounds[position]..bounds[position + 1];
                decision.push(
                    plan.frame_time(first_frame + position),
                    observation,
                    &candidates[range],
                    &mut frames,
                );
            }
        }
        first_block = last_block;
    }
    decision.finish(&mut frames);
    Track {
        sample_rate: plan.layout.sample_rate,
        hop_seconds: plan.config.hop_seconds,
        frames,
    }
}

/// Tracks a signal that arrives in pieces (a microphone).
///
/// [`push`](StreamingTracker::push) returns the frames decided so far; a
/// frame is decided [`latency_seconds`](StreamingTracker::latency_seconds)
/// after its centre (the frame's second half plus the Viterbi lag). The
/// frames returned over the whole stream, plus [`finish`](StreamingTracker::finish),
/// are identical to [`track_samples`] on the concatenated signal. For a live
/// display, [`provisional`](StreamingTracker::provisional) gives the newest
/// frame's immediate estimate (the Viterbi filtering estimate, which later
/// audio may revise).
///
/// Non-finite samples (NaN, ±inf) cannot be refused without dropping the
/// stream; they are analysed as silence (0.0) and counted in
/// [`non_finite_samples`](StreamingTracker::non_finite_samples).
pub struct StreamingTracker {
    plan: Plan,
    analyser: FrameAnalyser,
    decision: Decision,
    /// Samples kept for frames still to analyse, from absolute `buffer_start`.
    buffer: Vec<f32>,
    buffer_start: i64,
    received: i64,
    next_frame: usize,
    frame: Vec<f32>,
    candidates: Vec<Candidate>,
    provisional: Option<Frame>,
    non_finite: u64,
    low_pass: Option<filter::LowPass>,
}

impl StreamingTracker {
    pub fn new(sample_rate: u32, config: &TrackConfig) -> Result<StreamingTracker, TrackError> {
        let plan = Plan::new(sample_rate, config)?;
        Ok(StreamingTracker {
            analyser: FrameAnalyser::new(plan.layout),
            decision: Decision::new(&plan),
            buffer: Vec::with_capacity(4 * plan.layout.frame_samples),
            buffer_start: 0,
            received: 0,
            next_frame: 0,
            frame: vec![0.0; plan.layout.frame_samples],
            candidates: Vec::new(),
            provisional: None,
            non_finite: 0,
            low_pass: plan.low_pass(),
            plan,
        })
    }

    /// Delay from a frame's centre time until [`push`](Self::push) returns
    /// it: the samples after the centre that the frame needs, plus the
    /// Viterbi lag (plain YIN has no lag).
    pub fn latency_seconds(&self) -> f64 {
        let rate = f64::from(self.plan.layout.sample_rate);
        let ahead = (self.plan.layout.frame_samples - self.plan.centre_offset) as f64 / rate;
        match self.plan.config.method {
            TrackMethod::Pyin => {
                ahead + self.plan.hmm.lag_frames as f64 * self.plan.config.hop_seconds
            }
            TrackMethod::Yin => ahead,
        }
    }

    /// The newest frame's immediate estimate, before the lag confirms it.
    pub fn provisional(&self) -> Option<Frame> {
        self.provisional
    }

    /// How many NaN or infinite samples were replaced by silence.
    pub fn non_finite_samples(&self) -> u64 {
        self.non_finite
    }

    /// Adds samples; returns every frame decided as a result, in order.
    pub fn push(&mut self, samples: &[f32]) -> Vec<Frame> {
        let mut out = Vec::new();
        self.buffer.reserve(samples.len());
        let first_new = self.buffer.len();
        for &sample in samples {
            if sample.is_finite() {
                self.buffer.push(sample);
            } else {
                self.non_finite += 1;
                self.buffer.push(0.0);
            }
        }
        if let Some(low_pass) = &mut self.low_pass {
            low_pass.process(&mut self.buffer[first_new..]);
        }
        self.received += samples.len() as i64;
        // Analyse every frame whose samples have all arrived: many at once
        // in parallel (a file read in batches), a few one by one (a
        // microphone). The frames are the same either way.
        let length = self.plan.layout.frame_samples as i64;
        let mut ready = self.next_frame;
        while self.plan.frame_start(ready) + length <= self.received {
            ready += 1;
        }
        if ready - self.next_frame >= 2 * BLOCK_FRAMES {
            self.analyse_in_parallel(ready, &mut out);
        }
        while self.next_frame < ready {
            self.analyse_next(i64::MAX, &mut out);
        }
        self.discard_consumed();
        out
    }

    /// Analyses frames `next_frame..ready` (all inside the buffer) in
    /// parallel blocks, then decides them in order.
    fn analyse_in_parallel(&mut self, ready: usize, out: &mut Vec<Frame>) {
        let plan = self.plan;
        let (buffer, buffer_start) = (&self.buffer[..], self.buffer_start);
        let first = self.next_frame;
        let analysed: Vec<(Vec<Observation>, Vec<Candidate>, Vec<usize>)> = (first..ready)
            .step_by(BLOCK_FRAMES)
            .collect::<Vec<usize>>()
            .into_par_iter()
            .map_init(
                || {
                    (
                        FrameAnalyser::new(plan.layout),
                        vec![0.0f32; plan.layout.frame_samples],
                    )
                },
                |(analyser, frame), start| {
                    let end = (start + BLOCK_FRAMES).min(ready);
                    let mut observations = Vec::with_capacity(end - start);
                    let mut candidates = Vec::new();
                    let mut bounds = Vec::with_capacity(end - start + 1);
                    bounds.push(0);
                    for index in start..end {
                        let samples =
                            match inner_frame(&plan, index, buffer, buffer_start, i64::MAX) {
                                Some(samples) => samples,
                                None => {
                                    fill_frame(&plan, index, buffer, buffer_start, i64::MAX, frame);
                                    &frame[..]
                                }
                            };
                        observations.push(observe(&plan, analyser, samples, &mut candidates));
                        bounds.push(candidates.len());
                    }
                    (observations, candidates, bounds)
                },
            )
            .collect();
        let mut index = first;
        for (observations, candidates, bounds) in &analysed {
            for (position, observation) in observations.iter().enumerate() {
                let range = bounds[position]..bounds[position + 1];
                self.provisional = Some(self.decision.push(
                    plan.frame_time(index),
                    observation,
                    &candidates[range],
                    out,
                ));
                index += 1;
            }
        }
        self.next_frame = ready;
    }

    /// Ends the stream: analyses the last frames (zeros after the end) and
    /// decides every pending frame.
    pub fn finish(mut self) -> Vec<Frame> {
        let mut out = Vec::new();
        let total = self
            .plan
            .frame_count(usize::try_from(self.received).unwrap_or(0));
        while self.next_frame < total {
            self.analyse_next(self.received, &mut out);
        }
        self.decision.finish(&mut out);
        out
    }

    fn analyse_next(&mut self, signal_end: i64, out: &mut Vec<Frame>) {
        let index = self.next_frame;
        fill_frame(
            &self.plan,
            index,
            &self.buffer,
            self.buffer_start,
            signal_end,
            &mut self.frame,
        );
        self.candidates.clear();
        let observation = observe(
            &self.plan,
            &mut self.analyser,
            &self.frame,
            &mut self.candidates,
        );
        let time = self.plan.frame_time(index);
        self.provisional = Some(
            self.decision
                .push(time, &observation, &self.candidates, out),
        );
        self.next_frame += 1;
    }

    /// Drops samples no later frame needs.
    fn discard_consumed(&mut self) {
        let needed_from = self.plan.frame_start(self.next_frame).max(0);
        let drop = usize::try_from(needed_from - self.buffer_start)
            .unwrap_or(0)
            .min(self.buffer.len());
        // Drain in large steps only, so pushing one sample at a time stays cheap.
        if drop > 0 && drop >= self.buffer.len() / 2 {
            self.buffer.drain(..drop);
            self.buffer_start += drop as i64;
        }
    }
}

/// A tracked audio file with the decoder's report on its condition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TrackedFile {
    pub file: PathBuf,
    pub duration_seconds: f64,
    pub source_sample_rate: u32,
    pub report: SignalReport,
    pub track: Track,
}

/// Failure to track one file.
#[derive(Debug, Error)]
pub enum TrackFileError {
    #[error(transparent)]
    Audio(#[from] AudioError),
    #[error("{}: {source}", file.display())]
    Track {
        file: PathBuf,
        #[source]
        source: TrackError,
    },
}

/// Longest recording [`track_file`] reads: 4 hours. Samples are streamed
/// (never held whole); the frames are kept, about 17 MB an hour.
pub const MAX_TRACK_FILE_SECONDS: f64 = 4.0 * 3600.0;

/// Decoded audio handed to the tracker in batches of this many seconds, so
/// the frames of one batch are analysed in parallel.
const TRACK_FILE_BATCH_SECONDS: usize = 10;

/// Decodes `path` at [`ANALYSIS_SAMPLE_RATE`] and tracks it, streaming: the
/// decoder's chunks go to a [`StreamingTracker`] in batches of a few
/// seconds, so memory holds one batch and the frames, whatever the file's
/// length (up to [`MAX_TRACK_FILE_SECONDS`]). The frames are those of
/// [`track_samples`] on the whole decoded signal.
pub fn track_file(path: &Path, config: &TrackConfig) -> Result<TrackedFile, TrackFileError> {
    let track_error = |source| TrackFileError::Track {
        file: path.to_path_buf(),
        source,
    };
    // A bad configuration is reported before any decoding work.
    validate(ANALYSIS_SAMPLE_RATE, config).map_err(track_error)?;
    let mut reader = audio::open(
        path,
        &DecodeOptions {
            target_sample_rate: Some(ANALYSIS_SAMPLE_RATE),
            max_duration_seconds: Some(MAX_TRACK_FILE_SECONDS),
        },
    )?;
    let sample_rate = reader.sample_rate();
    let mut tracker = StreamingTracker::new(sample_rate, config).map_err(track_error)?;
    let batch_samples = sample_rate as usize * TRACK_FILE_BATCH_SECONDS;
    let mut batch: Vec<f32> = Vec::with_capacity(batch_samples + 8192);
    let mut frames = Vec::new();
    while let Some(chunk) = reader.next_chunk()? {
        batch.extend_from_slice(&chunk);
        if batch.len() >= batch_samples {
            frames.extend(tracker.push(&batch));
            batch.clear();
        }
    }
    frames.extend(tracker.push(&batch));
    drop(batch);
    frames.extend(tracker.finish());
    let source_sample_rate = reader.source_sample_rate();
    let duration_seconds = reader.source_frames() as f64 / f64::from(source_sample_rate.max(1));
    let report = reader.finish()?;
    Ok(TrackedFile {
        file: path.to_path_buf(),
        duration_seconds,
        source_sample_rate,
        report,
        track: Track {
            sample_rate,
            hop_seconds: config.hop_seconds,
            frames,
        },
    })
}

/// Tracks many files in parallel (rayon), one result per path, in order.
pub fn track_files<P: AsRef<Path> + Sync>(
    paths: &[P],
    config: &TrackConfig,
) -> Vec<Result<TrackedFile, TrackFileError>> {
    paths
        .par_iter()
        .map(|path| track_file(path.as_ref(), config))
        .collect()
}

#[cfg(test)]
mod tests;
