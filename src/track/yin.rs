//! One frame's YIN analysis (de Cheveigné & Kawahara, JASA 111(4), 2002) and
//! the pYIN candidate distribution (Mauch & Dixon, ICASSP 2014).
//!
//! The difference function of step 2 is computed from an FFT
//! cross-correlation plus cumulative energy terms, so a frame costs
//! O(N log N) rather than O(N·τmax). It is taken symmetrically about the
//! frame centre (the mean of the forward difference x_j − x_{j+τ} and the
//! backward one x_j − x_{j−τ} over a window centred on the frame), so the
//! estimate for every lag belongs to the frame's centre time: the one-sided
//! form of the paper centres lag τ at (W + τ)/2, which for a 50 Hz floor
//! puts high notes up to 10 ms early and costs ~17 cents on a 5.5 Hz,
//! ±50-cent vibrato. Every buffer and FFT plan lives in
//! [`FrameAnalyser`] and is reused: analysing a frame allocates nothing.
//!
//! Invariant: the result for a frame is a pure function of that frame's
//! samples and the configuration, so the offline and streaming trackers,
//! which cut frames from different buffers, compute identical numbers.

use std::sync::Arc;

use realfft::num_complex::Complex;
use realfft::{ComplexToReal, RealFftPlanner, RealToComplex};

/// One pitch candidate of a frame: a trough of the cumulative-mean-normalised
/// difference function, with the probability pYIN gives it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Candidate {
    pub f0_hz: f64,
    /// pYIN probability that this is the frame's f0 (sum over a frame ≤ 1).
    pub probability: f64,
    /// Value of the normalised difference function at the trough (YIN's
    /// aperiodicity measure: 0 for a perfectly periodic frame).
    pub aperiodicity: f64,
}

/// The lag layout of a frame: integration window `W` (YIN's step 2) centred
/// on the frame, lags searched `τmin..=τmax`, and the frame length
/// `N = W + 2·(τmax + 1)` (τmax + 1 so the trough at τmax has a right-hand
/// neighbour for interpolation, on both sides of the window).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrameLayout {
    pub sample_rate: u32,
    pub integration_samples: usize,
    pub min_lag: usize,
    pub max_lag: usize,
    pub frame_samples: usize,
    /// Index in the frame where the integration window starts (τmax + 1).
    pub window_start: usize,
}

impl FrameLayout {
    /// Lags from the highest to the lowest f0; the integration window is
    /// `integration_periods` periods of `fmin_hz`.
    pub fn new(sample_rate: u32, fmin_hz: f64, fmax_hz: f64, integration_periods: f64) -> Self {
        let rate = f64::from(sample_rate);
        let min_lag = ((rate / fmax_hz).floor() as usize).max(2);
        let max_lag = ((rate / fmin_hz).ceil() as usize).max(min_lag + 2);
        let integration_samples = ((integration_periods * rate / fmin_hz).ceil() as usize).max(8);
        FrameLayout {
            sample_rate,
            integration_samples,
            min_lag,
            max_lag,
            frame_samples: integration_samples + 2 * (max_lag + 1),
            window_start: max_lag + 1,
        }
    }
}

/// The weights of pYIN's threshold distribution: thresholds 0.01, 0.02, …,
/// 1.00, each weighted by the Beta(2, 18) probability mass of the step below
/// it (Mauch & Dixon 2014, §2.1; librosa.pyin uses the same grid).
///
/// The Beta(2, 18) CDF has a closed form for integer parameters:
/// I_x(2, 18) = 1 − (1−x)^19 − 19·x·(1−x)^18.
pub fn beta_threshold_weights() -> [f64; THRESHOLD_COUNT] {
    let cdf = |x: f64| 1.0 - (1.0 - x).powi(19) - 19.0 * x * (1.0 - x).powi(18);
    let mut weights = [0.0; THRESHOLD_COUNT];
    for (index, weight) in weights.iter_mut().enumerate() {
        let upper = (index + 1) as f64 / THRESHOLD_COUNT as f64;
        let lower = index as f64 / THRESHOLD_COUNT as f64;
        *weight = cdf(upper) - cdf(lower);
    }
    weights
}

/// Number of thresholds in pYIN's grid.
pub const THRESHOLD_COUNT: usize = 100;

/// Probability given to the global minimum for thresholds no trough falls
/// below (librosa's `no_trough_prob`).
const NO_TROUGH_PROBABILITY: f64 = 0.01;

/// Parameter of the Boltzmann prior over troughs below a threshold, favouring
/// the earliest (shortest-lag) one (librosa's `boltzmann_parameter`).
const BOLTZMANN_PARAMETER: f64 = 2.0;

