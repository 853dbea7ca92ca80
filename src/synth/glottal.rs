//! The voice source: the harmonic spectrum of a Rosenberg glottal pulse
//! (Rosenberg, "Effect of glottal pulse shape on the quality of natural
//! vowels", JASA 49, 1971; his "type C" trigonometric pulse), differentiated
//! to include the lip-radiation characteristic, as in Klatt's synthesiser
//! (Klatt, "Software for a cascade/parallel formant synthesizer", JASA 67,
//! 1980).
//!
//! The source is synthesised additively, one sinusoid per harmonic below the
//! Nyquist frequency, so no energy folds back at any f0 (band-limited by
//! construction). The pulse shape only depends on the open quotient and the
//! speed quotient, so its Fourier coefficients are computed once per register.

use rustfft::{FftPlanner, num_complex::Complex};
use serde::{Deserialize, Serialize};

/// Laryngeal mechanism (register) of the voice source.
///
/// Roubeau, Henrich & Castellengo ("Laryngeal vibratory mechanisms: the
/// notion of vocal register revisited", J. Voice 23, 2009) describe modal
/// voice (M1) with a shorter open phase and a richer spectrum, and falsetto /
/// head voice (M2) with a longer open phase, a stronger first harmonic
/// relative to the second (H1–H2 up) and a steeper spectral slope.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Register {
    /// Mechanism M1 (chest, modal).
    Modal,
    /// Mechanism M2 (falsetto, head voice).
    Falsetto,
}

/// Shape of one glottal pulse (Rosenberg 1971 type C).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PulseShape {
    /// Open phase as a share of the period.
    pub open_quotient: f64,
    /// Opening time divided by closing time.
    pub speed_quotient: f64,
    /// Extra spectral slope in dB per octave above 500 Hz (negative = steeper).
    pub extra_tilt_db_per_octave: f64,
}

impl PulseShape {
    /// Typical shape for a register. Values from memory, in the ranges
    /// Roubeau et al. (2009) report: open quotient about 0.3–0.8 in M1 and
    /// 0.5–0.95 in M2, with a steeper slope in M2.
    pub fn for_register(register: Register) -> PulseShape {
        match register {
            Register::Modal => PulseShape {
                open_quotient: 0.55,
                speed_quotient: 2.5,
                extra_tilt_db_per_octave: 0.0,
            },
            Register::Falsetto => PulseShape {
                open_quotient: 0.85,
                speed_quotient: 1.3,
                extra_tilt_db_per_octave: -4.0,
            },
        }
    }
}

/// Grid for the numerical Fourier series of one period. 2^15 points keep the
/// error of the first few hundred coefficients far below audibility.
const PERIOD_POINTS: usize = 1 << 15;

/// Complex Fourier coefficients c_k (k = 1…) of the differentiated pulse,
/// scaled so that |c_1| = 1. The source is Σ_k Re(c_k · e^{i k φ}).
pub fn pulse_harmonics(shape: &PulseShape, count: usize) -> Vec<Complex<f64>> {
    let open = shape.open_quotient.clamp(0.05, 0.99);
    let speed = shape.speed_quotient.max(0.1);
    let opening = open * speed / (1.0 + speed);
    let closing = open - opening;
    // Rosenberg type C glottal flow over one period (phase 0–1).
    let flow = |phase: f64| -> f64 {
        if phase < opening {
            0.5 * (1.0 - (std::f64::consts::PI * phase / opening).cos())
        } else if phase < open {
            (std::f64::consts::FRAC_PI_2 * (phase - opening) / closing).cos()
        } else {
            0.0
        }
    };
    let mut buffer: Vec<Complex<f64>> = (0..PERIOD_POINTS)
        .map(|index| Complex::new(flow(index as f64 / PERIOD_POINTS as f64), 0.0))
        .collect();
    FftPlanner::new()
        .plan_fft_forward(PERIOD_POINTS)
        .process(&mut buffer);
    let count = count.min(PERIOD_POINTS / 2 - 1);
    // The flow is continuous, so its series converges fast; differentiate in
    // the Fourier domain (multiply by i k) for the radiated flow derivative.
    // A forward DFT gives conj-coefficients for e^{-ikφ}; take the conjugate
    // so that the source reads Σ Re(c_k e^{+ikφ}).
    let mut harmonics: Vec<Complex<f64>> = (1..=count)
        .map(|k| buffer[k].conj() * Complex::new(0.0, k as f64))
        .collect();
    let first = harmonics.first().map_or(1.0, |c| c.norm()).max(1e-12);
    for c in &mut harmonics {
        *c /= first;
    }
    harmonics
}

/// H1–H2 in dB of a coefficient series (level of the first harmonic over the
/// second), the usual measure of source "breathiness" / register.
pub fn h1_minus_h2_db(harmonics: &[Complex<f64>]) -> Option<f64> {
    let first = harmonics.first()?.norm();
    let second = harmonics.get(1)?.norm();
    (first > 0.0 && second > 0.0).then(|| 20.0 * (first / second).log10())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn falsetto_has_a_stronger_first_harmonic_than_modal_voice() {
        // Roubeau, Henrich & Castellengo 2009: H1–H2 is higher in M2
        // (falsetto) than in M1 (modal).
        let modal = pulse_harmonics(&PulseShape::for_register(Register::Modal), 8);
        let falsetto = pulse_harmonics(&PulseShape::for_register(Register::Falsetto), 8);
        let modal_db = h1_minus_h2_db(&modal).unwrap_or(f64::NAN);
        let falsetto_db = h1_minus_h2_db(&falsetto).unwrap_or(f64::NAN);
        assert!(
            falsetto_db > modal_db + 3.0,
            "H1–H2 modal {modal_db:.1} dB, falsetto {falsetto_db:.1} dB"
        );
    }

    #[test]
    fn the_pulse_derivative_falls_about_6_db_per_octave_at_high_harmonics() {
        // Rosenberg's pulse has a slope discontinuity at closure, so the flow
        // spectrum falls 12 dB/octave and its derivative 6 dB/octave
        // (Fourier series of a function with a jump in its first derivative,
        // a textbook property). Average over neighbouring harmonics because
        // the envelope has zeros.
        let harmonics = pulse_harmonics(&PulseShape::for_register(Register::Modal), 512);
        let band_power = |from: usize, to: usize| -> f64 {
            harmonics[from - 1..to]
                .iter()
                .map(|c| c.norm_sqr())
                .sum::<f64>()
                / (to - from + 1) as f64
        };
        let slope_db = 10.0 * (band_power(200, 260) / band_power(100, 130)).log10();
        assert!(
            (slope_db + 6.0).abs() < 1.5,
            "slope {slope_db:.2} dB/octave"
        );
    }
}
