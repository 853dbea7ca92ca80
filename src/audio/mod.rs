//! Audio input: decoding WAV, FLAC, OGG/Vorbis, MP3 and m4a/AAC to mono
//! samples at the analysis rate, with a report on the signal's condition.
//!
//! Architecture invariant: audio knows nothing about pitch. Memory stays
//! bounded by the chunk size whatever the file's length when read through
//! [`AudioReader`]; [`decode_file`] holds the whole (resampled, mono) signal
//! and nothing else.
//!
//! Flow: the file's first bytes decide the route (RIFF/WAVE → our header scan
//! and hound; anything else → symphonia's content probe). Each block of
//! interleaved samples is checked for NaN/∞, counted into the report
//! (clipping and peak per channel), mixed to mono (mean of the channels),
//! counted again (DC, RMS, frame levels), and resampled (rubato, FFT).
//! Methods and thresholds: docs/METHODS.md, "Audio input".

mod codec;
mod report;
mod resample;
mod wav;

use std::io::Read;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

pub use report::{
    CLIPPED_SHARE_WARNING, DC_OFFSET_WARNING, FLOOR_DB, MIN_DURATION_SECONDS,
    NOISE_FLOOR_PERCENTILE, NOISE_FLOOR_WARNING_DB, NOISE_FRAME_SECONDS, SILENCE_PEAK_DB,
};

/// The rate the analysis stages work at, Hz. 22 050 Hz keeps everything up
/// to 11 kHz: f0 up to the tracker's 2100 Hz ceiling with five harmonics, and
/// the singer's-formant band (2.5–3.5 kHz) the voice stage looks at. It is
/// librosa's default rate, so the reference comparisons run on the same
/// samples, and the common 44.1 kHz input halves exactly. See
/// docs/METHODS.md, "Audio input", for the measurements behind the choice.
pub const ANALYSIS_SAMPLE_RATE: u32 = 22_050;
/// Files below this rate are refused: telephone-band audio (8 kHz) is the
/// lowest that still carries a sung voice's lower harmonics.
pub const MIN_SOURCE_SAMPLE_RATE: u32 = 8_000;
/// Files above this rate are refused as damaged headers: 384 kHz is the
/// highest rate common studio interfaces offer.
pub const MAX_SOURCE_SAMPLE_RATE: u32 = 384_000;
/// For float and lossy sources, a sample this close to full scale counts as
/// clipped (integer PCM uses its top code instead).
pub const FLOAT_CLIP_LEVEL: f32 = 0.9999;

/// Longest recording decoded whole by default ([`DecodeOptions::default`]):
/// 30 minutes, far beyond any audition task (a song is a few minutes), and
/// about 160 MB of mono samples at [`ANALYSIS_SAMPLE_RATE`].
pub const MAX_DECODE_SECONDS: f64 = 30.0 * 60.0;
/// Largest compressed or companded audio file read (a budget on the bytes
/// read, so a device or pipe that never ends is stopped): 4 GiB, the most a
/// RIFF/WAV file can hold. Durations are capped separately.
pub const MAX_AUDIO_BYTES: u64 = 4 << 30;

/// How to decode.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DecodeOptions {
    /// Resample to this rate; `None` keeps the file's own rate.
    pub target_sample_rate: Option<u32>,
    /// Refuse recordings longer than this ([`AudioError::TooLong`]): early
    /// when the header gives the length, else as soon as decoding passes
    /// it, so no more than this much audio is ever held. `None`: no limit
    /// (for streaming readers whose memory does not grow with the length).
    pub max_duration_seconds: Option<f64>,
}

impl Default for DecodeOptions {
    /// Resample to [`ANALYSIS_SAMPLE_RATE`]; at most [`MAX_DECODE_SECONDS`].
    fn default() -> Self {
        Self {
            target_sample_rate: Some(ANALYSIS_SAMPLE_RATE),
            max_duration_seconds: Some(MAX_DECODE_SECONDS),
        }
    }
}

/// "30 min", "4 h", "90 s": a duration limit in words.
pub fn duration_words(seconds: f64) -> String {
    if seconds >= 3600.0 && (seconds / 3600.0).fract() == 0.0 {
        format!("{} h", seconds / 3600.0)
    } else if seconds >= 60.0 && (seconds / 60.0).fract() == 0.0 {
        format!("{} min", seconds / 60.0)
    } else {
        format!("{seconds} s")
    }
}

