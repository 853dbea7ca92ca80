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
//! Cost. A frame updates only the states that can matter:
//! - **Voiced bins without a candidate are skipped, exactly.** Their
//!   emission is the floor (e^−10⁴) while the unvoiced state of the same bin
//!   has the same transitions up to the factor p_switch/(1 − p_switch) in and
//!   out, so whenever the unvoiced emission exceeds the floor by more than
//!   twice |ln((1 − p_switch)/p_switch)| (always, for c < 1), any path through
//!   such a voiced state is beaten by the same path through its unvoiced
//!   twin. Skipping them changes no decoded state (tested against the
//!   exhaustive update in this module's tests). Frames where the condition
//!   fails (c = 1 and a fully periodic frame) are updated exhaustively.
//! - **Beam** (optional, `beam_nats`): states more than `beam_nats` below the
//!   best state after a frame are dropped from the ends of the live range of
//!   unvoiced bins and from the voiced candidates. This is an approximation;
//!   docs/METHODS.md gives its measured effect.
//!
//! Invariant: the decoder sees only per-frame candidates and levels, never
//! samples.

use std::collections::VecDeque;
use std::ops::Range;

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
    /// States this far (natural log) below the best after a frame are
    /// dropped; `f64::INFINITY` keeps every state the exact pruning keeps.
    pub beam_nats: f64,
    /// Update every state of every frame, as the textbook Viterbi does (the
    /// reference the pruned update is tested against).
    pub exhaustive: bool,
}

/// Everything the decoder keeps about a frame until it is decided.
#[derive(Debug, Clone, Default)]
struct PendingFrame {
    time: f64,
    level_db: f64,
    voiced_probability: f64,
    candidates: Vec<(usize, Candidate)>,
    /// The first frame has no predecessors.
    first: bool,
    /// Best score into each source bin before the pitch move, towards a
    /// voiced (unvoiced) target, padded by w on both sides (index w + bin),
    /// and whether it came from a voiced state. Finite only for the live
    /// source bins `live`; back-pointers are recomputed from these when a
    /// path is traced, instead of being tracked for every state in the
    /// convolution.
    into_voiced: Vec<f32>,
    into_unvoiced: Vec<f32>,
    from_voiced_to_voiced: Vec<bool>,
    from_voiced_to_unvoiced: Vec<bool>,
    live: Range<usize>,
    /// Back-pointers found so far (`UNKNOWN` until asked for).
    back: Vec<u16>,
}

/// Marks a back-pointer not yet computed.
const UNKNOWN: u16 = u16::MAX;

/// The transition model, shared by the forward step and the traceback.
#[derive(Debug, Clone)]
struct Transitions {
    bins: usize,
    half: usize,
    /// Log transition weight by bin offset −w..=w (triangle).
    log_triangle: Vec<f32>,
    /// Log-probability of an octave jump (LOG_FLOOR when switched off).
    log_octave: f32,
    octave_bins: usize,
}

impl Transitions {
    fn octave_jumps(&self) -> bool {
        self.log_octave > LOG_FLOOR
    }

    /// The best predecessor of `state` in `frame` (the state the Viterbi
    /// back-pointer names): the triangle over the live sources within reach,
    /// the first maximum in source order, then octave jumps (voiced targets)
    /// when strictly better, exactly as the forward step's maximum is formed.
    fn predecessor(&self, frame: &PendingFrame, state: usize) -> usize {
        let (bins, half) = (self.bins, self.half);
        let voiced = state < bins;
        let bin = if voiced { state } else { state - bins };
        let into = if voiced {
            &frame.into_voiced
        } else {
            &frame.into_unvoiced
        };
        let mut best = f32::NEG_INFINITY;
        // With every source at −∞ (never on a decoded path) the lowest
        // source within reach is named.
        let mut source = bin.saturating_sub(half);
        let low = bin.saturating_sub(half).max(frame.live.start);
        let high = (bin + half + 1).min(frame.live.end);
        for candidate_source in low..high {
            let candidate =
                into[half + candidate_source] + self.log_triangle[candidate_source + half - bin];
            if candidate > best {
                best = candidate;
                source = candidate_source;
            }
        }
        if voiced && self.octave_jumps() {
            let below = bin.checked_sub(self.octave_bins);
            let above = Some(bin + self.octave_bins).filter(|&jump| jump < bins);
            for jump in [below, above].into_iter().flatten() {
                if into[half + jump] + self.log_octave > best {
                    best = into[half + jump] + self.log_octave;
                    source = jump;
                }
            }
        }
        let from_voiced = if voiced {
            &frame.from_voiced_to_voiced
        } else {
            &frame.from_voiced_to_unvoiced
        };
        if from_voiced.get(source).copied().unwrap_or(true) {
            source
        } else {
            bins + source
        }
    }

