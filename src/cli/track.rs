//! `ambit track AUDIO`: f0 frames of a recording as a summary, JSON or CSV.

use std::path::PathBuf;

use clap::Args;

#[derive(Debug, Args)]
pub struct TrackArgs {
    /// Audio file (WAV, FLAC, OGG/Vorbis, MP3, m4a/AAC).
    pub audio: PathBuf,
    /// Print every frame as JSON.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print every frame as CSV.
    #[arg(long)]
    pub csv: bool,
    /// Lowest f0 searched, in hertz.
    #[arg(long)]
    pub fmin: Option<f64>,
    /// Highest f0 searched, in hertz.
    #[arg(long)]
    pub fmax: Option<f64>,
}

pub fn run(_arguments: TrackArgs) -> anyhow::Result<()> {
    anyhow::bail!("`ambit track` is not available yet")
}
