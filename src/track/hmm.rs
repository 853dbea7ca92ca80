//! pYIN's hidden Markov model over pitch bins × {voiced, unvoiced}
//! (Mauch & Dixon, ICASSP 2014, §2.2), decoded by a fixed-lag Viterbi.
//!
//! States: `n` pitch bins spaced `1/bins_per_semitone` semitones from fmin,
//! each voiced or unvoiced (2n states). Transitions, as in librosa.pyin:
//! between bins a triangular window of half-width `w` bins (row-normalised,
//! no wrap), times 1 − p_switch for staying voiced/unvoiced and p_switch for
//! switching. Emissions: a voiced bin gets the summed probability of the
//! frame's candidates falling in it, times a trust factor c; every unvoiced
//! bin gets (1 − c · voicing probability)/n.
//!
//! Decoding is fixed-lag Viterbi: after frame t the best state at t is traced
//! back `lag` frames and frame t − lag is decided for good. Offline and
//! streaming tracking both run this one decoder frame by frame, so they give
//! identical frames; memory is O(lag · n) whatever the signal's length.
//!
//! Invariant: the decoder sees only per-frame candidates and levels, never
//! samples.

use std::collections::VecDeque;

use super::Frame;
use super::yin::Candidate;

/// Fixed parameters of the model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HmmParameters {
    pub fmin_hz: f64,
    pub fmax_hz: f64,
    pub bins_per_semitone: u32,
    /// Half-width of the triangular pitch transition, bins.
    pub transition_half_width: usize,
    pub switch_probability: f64,
    /// Frames decided after this many later frames have been seen.
    pub lag_frames: usize,
    /// Probability of a voiced jump of exactly one octave up (and the same
    /// down) per frame; 0 leaves only the triangular moves.
    pub octave_jump_probability: f64,
    /// Weight on the candidates' probabilities in the emissions (pYIN's
    /// "YIN trust"): voiced bins get trust × mass, unvoiced bins
    /// (1 − trust × voicing probability)/n. 1 is librosa's choice.
    pub candidate_trust: f64,
}

/// Everything the decoder keeps about a frame until it is decided.
#[derive(Debug, Clone, Default)]
struct PendingFrame {
    time: f64,
    level_db: f64,
    voiced_probability: f64,
    candidates: Vec<(usize, Candidate)>,
    /// Back-pointers: best predecessor state of each of the 2n states.
    back: Vec<u16>,
}

/// Fixed-lag Viterbi decoder over pitch × voicing.
pub struct Decoder {
    parameters: HmmParameters,
    bins: usize,
    /// Log transition weight by bin offset −w..=w (triangle).
    log_triangle: Vec<f32>,
    /// −log of each source row's triangle sum (rows near the ends are cut).
    log_row_norm: Vec<f32>,
    log_stay: f32,
    log_switch: f32,
    /// Log-probability of an octave jump (LOG_FLOOR when switched off).
    log_octave: f32,
    /// Log-probabilities of the best path into each state (voiced 0..n,
    /// unvoiced n..2n) after the last frame.
    delta: Vec<f32>,
    /// Work arrays: best incoming score per bin before the pitch move, padded
    /// by w on both sides, and whether it came from a voiced state.
    into_voiced: Vec<f32>,
    into_unvoiced: Vec<f32>,
    from_voiced_to_voiced: Vec<bool>,
    from_voiced_to_unvoiced: Vec<bool>,
    best: Vec<f32>,
    /// Winning offset per bin, as f32 so the select shares the score's mask.
    arg: Vec<f32>,
    emission: Vec<f32>,
    pending: VecDeque<PendingFrame>,
    spare: Vec<PendingFrame>,
    started: bool,
}

/// Bins handled per inner-loop chunk (fixed width so the compiler emits
/// SIMD compare-and-select).
const LANES: usize = 8;

/// Floor for log-probabilities of impossible events (librosa adds the
/// smallest positive float before taking logs).
const LOG_FLOOR: f32 = -1.0e4;