/// What a frame's analysis gives.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrameSummary {
    /// RMS level of the integration window, dBFS (floor −120).
    pub level_db: f64,
    /// Sum of the candidates' probabilities (pYIN's voicing probability).
    pub voiced_probability: f64,
    /// Plain YIN's estimate: the first trough below the absolute threshold,
    /// else the global minimum, with its aperiodicity.
    pub yin: Option<Candidate>,
}

/// Reusable state for analysing frames of one layout.
pub struct FrameAnalyser {
    layout: FrameLayout,
    forward: Arc<dyn RealToComplex<f32>>,
    inverse: Arc<dyn ComplexToReal<f32>>,
    window_buffer: Vec<f32>,
    frame_buffer: Vec<f32>,
    window_spectrum: Vec<Complex<f32>>,
    frame_spectrum: Vec<Complex<f32>>,
    scratch: Vec<Complex<f32>>,
    correlation: Vec<f32>,
    cumulative_energy: Vec<f64>,
    difference: Vec<f64>,
    normalised: Vec<f64>,
    troughs: Vec<usize>,
    /// Room for every lag of the search range, for the branch-free scan.
    trough_scratch: Vec<usize>,
    troughs_by_height: Vec<usize>,
    below: Vec<usize>,
    trough_probability: Vec<f64>,
    /// Each lag as a float (0, 1, 2, …), for the normalisation.
    lags: Vec<f64>,
    threshold_weights: [f64; THRESHOLD_COUNT],
    boltzmann_decay: Vec<f64>,
}

impl FrameAnalyser {
    pub fn new(layout: FrameLayout) -> Self {
        // The FFT must hold the linear (not circular) correlation of the
        // W-sample window with the N-sample frame for lags −(τmax+1)..=τmax+1:
        // any size ≥ N avoids wrap-around, since the window sits at
        // τmax+1..τmax+1+W. Sizes 2^k or 3·2^k keep rustfft on fast radices.
        let fft_size = fast_fft_size(layout.frame_samples);
        let mut planner = RealFftPlanner::<f32>::new();
        let forward = planner.plan_fft_forward(fft_size);
        let inverse = planner.plan_fft_inverse(fft_size);
        let scratch_len = forward.get_scratch_len().max(inverse.get_scratch_len());
        let lag_count = layout.max_lag + 2;
        FrameAnalyser {
            layout,
            window_buffer: forward.make_input_vec(),
            frame_buffer: forward.make_input_vec(),
            window_spectrum: forward.make_output_vec(),
            frame_spectrum: forward.make_output_vec(),
            scratch: vec![Complex::new(0.0, 0.0); scratch_len],
            correlation: inverse.make_output_vec(),
            forward,
            inverse,
            cumulative_energy: vec![0.0; layout.frame_samples + 1],
            difference: vec![0.0; lag_count],
            normalised: vec![1.0; lag_count],
            troughs: Vec::with_capacity(lag_count),
            trough_scratch: vec![0; lag_count],
            troughs_by_height: Vec::with_capacity(lag_count),
            below: Vec::with_capacity(lag_count),
            trough_probability: vec![0.0; lag_count],
            lags: (0..lag_count).map(|lag| lag as f64).collect(),
            threshold_weights: beta_threshold_weights(),
            boltzmann_decay: (0..lag_count)
                .map(|rank| (-BOLTZMANN_PARAMETER * rank as f64).exp())
                .collect(),
        }
    }

    pub fn layout(&self) -> FrameLayout {
        self.layout
    }

    /// The cumulative-mean-normalised difference function d'(τ) of the last
    /// frame analysed, for lags 0..=τmax+1 (YIN step 3).
    pub fn normalised_difference(&self) -> &[f64] {
        &self.normalised
    }

    /// YIN's raw difference function d(τ) of the last frame (step 2).
    pub fn difference(&self) -> &[f64] {
        &self.difference
    }