    /// `predecessor`, remembered in the frame.
    fn back(&self, frame: &mut PendingFrame, state: usize) -> usize {
        if frame.first {
            return 0;
        }
        match frame.back.get(state) {
            Some(&known) if known != UNKNOWN => usize::from(known),
            _ => {
                let found = self.predecessor(frame, state);
                if let Some(slot) = frame.back.get_mut(state) {
                    *slot = found as u16;
                }
                found
            }
        }
    }
}

/// Fixed-lag Viterbi decoder over pitch × voicing.
pub struct Decoder {
    parameters: HmmParameters,
    bins: usize,
    transitions: Transitions,
    /// −log of each source row's triangle sum (rows near the ends are cut).
    log_row_norm: Vec<f32>,
    log_stay: f32,
    log_switch: f32,
    /// Log-probabilities of the best path into each voiced (unvoiced) state
    /// after the last frame; −∞ for states not carried.
    voiced: Vec<f32>,
    unvoiced: Vec<f32>,
    /// Voiced bins carried from the last frame, ascending (the others are −∞).
    live_voiced: Vec<usize>,
    /// Unvoiced bins carried from the last frame (the others are −∞).
    live_unvoiced: Range<usize>,
    /// Work array of the convolution.
    best: Vec<f32>,
    /// This frame's voiced targets: (bin, log emission), ascending, one per bin.
    targets: Vec<(usize, f32)>,
    pending: VecDeque<PendingFrame>,
    spare: Vec<PendingFrame>,
    started: bool,
}

/// Bins handled per inner-loop chunk (fixed width so the compiler emits
/// SIMD max).
const LANES: usize = 8;

/// Floor for log-probabilities of impossible events (librosa adds the
/// smallest positive float before taking logs).
const LOG_FLOOR: f32 = -1.0e4;

