//! `ambit place --roster ROSTER --layout LAYOUT [--size SEC=MIN..MAX]…
//! [--lock NAME=SEC]… [--exclude NAME=SEC]… SCORE… [--json]`: the optimal
//! placement of a roster into a layout's sections over a programme.

use std::fmt::Write as _;
use std::path::PathBuf;

use anyhow::{Context, bail};
use clap::Args;

use ambit::cautions::cautions;
use ambit::placement::{Placement, PlacementError, RiskReason, SizeLimit};
use ambit::plan::{
    DivisiChoice, PlacedProgramme, PlanConstraints, ProgrammeConfig, ProgrammeError, ProgrammePlan,
    place_programme, plan_programme,
};
use ambit::report::{ReportDocument, write_report};
use ambit::views::place_view;

use super::write_stdout;
use ambit::roster::read_roster;
use ambit::score::{ReadOptions, read_score};
use ambit::sections::Layout;
use ambit::text::{column_width, pad_right};

#[derive(Debug, Args)]
pub struct PlaceArgs {
    /// The roster: CSV (name, range_low, range_high, comfort_low, comfort_high, …) or Ambit JSON.
    /// Without it, the library's active singers are the roster.
    #[arg(long, required_unless_present_any = ["programme", "library"])]
    pub roster: Option<PathBuf>,
    /// The choir library to take the roster (and, with --programme, the scores) from
    /// (default: AMBIT_LIBRARY, else the OS data directory).
    #[arg(long, value_name = "PATH")]
    pub library: Option<PathBuf>,
    /// A programme stored in the library: its pieces, in order, are the scores.
    #[arg(long)]
    pub programme: Option<String>,
    /// Save the placement in the library as a scenario with this name.
    #[arg(long, value_name = "NAME")]
    pub save_scenario: Option<String>,
    /// Sections: SATB, SSAATTBB, SSA, SSAA, TTBB, SAB, or a list such as S1,S2,A,T,B.
    #[arg(long)]
    pub layout: String,
    /// Section size: SECTION=MIN..MAX, SECTION=N (exactly), SECTION=MIN.. or SECTION=..MAX.
    #[arg(long = "size", value_name = "SECTION=MIN..MAX")]
    pub sizes: Vec<String>,
    /// Keep a singer in a section.
    #[arg(long = "lock", value_name = "NAME=SECTION")]
    pub locks: Vec<String>,
    /// Keep a singer out of a section.
    #[arg(long = "exclude", value_name = "NAME=SECTION")]
    pub exclusions: Vec<String>,
    /// Prefer even section sizes: each extra seat in a section costs this many fit points more than the last.
    #[arg(long)]
    pub balance: Option<f64>,
    /// The programme: score files (MIDI, MusicXML, .mxl).
    #[arg(required_unless_present = "programme")]
    pub scores: Vec<PathBuf>,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Also write the plan as a self-contained HTML report (charts, tables, cautions) to this file.
    #[arg(long, value_name = "FILE.html")]
    pub report: Option<PathBuf>,
}

/// What was solved: the whole plan (for a report) or just the placement.
enum Outcome {
    Plan(Box<ProgrammePlan>),
    Placed(Box<PlacedProgramme>),
}

/// "NAME=VALUE", split at the last '=' so names may contain one.
fn split_pair<'a>(option: &str, text: &'a str) -> anyhow::Result<(&'a str, &'a str)> {
    match text.rsplit_once('=') {
        Some((name, value)) if !name.trim().is_empty() && !value.trim().is_empty() => {
            Ok((name.trim(), value.trim()))
        }
        _ => bail!("{option} {text}: expected NAME=SECTION"),
    }
}