    /// Computes the symmetric difference function for τ = 0..=τmax+1 of
    /// `frame` (length N) by FFT. With the window j ∈ [s, s+W):
    /// d(τ) = ½ Σ_j (x_j − x_{j+τ})² + ½ Σ_j (x_j − x_{j−τ})²
    ///      = E₀ + ½(E₊(τ) + E₋(τ)) − (r(τ) + r(−τ)),
    /// r the window–frame cross-correlation, E the energies from a cumulative
    /// sum. Returns the energy E₀ of the integration window.
    pub fn difference_function(&mut self, frame: &[f32]) -> f64 {
        let layout = self.layout;
        let width = layout.integration_samples;
        let start = layout.window_start;
        let length = layout.frame_samples.min(frame.len());
        // The FFTs use their inputs as scratch, so both buffers are set in
        // full every frame: samples where the frame (window) has them,
        // zeros elsewhere.
        let window_end = (start + width).min(length);
        if start < window_end {
            self.window_buffer[..start].fill(0.0);
            self.window_buffer[start..window_end].copy_from_slice(&frame[start..window_end]);
            self.window_buffer[window_end..].fill(0.0);
        } else {
            self.window_buffer.fill(0.0);
        }

        // The frame goes into its FFT buffer in the same loop as the
        // cumulative energy, whose chain of additions leaves the copy's
        // loads and stores free. Past the frame's samples come zeros, which
        // add exactly nothing to the (non-negative) running total.
        self.cumulative_energy[0] = 0.0;
        let mut total = 0.0;
        for ((slot, buffered), &sample) in self.cumulative_energy[1..=length]
            .iter_mut()
            .zip(&mut self.frame_buffer[..length])
            .zip(&frame[..length])
        {
            *buffered = sample;
            let sample = f64::from(sample);
            total += sample * sample;
            *slot = total;
        }
        self.frame_buffer[length..].fill(0.0);
        self.cumulative_energy[length + 1..=layout.frame_samples].fill(total);
        let cumulative = &self.cumulative_energy;
        let window_energy = cumulative[start + width] - cumulative[start];
        if window_energy <= f64::MIN_POSITIVE {
            self.difference.fill(0.0);
            return 0.0;
        }

        // realfft only fails on wrongly sized buffers, which are sized from
        // the same plans above; a failure leaves the function flat (unvoiced).
        let ok = self
            .forward
            .process_with_scratch(
                &mut self.window_buffer,
                &mut self.window_spectrum,
                &mut self.scratch,
            )
            .is_ok()
            && self
                .forward
                .process_with_scratch(
                    &mut self.frame_buffer,
                    &mut self.frame_spectrum,
                    &mut self.scratch,
                )
                .is_ok();
        if !ok {
            self.difference.fill(0.0);
            return 0.0;
        }
        // Cross-correlation: conj(W)·F.
        for (frame_bin, window_bin) in self.frame_spectrum.iter_mut().zip(&self.window_spectrum) {
            *frame_bin *= window_bin.conj();
        }
        // The DC and Nyquist bins of a real signal's spectrum are real.
        if let Some(first) = self.frame_spectrum.first_mut() {
            first.im = 0.0;
        }
        if let Some(last) = self.frame_spectrum.last_mut() {
            last.im = 0.0;
        }
        if self
            .inverse
            .process_with_scratch(
                &mut self.frame_spectrum,
                &mut self.correlation,
                &mut self.scratch,
            )
            .is_err()
        {
            self.difference.fill(0.0);
            return 0.0;
        }
        let size = self.correlation.len();
        let scale = 1.0 / size as f64;
        let cumulative = &self.cumulative_energy;
        // For lag = 1..count, as slices walked together (forwards for
        // +lag, backwards for −lag) so the loop has no bounds checks and
        // vectorises; each element is computed exactly as
        // E₀ + ½(E₊ + E₋) − (r(τ) + r(−τ))/size, clamped at 0.
        let count = self.difference.len();
        let ahead_end = &cumulative[start + width + 1..start + width + count];
        let ahead_start = &cumulative[start + 1..start + count];
        let behind_end = &cumulative[start + width + 1 - count..start + width];
        let behind_start = &cumulative[start + 1 - count..start];
        let forward = &self.correlation[1..count];
        let backward = &self.correlation[size + 1 - count..size];
        let terms = ahead_end
            .iter()
            .zip(ahead_start)
            .zip(behind_end.iter().rev().zip(behind_start.iter().rev()))
            .zip(forward.iter().zip(backward.iter().rev()));
        for (
            slot,
            (((&ahead_end, &ahead_start), (&behind_end, &behind_start)), (&r_plus, &r_minus)),
        ) in self.difference[1..].iter_mut().zip(terms)
        {
            let ahead = ahead_end - ahead_start;
            let behind = behind_end - behind_start;
            let cross = (f64::from(r_plus) + f64::from(r_minus)) * scale;
            let value = window_energy + 0.5 * (ahead + behind) - cross;
            // max(value, 0), NaN to 0, as f64::max(value, 0.0) here.
            *slot = if value > 0.0 { value } else { 0.0 };
        }
        self.difference[0] = 0.0;
        window_energy
    }

