//! `ambit profile --glide F … --json`: a singer's profile from audition recordings.

use std::path::PathBuf;

use anyhow::bail;
use clap::Args;

use ambit::library::RecordingInput;
use ambit::pitch::nearest_name;
use ambit::usecases::Cancel;
use ambit::usecases::audition::measure_audition;
use ambit::voice::{PassaggioKind, PassaggioSource, ProfileConfig, Task};

use super::progress::Bar;

#[derive(Debug, Args)]
pub struct ProfileArgs {
    /// Speech recording (reading or counting aloud).
    #[arg(long, value_name = "FILE")]
    pub speech: Vec<PathBuf>,
    /// Glide (siren) recording, up and down.
    #[arg(long, value_name = "FILE")]
    pub glide: Vec<PathBuf>,
    /// Five-note scales through the comfortable range.
    #[arg(long, value_name = "FILE")]
    pub scale: Vec<PathBuf>,
    /// Lowest and highest secure notes, held.
    #[arg(long, value_name = "FILE")]
    pub sustain: Vec<PathBuf>,
    /// A familiar phrase in the singer's own key.
    #[arg(long, value_name = "FILE")]
    pub song: Vec<PathBuf>,
    /// Print the profile as JSON.
    #[arg(long, conflicts_with = "roster_row")]
    pub json: bool,
    /// Print the profile as a roster CSV row for the singer NAME.
    #[arg(long, value_name = "NAME")]
    pub roster_row: Option<String>,
}

pub fn run(arguments: ProfileArgs) -> anyhow::Result<()> {
    let mut recordings: Vec<RecordingInput> = Vec::new();
    for (task, files) in [
        (Task::Speech, &arguments.speech),
        (Task::Glide, &arguments.glide),
        (Task::Scale, &arguments.scale),
        (Task::Sustain, &arguments.sustain),
        (Task::Song, &arguments.song),
    ] {
        recordings.extend(files.iter().map(|file| RecordingInput {
            task,
            path: file.clone(),
        }));
    }
    if recordings.is_empty() {
        bail!("give at least one recording: --speech, --glide, --scale, --sustain or --song FILE");
    }
    let result = measure_audition(
        &recordings,
        &ProfileConfig::default(),
        &Bar::new(),
        &Cancel::new(),
    )?;
    if arguments.json {
        say!("{}", serde_json::to_string_pretty(&result)?);
        return Ok(());
    }
    if let Some(name) = &arguments.roster_row {
        ambit::text::check_name("--roster-row NAME", name).map_err(anyhow::Error::msg)?;
        say_part!(
            "{}",
            ambit::roster::singer_to_csv_row(&ambit::roster::singer_from_profile(name, &result))?
        );
        for caution in &result.cautions {
            say_err!("note: {caution}");
        }
        return Ok(());
    }
    say!(
        "Range (held ≥ 1 s)   {} – {}  (confidence {:.0} %)",
        result.range.low,
        result.range.high,
        result.range_confidence * 100.0
    );
    if let Some(reached) = &result.reached {
        say!(
            "Reached in glides    {} – {} (reached, not sustained)",
            reached.low,
            reached.high
        );
    }
    say!(
        "Comfort zone         {} – {}  (confidence {:.0} %)",
        result.comfort.span.low,
        result.comfort.span.high,
        result.comfort.confidence * 100.0
    );
    for passaggio in &result.passaggi {
        let kind = match passaggio.kind {
            PassaggioKind::Primo => "primo",
            PassaggioKind::Secondo => "secondo",
        };
        let source = match passaggio.source {
            PassaggioSource::Measured => match (passaggio.upward_midi, passaggio.downward_midi) {
                (Some(up), Some(down)) => {
                    format!(
                        "measured: up {}, down {}",
                        nearest_name(up),
                        nearest_name(down)
                    )
                }
                _ => "measured".to_string(),
            },
            PassaggioSource::Typical => "typical for the voice type, not measured".to_string(),
        };
        say!(
            "Passaggio ({kind:<7})  {:<4} ({source}; confidence {:.0} %)",
            passaggio.name,
            passaggio.confidence * 100.0
        );
    }
    if !result.registers.is_empty() {
        let spans: Vec<String> = result
            .registers
            .iter()
            .map(|r| {
                format!(
                    "{} {}–{} ({:.1} s)",
                    r.register.label(),
                    r.span.low,
                    r.span.high,
                    r.seconds
                )
            })
            .collect();
        say!("Registers (sung)     {}", spans.join(", "));
    }
    match result.speaking_f0_hz {
        Some(hz) => say!(
            "Speaking f0          {hz:.0} Hz ({})",
            nearest_name(ambit::pitch::hz_to_midi(hz).unwrap_or(0.0))
        ),
        None => say!("Speaking f0          — (no speech task)"),
    }
    if let Some(timbre) = &result.timbre {
        let tilt = timbre
            .alpha_ratio_db
            .map_or_else(String::new, |alpha| format!(", alpha ratio {alpha:.1} dB"));
        say!(
            "Timbre               centroid {:.0} Hz, singer's formant {:.1} dB{tilt} (weak evidence, not used for the type)",
            timbre.centroid_hz,
            timbre.singers_formant_db
        );
    }
    say!(
        "Voice type           {} ({:.0} %)",
        result.voice_type.label,
        result.voice_type.confidence * 100.0
    );
    if !result.voice_type.alternatives.is_empty() {
        let alternatives: Vec<String> = result
            .voice_type
            .alternatives
            .iter()
            .map(|a| format!("{} {:.0} %", a.label, a.confidence * 100.0))
            .collect();
        say!("  alternatives       {}", alternatives.join(", "));
    }
    say!(
        "Section              {} (runner-up {})",
        result.section,
        result.section_runner_up
    );
    say!("\nWhy:");
    for reason in &result.reasons {
        say!("  - {reason}");
    }
    if !result.warnings.is_empty() {
        say!("\nWarnings:");
        for warning in &result.warnings {
            say!("  ! {warning}");
        }
    }
    say!("\nPlease keep in mind:");
    for caution in &result.cautions {
        say!("  * {caution}");
    }
    Ok(())
}
