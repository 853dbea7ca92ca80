//! Renders the planned controls: band-limited additive glottal source,
//! aspiration noise, then the formant cascade.
//!
//! The harmonic amplitudes, the formants and the harmonic count are updated
//! once per block of [`BLOCK`] samples. The count uses the highest f0 within
//! the block, and a cosine taper brings every harmonic to zero before
//! 0.475 × the sample rate, so no partial ever reaches the Nyquist frequency.

use std::f64::consts::TAU;

use rustfft::num_complex::Complex;

use super::Voice;
use super::Vowel;
use super::contour::Plan;
use super::formants::{
    Formants, VocalTract, tune_first_formant, vowel_formants, with_singers_formant,
};
use super::glottal::{PulseShape, Register, pulse_harmonics};
use super::random::SplitMix64;

/// Control block length in samples (0.7 ms at 44.1 kHz).
pub const BLOCK: usize = 32;

/// Harmonics are full strength up to this share of the sample rate…
pub const TAPER_START: f64 = 0.42;
/// …and zero from this share on (below the Nyquist share 0.5).
pub const TAPER_END: f64 = 0.475;

/// Smoothing time constant of formant movements (vowel changes, F1 tuning).
const FORMANT_SMOOTHING_SECONDS: f64 = 0.025;

fn taper(frequency_hz: f64, sample_rate: f64) -> f64 {
    let share = frequency_hz / sample_rate;
    if share <= TAPER_START {
        1.0
    } else if share >= TAPER_END {
        0.0
    } else {
        let x = (share - TAPER_START) / (TAPER_END - TAPER_START);
        0.5 + 0.5 * (std::f64::consts::PI * x).cos()
    }
}

/// Source gain of an extra slope in dB per octave above 500 Hz.
fn tilt_gain(frequency_hz: f64, tilt_db_per_octave: f64) -> f64 {
    let octaves = (frequency_hz.max(500.0) / 500.0).log2();
    10f64.powf(tilt_db_per_octave * octaves / 20.0)
}

/// Relative spread (σ) of a per-cycle factor from a local perturbation in
/// percent: for independent normal deviates, E|ε_i − ε_{i−1}| = 2σ/√π.
fn per_cycle_sigma(percent: f64) -> f64 {
    percent / 100.0 * std::f64::consts::PI.sqrt() / 2.0
}

fn target_formants(voice: &Voice, vowel: u8, f0_hz: f64) -> Formants {
    let vowel = Vowel::ALL.get(vowel as usize).copied().unwrap_or(Vowel::A);
    let mut result = vowel_formants(vowel, voice.tract);
    if let Some((centre_hz, strength)) = voice.singers_formant {
        result = with_singers_formant(&result, centre_hz, strength);
    }
    if voice.formant_tuning && f0_hz.is_finite() {
        result = tune_first_formant(&result, f0_hz);
    }
    result
}