/// "T1=3..5", "T1=4", "T1=3..", "T1=..5".
fn parse_size(text: &str) -> anyhow::Result<(String, SizeLimit)> {
    let (section, range) = split_pair("--size", text)?;
    let number = |part: &str, default: usize| -> anyhow::Result<usize> {
        let part = part.trim();
        if part.is_empty() {
            return Ok(default);
        }
        part.parse()
            .with_context(|| format!("--size {text}: `{part}` is not a whole number of singers"))
    };
    let limit = match range.split_once("..") {
        Some((low, high)) => SizeLimit {
            min: number(low, 0)?,
            max: number(high, usize::MAX)?,
        },
        None => SizeLimit::exactly(number(range, 0)?),
    };
    if limit.min > limit.max {
        bail!("--size {text}: the minimum is above the maximum");
    }
    Ok((section.to_string(), limit))
}

fn pairs(option: &str, texts: &[String]) -> anyhow::Result<Vec<(String, String)>> {
    texts
        .iter()
        .map(|text| {
            split_pair(option, text).map(|(name, section)| (name.to_string(), section.to_string()))
        })
        .collect()
}

pub fn run(arguments: PlaceArgs) -> anyhow::Result<()> {
    let constraints = PlanConstraints {
        sizes: arguments
            .sizes
            .iter()
            .map(|text| parse_size(text))
            .collect::<anyhow::Result<_>>()?,
        locks: pairs("--lock", &arguments.locks)?,
        exclusions: pairs("--exclude", &arguments.exclusions)?,
        balance: arguments.balance,
    };
    let uses_library = arguments.programme.is_some()
        || arguments.save_scenario.is_some()
        || arguments.roster.is_none();
    let library = if uses_library {
        let folder = ambit::library::resolve_folder(arguments.library.as_deref())?;
        Some(super::library::open(&folder)?)
    } else {
        None
    };
    let roster = match (&arguments.roster, &library) {
        (Some(path), _) => read_roster(path)?,
        (None, Some(library)) => {
            let (roster, left_out) = library.roster()?;
            for name in left_out {
                say_err!("note: {name} has no range in the library yet; left out");
            }
            roster
        }
        (None, None) => bail!("give --roster FILE or --library PATH"),
    };
    let layout = Layout::parse(&arguments.layout).context("--layout")?;
    let options = ReadOptions::default();
    let mut score_paths = arguments.scores.clone();
    if let (Some(name), Some(library)) = (&arguments.programme, &library) {
        score_paths.extend(library.programme(name)?.into_iter().map(|piece| piece.path));
    }
    if score_paths.is_empty() {
        bail!(
            "the programme has no pieces; add some with `ambit library add-piece --programme NAME`"
        );
    }
    let programme = score_paths
        .iter()
        .map(|path| read_score(path, &options))
        .collect::<Result<Vec<_>, _>>()?;
    let config = ProgrammeConfig::default();
    // A report needs the whole plan (tessituras, key sweeps); a table or
    // JSON needs only the matrix and the placement.
    let outcome = match &arguments.report {
        Some(_) => plan_programme(&roster, &programme, &layout, &constraints, &config)
            .map(|plan| Outcome::Plan(Box::new(plan))),
        None => place_programme(&roster, &programme, &layout, &constraints, &config)
            .map(|placed| Outcome::Placed(Box::new(placed))),
    };
    let outcome = match outcome {
        Ok(outcome) => outcome,
        Err(ProgrammeError::Placement(PlacementError::Infeasible { reasons })) => {
            let lines: Vec<String> = reasons
                .iter()
                .map(|reason| format!("  - {}", reason.message))
                .collect();
            bail!("no placement meets every constraint:\n{}", lines.join("\n"));
        }
        Err(error) => return Err(error.into()),
    };
    let (matrix, placement, divisi) = match &outcome {
        Outcome::Plan(plan) => (&plan.matrix, &plan.placement, &plan.divisi),
        Outcome::Placed(placed) => (&placed.matrix, &placed.placement, &placed.divisi),
    };
    if let (Some(path), Outcome::Plan(plan)) = (&arguments.report, &outcome) {
        let names: Vec<String> = score_paths
            .iter()
            .map(|path| {
                path.file_name().map_or_else(
                    || path.display().to_string(),
                    |name| name.to_string_lossy().into_owned(),
                )
            })
            .collect();
        let title = format!(
            "Programme plan: {} singers, layout {}",
            roster.singers.len(),
            layout.name
        );
        let source = format!("Roster and {} piece(s): {}.", names.len(), names.join(", "));
        write_report(
            path,
            &ReportDocument {
                title: &title,
                source: &source,
                plan,
            },
        )?;
        say_err!("wrote {}", path.display());
    }
    let json = serde_json::to_value(place_view(matrix, placement, divisi))?;
    if let (Some(name), Some(mut library)) = (&arguments.save_scenario, library) {
        let id = library.save_scenario(&ambit::library::ScenarioInput {
            name: name.clone(),
            programme: arguments.programme.clone(),
            layout: Some(arguments.layout.clone()),
            constraints: serde_json::to_value(&constraints)?,
            result: json.clone(),
            notes: None,
        })?;
        say_err!("saved scenario {id} \"{name}\" in the library");
    }
    if arguments.json {
        write_stdout(&format!("{}\n", serde_json::to_string_pretty(&json)?))
    } else {
        write_stdout(&table(placement, divisi)?)
    }
}

