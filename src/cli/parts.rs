//! `ambit parts SCORE…`: per-part tessitura as a table or JSON.

use std::path::PathBuf;

use clap::Args;

#[derive(Debug, Args)]
pub struct PartsArgs {
    /// Score files (MIDI, MusicXML, .mxl).
    #[arg(required = true)]
    pub scores: Vec<PathBuf>,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Read repeats once, as written, instead of unrolling them.
    #[arg(long)]
    pub no_repeats: bool,
    /// Reference pitch A4 in hertz (ISO 16: 440).
    #[arg(long, default_value_t = 440.0)]
    pub a4: f64,
}

pub fn run(_arguments: PartsArgs) -> anyhow::Result<()> {
    anyhow::bail!("`ambit parts` is not available yet")
}
