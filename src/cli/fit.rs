//! `ambit fit --roster ROSTER SCORE…`: every singer against every sung line
//! of each score, as a table or JSON (one record per singer × piece × part).

use std::path::PathBuf;

use clap::Args;
use serde::Serialize;

use ambit::cautions::cautions;
use ambit::fit::{FitConfig, LineFitRecord, piece_fits};
use ambit::pitch::name_with_cents;
use ambit::roster::read_roster;
use ambit::score::{ReadOptions, read_score};
use ambit::text::{column_width, pad_right};

#[derive(Debug, Args)]
pub struct FitArgs {
    /// Roster: CSV (name, range_low, range_high, comfort_low, comfort_high, …) or Ambit's JSON.
    #[arg(long, required_unless_present = "library", conflicts_with = "library")]
    pub roster: Option<PathBuf>,
    /// Take the roster from this choir library (its active singers with a range).
    #[arg(long, value_name = "PATH")]
    pub library: Option<PathBuf>,
    /// Score files (MIDI, MusicXML, .mxl).
    #[arg(required = true)]
    pub scores: Vec<PathBuf>,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Serialize)]
struct FitJson<'a> {
    roster: String,
    records: Vec<RecordJson<'a>>,
    cautions: Vec<String>,
}

#[derive(Serialize)]
struct RecordJson<'a> {
    file: String,
    #[serde(flatten)]
    record: &'a LineFitRecord,
}

pub fn run(arguments: FitArgs) -> anyhow::Result<()> {
    let (roster, source) = match (&arguments.roster, &arguments.library) {
        (Some(path), _) => (read_roster(path)?, path.display().to_string()),
        (None, library) => {
            let folder = ambit::library::resolve_folder(library.as_deref())?;
            let (roster, left_out) = ambit::library::Library::open(&folder)?.roster()?;
            for name in left_out {
                say_err!("note: {name} has no range in the library yet; left out");
            }
            (roster, folder.display().to_string())
        }
    };
    let config = FitConfig::default();
    let mut per_score = Vec::new();
    for path in &arguments.scores {
        let mut piece = read_score(path, &ReadOptions::default())?;
        if piece.title.is_none() {
            piece.title = Some(file_label(path));
        }
        if piece.voice_parts().next().is_none() {
            anyhow::bail!("{}: the score has no voice parts", path.display());
        }
        per_score.push((path.clone(), piece_fits(&roster, &piece, &config)));
    }
    if arguments.json {
        let records = per_score
            .iter()
            .flat_map(|(path, records)| {
                records.iter().map(|record| RecordJson {
                    file: path.display().to_string(),
                    record,
                })
            })
            .collect();
        let json = FitJson {
            roster: source,
            records,
            cautions: cautions(),
        };
        say!("{}", serde_json::to_string_pretty(&json)?);
        return Ok(());
    }
    for (path, records) in &per_score {
        let title = records.first().map_or("", |record| record.piece.as_str());
        say!("{title}  ({})", path.display());
        print_table(records);
        say!();
    }
    say!("Fit is 0–100 (higher is better); outside = share of sung time outside the comfort zone.");
    for caution in cautions() {
        say!("• {caution}");
    }
    Ok(())
}

fn file_label(path: &std::path::Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |name| name.to_string_lossy().into_owned(),
    )
}

fn percent(share: f64) -> String {
    format!("{:.0}%", 100.0 * share)
}

fn print_table(records: &[LineFitRecord]) {
    let header = [
        "singer",
        "part",
        "fit",
        "outside",
        "above",
        "below",
        "severity",
        "beyond s",
        "passaggio s",
        "high stretch s",
        "part range",
        "reserve ↑/↓",
        "worst bars",
    ];
    let mut rows: Vec<Vec<String>> = vec![header.iter().map(|cell| cell.to_string()).collect()];
    for record in records {
        let fit = &record.fit;
        let sung = fit.sung_seconds.max(f64::MIN_POSITIVE);
        let range = match (fit.part_lowest_midi, fit.part_highest_midi) {
            (Some(low), Some(high)) => {
                format!("{}–{}", name_with_cents(low), name_with_cents(high))
            }
            _ => "–".to_string(),
        };
        let reserves = match (fit.upper_reserve_semitones, fit.lower_reserve_semitones) {
            (Some(upper), Some(lower)) => format!("{upper:+.0}/{lower:+.0}"),
            _ => "–".to_string(),
        };
        let worst = fit
            .worst_passages
            .iter()
            .map(|passage| {
                let seconds = passage.start_seconds.max(0.0).round() as u64;
                format!(
                    "{} ({}, at {}:{:02})",
                    passage.bars,
                    passage.side,
                    seconds / 60,
                    seconds % 60
                )
            })
            .collect::<Vec<_>>()
            .join(", ");
        rows.push(vec![
            record.singer.clone(),
            record.part.clone(),
            format!("{:.0}", fit.fit),
            percent(fit.outside_comfort_share),
            percent(fit.above_comfort_seconds / sung),
            percent(fit.below_comfort_seconds / sung),
            format!("{:.2}", fit.severity_semitones),
            if fit.beyond_range {
                format!("{:.1} !", fit.beyond_range_seconds)
            } else {
                format!("{:.1}", fit.beyond_range_seconds)
            },
            if fit.passaggio_known {
                format!("{:.1}", fit.passaggio_seconds)
            } else {
                "–".to_string()
            },
            format!("{:.1}", fit.longest_high_stretch_seconds),
            range,
            reserves,
            if worst.is_empty() {
                "–".to_string()
            } else {
                worst
            },
        ]);
    }
    print_rows(&rows);
}

/// Prints rows as left-aligned columns.
pub fn print_rows(rows: &[Vec<String>]) {
    let columns = rows.iter().map(Vec::len).max().unwrap_or(0);
    let widths: Vec<usize> = (0..columns)
        .map(|column| {
            column_width(
                rows.iter()
                    .filter_map(|row| row.get(column))
                    .map(String::as_str),
                0,
            )
        })
        .collect();
    for row in rows {
        let line: Vec<String> = row
            .iter()
            .zip(&widths)
            .map(|(cell, &width)| pad_right(cell, width))
            .collect();
        say!("{}", line.join("  ").trim_end());
    }
}