/// A decoded recording, mixed to mono.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Audio {
    pub samples: Vec<f32>,
    /// Rate of `samples` (after resampling).
    pub sample_rate: u32,
    /// The file's own rate and channel count.
    pub source_sample_rate: u32,
    pub source_channels: u16,
    pub duration_seconds: f64,
    pub report: SignalReport,
}

/// The condition of a recording.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SignalReport {
    /// Share of samples at or within a hair of full scale, 0–1.
    pub clipped_share: f64,
    /// Mean sample value (full scale = 1).
    pub dc_offset: f64,
    /// Level of the quietest part of the file, dBFS.
    pub noise_floor_db: f64,
    pub peak_db: f64,
    pub rms_db: f64,
    /// Plain-language warnings (clipping, DC offset, noise, very short).
    pub warnings: Vec<String>,
}

#[derive(Debug, Error)]
pub enum AudioError {
    #[error("{}: cannot read: {source}", file.display())]
    Io {
        file: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{}: {message}", file.display())]
    Unsupported { file: PathBuf, message: String },
    #[error("{}: {message}", file.display())]
    Malformed { file: PathBuf, message: String },
    #[error("{}: {message}", file.display())]
    Unusable { file: PathBuf, message: String },
    /// Longer than [`DecodeOptions::max_duration_seconds`].
    #[error(
        "{}: is longer than {} ({}), the most Ambit analyses of one recording here; \
         cut it to the part you need",
        file.display(),
        duration_words(*limit_seconds),
        found
    )]
    TooLong {
        file: PathBuf,
        limit_seconds: f64,
        /// What was found: "the header says 10.0 h" or "more was decoded".
        found: String,
    },
}

enum Source {
    Wav(wav::WavSource),
    Codec(Box<codec::CodecSource>),
}

/// A file being decoded chunk by chunk: mono samples at the target rate.
///
/// Memory is bounded: one source block, one resampler chunk and a fixed
/// histogram, whatever the length of the file.
pub struct AudioReader {
    path: PathBuf,
    source: Source,
    source_sample_rate: u32,
    source_channels: u16,
    sample_rate: u32,
    resampler: Option<resample::StreamResampler>,
    report: report::ReportBuilder,
    block: Vec<f32>,
    mono: Vec<f32>,
    source_frames: u64,
    non_finite: u64,
    first_non_finite_frame: Option<u64>,
    input_done: bool,
    done: bool,
    largest_chunk: usize,
    /// Most source frames accepted (from `max_duration_seconds`).
    max_source_frames: Option<u64>,
    max_duration_seconds: Option<f64>,
}

