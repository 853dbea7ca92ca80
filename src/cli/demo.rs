//! `ambit demo [--out DIR]`: the whole pipeline on the bundled demo choir
//! and sample scores (`ambit::demo::run`), a short summary on stdout, and
//! `DIR/report.html`, `DIR/roster.csv`, `DIR/rehearsal.json` and `DIR/auditions/<singer>/<task>.wav`.

use std::fmt::Write as _;
use std::io::IsTerminal as _;
use std::path::PathBuf;
use std::time::Instant;

use clap::Args;

use ambit::demo::run::{DemoConfig, DemoResult, run_demo_with_progress, write_outputs};

use super::place::write_at_risk;
use super::write_stdout;

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder for report.html, roster.csv, rehearsal.json and the synthesised audition recordings.
    #[arg(long, value_name = "DIR", default_value = "ambit-demo")]
    pub out: PathBuf,
}

pub fn run(arguments: DemoArgs) -> anyhow::Result<()> {
    let started = Instant::now();
    let auditions = arguments.out.join("auditions");
    if std::io::stderr().is_terminal() {
        say_err!(
            "Synthesising, tracking and profiling {} demo auditions…",
            ambit::demo::DEMO_CHOIR.len()
        );
    }
    let config = DemoConfig {
        auditions_dir: Some(auditions.clone()),
        ..DemoConfig::default()
    };
    let result = {
        let bar = super::progress::Bar::new();
        run_demo_with_progress(&config, &bar)?
    };
    let outputs = write_outputs(&result, &arguments.out)?;
    let recordings: usize = result
        .singers
        .iter()
        .map(|singer| singer.recordings.len())
        .sum();
    let mut text = summary(&result)?;
    writeln!(text)?;
    writeln!(text, "report:     {}", outputs.report.display())?;
    writeln!(
        text,
        "roster:     {} (measured figures; section = the suggested seat)",
        outputs.roster.display()
    )?;
    writeln!(
        text,
        "rehearsal:  {} (a 90-minute rehearsal of the programme by vocal load; `ambit rehearsal --json` shape)",
        outputs.rehearsal.display()
    )?;
    writeln!(
        text,
        "auditions:  {} ({recordings} WAV files, 16-bit, {} Hz)",
        auditions.display(),
        ambit::voice::PROFILE_SAMPLE_RATE
    )?;
    writeln!(text, "done in {:.1} s", started.elapsed().as_secs_f64())?;
    write_stdout(&text)
}

fn summary(result: &DemoResult) -> Result<String, std::fmt::Error> {
    let plan = &result.plan;
    let mut out = String::new();
    writeln!(
        out,
        "{}: {} singers profiled from synthesised auditions, {} pieces, layout {}",
        result.choir,
        result.singers.len(),
        plan.pieces.len(),
        plan.layout
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "{:<7}  {:>5}  {:>8}  singers",
        "section", "count", "mean fit"
    )?;
    for section in &plan.placement.sections {
        let names: Vec<&str> = plan
            .placement
            .assignments
            .iter()
            .filter(|assignment| assignment.section == section.section)
            .map(|assignment| assignment.singer.as_str())
            .collect();
        let mean = section
            .mean_fit
            .map_or_else(|| "-".to_string(), |mean| format!("{mean:.1}"));
        writeln!(
            out,
            "{:<7}  {:>5}  {:>8}  {}",
            section.section,
            section.count,
            mean,
            names.join(", ")
        )?;
    }
    write_at_risk(&mut out, &plan.placement)?;
    writeln!(out)?;
    writeln!(
        out,
        "keys (weakest section's mean fit as written → advised):"
    )?;
    for piece in &plan.pieces {
        let advice = &piece.keys;
        let at = |semitones: i32| {
            advice
                .keys
                .iter()
                .find(|key| key.transpose_semitones == semitones)
        };
        let written = advice.written_key.as_deref().unwrap_or("as written");
        match (at(0), at(advice.best_semitones)) {
            (Some(written_key), Some(best)) if advice.best_semitones != 0 => writeln!(
                out,
                "  {} ({written}): {}{}, {} {:.0} → {} {:.0}",
                piece.title,
                best.interval,
                best.key
                    .as_ref()
                    .map(|key| format!(" to {key}"))
                    .unwrap_or_default(),
                written_key.worst_section,
                written_key.worst_mean_fit,
                best.worst_section,
                best.worst_mean_fit
            )?,
            (Some(written_key), _) => writeln!(
                out,
                "  {} ({written}): keep the key; weakest {} {:.0}",
                piece.title, written_key.worst_section, written_key.worst_mean_fit
            )?,
            _ => writeln!(out, "  {} ({written}): no key advice", piece.title)?,
        }
    }
    writeln!(out)?;
    for caution in &plan.cautions {
        writeln!(out, "note: {caution}")?;
    }
    Ok(out)
}