pub fn render(
    voice: &Voice,
    plan: &Plan,
    sample_rate: f64,
    seed: u64,
    tuning: crate::pitch::Tuning,
) -> Vec<f64> {
    let length = plan.pitch_midi.len();
    let mut output = vec![0.0; length];
    let harmonic_count = (sample_rate / 2.0 / 30.0).ceil() as usize + 2;
    let modal_shape = PulseShape::for_register(Register::Modal);
    let falsetto_shape = PulseShape::for_register(Register::Falsetto);
    let modal = pulse_harmonics(&modal_shape, harmonic_count);
    let falsetto = pulse_harmonics(&falsetto_shape, harmonic_count);

    let mut cycle_random = SplitMix64::stream(seed, 2);
    let mut breath_random = SplitMix64::stream(seed, 3);
    let jitter_sigma = per_cycle_sigma(voice.jitter_percent);
    let shimmer_sigma = per_cycle_sigma(voice.shimmer_percent);
    let breath_gain = 10f64.powf(voice.breath_db / 20.0);
    let mut jitter_factor = 1.0;
    let mut shimmer_factor = 1.0;
    let mut phase_cycles = 0.0f64;

    let mut tract = VocalTract::default();
    let mut formants: Option<Formants> = None;
    let smoothing = 1.0 - (-(BLOCK as f64) / (FORMANT_SMOOTHING_SECONDS * sample_rate)).exp();
    let mut coefficients: Vec<Complex<f64>> = Vec::with_capacity(harmonic_count);

    for block_start in (0..length).step_by(BLOCK) {
        let block_end = (block_start + BLOCK).min(length);
        let block = block_start..block_end;
        let max_f0_hz = plan.pitch_midi[block.clone()]
            .iter()
            .filter(|p| p.is_finite())
            .map(|&p| tuning.midi_to_hz(p))
            .fold(f64::NAN, f64::max);
        let middle = (block_start + block_end) / 2;
        let reference_f0_hz = plan.pitch_midi[block.clone()]
            .iter()
            .find(|p| p.is_finite())
            .map_or(f64::NAN, |&p| tuning.midi_to_hz(p));

        // Source coefficients for this block: register mix, slope, taper,
        // normalised to unit RMS so `gain` sets the source level.
        coefficients.clear();
        if max_f0_hz.is_finite() {
            let weight = f64::from(plan.falsetto[middle]);
            let tilt = voice.tilt_db_per_octave
                + (1.0 - weight) * modal_shape.extra_tilt_db_per_octave
                + weight * falsetto_shape.extra_tilt_db_per_octave;
            let highest = ((TAPER_END * sample_rate) / (max_f0_hz * (1.0 + 4.0 * jitter_sigma)))
                .floor() as usize;
            let highest = highest.min(harmonic_count);
            for k in 1..=highest {
                let frequency = k as f64 * reference_f0_hz;
                let mixed = modal[k - 1] * (1.0 - weight) + falsetto[k - 1] * weight;
                let top = k as f64 * max_f0_hz;
                coefficients.push(mixed * tilt_gain(frequency, tilt) * taper(top, sample_rate));
            }
            let power: f64 = 0.5 * coefficients.iter().map(|c| c.norm_sqr()).sum::<f64>();
            if power > 0.0 {
                let scale = 1.0 / power.sqrt();
                coefficients.iter_mut().for_each(|c| *c *= scale);
            }
        }

        let target = target_formants(voice, plan.vowel[middle], reference_f0_hz);
        let current = match formants {
            None => target,
            Some(mut current) => {
                for i in 0..5 {
                    current.frequencies_hz[i] +=
                        smoothing * (target.frequencies_hz[i] - current.frequencies_hz[i]);
                    current.bandwidths_hz[i] +=
                        smoothing * (target.bandwidths_hz[i] - current.bandwidths_hz[i]);
                }
                current
            }
        };
        formants = Some(current);
        tract.set(&current, sample_rate);

        for n in block {
            let pitch = plan.pitch_midi[n];
            let gain = f64::from(plan.gain[n]);
            let mut excitation = 0.0;
            if pitch.is_finite() && gain > 0.0 {
                let f0_hz = tuning.midi_to_hz(pitch) * jitter_factor;
                phase_cycles += f0_hz / sample_rate;
                if phase_cycles >= 1.0 {
                    phase_cycles -= phase_cycles.floor();
                    // A new glottal cycle: new period and amplitude
                    // perturbations (jitter, shimmer).
                    jitter_factor = 1.0 + jitter_sigma * cycle_random.normal().clamp(-4.0, 4.0);
                    shimmer_factor = 1.0 + shimmer_sigma * cycle_random.normal().clamp(-4.0, 4.0);
                }
                let step = Complex::from_polar(1.0, TAU * phase_cycles);
                let mut rotor = step;
                let mut sum = 0.0;
                for c in &coefficients {
                    sum += c.re * rotor.re - c.im * rotor.im;
                    rotor *= step;
                }
                excitation = gain * (shimmer_factor * sum + breath_gain * breath_random.normal());
            }
            output[n] = tract.process(excitation);
        }
    }
    output
}