/// Opens a file for streaming decode. The header is read and checked here
/// (format, codec, sample rate, channel count), so a file that cannot be
/// decoded fails now rather than at the first chunk.
pub fn open(path: &Path, options: &DecodeOptions) -> Result<AudioReader, AudioError> {
    let mut magic = [0u8; 12];
    let got = {
        let mut f = std::fs::File::open(path).map_err(|source| AudioError::Io {
            file: path.to_path_buf(),
            source,
        })?;
        read_up_to(&mut f, &mut magic).map_err(|source| AudioError::Io {
            file: path.to_path_buf(),
            source,
        })?
    };
    if got == 0 {
        return Err(AudioError::Unusable {
            file: path.to_path_buf(),
            message: "is empty (0 bytes)".into(),
        });
    }
    let (source, rate, channels, clip_level) = if wav::looks_like_wav(&magic[..got]) {
        match wav::scan(path)? {
            wav::WavRoute::Hound(header) => {
                let s = wav::WavSource::open(path, header)?;
                let (rate, channels, clip) =
                    (s.header.sample_rate, s.header.channels, s.clip_level());
                (Source::Wav(s), rate, channels, clip)
            }
            wav::WavRoute::Companded => {
                let s = codec::CodecSource::open(path)?;
                // µ-law/A-law decode to 16-bit-like steps; their top code is
                // at 32124/32768 of full scale (ITU-T G.711).
                let (rate, channels) = (s.sample_rate, s.channels);
                (Source::Codec(Box::new(s)), rate, channels, 0.98)
            }
        }
    } else {
        let s = codec::CodecSource::open(path)?;
        let (rate, channels) = (s.sample_rate, s.channels);
        (Source::Codec(Box::new(s)), rate, channels, FLOAT_CLIP_LEVEL)
    };
    let max_source_frames = options
        .max_duration_seconds
        .map(|seconds| (seconds.max(0.0) * f64::from(rate)).ceil() as u64);
    // Refused before any decoding when the header gives the length.
    let promised = match &source {
        // A WAV's frames as far as the file really holds them (a header
        // written for a stream may promise 4 GiB).
        Source::Wav(s) => Some(s.promised_frames.min(s.present_frames)),
        Source::Codec(s) => s.promised_frames,
    };
    if let (Some(limit), Some(frames), Some(limit_seconds)) =
        (max_source_frames, promised, options.max_duration_seconds)
        && frames > limit
    {
        return Err(AudioError::TooLong {
            file: path.to_path_buf(),
            limit_seconds,
            found: format!(
                "its header says {}",
                hours_minutes(frames as f64 / f64::from(rate.max(1)))
            ),
        });
    }
    let sample_rate = options.target_sample_rate.unwrap_or(rate);
    let resampler = if sample_rate == rate {
        None
    } else {
        wav::check_sample_rate(path, sample_rate, " (requested output rate)")?;
        Some(
            resample::StreamResampler::new(rate, sample_rate).map_err(|message| {
                AudioError::Unsupported {
                    file: path.to_path_buf(),
                    message,
                }
            })?,
        )
    };
    Ok(AudioReader {
        path: path.to_path_buf(),
        source,
        source_sample_rate: rate,
        source_channels: channels,
        sample_rate,
        resampler,
        report: report::ReportBuilder::new(rate, clip_level),
        block: Vec::new(),
        mono: Vec::new(),
        source_frames: 0,
        non_finite: 0,
        first_non_finite_frame: None,
        input_done: false,
        done: false,
        largest_chunk: 0,
        max_source_frames,
        max_duration_seconds: options.max_duration_seconds,
    })
}

/// 2 h 05 min, 12.5 s: a recording's length in words.
fn hours_minutes(seconds: f64) -> String {
    if seconds >= 3600.0 {
        let minutes = (seconds / 60.0).round() as u64;
        format!("{} h {:02} min", minutes / 60, minutes % 60)
    } else if seconds >= 60.0 {
        format!("{:.1} min", seconds / 60.0)
    } else {
        format!("{seconds:.1} s")
    }
}

fn read_up_to(f: &mut std::fs::File, buf: &mut [u8]) -> std::io::Result<usize> {
    let mut filled = 0;
    while filled < buf.len() {
        match f.read(&mut buf[filled..]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(e),
        }
    }
    Ok(filled)
}

/// Appends `chunk` to `out`, moving it when `out` has no buffer yet.
fn append(out: &mut Vec<f32>, chunk: Vec<f32>) {
    if out.capacity() == 0 {
        *out = chunk;
    } else {
        out.extend_from_slice(&chunk);
    }
}

/// Appends the mean of each frame's `channels` samples to `mono`. The
/// general case sums a frame's samples in channel order from −0.0 (as
/// `Iterator::sum` for f32 does) and multiplies by 1/channels; the mono and
/// stereo loops are the same arithmetic written out (−0.0 + x = x exactly),
/// so every case gives the same bits as the general one.
fn mix_to_mono(interleaved: &[f32], channels: usize, mono: &mut Vec<f32>) {
    let inverse = 1.0 / channels as f32;
    match channels {
        1 => mono.extend_from_slice(interleaved),
        2 => mono.extend(
            interleaved
                .chunks_exact(2)
                .map(|frame| (frame[0] + frame[1]) * inverse),
        ),
        _ => mono.extend(
            interleaved
                .chunks_exact(channels)
                .map(|frame| frame.iter().fold(-0.0f32, |sum, &x| sum + x) * inverse),
        ),
    }
}

impl AudioReader {
    /// Rate of the chunks this reader yields, Hz.
    pub fn sample_rate(&self) -> u32 {
        self.sample_rate
    }

    /// The file's own rate, Hz.
    pub fn source_sample_rate(&self) -> u32 {
        self.source_sample_rate
    }