/// Slack, in nats, on top of the exact skipping condition, far above the
/// f32 rounding of scores near LOG_FLOOR (≈ 10⁻³).
const SKIP_MARGIN: f32 = 1.0;

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
        Decoder {
            bins,
            transitions: Transitions {
                bins,
                half,
                log_triangle: triangle.iter().map(|&weight| safe_ln(weight)).collect(),
                log_octave: safe_ln(parameters.octave_jump_probability),
                octave_bins: 12 * parameters.bins_per_semitone as usize,
            },
            log_row_norm,
            log_stay: safe_ln(1.0 - parameters.switch_probability),
            log_switch: safe_ln(parameters.switch_probability),
            voiced: vec![f32::NEG_INFINITY; bins],
            unvoiced: vec![f32::NEG_INFINITY; bins],
            live_voiced: Vec::with_capacity(bins),
            live_unvoiced: 0..0,
            best: vec![0.0; bins.next_multiple_of(LANES)],
            targets: Vec::with_capacity(bins),
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
        slot.back.clear();
        slot.back.resize(2 * bins, UNKNOWN);
        // Room for whole SIMD-width chunks past the last bin.
        let padded = bins.next_multiple_of(LANES) + 2 * self.transitions.half + LANES;
        slot.into_voiced.resize(padded, f32::NEG_INFINITY);
        slot.into_unvoiced.resize(padded, f32::NEG_INFINITY);
        slot.from_voiced_to_voiced.resize(bins, true);
        slot.from_voiced_to_unvoiced.resize(bins, true);

        // Emissions: voiced mass per candidate bin (summed in candidate
        // order), then one logarithm per bin.
        let parameters = self.parameters;
        self.targets.clear();
        for candidate in candidates {
            let bin = bin_of(&parameters, bins, candidate.f0_hz);
            slot.candidates.push((bin, *candidate));
            self.targets.push((
                bin,
                (parameters.candidate_trust * candidate.probability) as f32,
            ));
        }
        // Stable: equal bins keep candidate order, so their sum is the same
        // whatever the grouping.
        self.targets.sort_by_key(|&(bin, _)| bin);
        self.targets.dedup_by(|later, earlier| {
            if later.0 == earlier.0 {
                earlier.1 += later.1;
                true
            } else {
                false
            }
        });
        for target in &mut self.targets {
            target.1 = if target.1 > 0.0 {
                safe_ln(f64::from(target.1))
            } else {
                LOG_FLOOR
            };
        }
        let unvoiced_emission =
            safe_ln((1.0 - parameters.candidate_trust * voiced_probability).max(0.0) / bins as f64);
        // The exact skipping condition (module docs).
        let exhaustive = parameters.exhaustive
            || unvoiced_emission - LOG_FLOOR
                <= 2.0 * (self.log_stay - self.log_switch).abs() + SKIP_MARGIN;
        if exhaustive {
            self.expand_targets();
        }

        if !self.started {
            // Uniform initial distribution over the 2n states.
            self.started = true;
            slot.first = true;
            self.voiced.fill(f32::NEG_INFINITY);
            for &(bin, emission) in &self.targets {
                self.voiced[bin] = emission;
            }
            self.unvoiced.fill(unvoiced_emission);
            self.live_unvoiced = 0..bins;
        } else {
            slot.first = false;
            self.step(unvoiced_emission, exhaustive, &mut slot);
        }
        self.live_voiced.clear();
        self.live_voiced
            .extend(self.targets.iter().map(|&(bin, _)| bin));

        // Renormalise so the scores stay in range over hours of frames. The
        // best state is the first maximum in state order (voiced bins, then
        // unvoiced bins), as a scan of every state would find it.
        let mut best_state = 0;
        let mut top = f32::NEG_INFINITY;
        for &bin in &self.live_voiced {
            if self.voiced[bin] > top {
                top = self.voiced[bin];
                best_state = bin;
            }
        }
        for bin in self.live_unvoiced.clone() {
            if self.unvoiced[bin] > top {
                top = self.unvoiced[bin];
                best_state = bins + bin;
            }
        }
        if !top.is_finite() {
            // Cannot happen (an unvoiced state is always reachable); restart
            // from the uniform distribution rather than carry NaNs.
            top = 0.0;
            self.unvoiced.fill(0.0);
            self.live_unvoiced = 0..bins;
        }
        for &bin in &self.live_voiced {
            self.voiced[bin] -= top;
        }
        for value in &mut self.unvoiced[self.live_unvoiced.clone()] {
            *value -= top;
        }
        self.apply_beam();

        let provisional = self.frame_for(&slot, best_state);
        self.pending.push_back(slot);
        if self.pending.len() > self.parameters.lag_frames {
            // Trace back from the best state now to the oldest pending frame.
            let mut state = best_state;
            for frame in self.pending.iter_mut().skip(1).rev() {
                state = self.transitions.back(frame, state);
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
        let mut state = self.best_state();
        for (index, frame) in self.pending.iter_mut().enumerate().rev() {
            states[index] = state;
            state = self.transitions.back(frame, state);
        }
        for (frame, state) in self.pending.iter().zip(states) {
            out.push(self.frame_for(frame, state));
        }
        self.spare.extend(self.pending.drain(..));
    }

    /// The first state with the highest score, in state order.
    fn best_state(&self) -> usize {
        let mut best_state = 0;
        let mut top = f32::NEG_INFINITY;
        for (state, &value) in self.voiced.iter().chain(&self.unvoiced).enumerate() {
            if value > top {
                top = value;
                best_state = state;
            }
        }
        best_state
    }

    /// Makes every voiced bin a target (floor emission where no candidate
    /// falls), for an exhaustive update.
    fn expand_targets(&mut self) {
        let given = std::mem::take(&mut self.targets);
        let mut given = given.into_iter().peekable();
        for bin in 0..self.bins {
            match given.peek() {
                Some(&(target, emission)) if target == bin => {
                    self.targets.push((bin, emission));
                    given.next();
                }
                _ => self.targets.push((bin, LOG_FLOOR)),
            }
        }
    }

    /// Drops states more than the beam below the best (scores are already
    /// renormalised so the best is 0).
    fn apply_beam(&mut self) {
        let beam = self.parameters.beam_nats;
        if !beam.is_finite() || self.parameters.exhaustive {
            return;
        }
        let floor = -(beam as f32);
        let Range { mut start, mut end } = self.live_unvoiced.clone();
        while start < end && self.unvoiced[start] < floor {
            self.unvoiced[start] = f32::NEG_INFINITY;
            start += 1;
        }
        while end > start && self.unvoiced[end - 1] < floor {
            self.unvoiced[end - 1] = f32::NEG_INFINITY;
            end -= 1;
        }
        self.live_unvoiced = start..end;
        let voiced = &mut self.voiced;
        self.live_voiced.retain(|&bin| {
            let keep = voiced[bin] >= floor;
            if !keep {
                voiced[bin] = f32::NEG_INFINITY;
            }
            keep
        });
    }

    /// One Viterbi step: score ← max over predecessors + emission, for the
    /// voiced targets of this frame and the unvoiced bins within reach of
    /// the live states. The work arrays live in the frame's `slot`, where
    /// the traceback finds them.
    fn step(&mut self, unvoiced_emission: f32, exhaustive: bool, slot: &mut PendingFrame) {
        let bins = self.bins;
        let half = self.transitions.half;
        // Bins with a finite state now.
        let (live_low, live_high) = if exhaustive || self.transitions.octave_jumps() {
            (0, bins)
        } else {
            let (mut low, mut high) = if self.live_unvoiced.is_empty() {
                (bins, 0)
            } else {
                (self.live_unvoiced.start, self.live_unvoiced.end)
            };
            if let (Some(&first), Some(&last)) = (self.live_voiced.first(), self.live_voiced.last())
            {
                low = low.min(first);
                high = high.max(last + 1);
            }
            (low, high.max(low))
        };
        slot.live = live_low..live_high;
        // Unvoiced targets: everything within one move of a live bin.
        let target_low = live_low.saturating_sub(half);
        let target_high = (live_high + half).min(bins).max(target_low);
        let chunked = (target_high - target_low).next_multiple_of(LANES);
        // The convolution reads padded indices target_low .. target_low +
        // chunked + 2w; only live bins are finite there.
        let read_end = (target_low + chunked + 2 * half).min(slot.into_voiced.len());
        slot.into_voiced[target_low..read_end].fill(f32::NEG_INFINITY);
        slot.into_unvoiced[target_low..read_end].fill(f32::NEG_INFINITY);
        // Best way into voiced (unvoiced) bin j before moving in pitch:
        // stay voiced or switch from unvoiced (and vice versa), with the
        // source row's normalisation folded in.
        for source in live_low..live_high {
            let voiced = self.voiced[source] + self.log_row_norm[source];
            let unvoiced = self.unvoiced[source] + self.log_row_norm[source];
            let (stay_v, switch_u) = (voiced + self.log_stay, unvoiced + self.log_switch);
            slot.from_voiced_to_voiced[source] = stay_v >= switch_u;
            slot.into_voiced[half + source] = stay_v.max(switch_u);
            let (switch_v, stay_u) = (voiced + self.log_switch, unvoiced + self.log_stay);
            slot.from_voiced_to_unvoiced[source] = switch_v > stay_u;
            slot.into_unvoiced[half + source] = switch_v.max(stay_u);
        }
        // The old scores are folded into the work arrays: clear them.
        for &bin in &self.live_voiced {
            self.voiced[bin] = f32::NEG_INFINITY;
        }
        self.unvoiced[self.live_unvoiced.clone()].fill(f32::NEG_INFINITY);

        // Voiced targets: the triangle over the live sources within reach
        // of each, then octave jumps when switched on.
        let transitions = &self.transitions;
        for &(bin, emission) in &self.targets {
            let mut best = f32::NEG_INFINITY;
            let low = bin.saturating_sub(half).max(live_low);
            let high = (bin + half + 1).min(live_high);
            for source in low..high {
                // Compare-and-select: exact, and cheaper than f32::max (no
                // NaN reaches here).
                let candidate =
                    slot.into_voiced[half + source] + transitions.log_triangle[source + half - bin];
                best = if candidate > best { candidate } else { best };
            }
            if transitions.octave_jumps() {
                let below = bin.checked_sub(transitions.octave_bins);
                let above = Some(bin + transitions.octave_bins).filter(|&jump| jump < bins);
                for jump in [below, above].into_iter().flatten() {
                    best = best.max(slot.into_voiced[half + jump] + transitions.log_octave);
                }
            }
            self.voiced[bin] = best + emission;
        }

        // Unvoiced targets.
        convolve(
            &slot.into_unvoiced,
            &transitions.log_triangle,
            target_low,
            &mut self.best[..chunked],
        );
        for (index, bin) in (target_low..target_high).enumerate() {
            self.unvoiced[bin] = self.best[index] + unvoiced_emission;
        }
        self.live_unvoiced = target_low..target_high;
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

/// Max-plus convolution of padded source scores with the triangle for the
/// targets `first .. first + best.len()`: best[i] = max over offsets k of
/// source[first + i + k] + triangle[k]. Written target-major over chunks of
/// [`LANES`] bins with the running maxima in registers, and the maximum as
/// an unconditional compare-and-select, so the compiler emits SIMD max
/// instructions (a conditional store does not vectorise; `f32::max`'s NaN
/// handling costs extra instructions, and no NaN reaches here). The maximum
/// is exact and order-free, so any loop order gives the same bits.
/// `best.len()` is a multiple of [`LANES`]. The winning offsets are not
/// tracked here: only the states a decoded path passes through need them,
/// and [`Transitions::predecessor`] finds those.
fn convolve(source: &[f32], triangle: &[f32], first: usize, best: &mut [f32]) {
    let max_into = |running: &mut [f32; LANES], scores: &[f32], weight: f32| {
        for (running, &score) in running.iter_mut().zip(scores) {
            let candidate = score + weight;
            *running = if candidate > *running {
                candidate
            } else {
                *running
            };
        }
    };
    // Sources a chunk of targets reads: LANES + 2w.
    let span = LANES + triangle.len().saturating_sub(1);
    for (chunk, out) in best.chunks_exact_mut(LANES).enumerate() {
        let base = first + chunk * LANES;
        let mut running = [f32::NEG_INFINITY; LANES];
        if let Some(window) = source.get(base..base + span) {
            for (scores, &weight) in window.windows(LANES).zip(triangle) {
                max_into(&mut running, scores, weight);
            }
        } else {
            // Sources past the padded end (never the case for the sizes
            // `Decoder::push` allocates) contribute nothing.
            for (offset, &weight) in triangle.iter().enumerate() {
                if let Some(scores) = source.get(base + offset..base + offset + LANES) {
                    max_into(&mut running, scores, weight);
                }
            }
        }
        out.copy_from_slice(&running);
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

/// Number of pitch bins from fmin to fmax inclusive.
pub fn bin_count(fmin_hz: f64, fmax_hz: f64, bins_per_semitone: u32) -> usize {
    (12.0 * f64::from(bins_per_semitone) * (fmax_hz / fmin_hz).log2()).floor() as usize + 1
}

/// Centre frequency of pitch bin `bin`.
pub fn bin_hz(fmin_hz: f64, bins_per_semitone: u32, bin: usize) -> f64 {
    fmin_hz * 2f64.powf(bin as f64 / (12.0 * f64::from(bins_per_semitone)))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A SplitMix64 step (Steele, Lea & Flood 2014), for repeatable test
    /// observations without a dependency.
    fn next_unit(state: &mut u64) -> f64 {
        *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = *state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }

    fn parameters(candidate_trust: f64, octave_jump_probability: f64) -> HmmParameters {
        HmmParameters {
            fmin_hz: 50.0,
            fmax_hz: 2100.0,
            bins_per_semitone: 5,
            transition_half_width: 11,
            switch_probability: 0.01,
            lag_frames: 25,
            octave_jump_probability,
            candidate_trust,
            beam_nats: f64::INFINITY,
            exhaustive: false,
        }
    }

    /// Observations like a sung phrase's: a pitch that wanders and leaps,
    /// with a strong candidate, weaker octave and spurious ones, and breaths
    /// without candidates.
    fn observations(frames: usize, seed: u64) -> Vec<(f64, Vec<Candidate>)> {
        let mut state = seed;
        let mut f0_hz = 220.0;
        (0..frames)
            .map(|_| {
                let roll = next_unit(&mut state);
                if roll < 0.02 {
                    f0_hz = 60.0 + 1500.0 * next_unit(&mut state);
                } else {
                    f0_hz *= 2f64.powf((next_unit(&mut state) - 0.5) / 12.0);
                    f0_hz = f0_hz.clamp(55.0, 1400.0);
                }
                if next_unit(&mut state) < 0.15 {
                    return (0.0, Vec::new());
                }
                let strength = next_unit(&mut state);
                let mut candidates = vec![
                    Candidate {
                        f0_hz,
                        probability: 0.2 + 0.8 * strength,
                        aperiodicity: 0.05,
                    },
                    Candidate {
                        f0_hz: f0_hz / 2.0,
                        probability: 0.1 * next_unit(&mut state),
                        aperiodicity: 0.1,
                    },
                ];
                if next_unit(&mut state) < 0.3 {
                    candidates.push(Candidate {
                        f0_hz: 50.0 + 2000.0 * next_unit(&mut state),
                        probability: 0.05 * next_unit(&mut state),
                        aperiodicity: 0.3,
                    });
                }
                let total: f64 = candidates.iter().map(|c| c.probability).sum();
                if total > 1.0 {
                    for candidate in &mut candidates {
                        candidate.probability /= total;
                    }
                }
                (total.min(1.0), candidates)
            })
            .collect()
    }

    fn decode(parameters: HmmParameters, input: &[(f64, Vec<Candidate>)]) -> Vec<Frame> {
        let mut decoder = Decoder::new(parameters);
        let mut out = Vec::new();
        let mut provisional = Vec::new();
        for (index, (voicing, candidates)) in input.iter().enumerate() {
            provisional.push(decoder.push(
                index as f64 * 0.01,
                -20.0,
                *voicing,
                candidates,
                &mut out,
            ));
        }
        decoder.finish(&mut out);
        out.extend(provisional);
        out
    }

    #[test]
    fn skipping_voiced_bins_without_candidates_changes_no_decision() {
        // The pruned update must give exactly the frames (decided and
        // provisional) of the textbook Viterbi recursion over all 2n states
        // (Rabiner, Proc. IEEE 77(2), 1989, §III.B). Covered: the default
        // trust 0.9, librosa's trust 1 (fully periodic frames fall back to
        // the exhaustive update), and octave jumps.
        for (trust, octave) in [(0.9, 0.0), (1.0, 0.0), (0.9, 0.01)] {
            for seed in [1u64, 2, 3] {
                let input = observations(1500, seed);
                let pruned = decode(parameters(trust, octave), &input);
                let exhaustive = decode(
                    HmmParameters {
                        exhaustive: true,
                        ..parameters(trust, octave)
                    },
                    &input,
                );
                assert_eq!(
                    pruned, exhaustive,
                    "trust {trust}, octave {octave}, seed {seed}"
                );
                let voiced = exhaustive.iter().filter(|frame| frame.voiced).count();
                assert!(
                    voiced > exhaustive.len() / 2,
                    "the test path is mostly voiced"
                );
            }
        }
    }
}
