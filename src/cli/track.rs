//! `ambit track AUDIO`: f0 frames of a recording as a summary, JSON or CSV.

use std::io::{BufWriter, Write};
use std::path::PathBuf;

use anyhow::Context;
use clap::Args;
use serde::Serialize;

use ambit::pitch;
use ambit::track::{self, Frame, StablePitch, TrackConfig};

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

/// The `--json` shape (issue contract).
#[derive(Serialize)]
struct JsonTrack<'a> {
    file: String,
    sample_rate: u32,
    hop_seconds: f64,
    frames: &'a [Frame],
}

pub fn run(arguments: TrackArgs) -> anyhow::Result<()> {
    let defaults = TrackConfig::default();
    let config = TrackConfig {
        fmin_hz: arguments.fmin.unwrap_or(defaults.fmin_hz),
        fmax_hz: arguments.fmax.unwrap_or(defaults.fmax_hz),
        ..defaults
    };
    let tracked = track::track_file(&arguments.audio, &config)?;
    let stdout = std::io::stdout();
    let mut out = BufWriter::new(stdout.lock());
    let file = arguments.audio.display().to_string();
    if arguments.json {
        let shape = JsonTrack {
            file,
            sample_rate: tracked.track.sample_rate,
            hop_seconds: tracked.track.hop_seconds,
            frames: &tracked.track.frames,
        };
        serde_json::to_writer(&mut out, &shape).context("writing JSON")?;
        writeln!(out)?;
    } else if arguments.csv {
        writeln!(out, "time,f0_hz,voiced,confidence,level_db")?;
        for frame in &tracked.track.frames {
            let f0 = frame.f0_hz.map(|hz| hz.to_string()).unwrap_or_default();
            writeln!(
                out,
                "{},{},{},{},{}",
                frame.time, f0, frame.voiced, frame.confidence, frame.level_db
            )?;
        }
    } else {
        let summary = track::summarise(&tracked.track);
        let stable = |label: &str, found: Option<StablePitch>| match found {
            Some(held) => format!(
                "{label:<22}{} ({:.1} Hz), held {:.1} s from {:.1} s",
                pitch::name_with_cents(held.midi),
                held.f0_hz,
                held.duration_seconds,
                held.start_seconds
            ),
            None => format!("{label:<22}none held"),
        };
        writeln!(out, "{file}")?;
        writeln!(
            out,
            "{:<22}{:.1} s ({} Hz source, analysed at {} Hz)",
            "duration",
            tracked.duration_seconds,
            tracked.source_sample_rate,
            tracked.track.sample_rate
        )?;
        writeln!(
            out,
            "{:<22}{:.0} % ({:.1} s)",
            "voiced",
            100.0 * summary.voiced_share,
            summary.voiced_seconds
        )?;
        match (summary.median_midi, summary.median_f0_hz) {
            (Some(midi), Some(hz)) => writeln!(
                out,
                "{:<22}{} ({hz:.1} Hz)",
                "median pitch",
                pitch::name_with_cents(midi)
            )?,
            _ => writeln!(out, "{:<22}none", "median pitch")?,
        }
        writeln!(
            out,
            "{}",
            stable("lowest stable pitch", summary.lowest_stable)
        )?;
        writeln!(
            out,
            "{}",
            stable("highest stable pitch", summary.highest_stable)
        )?;
        for warning in tracked.report.warnings.iter().chain(&summary.warnings) {
            writeln!(out, "warning: {warning}")?;
        }
    }
    out.flush()?;
    Ok(())
}