fn safe_ln(probability: f64) -> f32 {
    if probability > 0.0 {
        (probability.ln() as f32).max(LOG_FLOOR)
    } else {
        LOG_FLOOR
    }
}

impl Decoder {
    pub fn new(parameters: HmmParameters) -> Self {
        let bins = bin_count(
            parameters.fmin_hz,
            parameters.fmax_hz,
            parameters.bins_per_semitone,
        );
        let half = parameters.transition_half_width;
        let triangle: Vec<f64> = (0..=2 * half)
            .map(|index| 1.0 - (index as f64 - half as f64).abs() / (half as f64 + 1.0))
            .collect();
        // The local moves share what the octave jumps leave.
        let local_share = (1.0 - 2.0 * parameters.octave_jump_probability).max(1e-9);
        let log_row_norm = (0..bins)
            .map(|source| {
                let sum: f64 = (0..=2 * half)
                    .filter(|&index| {
                        let target = source as i64 + index as i64 - half as i64;
                        target >= 0 && (target as usize) < bins
                    })
                    .map(|index| triangle[index])
                    .sum();
                (local_share.ln() - sum.ln()) as f32
            })
            .collect();
        // Room for whole SIMD-width chunks past the last bin.
        let padded = bins.next_multiple_of(LANES) + 2 * half;
        Decoder {
            bins,
            log_triangle: triangle.iter().map(|&weight| safe_ln(weight)).collect(),
            log_row_norm,
            log_stay: safe_ln(1.0 - parameters.switch_probability),
            log_switch: safe_ln(parameters.switch_probability),
            log_octave: safe_ln(parameters.octave_jump_probability),
            delta: vec![0.0; 2 * bins],
            into_voiced: vec![f32::NEG_INFINITY; padded],
            into_unvoiced: vec![f32::NEG_INFINITY; padded],
            from_voiced_to_voiced: vec![false; bins],
            from_voiced_to_unvoiced: vec![false; bins],
            best: vec![0.0; bins.next_multiple_of(LANES)],
            arg: vec![0.0; bins.next_multiple_of(LANES)],
            emission: vec![0.0; 2 * bins],
            pending: VecDeque::new(),
            spare: Vec::new(),
            started: false,
            parameters,
        }
    }

    /// Centre frequency of a pitch bin.
    pub fn bin_hz(&self, bin: usize) -> f64 {
        bin_hz(
            self.parameters.fmin_hz,
            self.parameters.bins_per_semitone,
            bin,
        )
    }

