//! `ambit parts SCORE…`: per-part tessitura as a table or JSON.

use std::collections::BTreeMap;
use std::path::PathBuf;

use anyhow::Context;
use clap::Args;
use serde::Serialize;

use ambit::pitch::{Tuning, midi_name_in_key};
use ambit::score::{PartKind, ReadOptions, read_score};
use ambit::tessitura::{HotSpotKind, PERCENTILES, PartTessitura, TessituraConfig, analyse_piece};

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

#[derive(Serialize)]
struct ScoreJson {
    file: String,
    title: Option<String>,
    parts: Vec<PartJson>,
    warnings: Vec<String>,
}

#[derive(Serialize)]
struct PartJson {
    name: String,
    kind: PartKind,
    notes: usize,
    sung_seconds: f64,
    sung_quarters: f64,
    lowest_midi: i64,
    highest_midi: i64,
    lowest: String,
    highest: String,
    mean_midi: f64,
    sd_semitones: f64,
    percentiles_midi: BTreeMap<String, f64>,
    mean_midi_quarters: f64,
    sd_semitones_quarters: f64,
    histogram_seconds: BTreeMap<String, f64>,
    histogram_quarters: BTreeMap<String, f64>,
    longest_note: LongestJson,
    hot_spots: Vec<HotSpotJson>,
    time_dose_seconds: f64,
    cycle_dose: f64,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    divisi: Vec<PartJson>,
}

#[derive(Serialize)]
struct LongestJson {
    midi: f64,
    name: String,
    seconds: f64,
    bars: String,
}

#[derive(Serialize)]
struct HotSpotJson {
    kind: HotSpotKind,
    bars: String,
    start_seconds: f64,
    end_seconds: f64,
    mean_midi: f64,
}

fn part_json(part: &PartTessitura, fifths: i32) -> PartJson {
    let name = |midi: f64| midi_name_in_key(midi.round() as i32, fifths);
    let keyed = |histogram: &BTreeMap<i32, f64>| {
        histogram
            .iter()
            .map(|(midi, weight)| (midi.to_string(), *weight))
            .collect()
    };
    PartJson {
        name: part.name.clone(),
        kind: part.kind,
        notes: part.notes,
        sung_seconds: part.sung_seconds,
        sung_quarters: part.sung_quarters,
        lowest_midi: part.lowest_midi.round() as i64,
        highest_midi: part.highest_midi.round() as i64,
        lowest: name(part.lowest_midi),
        highest: name(part.highest_midi),
        mean_midi: part.over_seconds.mean_midi,
        sd_semitones: part.over_seconds.sd_semitones,
        percentiles_midi: PERCENTILES
            .iter()
            .zip(part.over_seconds.percentiles_midi)
            .map(|(p, midi)| (format!("{p:.0}"), midi))
            .collect(),
        mean_midi_quarters: part.over_quarters.mean_midi,
        sd_semitones_quarters: part.over_quarters.sd_semitones,
        histogram_seconds: keyed(&part.histogram_seconds),
        histogram_quarters: keyed(&part.histogram_quarters),
        longest_note: LongestJson {
            midi: part.longest_note.midi,
            name: name(part.longest_note.midi),
            seconds: part.longest_note.seconds,
            bars: part.longest_note.bars.clone(),
        },
        hot_spots: part
            .hot_spots
            .iter()
            .map(|spot| HotSpotJson {
                kind: spot.kind,
                bars: spot.bars.clone(),
                start_seconds: spot.start_seconds,
                end_seconds: spot.end_seconds,
                mean_midi: spot.mean_midi,
            })
            .collect(),
        time_dose_seconds: part.time_dose_seconds,
        cycle_dose: part.cycle_dose,
        divisi: part
            .divisi
            .iter()
            .map(|line| part_json(line, fifths))
            .collect(),
    }
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
    for path in &arguments.scores {
        let piece = read_score(path, &options)?;
        let parts = analyse_piece(&piece, &config);
        let fifths = piece.key.map_or(0, |key| key.fifths);
        reports.push(ScoreJson {
            file: path.display().to_string(),
            title: piece.title.clone(),
            parts: parts.iter().map(|part| part_json(part, fifths)).collect(),
            warnings: piece.warnings.clone(),
        });
        if !arguments.json {
            print_table(&reports[reports.len() - 1], &parts, fifths);
        }
    }
    if arguments.json {
        let text = if reports.len() == 1 {
            serde_json::to_string_pretty(&reports[0])?
        } else {
            serde_json::to_string_pretty(&reports)?
        };
        println!("{text}");
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
    println!("{title} — {}", report.file);
    for warning in &report.warnings {
        eprintln!("  warning: {warning}");
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
    println!();
}