    /// The file's channel count (chunks are always mono).
    pub fn source_channels(&self) -> u16 {
        self.source_channels
    }

    /// Frames read from the file so far, at the file's own rate.
    pub fn source_frames(&self) -> u64 {
        self.source_frames
    }

    /// Mono samples a whole decode is expected to yield, when the header
    /// says (WAV: the frames the file holds, at the output rate); 0 when
    /// unknown. Bounded by the file's size, so a damaged header cannot make
    /// a caller reserve more than the file could fill.
    pub fn expected_len(&self) -> usize {
        let Source::Wav(s) = &self.source else {
            return 0;
        };
        let frames = s.present_frames.min(s.promised_frames) as f64;
        let scale = f64::from(self.sample_rate) / f64::from(self.source_sample_rate.max(1));
        // A little slack for the resampler's rounding and tail.
        usize::try_from((frames * scale).ceil() as u64 + 64).unwrap_or(0)
    }

    /// Length of the longest chunk yielded so far, samples.
    pub fn largest_chunk_len(&self) -> usize {
        self.largest_chunk
    }

    /// Samples the reader's own buffers can hold now (block, mono mix and
    /// resampler). Bounded whatever the file length.
    pub fn buffer_capacity(&self) -> usize {
        self.block.capacity()
            + self.mono.capacity()
            + self.resampler.as_ref().map_or(0, |r| r.buffer_capacity())
    }

    /// The next chunk of mono samples at [`Self::sample_rate`], or `None` at
    /// the end. Chunks are non-empty and at most a few thousand samples.
    pub fn next_chunk(&mut self) -> Result<Option<Vec<f32>>, AudioError> {
        let mut chunk = Vec::new();
        Ok(self.append_chunk(&mut chunk)?.then_some(chunk))
    }

    /// Appends the next chunk (as [`Self::next_chunk`] would return it) to
    /// `out`; false at the end. Without resampling the mono mix is written
    /// straight into `out`, so a whole-file decode copies each sample once.
    fn append_chunk(&mut self, out: &mut Vec<f32>) -> Result<bool, AudioError> {
        loop {
            if self.done {
                return Ok(false);
            }
            if self.input_done {
                self.done = true;
                let tail = match self.resampler.as_mut() {
                    Some(r) => r.finish().map_err(|message| self.malformed(message))?,
                    None => Vec::new(),
                };
                if tail.is_empty() {
                    return Ok(false);
                }
                self.largest_chunk = self.largest_chunk.max(tail.len());
                append(out, tail);
                return Ok(true);
            }
            let more = match &mut self.source {
                Source::Wav(s) => s.next_block(&mut self.block),
                Source::Codec(s) => s.next_block(&self.path, &mut self.block)?,
            };
            if !more {
                self.input_done = true;
                continue;
            }
            let channels = usize::from(self.source_channels.max(1));
            // Refused as soon as decoding passes the limit: no more than the
            // limit's worth of audio is ever handed on.
            if let (Some(limit), Some(limit_seconds)) =
                (self.max_source_frames, self.max_duration_seconds)
                && self.source_frames + (self.block.len() / channels) as u64 > limit
            {
                return Err(AudioError::TooLong {
                    file: self.path.clone(),
                    limit_seconds,
                    found: "found while decoding".into(),
                });
            }
            // Integer PCM is always finite: the full scan runs only when a
            // quick vectorised check finds a NaN or infinity.
            if !self.block.iter().all(|x| x.is_finite()) {
                for (i, x) in self.block.iter_mut().enumerate() {
                    if !x.is_finite() {
                        *x = 0.0;
                        self.non_finite += 1;
                        if self.first_non_finite_frame.is_none() {
                            self.first_non_finite_frame =
                                Some(self.source_frames + (i / channels) as u64);
                        }
                    }
                }
            }
            self.report.push_channel_samples(&self.block);
            let Some(resampler) = self.resampler.as_mut() else {
                // The mix is the chunk: never empty, as the block holds
                // whole frames.
                let begin = out.len();
                mix_to_mono(&self.block, channels, out);
                let mono = &out[begin..];
                self.report.push_mono(mono);
                self.source_frames += mono.len() as u64;
                self.largest_chunk = self.largest_chunk.max(mono.len());
                return Ok(true);
            };
            self.mono.clear();
            mix_to_mono(&self.block, channels, &mut self.mono);
            self.report.push_mono(&self.mono);
            self.source_frames += self.mono.len() as u64;
            let resampled =
                resampler
                    .push(&self.mono)
                    .map_err(|message| AudioError::Malformed {
                        file: self.path.clone(),
                        message,
                    })?;
            if !resampled.is_empty() {
                self.largest_chunk = self.largest_chunk.max(resampled.len());
                append(out, resampled);
                return Ok(true);
            }
        }
    }

