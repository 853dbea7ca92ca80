//! `ambit library …`: the choir library on disk. Each subcommand opens the
//! library, calls the engine where something must be measured (profiles,
//! part analyses), and hands finished values to `ambit::library` to store.

use std::path::{Path, PathBuf};

use anyhow::{Context, bail};
use clap::{Args, Subcommand};

use ambit::cautions::cautions;
use ambit::demo::seed::seed_library;
use ambit::library::{
    AuditionInput, ImportPlan, Library, RecordingInput, ScenarioInput, SingerSource,
    resolve_folder, today,
};
use ambit::pitch::nearest_name;
use ambit::roster::roster_to_csv;
use ambit::sections::Layout;
use ambit::text::{column_width, pad_right};
use ambit::usecases::audition::{measure_audition, store_audition};
use ambit::usecases::pieces::{ImportOptions, MappingChoice, import_piece};
use ambit::usecases::singers::{delete_singer, preview_delete};
use ambit::usecases::{Cancel, Progress as _};
use ambit::voice::{ProfileConfig, Task};

use super::progress::Bar;

#[derive(Debug, Args)]
pub struct LibraryArgs {
    /// The library folder (default: AMBIT_LIBRARY, else the OS data directory).
    #[arg(long, global = true, value_name = "PATH")]
    pub library: Option<PathBuf>,
    #[command(subcommand)]
    pub command: LibraryCommand,
}