    /// Adds one frame's observation; returns frames decided by it (at most
    /// one) into `out`. Also returns the provisional (filtering) estimate of
    /// this frame: the best state now, before later frames are seen.
    pub fn push(
        &mut self,
        time: f64,
        level_db: f64,
        voiced_probability: f64,
        candidates: &[Candidate],
        out: &mut Vec<Frame>,
    ) -> Frame {
        let bins = self.bins;
        let mut slot = self.spare.pop().unwrap_or_default();
        slot.time = time;
        slot.level_db = level_db;
        slot.voiced_probability = voiced_probability;
        slot.candidates.clear();
        slot.back.resize(2 * bins, 0);

        // Emissions.
        let parameters = self.parameters;
        let voiced_mass = &mut self.emission[..bins];
        voiced_mass.fill(0.0);
        for candidate in candidates {
            let bin = bin_of(&parameters, bins, candidate.f0_hz);
            slot.candidates.push((bin, *candidate));
            if let Some(mass) = voiced_mass.get_mut(bin) {
                *mass += (parameters.candidate_trust * candidate.probability) as f32;
            }
        }
        // Logs only where there is mass (a handful of bins), not over the
        // whole grid: the logarithm is the costliest step of a frame here.
        // Empty bins first, then each touched bin once (its log is ≤ 0).
        for value in voiced_mass.iter_mut() {
            if *value == 0.0 {
                *value = LOG_FLOOR;
            }
        }
        for &(bin, _) in &slot.candidates {
            if let Some(value) = voiced_mass.get_mut(bin)
                && *value > 0.0
            {
                *value = safe_ln(f64::from(*value));
            }
        }
        let unvoiced =
            safe_ln((1.0 - parameters.candidate_trust * voiced_probability).max(0.0) / bins as f64);
        self.emission[bins..].fill(unvoiced);

        if !self.started {
            // Uniform initial distribution over the 2n states.
            self.started = true;
            self.delta.copy_from_slice(&self.emission);
            slot.back.fill(0);
        } else {
            self.step(&mut slot.back);
        }
        // Renormalise so the scores stay in range over hours of frames.
        let top = self.delta.iter().copied().fold(f32::NEG_INFINITY, f32::max);
        for value in &mut self.delta {
            *value -= top;
        }

        let best_state = argmax(&self.delta);
        let provisional = self.frame_for(&slot, best_state);
        self.pending.push_back(slot);
        if self.pending.len() > self.parameters.lag_frames {
            // Trace back from the best state now to the oldest pending frame.
            let mut state = best_state;
            for frame in self.pending.iter().skip(1).rev() {
                state = usize::from(frame.back[state]);
            }
            if let Some(oldest) = self.pending.pop_front() {
                out.push(self.frame_for(&oldest, state));
                self.spare.push(oldest);
            }
        }
        provisional
    }

    /// Decides every pending frame (end of signal).
    pub fn finish(&mut self, out: &mut Vec<Frame>) {
        if self.pending.is_empty() {
            return;
        }
        let mut states = vec![0usize; self.pending.len()];
        let mut state = argmax(&self.delta);
        for (index, frame) in self.pending.iter().enumerate().rev() {
            states[index] = state;
            state = usize::from(frame.back[state]);
        }
        for (frame, state) in self.pending.iter().zip(states) {
            out.push(self.frame_for(frame, state));
        }
        self.spare.extend(self.pending.drain(..));
    }

    /// One Viterbi step: delta ← max over predecessors + emission.
    fn step(&mut self, back: &mut [u16]) {
        let bins = self.bins;
        let half = self.parameters.transition_half_width;
        // Best way into voiced (unvoiced) bin j before moving in pitch:
        // stay voiced or switch from unvoiced (and vice versa), with the
        // source row's normalisation folded in.
        for source in 0..bins {
            let voiced = self.delta[source] + self.log_row_norm[source];
            let unvoiced = self.delta[bins + source] + self.log_row_norm[source];
            let (stay_v, switch_u) = (voiced + self.log_stay, unvoiced + self.log_switch);
            self.from_voiced_to_voiced[source] = stay_v >= switch_u;
            self.into_voiced[half + source] = stay_v.max(switch_u);
            let (switch_v, stay_u) = (voiced + self.log_switch, unvoiced + self.log_stay);
            self.from_voiced_to_unvoiced[source] = switch_v > stay_u;
            self.into_unvoiced[half + source] = switch_v.max(stay_u);
        }
        for unvoiced_target in [false, true] {
            let source_scores = if unvoiced_target {
                &self.into_unvoiced
            } else {
                &self.into_voiced
            };
            // Max-plus convolution with the triangle, written offset-major so
            // the inner loop over bins vectorises (compare and select).
            self.best.fill(f32::NEG_INFINITY);
            self.arg.fill(0.0);
            // `arg` holds the winning offset; branch-free selects keep the
            // loop vectorisable.
            for (offset, &weight) in self.log_triangle.iter().enumerate() {
                let shifted = &source_scores[offset..offset + self.best.len()];
                let offset_tag = offset as f32;
                for ((best, arg), score) in self
                    .best
                    .chunks_exact_mut(LANES)
                    .zip(self.arg.chunks_exact_mut(LANES))
                    .zip(shifted.chunks_exact(LANES))
                {
                    for lane in 0..LANES {
                        let candidate = score[lane] + weight;
                        let kept = best[lane];
                        // 1.0 where this offset wins (ties keep the earlier).
                        let take = f32::from(u8::from(candidate > kept));
                        best[lane] = kept.max(candidate);
                        arg[lane] += take * (offset_tag - arg[lane]);
                    }
                }
            }
            // Octave jumps (voiced targets only): from exactly one octave
            // below or above, bypassing the triangle.
            let octave = 12 * self.parameters.bins_per_semitone as usize;
            if !unvoiced_target && self.log_octave > LOG_FLOOR {
                for bin in 0..bins {
                    let below = bin.checked_sub(octave);
                    let above = Some(bin + octave).filter(|&source| source < bins);
                    for source in [below, above].into_iter().flatten() {
                        let candidate = source_scores[half + source] + self.log_octave;
                        if candidate > self.best[bin] {
                            self.best[bin] = candidate;
                            // As an offset: source = bin + offset − half.
                            // (Negative for a jump up from below.)
                            self.arg[bin] = half as f32 + source as f32 - bin as f32;
                        }
                    }
                }
            }
            let base = if unvoiced_target { bins } else { 0 };
            let from_voiced = if unvoiced_target {
                &self.from_voiced_to_unvoiced
            } else {
                &self.from_voiced_to_voiced
            };
            for bin in 0..bins {
                // Offset → source bin (the padding is −∞, never chosen while
                // any real source is finite; clamp for safety).
                let source = (bin as i64 + self.arg[bin] as i64 - half as i64)
                    .clamp(0, bins as i64 - 1) as usize;
                let source_state = if from_voiced[source] {
                    source
                } else {
                    bins + source
                };
                back[base + bin] = source_state as u16;
                self.delta[base + bin] = self.best[bin] + self.emission[base + bin];
            }
        }
    }

