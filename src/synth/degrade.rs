//! Degradations applied after synthesis: room reverberation and additive
//! background noise at a signal-to-noise ratio measured over voiced frames.

use rustfft::{FftPlanner, num_complex::Complex};

use super::random::SplitMix64;
use super::{Noise, NoiseColour, Reverb, TruthFrame};

/// Marks the samples that belong to voiced truth frames (each frame owns
/// the samples nearest its time).
pub fn voiced_sample_mask(
    truth: &[TruthFrame],
    hop_seconds: f64,
    sample_rate: f64,
    length: usize,
) -> Vec<bool> {
    let mut mask = vec![false; length];
    let half_hop = hop_seconds / 2.0;
    for frame in truth.iter().filter(|frame| frame.voiced) {
        let first = (((frame.time - half_hop) * sample_rate).ceil().max(0.0) as usize).min(length);
        let last = (((frame.time + half_hop) * sample_rate).ceil().max(0.0) as usize).min(length);
        mask[first..last].iter_mut().for_each(|m| *m = true);
    }
    mask
}

fn mean_power(signal: &[f64], mask: &[bool]) -> f64 {
    let (sum, count) = signal
        .iter()
        .zip(mask)
        .filter(|(_, voiced)| **voiced)
        .fold((0.0, 0usize), |(sum, count), (x, _)| {
            (sum + x * x, count + 1)
        });
    if count == 0 { 0.0 } else { sum / count as f64 }
}

/// Adds noise scaled so that (signal power)/(noise power), both over the
/// voiced samples, is exactly `noise.snr_db`. Returns the SNR achieved
/// (NaN-free; `snr_db` itself unless the recording has no voiced frame,
/// when the noise is scaled against the whole recording instead).
pub fn add_noise(signal: &mut [f64], voiced: &[bool], noise: &Noise, seed: u64) -> f64 {
    let mut random = SplitMix64::stream(seed, 4);
    let mut samples: Vec<f64> = (0..signal.len()).map(|_| random.normal()).collect();
    if noise.colour == NoiseColour::Pink {
        // Paul Kellet's "economy" pinking filter (three first-order
        // sections, ±0.5 dB of 1/f above about 10 Hz at 44.1 kHz; from memory).
        let (mut b0, mut b1, mut b2) = (0.0, 0.0, 0.0);
        for x in samples.iter_mut() {
            b0 = 0.99765 * b0 + *x * 0.0990460;
            b1 = 0.96300 * b1 + *x * 0.2965164;
            b2 = 0.57000 * b2 + *x * 1.0526913;
            *x = b0 + b1 + b2 + *x * 0.1848;
        }
    }
    let all = vec![true; signal.len()];
    let mask = if voiced.iter().any(|v| *v) {
        voiced
    } else {
        &all[..]
    };
    let signal_power = mean_power(signal, mask);
    let noise_power = mean_power(&samples, mask);
    if signal_power <= 0.0 || noise_power <= 0.0 {
        return f64::INFINITY;
    }
    let scale = (signal_power / noise_power / 10f64.powf(noise.snr_db / 10.0)).sqrt();
    for (x, n) in signal.iter_mut().zip(&samples) {
        *x += scale * n;
    }
    10.0 * (signal_power / (noise_power * scale * scale)).log10()
}

/// Convolves with a synthetic room response: the direct sound, then after a
/// 5 ms gap a Gaussian noise tail whose amplitude decays by 60 dB in RT60
/// (the exponential decay of a diffuse field, Sabine / Schroeder 1962),
/// scaled to the direct-to-reverberant ratio. The recording keeps its length;
/// the tail of the last note is cut at the end.
pub fn add_reverb(signal: &mut [f64], reverb: &Reverb, sample_rate: f64, seed: u64) {
    let mut random = SplitMix64::stream(seed, 5);
    let gap = (0.005 * sample_rate).round() as usize;
    let tail_length = (1.2 * reverb.rt60_seconds * sample_rate).ceil() as usize;
    let decay_per_sample = (-3.0 * std::f64::consts::LN_10) / (reverb.rt60_seconds * sample_rate);
    let mut response = vec![0.0; gap + tail_length];
    response[0] = 1.0;
    let mut tail_energy = 0.0;
    for (index, value) in response.iter_mut().enumerate().skip(gap) {
        *value = random.normal() * (decay_per_sample * (index - gap) as f64).exp();
        tail_energy += *value * *value;
    }
    let tail_scale =
        (10f64.powf(-reverb.direct_to_reverberant_db / 10.0) / tail_energy.max(1e-30)).sqrt();
    response.iter_mut().skip(gap).for_each(|v| *v *= tail_scale);
    convolve_in_place(signal, &response);
}

/// Overlap-add FFT convolution, output truncated to the input's length.
fn convolve_in_place(signal: &mut [f64], response: &[f64]) {
    if signal.is_empty() || response.is_empty() {
        return;
    }
    let fft_size = (2 * response.len()).next_power_of_two().max(4096);
    let block = fft_size - response.len() + 1;
    let mut planner = FftPlanner::<f64>::new();
    let forward = planner.plan_fft_forward(fft_size);
    let inverse = planner.plan_fft_inverse(fft_size);
    let mut response_spectrum: Vec<Complex<f64>> = response
        .iter()
        .map(|&x| Complex::new(x, 0.0))
        .chain(std::iter::repeat(Complex::new(0.0, 0.0)))
        .take(fft_size)
        .collect();
    forward.process(&mut response_spectrum);
    let mut output = vec![0.0; signal.len()];
    let mut buffer = vec![Complex::new(0.0, 0.0); fft_size];
    let normalise = 1.0 / fft_size as f64;
    for start in (0..signal.len()).step_by(block) {
        let end = (start + block).min(signal.len());
        buffer.iter_mut().for_each(|c| *c = Complex::new(0.0, 0.0));
        for (slot, &x) in buffer.iter_mut().zip(&signal[start..end]) {
            *slot = Complex::new(x, 0.0);
        }
        forward.process(&mut buffer);
        for (b, h) in buffer.iter_mut().zip(&response_spectrum) {
            *b *= h;
        }
        inverse.process(&mut buffer);
        for (offset, value) in buffer.iter().enumerate() {
            match output.get_mut(start + offset) {
                Some(out) => *out += value.re * normalise,
                None => break,
            }
        }
    }
    signal.copy_from_slice(&output);
}
