//! `ambit parts SCORE…`: per-part tessitura as a table or JSON.

use std::path::PathBuf;

use ambit::pitch::{Tuning, midi_name_in_key};
use ambit::score::{PartKind, ReadOptions, read_score};
use ambit::tessitura::{HotSpotKind, PartTessitura, TessituraConfig, analyse_piece};
use ambit::usecases::Progress as _;
use ambit::views::{ScoreJson, score_view};
use anyhow::Context;
use clap::Args;

#[derive(Debug, Args)]
pub struct PartsArgs {
    /// Score files (MIDI, MusicXML, .mxl).
    #[arg(required = true)]
    pub scores: Vec<PathBuf>,
    /// Print JSON instead of a table (one object per score; an array for several).
    #[arg(long)]
    pub json: bool,
    /// Read repeats once, as written, instead of unrolling them.
    #[arg(long)]
    pub no_repeats: bool,
    /// Reference pitch A4 in hertz (ISO 16: 440).
    #[arg(long, default_value_t = 440.0)]
    pub a4: f64,
}

pub fn run(arguments: PartsArgs) -> anyhow::Result<()> {
    let config = TessituraConfig {
        tuning: Tuning::with_a4(arguments.a4).context("--a4")?,
        ..TessituraConfig::default()
    };
    let options = ReadOptions {
        unroll_repeats: !arguments.no_repeats,
    };
    let mut reports = Vec::new();
    let bar = super::progress::Bar::new();
    let total = arguments.scores.len();
    for (index, path) in arguments.scores.iter().enumerate() {
        if total > 1 {
            bar.step(index, total, &format!("Reading {}", path.display()));
        }
        let piece = read_score(path, &options)?;
        let parts = analyse_piece(&piece, &config);
        let fifths = piece.key.map_or(0, |key| key.fifths);
        reports.push(score_view(&path.display().to_string(), &piece, &parts));
        if !arguments.json {
            bar.suspend(|| print_table(&reports[reports.len() - 1], &parts, fifths));
        }
    }
    drop(bar);
    if arguments.json {
        let text = if reports.len() == 1 {
            serde_json::to_string_pretty(&reports[0])?
        } else {
            serde_json::to_string_pretty(&reports)?
        };
        say!("{text}");
    }
    Ok(())
}

/// "E4 (C#4–G4)": the mean and the mean ± one SD, as note names.
fn mean_and_band(mean_midi: f64, sd_semitones: f64, fifths: i32) -> String {
    let name = |midi: f64| midi_name_in_key(midi.round() as i32, fifths);
    format!(
        "{} ({}–{})",
        name(mean_midi),
        name(mean_midi - sd_semitones),
        name(mean_midi + sd_semitones)
    )
}

fn print_table(report: &ScoreJson, parts: &[PartTessitura], fifths: i32) {
    let name = |midi: f64| midi_name_in_key(midi.round() as i32, fifths);
    let title = report.title.as_deref().unwrap_or("(untitled)");
    say!("{title} — {}", report.file);
    for warning in &report.warnings {
        say_err!("  warning: {warning}");
    }
    let mut rows = vec![[
        "part".to_string(),
        "range".into(),
        "mean (±1 SD)".into(),
        "SD st".into(),
        "sung s".into(),
        "high spots (bars)".into(),
        "low spot".into(),
        "cycle dose".into(),
    ]];
    let mut push = |part: &PartTessitura, label: String| {
        let spots = |kind: HotSpotKind| {
            part.hot_spots
                .iter()
                .filter(|spot| spot.kind == kind)
                .map(|spot| format!("{} ({})", spot.bars, name(spot.mean_midi)))
                .collect::<Vec<_>>()
                .join(", ")
        };
        rows.push([
            label,
            format!("{}–{}", name(part.lowest_midi), name(part.highest_midi)),
            mean_and_band(
                part.over_seconds.mean_midi,
                part.over_seconds.sd_semitones,
                fifths,
            ),
            format!("{:.1}", part.over_seconds.sd_semitones),
            format!("{:.1}", part.sung_seconds),
            spots(HotSpotKind::High),
            spots(HotSpotKind::Low),
            format!("{:.0}", part.cycle_dose),
        ]);
    };
    for part in parts {
        let label = match part.kind {
            PartKind::Voice => part.name.clone(),
            _ => format!("{} [accomp.]", part.name),
        };
        push(part, label);
        for line in &part.divisi {
            push(line, format!("  {}", line.name));
        }
    }
    // The table is indented under its title: the indent goes into the first column.
    let rows: Vec<Vec<String>> = rows
        .into_iter()
        .map(|row| {
            let mut cells = row.to_vec();
            cells[0] = format!("  {}", cells[0]);
            cells
        })
        .collect();
    super::fit::print_rows(&rows);
    say!();
}
