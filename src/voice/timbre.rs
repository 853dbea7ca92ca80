//! Spectral measures of voiced frames: spectral centroid, the singer's
//! formant level, and H1–H2.
//!
//! - Spectral centroid: the magnitude-weighted mean frequency.
//! - Singer's formant level: energy in 2.5–3.5 kHz relative to 0–2 kHz, in
//!   dB (Sundberg 1974, "Articulatory interpretation of the singing formant";
//!   the band ratio follows Sundberg's and Omori et al.'s practice).
//! - H1–H2: level of the first harmonic minus the second, in dB. It rises
//!   when the voice changes from modal (chest) to falsetto/head register
//!   (Roubeau, Henrich & Castellengo 2009; Salomão & Sundberg 2008).
//! - Alpha ratio: energy in 1–5 kHz over 50 Hz–1 kHz, in dB (Frøkjær-Jensen
//!   & Prytz 1976, "Registration of voice quality"), a measure of spectral
//!   tilt: it falls as the spectrum steepens, as it does from modal into
//!   falsetto (Salomão & Sundberg 2008).

use std::sync::Arc;

use rustfft::num_complex::Complex;
use rustfft::{Fft, FftPlanner};
use serde::{Deserialize, Serialize};

/// Window length in seconds: about 46 ms, several periods even at 50 Hz.
const WINDOW_SECONDS: f64 = 0.046;

/// The spectral measures of one stretch of voice.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SpectralMeasures {
    pub centroid_hz: f64,
    pub singers_formant_db: f64,
    pub h1_h2_db: f64,
    /// Spectral tilt as the alpha ratio (1–5 kHz over 50 Hz–1 kHz, dB);
    /// `None` in profiles stored before it was measured.
    #[serde(default)]
    pub alpha_ratio_db: Option<f64>,
}

/// Measures spectra of a mono signal at chosen times.
pub struct SpectrumAnalyser {
    sample_rate: u32,
    length: usize,
    window: Vec<f32>,
    fft: Arc<dyn Fft<f32>>,
    buffer: Vec<Complex<f32>>,
}

impl SpectrumAnalyser {
    pub fn new(sample_rate: u32) -> SpectrumAnalyser {
        let length = ((WINDOW_SECONDS * sample_rate as f64) as usize)
            .next_power_of_two()
            .max(256);
        // Hann window.
        let window = (0..length)
            .map(|n| {
                let phase = 2.0 * std::f32::consts::PI * n as f32 / length as f32;
                0.5 - 0.5 * phase.cos()
            })
            .collect();
        let fft = FftPlanner::new().plan_fft_forward(length);
        SpectrumAnalyser {
            sample_rate,
            length,
            window,
            fft,
            buffer: vec![Complex::default(); length],
        }
    }

    /// Measures the frame centred at `time_seconds` with fundamental `f0_hz`.
    /// `None` when the window does not fit in the signal or it is silent.
    pub fn measure(
        &mut self,
        samples: &[f32],
        time_seconds: f64,
        f0_hz: f64,
    ) -> Option<SpectralMeasures> {
        let centre = (time_seconds * self.sample_rate as f64).round() as isize;
        let start = centre - (self.length / 2) as isize;
        if start < 0 || f0_hz.is_nan() || f0_hz <= 0.0 {
            return None;
        }
        let slice = samples.get(start as usize..start as usize + self.length)?;
        for ((slot, sample), weight) in self.buffer.iter_mut().zip(slice).zip(&self.window) {
            *slot = Complex::new(sample * weight, 0.0);
        }
        self.fft.process(&mut self.buffer);
        let bin_hz = self.sample_rate as f64 / self.length as f64;
        let power: Vec<f64> = self.buffer[..self.length / 2]
            .iter()
            .map(|c| c.norm_sqr() as f64)
            .collect();
        let magnitude_sum: f64 = power.iter().map(|p| p.sqrt()).sum();
        if magnitude_sum <= 1e-12 {
            return None;
        }
        let centroid_hz = power
            .iter()
            .enumerate()
            .map(|(bin, p)| bin as f64 * bin_hz * p.sqrt())
            .sum::<f64>()
            / magnitude_sum;
        let band = |low_hz: f64, high_hz: f64| -> f64 {
            let low = (low_hz / bin_hz).ceil() as usize;
            let high = ((high_hz / bin_hz).floor() as usize).min(power.len().saturating_sub(1));
            power.get(low..=high).map_or(0.0, |bins| bins.iter().sum())
        };
        let singers_formant_db =
            10.0 * ((band(2500.0, 3500.0) + 1e-20) / (band(50.0, 2000.0) + 1e-20)).log10();
        let alpha_ratio_db =
            10.0 * ((band(1000.0, 5000.0) + 1e-20) / (band(50.0, 1000.0) + 1e-20)).log10();
        // Harmonic level: the power of the largest bin within ±3 % of the
        // harmonic plus its two neighbours. With a Hann window that sum is
        // within 0.1 dB whatever the tone's offset from the bin centre,
        // where the peak bin alone would vary by 1.4 dB.
        let peak = |hz: f64| -> f64 {
            let low = ((hz * 0.97) / bin_hz).floor() as usize;
            let high = (((hz * 1.03) / bin_hz).ceil() as usize).min(power.len().saturating_sub(1));
            let Some(bins) = power.get(low..=high) else {
                return 0.0;
            };
            let Some(offset) = (0..bins.len()).max_by(|&a, &b| bins[a].total_cmp(&bins[b])) else {
                return 0.0;
            };
            let centre = low + offset;
            power
                .get(centre.saturating_sub(1)..=(centre + 1).min(power.len() - 1))
                .map_or(0.0, |lobe| lobe.iter().sum())
        };
        let h1_h2_db = 10.0 * ((peak(f0_hz) + 1e-20) / (peak(2.0 * f0_hz) + 1e-20)).log10();
        Some(SpectralMeasures {
            centroid_hz,
            singers_formant_db,
            h1_h2_db,
            alpha_ratio_db: Some(alpha_ratio_db),
        })
    }
}

