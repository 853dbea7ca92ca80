//! `ambit transpose --roster ROSTER SCORE`: the key in which a piece sits
//! best, for one singer (soloist) or for the choir as placed in the roster's
//! `section` column.

use std::path::PathBuf;

use anyhow::Context;
use clap::Args;
use serde::Serialize;

use ambit::cautions::cautions;
use ambit::roster::read_roster;
use ambit::score::{ReadOptions, read_score};
use ambit::transpose::{
    ChoirAdvice, SoloistAdvice, TransposeConfig, choir_keys, soloist_keys, soloist_line,
};

use super::fit::print_rows;

#[derive(Debug, Args)]
pub struct TransposeArgs {
    /// Roster: CSV or Ambit's JSON. For the choir, its `section` column is the placement.
    #[arg(long)]
    pub roster: PathBuf,
    /// Score file (MIDI, MusicXML, .mxl).
    pub score: PathBuf,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Advise this one singer as a soloist (the default when the roster has one singer).
    #[arg(long)]
    pub singer: Option<String>,
    /// The part the soloist sings (needed when the score has several voice parts).
    #[arg(long)]
    pub part: Option<String>,
}

#[derive(Serialize)]
#[serde(tag = "mode", rename_all = "snake_case")]
enum TransposeJson {
    Soloist {
        file: String,
        #[serde(flatten)]
        advice: SoloistAdvice,
        cautions: Vec<String>,
    },
    Choir {
        file: String,
        #[serde(flatten)]
        advice: ChoirAdvice,
        cautions: Vec<String>,
    },
}

pub fn run(arguments: TransposeArgs) -> anyhow::Result<()> {
    let roster = read_roster(&arguments.roster)?;
    let path = &arguments.score;
    let mut piece = read_score(path, &ReadOptions::default())?;
    if piece.title.is_none() {
        piece.title = path
            .file_name()
            .map(|name| name.to_string_lossy().into_owned());
    }
    let config = TransposeConfig::default();
    let soloist = match &arguments.singer {
        Some(name) => Some(
            roster
                .singers
                .iter()
                .find(|singer| singer.name.trim().eq_ignore_ascii_case(name.trim()))
                .with_context(|| {
                    format!("{}: no singer named `{name}`", arguments.roster.display())
                })?,
        ),
        None if roster.singers.len() == 1 => roster.singers.first(),
        None => None,
    };
    let file = path.display().to_string();
    let output = match soloist {
        Some(singer) => {
            let (label, notes) = soloist_line(&piece, arguments.part.as_deref())?;
            TransposeJson::Soloist {
                file,
                advice: soloist_keys(singer, &piece, &label, &notes, &config),
                cautions: cautions(),
            }
        }
        None => TransposeJson::Choir {
            file,
            advice: choir_keys(&roster, &piece, &config)
                .with_context(|| format!("{}: choir transposition", arguments.roster.display()))?,
            cautions: cautions(),
        },
    };
    if arguments.json {
        say!("{}", serde_json::to_string_pretty(&output)?);
        return Ok(());
    }
    match &output {
        TransposeJson::Soloist { advice, .. } => print_soloist(advice),
        TransposeJson::Choir { advice, .. } => print_choir(advice),
    }
    say!();
    for caution in cautions() {
        say!("• {caution}");
    }
    Ok(())
}

fn key_cell(key: &Option<String>) -> String {
    key.clone().unwrap_or_else(|| "–".to_string())
}

fn print_soloist(advice: &SoloistAdvice) {
    say!(
        "{} singing {}{}",
        advice.singer,
        advice.part,
        advice
            .written_key
            .as_ref()
            .map_or_else(String::new, |key| format!(", written in {key}"))
    );
    let mut rows = vec![
        [
            "shift",
            "interval",
            "key",
            "fit",
            "outside",
            "beyond s",
            "high stretch s",
            "",
        ]
        .iter()
        .map(|cell| cell.to_string())
        .collect::<Vec<_>>(),
    ];
    for key in &advice.keys {
        rows.push(vec![
            format!("{:+}", key.transpose_semitones),
            key.interval.clone(),
            key_cell(&key.key),
            format!("{:.0}", key.fit.fit),
            format!("{:.0}%", 100.0 * key.fit.outside_comfort_share),
            format!("{:.1}", key.fit.beyond_range_seconds),
            format!("{:.1}", key.fit.longest_high_stretch_seconds),
            if key.transpose_semitones == advice.best_semitones {
                "◀ best".to_string()
            } else {
                String::new()
            },
        ]);
    }
    print_rows(&rows);
}

fn print_choir(advice: &ChoirAdvice) {
    say!(
        "{} for sections {}{}",
        advice.piece,
        advice.layout.join(" "),
        advice
            .written_key
            .as_ref()
            .map_or_else(String::new, |key| format!(", written in {key}"))
    );
    let mut header: Vec<String> = ["shift", "interval", "key", "worst section", "total"]
        .iter()
        .map(|cell| cell.to_string())
        .collect();
    let sections: Vec<String> = advice
        .keys
        .first()
        .map(|key| key.sections.iter().map(|s| s.section.clone()).collect())
        .unwrap_or_default();
    header.extend(sections.iter().cloned());
    header.push(String::new());
    let mut rows = vec![header];
    for key in &advice.keys {
        let mut row = vec![
            format!("{:+}", key.transpose_semitones),
            key.interval.clone(),
            key_cell(&key.key),
            format!("{} {:.0}", key.worst_section, key.worst_mean_fit),
            format!("{:.0}", key.total_fit),
        ];
        row.extend(key.sections.iter().map(|s| format!("{:.0}", s.mean_fit)));
        row.push(if key.transpose_semitones == advice.best_semitones {
            "◀ best".to_string()
        } else {
            String::new()
        });
        rows.push(row);
    }
    print_rows(&rows);
    say!("Section columns: mean fit (0–100) of the singers placed there.");
    if !advice.unplaced.is_empty() {
        say!(
            "Not placed (no section in the roster): {}",
            advice.unplaced.join(", ")
        );
    }
    if !advice.empty_sections.is_empty() {
        say!(
            "Nothing to sing in this piece: {}",
            advice.empty_sections.join(", ")
        );
    }
}
