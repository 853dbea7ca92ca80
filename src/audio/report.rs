//! The signal report, computed incrementally while a file streams through.
//!
//! Definitions (docs/METHODS.md, "Audio input"):
//! - clipped share: share of all channel samples at the format's top code
//!   (integer PCM) or at |x| ≥ 0.9999 (float and lossy sources);
//! - DC offset: mean of the mono mix;
//! - noise floor: 10th percentile of the RMS level of non-overlapping 50 ms
//!   frames of the mono mix, in dBFS;
//! - peak: largest |sample| over all channels, dBFS; RMS: of the mono mix.
//!
//! Invariant: memory is a fixed-size histogram of frame levels (0.1 dB bins),
//! whatever the length of the file.

use std::path::Path;

use super::{AudioError, SignalReport};

/// Lowest level the report shows; digital silence is reported at this level
/// rather than as −∞ (which JSON cannot carry).
pub const FLOOR_DB: f64 = -160.0;
const TOP_DB: f64 = 10.0;
const BIN_DB: f64 = 0.1;
const BINS: usize = ((TOP_DB - FLOOR_DB) / BIN_DB) as usize;

/// Frame length for the noise-floor estimate.
pub const NOISE_FRAME_SECONDS: f64 = 0.05;
/// Percentile of frame levels taken as the noise floor.
pub const NOISE_FLOOR_PERCENTILE: f64 = 10.0;

/// Warn when more than this share of samples is clipped (0.1 %).
pub const CLIPPED_SHARE_WARNING: f64 = 0.001;
/// Warn when the DC offset exceeds this (1 % of full scale).
pub const DC_OFFSET_WARNING: f64 = 0.01;
/// Warn when the noise floor is above this level.
pub const NOISE_FLOOR_WARNING_DB: f64 = -40.0;
/// Refuse recordings shorter than this.
pub const MIN_DURATION_SECONDS: f64 = 0.5;
/// Refuse recordings whose peak is below this level.
pub const SILENCE_PEAK_DB: f64 = -60.0;

pub(crate) fn to_db(amplitude: f64) -> f64 {
    if amplitude > 0.0 {
        (20.0 * amplitude.log10()).max(FLOOR_DB)
    } else {
        FLOOR_DB
    }
}

pub(crate) struct ReportBuilder {
    clip_level: f32,
    channel_samples: u64,
    clipped: u64,
    peak: f32,
    mono_samples: u64,
    sum: f64,
    sum_squares: f64,
    frame_len: usize,
    frame_fill: usize,
    frame_squares: f64,
    histogram: Vec<u64>,
    frames: u64,
}

impl ReportBuilder {
    /// `clip_level`: the magnitude at and above which a sample counts as
    /// clipped, for this file's sample format.
    pub(crate) fn new(sample_rate: u32, clip_level: f32) -> Self {
        Self {
            clip_level,
            channel_samples: 0,
            clipped: 0,
            peak: 0.0,
            mono_samples: 0,
            sum: 0.0,
            sum_squares: 0.0,
            frame_len: ((f64::from(sample_rate) * NOISE_FRAME_SECONDS).round() as usize).max(1),
            frame_fill: 0,
            frame_squares: 0.0,
            histogram: vec![0; BINS],
            frames: 0,
        }
    }

    /// Counts clipping and peak over the individual channel samples.
    ///
    /// Eight running counts and maxima, merged at the end, so the loop
    /// vectorises; counting and taking a maximum are exact in any order, so
    /// the figures equal a sample-by-sample pass.
    pub(crate) fn push_channel_samples(&mut self, interleaved: &[f32]) {
        const LANES: usize = 8;
        let clip_level = self.clip_level;
        let mut clipped = [0u32; LANES];
        let mut peak = [0.0f32; LANES];
        let mut chunks = interleaved.chunks_exact(LANES);
        for chunk in &mut chunks {
            for lane in 0..LANES {
                let a = chunk[lane].abs();
                clipped[lane] += u32::from(a >= clip_level);
                peak[lane] = if a > peak[lane] { a } else { peak[lane] };
            }
        }
        for &x in chunks.remainder() {
            let a = x.abs();
            clipped[0] += u32::from(a >= clip_level);
            peak[0] = if a > peak[0] { a } else { peak[0] };
        }
        for lane in 0..LANES {
            self.clipped += u64::from(clipped[lane]);
            if peak[lane] > self.peak {
                self.peak = peak[lane];
            }
        }
        self.channel_samples += interleaved.len() as u64;
    }