    /// Analyses one frame of `layout.frame_samples` samples: YIN steps 2–5 and
    /// pYIN's candidate probabilities. Candidates with non-zero probability
    /// are appended to `candidates` (in order of lag).
    pub fn analyse(
        &mut self,
        frame: &[f32],
        yin_threshold: f64,
        candidates: &mut Vec<Candidate>,
    ) -> FrameSummary {
        let layout = self.layout;
        let window_energy = self.difference_function(frame);
        let level_db = if window_energy > 0.0 {
            (10.0 * (window_energy / layout.integration_samples as f64).log10()).max(-120.0)
        } else {
            -120.0
        };
        if window_energy <= 0.0 {
            self.normalised.fill(1.0);
            return FrameSummary {
                level_db,
                voiced_probability: 0.0,
                yin: None,
            };
        }

        // Step 3: cumulative-mean-normalised difference d'(τ).
        // Two passes: the running sums (a serial chain of additions), then
        // the divisions, which are independent and vectorise.
        self.normalised[0] = 1.0;
        let mut running_sum = 0.0;
        for (slot, &difference) in self.normalised[1..].iter_mut().zip(&self.difference[1..]) {
            running_sum += difference;
            *slot = running_sum;
        }
        let floor = window_energy * 1e-12;
        for ((slot, &difference), &lag) in self.normalised[1..]
            .iter_mut()
            .zip(&self.difference[1..])
            .zip(&self.lags[1..])
        {
            let running_sum = *slot;
            *slot = if running_sum > floor {
                difference * lag / running_sum
            } else {
                1.0
            };
        }

        // Troughs of d' within τmin..=τmax (local minima, strict on the left
        // as librosa's `localmin`; the range ends count when lower than their
        // one neighbour inside the range).
        // The interior is tested without branches (a trough's position is
        // written every time and kept by advancing the count), as noisy
        // frames make the comparisons unpredictable.
        let (low, high) = (layout.min_lag, layout.max_lag);
        let values = &self.normalised;
        let mut count = 0;
        let mut push = |lag: usize, is_trough: bool| {
            self.trough_scratch[count] = lag;
            count += usize::from(is_trough);
        };
        push(low, values[low] <= values[low + 1]);
        for lag in low + 1..high {
            push(
                lag,
                (values[lag] < values[lag - 1]) & (values[lag] <= values[lag + 1]),
            );
        }
        push(high, values[high] < values[high - 1]);
        self.troughs.clear();
        self.troughs
            .extend_from_slice(&self.trough_scratch[..count]);
        if self.troughs.is_empty() {
            return FrameSummary {
                level_db,
                voiced_probability: 0.0,
                yin: None,
            };
        }

        // Plain YIN (step 4): first trough below the absolute threshold,
        // else the global minimum.
        let mut global_min = self.troughs[0];
        for &lag in &self.troughs {
            if values[lag] < values[global_min] {
                global_min = lag;
            }
        }
        let yin_lag = self
            .troughs
            .iter()
            .copied()
            .find(|&lag| values[lag] < yin_threshold)
            .unwrap_or(global_min);
        let yin = Some(self.candidate_at(yin_lag, 0.0));

        // pYIN (Mauch & Dixon 2014, §2.1, as in librosa.pyin): for each
        // threshold s_i with prior weight β_i, the troughs below s_i share β_i
        // by a Boltzmann prior on their rank in lag order; thresholds that no
        // trough falls below give the global minimum β_i·no_trough_prob.
        // Thresholds are swept upwards, so the set below grows one trough at
        // a time; between insertions the weights are pooled.
        self.troughs_by_height.clear();
        self.troughs_by_height.extend_from_slice(&self.troughs);
        self.troughs_by_height
            .sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
        for &lag in &self.troughs {
            self.trough_probability[lag] = 0.0;
        }
        self.below.clear();
        let mut next = 0;
        let mut pooled = 0.0;
        let mut no_trough_mass = 0.0;
        for index in 0..THRESHOLD_COUNT {
            let threshold = (index + 1) as f64 / THRESHOLD_COUNT as f64;
            let mut inserted = false;
            while next < self.troughs_by_height.len()
                && values[self.troughs_by_height[next]] < threshold
            {
                if !inserted && pooled > 0.0 {
                    distribute(
                        &self.below,
                        pooled,
                        &self.boltzmann_decay,
                        &mut self.trough_probability,
                    );
                    pooled = 0.0;
                }
                inserted = true;
                let lag = self.troughs_by_height[next];
                let position = self.below.partition_point(|&other| other < lag);
                self.below.insert(position, lag);
                next += 1;
            }
            if self.below.is_empty() {
                no_trough_mass += self.threshold_weights[index];
            } else {
                pooled += self.threshold_weights[index];
            }
        }
        if pooled > 0.0 {
            distribute(
                &self.below,
                pooled,
                &self.boltzmann_decay,
                &mut self.trough_probability,
            );
        }
        self.trough_probability[global_min] += NO_TROUGH_PROBABILITY * no_trough_mass;

        let mut voiced_probability = 0.0;
        for index in 0..self.troughs.len() {
            let lag = self.troughs[index];
            let probability = self.trough_probability[lag];
            if probability > 0.0 {
                voiced_probability += probability;
                candidates.push(self.candidate_at(lag, probability));
            }
        }
        FrameSummary {
            level_db,
            voiced_probability: voiced_probability.min(1.0),
            yin,
        }
    }