    fn malformed(&self, message: String) -> AudioError {
        AudioError::Malformed {
            file: self.path.clone(),
            message,
        }
    }

    fn seconds_at(&self, frame: u64) -> f64 {
        frame as f64 / f64::from(self.source_sample_rate.max(1))
    }

    /// Reads any remaining chunks (discarding them) and returns the signal
    /// report. Silent, too-short or empty recordings are an
    /// [`AudioError::Unusable`] naming the file.
    pub fn finish(mut self) -> Result<SignalReport, AudioError> {
        while self.next_chunk()?.is_some() {}
        let mut warnings = Vec::new();
        match &self.source {
            Source::Wav(s) => {
                if let Some(frame) = s.ended_early_at_frame {
                    let promised = self.seconds_at(s.promised_frames);
                    let got = self.seconds_at(frame);
                    let why = if s.present_frames < s.promised_frames {
                        "the file is truncated"
                    } else {
                        "the data could not be read further"
                    };
                    warnings.push(format!(
                        "{why}: the header promises {promised:.2} s of audio but only \
                         {got:.2} s could be read; the analysis uses what is there"
                    ));
                }
            }
            Source::Codec(s) => {
                if let Some(why) = &s.ended_early {
                    warnings.push(format!(
                        "decoding stopped early at {:.2} s ({why}); the file may be truncated; \
                         the analysis uses what is there",
                        self.seconds_at(self.source_frames)
                    ));
                }
                // Streams of frames (MP3) just end where they are cut; the
                // container's frame count, when present, shows the cut. The
                // slack is two MP3 frames (2 × 1152).
                let promised = s.promised_frames.unwrap_or(0);
                if s.ended_early.is_none() && s.frames + 2304 < promised {
                    warnings.push(format!(
                        "decoding stopped early at {:.2} s (the header promises {:.2} s); the \
                         file may be truncated; the analysis uses what is there",
                        self.seconds_at(s.frames),
                        self.seconds_at(promised)
                    ));
                }
                if s.skipped_packets > 0 {
                    warnings.push(format!(
                        "{} damaged {} packets were skipped",
                        s.skipped_packets, s.codec_name
                    ));
                }
            }
        }
        let channel_samples = self.source_frames * u64::from(self.source_channels.max(1));
        if self.non_finite > 0 && self.non_finite >= channel_samples {
            return Err(AudioError::Unusable {
                file: self.path.clone(),
                message: format!(
                    "holds no audio: every one of its {} samples is not a number (NaN or \
                     infinite); the file is damaged",
                    self.non_finite
                ),
            });
        }
        if let Some(frame) = self.first_non_finite_frame {
            warnings.push(format!(
                "{} samples were not numbers (NaN or infinite) and were replaced by silence; \
                         the first is at {:.2} s",
                self.non_finite,
                self.seconds_at(frame)
            ));
        }
        self.report
            .finish(&self.path, self.source_sample_rate, warnings)
    }
}

/// Decodes a whole file to mono at `options.target_sample_rate`, through
/// [`AudioReader`]. Silent, too-short and empty recordings are errors.
pub fn decode_file(path: &Path, options: &DecodeOptions) -> Result<Audio, AudioError> {
    let mut reader = open(path, options)?;
    let mut samples = Vec::with_capacity(reader.expected_len());
    while reader.append_chunk(&mut samples)? {}
    let sample_rate = reader.sample_rate();
    let source_sample_rate = reader.source_sample_rate();
    let source_channels = reader.source_channels();
    let duration_seconds = reader.source_frames() as f64 / f64::from(source_sample_rate.max(1));
    let report = reader.finish()?;
    Ok(Audio {
        samples,
        sample_rate,
        source_sample_rate,
        source_channels,
        duration_seconds,
        report,
    })
}