    /// Accumulates DC, RMS and frame levels over the mono mix.
    pub(crate) fn push_mono(&mut self, mono: &[f32]) {
        for &x in mono {
            let x = f64::from(x);
            self.sum += x;
            self.sum_squares += x * x;
            self.frame_squares += x * x;
            self.frame_fill += 1;
            if self.frame_fill == self.frame_len {
                self.close_frame();
            }
        }
        self.mono_samples += mono.len() as u64;
    }

    fn close_frame(&mut self) {
        let rms = (self.frame_squares / self.frame_fill.max(1) as f64).sqrt();
        let bin = ((to_db(rms) - FLOOR_DB) / BIN_DB).floor();
        let bin = (bin.max(0.0) as usize).min(BINS - 1);
        if let Some(count) = self.histogram.get_mut(bin) {
            *count += 1;
        }
        self.frames += 1;
        self.frame_fill = 0;
        self.frame_squares = 0.0;
    }

    fn noise_floor_db(&self) -> f64 {
        if self.frames == 0 {
            return FLOOR_DB;
        }
        let rank = ((NOISE_FLOOR_PERCENTILE / 100.0) * self.frames as f64)
            .ceil()
            .max(1.0) as u64;
        let mut seen = 0;
        for (i, count) in self.histogram.iter().enumerate() {
            seen += count;
            if seen >= rank {
                return FLOOR_DB + (i as f64 + 0.5) * BIN_DB;
            }
        }
        TOP_DB
    }