    /// Step 5: parabolic interpolation of the raw difference function d(τ)
    /// around the trough (the paper interpolates d rather than d' to avoid
    /// the normalisation's bias).
    fn candidate_at(&self, lag: usize, probability: f64) -> Candidate {
        let rate = f64::from(self.layout.sample_rate);
        let d = &self.difference;
        let mut period = lag as f64;
        if lag >= 1 && lag + 1 < d.len() {
            let (left, centre, right) = (d[lag - 1], d[lag], d[lag + 1]);
            let curvature = left - 2.0 * centre + right;
            if curvature > 0.0 {
                let shift = 0.5 * (left - right) / curvature;
                if shift.abs() <= 1.0 {
                    period += shift;
                }
            }
        }
        Candidate {
            f0_hz: rate / period,
            probability,
            aperiodicity: self.normalised[lag],
        }
    }
}

/// The smallest 2^k or 3·2^k that is at least `length`.
fn fast_fft_size(length: usize) -> usize {
    let power = length.next_power_of_two();
    let three = 3 * (power / 4);
    if three >= length { three } else { power }
}

/// Adds `mass` to the troughs in `below` (lag order) by a truncated
/// Boltzmann distribution over rank: p(k) ∝ e^{−λk}, k = 0..len.
fn distribute(below: &[usize], mass: f64, decay: &[f64], probability: &mut [f64]) {
    let count = below.len();
    let norm: f64 = decay.iter().take(count).sum();
    if norm <= 0.0 {
        return;
    }
    for (rank, &lag) in below.iter().enumerate() {
        if let (Some(weight), Some(slot)) = (decay.get(rank), probability.get_mut(lag)) {
            *slot += mass * weight / norm;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sine(f0_hz: f64, rate: u32, count: usize) -> Vec<f32> {
        (0..count)
            .map(|index| {
                (0.5 * (2.0 * std::f64::consts::PI * f0_hz * index as f64 / f64::from(rate)).sin())
                    as f32
            })
            .collect()
    }

    #[test]
    fn fft_difference_function_equals_the_direct_sum() {
        // YIN eq. (6), d(τ) = Σ_{j<W} (x_j − x_{j+τ})², summed directly, and
        // its mirror x_j − x_{j−τ}, averaged.
        let layout = FrameLayout::new(22050, 50.0, 2100.0, 1.0);
        let mut analyser = FrameAnalyser::new(layout);
        let mut frame = sine(220.0, 22050, layout.frame_samples);
        for (index, sample) in frame.iter_mut().enumerate() {
            *sample += 0.1 * ((index * 7919 % 101) as f32 / 101.0 - 0.5);
        }
        analyser.difference_function(&frame);
        for lag in [1usize, 10, 100, 250, layout.max_lag + 1] {
            let start = layout.window_start;
            let direct: f64 = (start..start + layout.integration_samples)
                .map(|j| {
                    let ahead = f64::from(frame[j]) - f64::from(frame[j + lag]);
                    let behind = f64::from(frame[j]) - f64::from(frame[j - lag]);
                    0.5 * (ahead * ahead + behind * behind)
                })
                .sum();
            let fft = analyser.difference()[lag];
            assert!(
                (fft - direct).abs() <= 1e-4 * direct.max(1.0),
                "lag {lag}: FFT {fft} vs direct {direct}"
            );
        }
    }

    #[test]
    fn beta_weights_match_the_beta_2_18_distribution() {
        // Beta(2, 18) has mean 2/20 = 0.1 (Mauch & Dixon 2014 chose it for
        // that mean); over 0..1 the weights sum to the whole distribution.
        let weights = beta_threshold_weights();
        let total: f64 = weights.iter().sum();
        assert!((total - 1.0).abs() < 1e-12);
        let mean: f64 = weights
            .iter()
            .enumerate()
            .map(|(index, weight)| (index as f64 + 0.5) / 100.0 * weight)
            .sum();
        assert!((mean - 0.1).abs() < 0.002, "mean {mean}");
    }
}