fn table(placement: &Placement, divisi: &[DivisiChoice]) -> Result<String, std::fmt::Error> {
    let mut out = String::new();
    let width = column_width(
        placement
            .assignments
            .iter()
            .map(|assignment| assignment.singer.as_str()),
        6,
    );
    writeln!(
        out,
        "{}  {:<7}  {:>5}  why",
        pad_right("singer", width),
        "section",
        "fit"
    )?;
    for assignment in &placement.assignments {
        writeln!(
            out,
            "{}  {}  {:>5.1}  {}",
            pad_right(&assignment.singer, width),
            pad_right(&assignment.section, 7),
            assignment.fit,
            assignment.explanation
        )?;
    }
    writeln!(out)?;
    writeln!(out, "{:<7}  {:>5}  {:>9}", "section", "count", "mean fit")?;
    for section in &placement.sections {
        let mean = section
            .mean_fit
            .map_or_else(|| "-".to_string(), |mean| format!("{mean:.1}"));
        writeln!(
            out,
            "{:<7}  {:>5}  {:>9}",
            section.section, section.count, mean
        )?;
    }
    writeln!(out, "total fit {:.1}", placement.objective)?;
    if placement.balance_penalty > 0.0 {
        writeln!(out, "balance penalty {:.1}", placement.balance_penalty)?;
    }
    write_at_risk(&mut out, placement)?;
    write_divisi(&mut out, divisi)?;
    writeln!(out)?;
    for caution in cautions() {
        writeln!(out, "note: {caution}")?;
    }
    Ok(out)
}

/// The "at risk:" block of the placement table (nothing when nobody is).
pub(super) fn write_at_risk(out: &mut String, placement: &Placement) -> std::fmt::Result {
    if placement.at_risk.is_empty() {
        return Ok(());
    }
    writeln!(out)?;
    writeln!(out, "at risk:")?;
    for risk in &placement.at_risk {
        let reasons: Vec<String> = risk.reasons.iter().map(RiskReason::describe).collect();
        writeln!(
            out,
            "  {} in {} (fit {:.1}): {}",
            risk.singer,
            risk.section,
            risk.fit,
            reasons.join(", ")
        )?;
    }
    Ok(())
}

/// The "divisi:" block: per piece and section, who sings which line
/// (nothing when no section divides).
fn write_divisi(out: &mut String, divisi: &[DivisiChoice]) -> std::fmt::Result {
    if divisi.is_empty() {
        return Ok(());
    }
    writeln!(out)?;
    writeln!(out, "divisi:")?;
    for choice in divisi {
        writeln!(out, "  {}, {}:", choice.piece, choice.section)?;
        writeln!(
            out,
            "    upper line ({}): {}",
            choice.upper_line,
            choice.upper.join(", ")
        )?;
        writeln!(
            out,
            "    lower line ({}): {}",
            choice.lower_line,
            choice.lower.join(", ")
        )?;
        if let Some(note) = &choice.note {
            writeln!(out, "    note: {note}")?;
        }
    }
    Ok(())
}