    /// Completes the report. `extra_warnings` come from decoding (truncation,
    /// replaced samples). Silent, too-short and empty recordings are errors.
    pub(crate) fn finish(
        mut self,
        file: &Path,
        source_sample_rate: u32,
        extra_warnings: Vec<String>,
    ) -> Result<SignalReport, AudioError> {
        let unusable = |message: String| AudioError::Unusable {
            file: file.to_path_buf(),
            message,
        };
        if self.mono_samples == 0 {
            return Err(unusable("contains no audio samples".into()));
        }
        // A last partial frame counts if it is at least half a frame long.
        if self.frame_fill * 2 >= self.frame_len {
            self.close_frame();
        }
        let duration_seconds = self.mono_samples as f64 / f64::from(source_sample_rate.max(1));
        if duration_seconds < MIN_DURATION_SECONDS {
            return Err(unusable(format!(
                "is {duration_seconds:.2} s long; at least {MIN_DURATION_SECONDS} s is needed"
            )));
        }
        let peak_db = to_db(f64::from(self.peak));
        if peak_db < SILENCE_PEAK_DB {
            let level = if peak_db <= FLOOR_DB {
                "every sample is zero".to_string()
            } else {
                format!("peak level {peak_db:.1} dBFS, below {SILENCE_PEAK_DB} dBFS")
            };
            return Err(unusable(format!("is silent ({level})")));
        }
        let n = self.mono_samples as f64;
        let dc_offset = self.sum / n;
        let rms_db = to_db((self.sum_squares / n).sqrt());
        let clipped_share = self.clipped as f64 / self.channel_samples.max(1) as f64;
        let noise_floor_db = self.noise_floor_db();

        let mut warnings = extra_warnings;
        if clipped_share > CLIPPED_SHARE_WARNING {
            warnings.push(format!(
                "{:.2} % of samples are clipped (at full scale); loud notes may be distorted, \
                 so record with more headroom",
                clipped_share * 100.0
            ));
        }
        if dc_offset.abs() > DC_OFFSET_WARNING {
            warnings.push(format!(
                "DC offset of {dc_offset:+.3} of full scale; the microphone or interface \
                 may be faulty"
            ));
        }
        if noise_floor_db > NOISE_FLOOR_WARNING_DB {
            // Levels alone cannot tell a steady held tone from steady noise,
            // so the message names both readings.
            warnings.push(format!(
                "no quiet passage: the quietest tenth of the file is at {noise_floor_db:.1} dBFS \
                 (above {NOISE_FLOOR_WARNING_DB} dBFS); either the sound never pauses or the \
                 background is noisy enough to hide quiet singing"
            ));
        }
        Ok(SignalReport {
            clipped_share,
            dc_offset,
            noise_floor_db,
            peak_db,
            rms_db,
            warnings,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn report_of(samples: &[f32], rate: u32) -> Result<SignalReport, AudioError> {
        let mut b = ReportBuilder::new(rate, 1.0);
        b.push_channel_samples(samples);
        b.push_mono(samples);
        b.finish(Path::new("x.wav"), rate, Vec::new())
    }

    /// A sine of amplitude A has peak 20·log10(A) and RMS 20·log10(A/√2)
    /// (definition of RMS); for A = 0.5: −6.02 and −9.03 dBFS.
    #[test]
    fn sine_levels_follow_the_rms_definition() {
        let rate = 8000;
        let s: Vec<f32> = (0..rate)
            .map(|i| 0.5 * (std::f32::consts::TAU * 200.0 * i as f32 / rate as f32).sin())
            .collect();
        let r = report_of(&s, rate).expect("report");
        assert!((r.peak_db - -6.02).abs() < 0.05, "{}", r.peak_db);
        assert!((r.rms_db - -9.03).abs() < 0.05, "{}", r.rms_db);
        // Every 50 ms frame holds whole cycles of 200 Hz, so the floor is the
        // RMS, and a tone that never pauses gets the "no quiet passage" note.
        assert!(
            (r.noise_floor_db - -9.03).abs() < 0.1,
            "{}",
            r.noise_floor_db
        );
        assert_eq!(r.warnings.len(), 1, "{:?}", r.warnings);
        assert!(
            r.warnings[0].starts_with("no quiet passage"),
            "{:?}",
            r.warnings
        );
    }

    /// Noise floor = 10th percentile of frame levels: a file whose first
    /// fifth is at −50 dBFS and the rest at −10 dBFS has its floor at −50.
    #[test]
    fn noise_floor_is_the_quiet_tenth() {
        let rate = 8000;
        let s: Vec<f32> = (0..rate * 2)
            .map(|i| {
                let a = if i < rate * 2 / 5 { 0.003_162 } else { 0.316_2 };
                // square wave: RMS equals amplitude
                if (i / 20) % 2 == 0 { a } else { -a }
            })
            .collect();
        let r = report_of(&s, rate).expect("report");
        assert!(
            (r.noise_floor_db - -50.0).abs() < 0.2,
            "{}",
            r.noise_floor_db
        );
        assert!(r.warnings.is_empty(), "{:?}", r.warnings);
    }

    #[test]
    fn dc_offset_and_clipping_are_warned() {
        let rate = 8000;
        let mut s: Vec<f32> = (0..rate)
            .map(|i| 0.05 + 0.3 * (std::f32::consts::TAU * 100.0 * i as f32 / rate as f32).sin())
            .collect();
        for x in s.iter_mut().take(100) {
            *x = 1.0;
        }
        let r = report_of(&s, rate).expect("report");
        // DC offset is the mean (its definition), here 0.05 plus what the
        // 100 clipped samples add.
        let mean = s.iter().map(|&x| f64::from(x)).sum::<f64>() / s.len() as f64;
        assert!(
            (r.dc_offset - mean).abs() < 1e-9,
            "{} vs {mean}",
            r.dc_offset
        );
        assert!(mean > 0.05);
        assert!((r.clipped_share - 100.0 / 8000.0).abs() < 1e-9);
        assert!(
            r.warnings.iter().any(|w| w.contains("clipped")),
            "{:?}",
            r.warnings
        );
        assert!(
            r.warnings.iter().any(|w| w.contains("DC offset")),
            "{:?}",
            r.warnings
        );
    }

    #[test]
    fn silence_and_short_input_are_errors_naming_the_file() {
        let e = report_of(&vec![0.0; 8000], 8000).expect_err("silent");
        assert_eq!(e.to_string(), "x.wav: is silent (every sample is zero)");
        let e = report_of(&vec![0.5; 960], 8000).expect_err("short");
        assert_eq!(
            e.to_string(),
            "x.wav: is 0.12 s long; at least 0.5 s is needed"
        );
        let e = report_of(&[], 8000).expect_err("empty");
        assert_eq!(e.to_string(), "x.wav: contains no audio samples");
    }
}
