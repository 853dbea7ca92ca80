//! Pitch tracking: f0 per frame from mono samples, by YIN (de Cheveigné &
//! Kawahara 2002) and its probabilistic extension pYIN (Mauch & Dixon 2014).
//!
//! Architecture invariant: track takes samples, not files, and knows nothing
//! about notes, ranges or singers.
//!
//! (Interface fixed first; the tracker is being filled in.)

use serde::{Deserialize, Serialize};
use thiserror::Error;

/// Tracker settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TrackConfig {
    pub fmin_hz: f64,
    pub fmax_hz: f64,
    pub hop_seconds: f64,
}

impl Default for TrackConfig {
    fn default() -> Self {
        TrackConfig {
            fmin_hz: 50.0,
            fmax_hz: 2100.0,
            hop_seconds: 0.01,
        }
    }
}

/// One analysis frame.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Frame {
    /// Centre of the frame, seconds from the start of the file.
    pub time: f64,
    pub f0_hz: Option<f64>,
    pub voiced: bool,
    /// Voicing probability, 0–1.
    pub confidence: f64,
    /// Frame RMS level, dBFS.
    pub level_db: f64,
}

/// The f0 track of one recording.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Track {
    pub sample_rate: u32,
    pub hop_seconds: f64,
    pub frames: Vec<Frame>,
}

#[derive(Debug, Clone, PartialEq, Error)]
pub enum TrackError {
    #[error("{0}")]
    BadConfig(String),
    #[error("{0}")]
    BadInput(String),
}

/// Tracks a whole signal offline.
pub fn track_samples(
    _samples: &[f32],
    _sample_rate: u32,
    _config: &TrackConfig,
) -> Result<Track, TrackError> {
    Err(TrackError::BadConfig(
        "the tracker is not written yet".into(),
    ))
}