/// Median of each measure over several frames.
pub fn median_measures(measures: &[SpectralMeasures]) -> Option<SpectralMeasures> {
    let median = |pick: fn(&SpectralMeasures) -> f64| -> Option<f64> {
        let mut values: Vec<f64> = measures
            .iter()
            .map(pick)
            .filter(|v| v.is_finite())
            .collect();
        if values.is_empty() {
            return None;
        }
        values.sort_by(f64::total_cmp);
        Some(values[values.len() / 2])
    };
    Some(SpectralMeasures {
        centroid_hz: median(|m| m.centroid_hz)?,
        singers_formant_db: median(|m| m.singers_formant_db)?,
        h1_h2_db: median(|m| m.h1_h2_db)?,
        alpha_ratio_db: median(|m| m.alpha_ratio_db.unwrap_or(f64::NAN)),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn harmonics(f0: f64, amplitudes: &[f64], sample_rate: u32, seconds: f64) -> Vec<f32> {
        (0..(seconds * sample_rate as f64) as usize)
            .map(|n| {
                let t = n as f64 / sample_rate as f64;
                amplitudes
                    .iter()
                    .enumerate()
                    .map(|(k, a)| a * (2.0 * std::f64::consts::PI * f0 * (k + 1) as f64 * t).sin())
                    .sum::<f64>() as f32
            })
            .collect()
    }

    #[test]
    fn h1_h2_reads_the_first_two_harmonics() {
        // H1 twice the amplitude of H2: 20·log10(2) ≈ 6.02 dB (definition of the decibel).
        let samples = harmonics(200.0, &[1.0, 0.5], 22050, 0.5);
        let mut analyser = SpectrumAnalyser::new(22050);
        let measures = analyser.measure(&samples, 0.25, 200.0).unwrap();
        assert!(
            (measures.h1_h2_db - 6.02).abs() < 0.3,
            "{}",
            measures.h1_h2_db
        );
    }

    #[test]
    fn alpha_ratio_compares_the_bands_above_and_below_one_kilohertz() {
        // 500 Hz at amplitude 1 and 2 kHz at 0.1: the power ratio of the
        // 1–5 kHz band to the 50 Hz–1 kHz band is 0.1², i.e. −20 dB
        // (definition of the decibel).
        let samples: Vec<f32> = (0..11025)
            .map(|n| {
                let t = n as f64 / 22050.0;
                let tau = 2.0 * std::f64::consts::PI;
                ((tau * 500.0 * t).sin() + 0.1 * (tau * 2000.0 * t).sin()) as f32
            })
            .collect();
        let mut analyser = SpectrumAnalyser::new(22050);
        let measures = analyser.measure(&samples, 0.25, 500.0).unwrap();
        assert!(
            (measures.alpha_ratio_db.unwrap() + 20.0).abs() < 0.5,
            "{:?}",
            measures.alpha_ratio_db
        );
    }

    #[test]
    fn centroid_of_a_pure_tone_is_its_frequency() {
        let samples = harmonics(1000.0, &[1.0], 22050, 0.5);
        let mut analyser = SpectrumAnalyser::new(22050);
        let measures = analyser.measure(&samples, 0.25, 1000.0).unwrap();
        assert!(
            (measures.centroid_hz - 1000.0).abs() < 30.0,
            "{}",
            measures.centroid_hz
        );
    }

    #[test]
    fn energy_near_three_kilohertz_raises_the_singers_formant_level() {
        let plain = harmonics(250.0, &[1.0, 0.5, 0.3], 22050, 0.5);
        let mut ringing = [1.0, 0.5, 0.3, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.4].to_vec();
        ringing.truncate(12); // the 12th harmonic of 250 Hz is 3 kHz
        let bright = harmonics(250.0, &ringing, 22050, 0.5);
        let mut analyser = SpectrumAnalyser::new(22050);
        let a = analyser.measure(&plain, 0.25, 250.0).unwrap();
        let b = analyser.measure(&bright, 0.25, 250.0).unwrap();
        assert!(
            b.singers_formant_db > a.singers_formant_db + 20.0,
            "{a:?} {b:?}"
        );
    }
}
