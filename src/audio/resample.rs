//! Streaming sample-rate conversion of a mono signal with rubato's
//! synchronous FFT resampler.
//!
//! Why FFT: the ratio between a file's rate and the analysis rate is fixed,
//! and rubato documents its `Fft` resampler as the fast, full-quality choice
//! for a fixed ratio (its anti-aliasing filter is a Blackman–Harris²-windowed
//! low-pass below the lower Nyquist frequency). See docs/METHODS.md, "Audio
//! input".
//!
//! Invariant: memory is bounded by one resampler chunk, whatever the length
//! of the stream; the output is trimmed of the resampler's start-up delay and
//! of the tail padding, so `n` input samples give `ceil(n · out / in)` output
//! samples aligned with the input.

use rubato::audioadapter_buffers::direct::InterleavedSlice;
use rubato::{Fft, FixedSync, Indexing, Resampler};

/// Input frames per FFT resampler call. Small enough that the buffers stay
/// tiny, large enough that the FFT work per sample is low.
const CHUNK_FRAMES: usize = 1024;

/// A mono streaming resampler: push samples at the input rate, get samples at
/// the output rate.
pub(crate) struct StreamResampler {
    inner: Fft<f32>,
    input_rate: u32,
    output_rate: u32,
    /// Input samples not yet handed to the resampler (fewer than one chunk
    /// between calls).
    pending: Vec<f32>,
    output: Vec<f32>,
    delay_to_trim: usize,
    total_in: u64,
    total_out: u64,
}

impl StreamResampler {
    pub(crate) fn new(input_rate: u32, output_rate: u32) -> Result<Self, String> {
        let inner = Fft::<f32>::new(
            input_rate as usize,
            output_rate as usize,
            CHUNK_FRAMES,
            1,
            FixedSync::Input,
        )
        .map_err(|e| format!("cannot resample {input_rate} Hz to {output_rate} Hz: {e}"))?;
        let delay_to_trim = inner.output_delay();
        let output = vec![0.0; inner.output_frames_max()];
        Ok(Self {
            pending: Vec::with_capacity(inner.input_frames_next()),
            inner,
            input_rate,
            output_rate,
            output,
            delay_to_trim,
            total_in: 0,
            total_out: 0,
        })
    }

    /// Feeds input samples; returns the output samples that are ready.
    pub(crate) fn push(&mut self, input: &[f32]) -> Result<Vec<f32>, String> {
        self.total_in += input.len() as u64;
        let mut ready = Vec::with_capacity(
            (input.len() as u64 * u64::from(self.output_rate) / u64::from(self.input_rate))
                as usize
                + 16,
        );
        let mut rest = input;
        loop {
            let need = self.inner.input_frames_next();
            let take = need.saturating_sub(self.pending.len()).min(rest.len());
            let (head, tail) = rest.split_at(take);
            self.pending.extend_from_slice(head);
            rest = tail;
            if self.pending.len() < need {
                break;
            }
            self.run(None, &mut ready)?;
            self.pending.clear();
        }
        Ok(ready)
    }

    /// Flushes the tail: returns the last output samples so that the total
    /// output length is `ceil(total_in · out / in)`.
    pub(crate) fn finish(&mut self) -> Result<Vec<f32>, String> {
        let expected =
            (self.total_in * u64::from(self.output_rate)).div_ceil(u64::from(self.input_rate));
        let mut ready = Vec::new();
        let partial = self.pending.len();
        if partial > 0 {
            let need = self.inner.input_frames_next();
            self.pending.resize(need, 0.0);
            self.run(Some(partial), &mut ready)?;
            self.pending.clear();
        }
        // Pump silence through until the delayed tail has come out. Each
        // call yields at least one output frame, so this ends; the guard
        // caps it anyway.
        let mut guard = 0;
        while self.total_out < expected && guard < 1_000 {
            let need = self.inner.input_frames_next();
            self.pending.resize(need, 0.0);
            self.run(Some(0), &mut ready)?;
            self.pending.clear();
            guard += 1;
        }
        let excess = self.total_out.saturating_sub(expected) as usize;
        ready.truncate(ready.len().saturating_sub(excess));
        self.total_out = self.total_out.min(expected);
        Ok(ready)
    }