#[derive(Debug, Subcommand)]
pub enum LibraryCommand {
    /// Create the library (or open and migrate an existing one).
    Init {
        /// Fill a new, empty library with the demo choir (their synthesised
        /// auditions, profiled) and the sample scores as one programme.
        #[arg(long)]
        demo: bool,
    },
    /// Where the library is and what it holds.
    Info {
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Add or update singers from a roster CSV (or Ambit JSON): all or nothing.
    ImportRoster {
        /// The roster file: CSV with a header row, or Ambit JSON.
        roster: PathBuf,
        /// Show what would be added, changed and skipped; change nothing.
        #[arg(long)]
        dry_run: bool,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Write the active singers' current ranges as a roster CSV (stdout without --out).
    ExportRoster {
        /// Write to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// Measure an audition from task recordings and store the profile and the recordings.
    AddAudition {
        /// The singer (added if new).
        name: String,
        /// The day of the audition, YYYY-MM-DD (default: today).
        #[arg(long)]
        date: Option<String>,
        /// Speech recording (reading or counting aloud).
        #[arg(long, value_name = "FILE")]
        speech: Vec<PathBuf>,
        /// Glide (siren) recording, up and down.
        #[arg(long, value_name = "FILE")]
        glide: Vec<PathBuf>,
        /// Five-note scales through the comfortable range.
        #[arg(long, value_name = "FILE")]
        scale: Vec<PathBuf>,
        /// Lowest and highest secure notes, held.
        #[arg(long, value_name = "FILE")]
        sustain: Vec<PathBuf>,
        /// A familiar phrase in the singer's own key.
        #[arg(long, value_name = "FILE")]
        song: Vec<PathBuf>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// List the singers with their current range.
    Singers {
        /// Include archived singers.
        #[arg(long)]
        all: bool,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// A singer's measured profiles over time.
    History {
        /// The singer's name, as stored.
        name: String,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Copy a score into the library with its part analysis.
    AddPiece {
        /// The score file (MIDI, MusicXML, .mxl).
        score: PathBuf,
        /// Title (default: the score's title, else the file name).
        #[arg(long)]
        title: Option<String>,
        /// Append the piece to this programme (created if new).
        #[arg(long)]
        programme: Option<String>,
        /// Store the section mapping for this layout (SATB, SSAATTBB, …).
        #[arg(long)]
        layout: Option<String>,
    },
    /// List pieces, or the pieces of one programme in order.
    Pieces {
        /// The programme (by name).
        #[arg(long)]
        programme: Option<String>,
    },
    /// Save a placement scenario from `ambit place --json` output.
    SaveScenario {
        /// The scenario's name.
        name: String,
        /// The placement JSON (from `ambit place … --json`).
        #[arg(long, value_name = "FILE")]
        result: PathBuf,
        /// The programme the placement was made for (by name).
        #[arg(long)]
        programme: Option<String>,
        /// The constraints used, as JSON (sizes, locks, exclusions).
        #[arg(long, value_name = "FILE")]
        constraints: Option<PathBuf>,
        /// A note to keep with the scenario.
        #[arg(long)]
        notes: Option<String>,
    },
    /// List saved placement scenarios, newest first.
    Scenarios {
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Write the whole library (database, recordings, scores) to one zip file.
    Backup {
        /// The zip file to write.
        out: PathBuf,
    },
    /// Replace the library with a backup, after checking every file's hash.
    Restore {
        /// The backup zip written by `ambit library backup`.
        backup: PathBuf,
    },
    /// Delete a singer: their rows and their recording files.
    DeleteSinger {
        /// The singer's name, as stored.
        name: String,
        /// Confirm; without it the command only says what would go.
        #[arg(long)]
        yes: bool,
    },
    /// Export one person's data (rows as JSON and recordings) into a new folder.
    ExportSinger {
        /// The singer's name, as stored.
        name: String,
        /// The new folder to export into (it must not exist yet).
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
    },
}

/// Opens the library; a read-only one (damaged, or a folder this user
/// cannot write) is said so on stderr, with the way out.
pub(crate) fn open(folder: &Path) -> anyhow::Result<Library> {
    let library = Library::open(folder)?;
    if let Some(reason) = library.read_only_reason() {
        say_err!(
            "note: {}: opened read-only: {reason}",
            library.database_path().display()
        );
    }
    Ok(library)
}

fn print_plan(plan: &ImportPlan, dry_run: bool) {
    let verb = if dry_run { "would be" } else { "were" };
    say!(
        "{} added, {} changed, {} unchanged ({verb} applied)",
        plan.added.len(),
        plan.changed.len(),
        plan.skipped.len()
    );
    for name in &plan.added {
        say!("  + {name}");
    }
    for change in &plan.changed {
        say!("  ~ {}: {}", change.name, change.fields.join("; "));
    }
    for name in &plan.skipped {
        say!("  = {name}");
    }
}

/// Runs one `ambit library` subcommand; each has a function of its own below.
pub fn run(arguments: LibraryArgs) -> anyhow::Result<()> {
    let folder = resolve_folder(arguments.library.as_deref())?;
    match arguments.command {
        LibraryCommand::Init { demo } => init(&folder, demo),
        LibraryCommand::Info { json } => info(&folder, json),
        LibraryCommand::ImportRoster {
            roster,
            dry_run,
            json,
        } => import_roster(&folder, roster, dry_run, json),
        LibraryCommand::ExportRoster { out } => export_roster(&folder, out),
        LibraryCommand::AddAudition {
            name,
            date,
            speech,
            glide,
            scale,
            sustain,
            song,
            json,
        } => add_audition(
            &folder,
            name,
            date,
            [
                (Task::Speech, speech),
                (Task::Glide, glide),
                (Task::Scale, scale),
                (Task::Sustain, sustain),
                (Task::Song, song),
            ],
            json,
        ),
        LibraryCommand::Singers { all, json } => singers(&folder, all, json),
        LibraryCommand::History { name, json } => history(&folder, name, json),
        LibraryCommand::AddPiece {
            score,
            title,
            programme,
            layout,
        } => add_piece(&folder, score, title, programme, layout),
        LibraryCommand::Pieces { programme } => pieces(&folder, programme),
        LibraryCommand::SaveScenario {
            name,
            result,
            programme,
            constraints,
            notes,
        } => save_scenario(&folder, name, result, programme, constraints, notes),
        LibraryCommand::Scenarios { json } => scenarios(&folder, json),
        LibraryCommand::Backup { out } => backup(&folder, out),
        LibraryCommand::Restore { backup } => restore(&folder, backup),
        LibraryCommand::DeleteSinger { name, yes } => remove_singer(&folder, name, yes),
        LibraryCommand::ExportSinger { name, out } => export_singer(&folder, name, out),
    }
}

fn init(folder: &Path, demo: bool) -> anyhow::Result<()> {
    let mut library = Library::create(folder)?;
    say!(
        "library ready at {} (schema version {})",
        folder.display(),
        library.schema_version()?
    );
    if demo {
        let info = library.info()?;
        if info.singers + info.archived_singers + info.pieces > 0 {
            bail!(
                "{}: the library already holds {} singers and {} pieces; --demo fills only an empty library",
                folder.display(),
                info.singers + info.archived_singers,
                info.pieces
            );
        }
        let staging = folder.join("demo-staging");
        let bar = Bar::new();
        let seeded = seed_library(&mut library, &staging, &mut |done, total, label| {
            bar.step(done, total, label)
        })?;
        drop(bar);
        say!(
            "stored {} demo auditions and {} sample scores as the programme \"{}\"",
            seeded.auditions,
            seeded.pieces,
            seeded.programme
        );
        for caution in cautions() {
            say!("note: {caution}");
        }
    }
    Ok(())
}

fn info(folder: &Path, json: bool) -> anyhow::Result<()> {
    let info = open(folder)?.info()?;
    if json {
        say!("{}", serde_json::to_string_pretty(&info)?);
    } else {
        say!("library      {}", info.folder);
        say!("schema       version {}", info.schema_version);
        say!(
            "singers      {} active, {} archived",
            info.singers,
            info.archived_singers
        );
        say!("auditions    {}", info.auditions);
        say!(
            "recordings   {} files, {} bytes",
            info.recordings,
            info.recording_bytes
        );
        say!(
            "pieces       {} in {} programmes",
            info.pieces,
            info.programmes
        );
        say!("scenarios    {}", info.scenarios);
    }
    Ok(())
}

fn import_roster(folder: &Path, roster: PathBuf, dry_run: bool, json: bool) -> anyhow::Result<()> {
    let mut library = open(folder)?;
    let plan = library.import_roster_file(&roster, dry_run)?;
    if json {
        say!("{}", serde_json::to_string_pretty(&plan)?);
    } else {
        print_plan(&plan, dry_run);
    }
    Ok(())
}

fn export_roster(folder: &Path, out: Option<PathBuf>) -> anyhow::Result<()> {
    let library = open(folder)?;
    let (roster, left_out) = library.roster()?;
    let text = roster_to_csv(&roster)?;
    match out {
        Some(path) => std::fs::write(&path, text)
            .with_context(|| format!("{}: cannot write", path.display()))?,
        None => say_part!("{text}"),
    }
    for name in left_out {
        say_err!("note: {name} has no range yet (no audition, nothing typed in); left out");
    }
    Ok(())
}

fn add_audition(
    folder: &Path,
    name: String,
    date: Option<String>,
    takes: [(Task, Vec<PathBuf>); 5],
    json: bool,
) -> anyhow::Result<()> {
    let mut library = open(folder)?;
    let held_on = date.unwrap_or_else(today);
    let mut recordings = Vec::new();
    for (task, files) in takes {
        recordings.extend(files.into_iter().map(|path| RecordingInput { task, path }));
    }
    if recordings.is_empty() {
        bail!("give at least one recording: --speech, --glide, --scale, --sustain or --song FILE");
    }
    let measured = measure_audition(
        &recordings,
        &ProfileConfig::default(),
        &Bar::new(),
        &Cancel::new(),
    )?;
    let input = AuditionInput {
        singer: name.clone(),
        held_on,
        recordings,
        profile: measured,
    };
    let id = store_audition(
        &mut library,
        &input.singer,
        &input.held_on,
        input.recordings.clone(),
        input.profile.clone(),
    )?;
    if json {
        say!(
            "{}",
            serde_json::to_string_pretty(&serde_json::json!({
                "audition_id": id,
                "singer": name,
                "held_on": input.held_on,
                "profile": input.profile,
            }))?
        );
    } else {
        let measured = &input.profile;
        say!("stored audition {id} of {name} on {}", input.held_on);
        say!(
            "  range         {} – {}",
            measured.range.low,
            measured.range.high
        );
        say!(
            "  comfort zone  {} – {}",
            measured.comfort.span.low,
            measured.comfort.span.high
        );
        say!(
            "  voice type    {} ({:.0} %), section {}",
            measured.voice_type.label,
            measured.voice_type.confidence * 100.0,
            measured.section
        );
        for caution in &measured.cautions {
            say!("note: {caution}");
        }
    }
    Ok(())
}

fn singers(folder: &Path, all: bool, json: bool) -> anyhow::Result<()> {
    let singers = open(folder)?.singers(all)?;
    if json {
        say!("{}", serde_json::to_string_pretty(&singers)?);
    } else {
        let width = column_width(singers.iter().map(|s| s.name.as_str()), 4);
        say!(
            "{}  {:<7}  {:<9}  {:<9}  {:<9}  auditions",
            pad_right("name", width),
            "section",
            "range",
            "comfort",
            "from"
        );
        for singer in &singers {
            let (range, comfort) = match &singer.current {
                Some(current) => (
                    format!(
                        "{}–{}",
                        nearest_name(current.range_low_midi),
                        nearest_name(current.range_high_midi)
                    ),
                    format!(
                        "{}–{}",
                        nearest_name(current.comfort_low_midi),
                        nearest_name(current.comfort_high_midi)
                    ),
                ),
                None => ("-".into(), "-".into()),
            };
            let from = match singer.source {
                SingerSource::Typed => "typed in",
                SingerSource::Measured => "measured",
                SingerSource::None => "-",
            };
            let section = singer
                .section
                .clone()
                .or_else(|| singer.current.as_ref().and_then(|c| c.section.clone()))
                .unwrap_or_else(|| "-".into());
            let archived = if singer.archived { "  (archived)" } else { "" };
            say!(
                "{}  {}  {:<9}  {:<9}  {:<9}  {}{archived}",
                pad_right(&singer.name, width),
                pad_right(&section, 7),
                range,
                comfort,
                from,
                singer.auditions
            );
        }
    }
    Ok(())
}

fn history(folder: &Path, name: String, json: bool) -> anyhow::Result<()> {
    let history = open(folder)?.history(&name)?;
    if json {
        say!("{}", serde_json::to_string_pretty(&history)?);
    } else if history.is_empty() {
        say!("{name} has no auditions yet");
    } else {
        say!(
            "{:<10}  {:<9}  {:<9}  {:<14}  section",
            "date",
            "range",
            "comfort",
            "voice type"
        );
        for entry in &history {
            let profile = &entry.profile;
            say!(
                "{:<10}  {:<9}  {:<9}  {:<14}  {}",
                entry.held_on,
                format!("{}–{}", profile.range.low, profile.range.high),
                format!("{}–{}", profile.comfort.span.low, profile.comfort.span.high),
                profile.voice_type.label,
                profile.section
            );
        }
        say!();
        for caution in cautions() {
            say!("note: {caution}");
        }
    }
    Ok(())
}

fn add_piece(
    folder: &Path,
    score: PathBuf,
    title: Option<String>,
    programme: Option<String>,
    layout: Option<String>,
) -> anyhow::Result<()> {
    let mut library = open(folder)?;
    let mapping = match layout {
        Some(layout) => {
            Layout::parse(&layout).context("--layout")?;
            Some(MappingChoice {
                layout: Some(layout),
                overrides: Default::default(),
            })
        }
        None => None,
    };
    let options = ImportOptions {
        title,
        programme: programme.clone(),
        mapping,
    };
    let imported = import_piece(&mut library, &score, &options, &Bar::new())?;
    if let Some(error) = &imported.view.mapping_error {
        say_err!("warning: {}: {error}", score.display());
    }
    let (id, title) = (imported.id, imported.title);
    match programme {
        Some(programme) => {
            say!("stored piece {id} \"{title}\" in programme \"{programme}\"")
        }
        None => say!("stored piece {id} \"{title}\""),
    }
    Ok(())
}

fn pieces(folder: &Path, programme: Option<String>) -> anyhow::Result<()> {
    let library = open(folder)?;
    let pieces = match programme {
        Some(programme) => library.programme(&programme)?,
        None => library.pieces()?,
    };
    for piece in pieces {
        say!(
            "{:>4}  {}  ({})",
            piece.id,
            piece.title,
            piece.original_name
        );
    }
    Ok(())
}

fn save_scenario(
    folder: &Path,
    name: String,
    result: PathBuf,
    programme: Option<String>,
    constraints: Option<PathBuf>,
    notes: Option<String>,
) -> anyhow::Result<()> {
    let mut library = open(folder)?;
    let read_json = |path: &Path| -> anyhow::Result<serde_json::Value> {
        let text =
            ambit::input::read_bounded(path, ambit::input::MAX_JSON_BYTES, "JSON documents")?;
        serde_json::from_slice(&text).with_context(|| format!("{}: not JSON", path.display()))
    };
    let result = read_json(&result)?;
    let layout = ambit::views::place_view_layout(&result);
    let constraints = match constraints {
        Some(path) => read_json(&path)?,
        None => serde_json::json!({}),
    };
    let id = library.save_scenario(&ScenarioInput {
        name: name.clone(),
        programme,
        layout,
        constraints,
        result,
        notes,
    })?;
    say!("saved scenario {id} \"{name}\"");
    Ok(())
}

fn scenarios(folder: &Path, json: bool) -> anyhow::Result<()> {
    let scenarios = open(folder)?.scenarios()?;
    if json {
        say!("{}", serde_json::to_string_pretty(&scenarios)?);
    } else {
        for scenario in scenarios {
            say!(
                "{:>4}  {}  {}  programme {}  layout {}{}",
                scenario.id,
                scenario.saved_at,
                scenario.name,
                scenario.programme.as_deref().unwrap_or("-"),
                scenario.layout.as_deref().unwrap_or("-"),
                scenario
                    .notes
                    .map(|notes| format!("  ({notes})"))
                    .unwrap_or_default()
            );
        }
    }
    Ok(())
}

fn backup(folder: &Path, out: PathBuf) -> anyhow::Result<()> {
    let manifest = open(folder)?.backup(&out)?;
    say!(
        "backed up {} files to {} (schema version {})",
        manifest.entries.len(),
        out.display(),
        manifest.schema_version
    );
    Ok(())
}

fn restore(folder: &Path, backup: PathBuf) -> anyhow::Result<()> {
    let manifest = Library::restore(&backup, folder)?;
    say!(
        "restored {} files from {} into {} (every hash checked)",
        manifest.entries.len(),
        backup.display(),
        folder.display()
    );
    Ok(())
}

fn remove_singer(folder: &Path, name: String, yes: bool) -> anyhow::Result<()> {
    let mut library = open(folder)?;
    if !yes {
        let preview = preview_delete(&library, &name)?;
        say!(
            "would delete {}: their details, typed-in ranges, {} auditions and the recordings no one else shares; add --yes to delete",
            preview.name,
            preview.auditions
        );
        return Ok(());
    }
    let deleted = delete_singer(&mut library, &name)?;
    say!(
        "deleted {} and {} recording files",
        deleted.name,
        deleted.recording_files.unwrap_or(0)
    );
    Ok(())
}

fn export_singer(folder: &Path, name: String, out: PathBuf) -> anyhow::Result<()> {
    if out.exists() {
        bail!("{}: already exists; give a new folder", out.display());
    }
    let export = open(folder)?.export_person(&name, &out)?;
    say!(
        "exported {} ({} auditions) to {}",
        export.singer.name,
        export.auditions.len(),
        out.display()
    );
    Ok(())
}