    /// The output frame for a decided state: voiced states take the exact
    /// frequency of the most probable candidate in their bin (pYIN's
    /// refinement); a voiced bin with no candidate keeps the bin centre.
    fn frame_for(&self, frame: &PendingFrame, state: usize) -> Frame {
        let voiced = state < self.bins;
        let f0_hz = voiced.then(|| {
            frame
                .candidates
                .iter()
                .filter(|(bin, _)| *bin == state)
                .max_by(|a, b| a.1.probability.total_cmp(&b.1.probability))
                .map(|(_, candidate)| candidate.f0_hz)
                .unwrap_or_else(|| self.bin_hz(state))
        });
        Frame {
            time: frame.time,
            f0_hz,
            voiced,
            confidence: frame.voiced_probability,
            level_db: frame.level_db,
        }
    }
}

/// The pitch bin nearest to `f0_hz` (clamped to the grid).
fn bin_of(parameters: &HmmParameters, bins: usize, f0_hz: f64) -> usize {
    let steps =
        12.0 * f64::from(parameters.bins_per_semitone) * (f0_hz / parameters.fmin_hz).log2();
    if steps.is_finite() {
        (steps.round().max(0.0) as usize).min(bins.saturating_sub(1))
    } else {
        0
    }
}

fn argmax(values: &[f32]) -> usize {
    let mut best = 0;
    for (index, &value) in values.iter().enumerate() {
        if value > values[best] {
            best = index;
        }
    }
    best
}

/// Number of pitch bins from fmin to fmax inclusive.
pub fn bin_count(fmin_hz: f64, fmax_hz: f64, bins_per_semitone: u32) -> usize {
    (12.0 * f64::from(bins_per_semitone) * (fmax_hz / fmin_hz).log2()).floor() as usize + 1
}

/// Centre frequency of pitch bin `bin`.
pub fn bin_hz(fmin_hz: f64, bins_per_semitone: u32, bin: usize) -> f64 {
    fmin_hz * 2f64.powf(bin as f64 / (12.0 * f64::from(bins_per_semitone)))
}