    /// Capacity of the internal buffers, in samples (for bounded-memory checks).
    pub(crate) fn buffer_capacity(&self) -> usize {
        self.pending.capacity() + self.output.capacity()
    }

    fn run(&mut self, partial_len: Option<usize>, ready: &mut Vec<f32>) -> Result<(), String> {
        let need = self.inner.input_frames_next();
        let out_frames = self.output.len();
        let input = InterleavedSlice::new(&self.pending[..], 1, need)
            .map_err(|e| format!("resampler input buffer: {e}"))?;
        let mut output = InterleavedSlice::new_mut(&mut self.output[..], 1, out_frames)
            .map_err(|e| format!("resampler output buffer: {e}"))?;
        let indexing = Indexing {
            partial_len,
            ..Indexing::default()
        };
        let (_, written) = self
            .inner
            .process_into_buffer(&input, &mut output, Some(&indexing))
            .map_err(|e| format!("resampling failed: {e}"))?;
        let produced = &self.output[..written.min(out_frames)];
        let skip = self.delay_to_trim.min(produced.len());
        self.delay_to_trim -= skip;
        let kept = &produced[skip..];
        self.total_out += kept.len() as u64;
        ready.extend_from_slice(kept);
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sine(rate: u32, freq_hz: f64, seconds: f64) -> Vec<f32> {
        let n = (f64::from(rate) * seconds) as usize;
        (0..n)
            .map(|i| {
                (0.5 * (std::f64::consts::TAU * freq_hz * i as f64 / f64::from(rate)).sin()) as f32
            })
            .collect()
    }

    /// The output length is the input length times the ratio, rounded up,
    /// whatever the push pattern: the delay and padding are trimmed.
    #[test]
    fn output_length_is_input_length_times_ratio() {
        let input = sine(44_100, 220.0, 1.0);
        for piece in [1usize, 317, 1024, 5000] {
            let mut r = StreamResampler::new(44_100, 22_050).expect("resampler");
            let mut out = Vec::new();
            for chunk in input.chunks(piece) {
                out.extend(r.push(chunk).expect("push"));
            }
            out.extend(r.finish().expect("finish"));
            assert_eq!(out.len(), 22_050, "piece size {piece}");
        }
    }

    /// Pushing in pieces gives the same samples as pushing all at once.
    #[test]
    fn chunking_does_not_change_the_output() {
        let input = sine(48_000, 330.0, 0.7);
        let run = |piece: usize| {
            let mut r = StreamResampler::new(48_000, 22_050).expect("resampler");
            let mut out = Vec::new();
            for chunk in input.chunks(piece) {
                out.extend(r.push(chunk).expect("push"));
            }
            out.extend(r.finish().expect("finish"));
            out
        };
        let whole = run(input.len());
        let pieces = run(333);
        assert_eq!(whole.len(), pieces.len());
        let worst = whole
            .iter()
            .zip(&pieces)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0f32, f32::max);
        assert!(worst < 1e-5, "largest difference {worst}");
    }

    /// After trimming the delay, the output lines up with the input in time:
    /// the sine's phase at t = 0.25 s matches the analytic value.
    #[test]
    fn delay_is_trimmed() {
        let input = sine(44_100, 100.0, 0.5);
        let mut r = StreamResampler::new(44_100, 22_050).expect("resampler");
        let mut out = r.push(&input).expect("push");
        out.extend(r.finish().expect("finish"));
        // 100 Hz at 22 050 Hz: sample k is 0.5·sin(2π·100·k/22050).
        for k in [5000usize, 5512, 6000] {
            let expected = 0.5 * (std::f64::consts::TAU * 100.0 * k as f64 / 22_050.0).sin();
            let got = f64::from(out[k]);
            assert!(
                (got - expected).abs() < 0.01,
                "sample {k}: {got} vs {expected}"
            );
        }
    }
}
