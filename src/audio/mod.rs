//! Audio input: decoding WAV, FLAC, OGG/Vorbis, MP3 and m4a/AAC to mono
//! samples at the analysis rate, with a report on the signal's condition.
//!
//! Architecture invariant: audio knows nothing about pitch. Memory stays
//! bounded by the chunk size whatever the file's length when read through
//! [`AudioReader`]; [`decode_file`] holds the whole (resampled, mono) signal.
//!
//! (Interface fixed first so the tracker can be written against it; the
//! decoders are being filled in.)

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

/// How to decode.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DecodeOptions {
    /// Resample to this rate; `None` keeps the file's own rate.
    pub target_sample_rate: Option<u32>,
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
}

/// Decodes a whole file to mono at `options.target_sample_rate`.
pub fn decode_file(path: &Path, _options: &DecodeOptions) -> Result<Audio, AudioError> {
    Err(AudioError::Unsupported {
        file: path.to_path_buf(),
        message: "audio decoding is not written yet".into(),
    })
}
