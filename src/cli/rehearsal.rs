//! `ambit rehearsal --minutes N --layout LAYOUT ITEM… [--json]`: a rehearsal
//! plan by vocal load. An ITEM is `SCORE`, `SCORE:FIRST-LAST`, each
//! optionally followed by `:xK` for K run-throughs; `--programme NAME` adds
//! a programme stored in the library. Prints the timed run
//! sheet, the load per section, the rules, the warnings and the cautions.

use anyhow::{Context, bail};
use clap::Args;

use ambit::rehearsal::{BlockKind, RehearsalConfig, RehearsalPlan};
use ambit::sections::Layout;
use ambit::usecases::Cancel;
use ambit::usecases::rehearsal::{ItemInput, plan_rehearsal_files};

use super::fit::print_rows;
use super::progress::Bar;

#[derive(Debug, Args)]
pub struct RehearsalArgs {
    /// Length of the rehearsal in minutes.
    #[arg(long)]
    pub minutes: f64,
    /// Sections: SATB, SSAATTBB, SSA, SSAA, TTBB, SAB, or a list such as S1,S2,A,T,B.
    #[arg(long)]
    pub layout: String,
    /// What to rehearse: SCORE, SCORE:FIRST-LAST (printed bars), each optionally with :xK run-throughs.
    #[arg(required_unless_present = "programme", value_name = "ITEM")]
    pub items: Vec<String>,
    /// A programme stored in the library: its pieces, whole and once each, come after the ITEMs.
    #[arg(long)]
    pub programme: Option<String>,
    /// The choir library holding --programme (default: AMBIT_LIBRARY, else the OS data directory).
    #[arg(long, value_name = "PATH")]
    pub library: Option<std::path::PathBuf>,
    /// Make item N (1-based, in the order given) a sectional for these sections, e.g. 2=T,B.
    #[arg(long = "sectional", value_name = "N=SECTIONS")]
    pub sectionals: Vec<String>,
    /// Fix item N at place P among the items, e.g. 3=1.
    #[arg(long = "at", value_name = "N=P")]
    pub fixed: Vec<String>,
    /// Warm-up length in minutes (0 for none).
    #[arg(long, value_name = "MIN")]
    pub warm_up: Option<f64>,
    /// Number of breaks (default: one per full 75 minutes).
    #[arg(long)]
    pub breaks: Option<usize>,
    /// Length of a break in minutes.
    #[arg(long, value_name = "MIN")]
    pub break_minutes: Option<f64>,
    /// Share of each item's time for stops, talk and notes (0–0.9).
    #[arg(long)]
    pub stop_share: Option<f64>,
    /// Most high minutes a section may sing in a row.
    #[arg(long, value_name = "MIN")]
    pub high_budget: Option<f64>,
    /// Least share of every 30-minute window a section must be silent (0–1).
    #[arg(long)]
    pub rest_share: Option<f64>,
    /// Roster (CSV or Ambit's JSON) whose `section` column is the placement: adds each singer's minutes above their own secondo.
    #[arg(long)]
    pub roster: Option<std::path::PathBuf>,
    /// Print JSON instead of a run sheet.
    #[arg(long)]
    pub json: bool,
}

/// "N=VALUE" with N a 1-based item number.
fn item_pair<'a>(option: &str, text: &'a str, items: usize) -> anyhow::Result<(usize, &'a str)> {
    let Some((number, value)) = text.split_once('=') else {
        bail!("{option} {text}: expected N=VALUE with N the item's number");
    };
    let number: usize = number
        .trim()
        .parse()
        .ok()
        .filter(|n| (1..=items).contains(n))
        .with_context(|| format!("{option} {text}: the item number must be 1–{items}"))?;
    Ok((number - 1, value.trim()))
}

pub fn run(arguments: RehearsalArgs) -> anyhow::Result<()> {
    let layout = Layout::parse(&arguments.layout)?;
    let mut items = arguments
        .items
        .iter()
        .map(|text| ItemInput::parse(text))
        .collect::<Result<Vec<_>, _>>()?;
    if let Some(name) = &arguments.programme {
        let folder = ambit::library::resolve_folder(arguments.library.as_deref())?;
        let library = super::library::open(&folder)?;
        let stored = ambit::usecases::rehearsal::programme_items(&library, name)?;
        if stored.is_empty() {
            bail!("programme `{name}` has no pieces in {}", folder.display());
        }
        items.extend(stored);
    }
    let count = items.len();
    for text in &arguments.sectionals {
        let (index, sections) = item_pair("--sectional", text, count)?;
        items[index].sections = Some(sections.split(',').map(|s| s.trim().to_string()).collect());
    }
    for text in &arguments.fixed {
        let (index, place) = item_pair("--at", text, count)?;
        items[index].position = Some(
            place
                .parse()
                .with_context(|| format!("--at {text}: the place must be a whole number"))?,
        );
    }
    let mut config = RehearsalConfig::default();
    if let Some(minutes) = arguments.warm_up {
        config.warm_up_minutes = minutes;
    }
    if arguments.breaks.is_some() {
        config.breaks = arguments.breaks;
    }
    if let Some(minutes) = arguments.break_minutes {
        config.break_minutes = minutes;
    }
    if let Some(share) = arguments.stop_share {
        config.stop_share = share;
    }
    if let Some(budget) = arguments.high_budget {
        config.rules.high_budget_minutes = Some(budget);
    }
    if let (Some(share), Some(rest)) = (arguments.rest_share, config.rules.rest.as_mut()) {
        rest.min_share = share;
    }
    let roster = arguments
        .roster
        .as_deref()
        .map(ambit::roster::read_roster)
        .transpose()?;
    let bar = Bar::new();
    let plan = plan_rehearsal_files(
        &items,
        &layout,
        arguments.minutes,
        roster.as_ref(),
        &config,
        &bar,
        &Cancel::new(),
    )?;
    drop(bar);
    if arguments.json {
        say!("{}", serde_json::to_string_pretty(&plan)?);
        return Ok(());
    }
    print_plan(&plan);
    Ok(())
}

/// Minutes as h:mm.
fn clock(minutes: f64) -> String {
    let total = minutes.round().max(0.0) as u64;
    format!("{}:{:02}", total / 60, total % 60)
}

fn print_plan(plan: &RehearsalPlan) {
    say!(
        "Rehearsal of {} min: {} planned{}",
        plan.minutes.round(),
        plan.planned_minutes.round(),
        if plan.spare_minutes >= 0.5 {
            format!(", {} min spare", plan.spare_minutes.round())
        } else {
            String::new()
        }
    );
    say!();
    let mut rows = vec![
        ["start", "min", "block", "item", "bars", "runs", "who sings"]
            .iter()
            .map(|c| c.to_string())
            .collect::<Vec<_>>(),
    ];
    for block in &plan.items {
        let kind = match block.kind {
            BlockKind::WarmUp => "warm-up",
            BlockKind::Work => "work",
            BlockKind::Break => "break",
            BlockKind::Sectional => "sectional",
        };
        rows.push(vec![
            clock(block.start_minute),
            format!("{:.0}", block.minutes),
            kind.to_string(),
            block.piece.clone().unwrap_or_default(),
            block.bars.clone().unwrap_or_else(|| {
                if block.piece.is_some() {
                    "all".to_string()
                } else {
                    String::new()
                }
            }),
            if block.run_throughs > 0 {
                format!("×{}", block.run_throughs)
            } else {
                String::new()
            },
            if block.sections.is_empty() {
                "nobody".to_string()
            } else {
                block.sections.join(" ")
            },
        ]);
    }
    rows.push(vec![
        clock(plan.planned_minutes),
        String::new(),
        "end".to_string(),
    ]);
    print_rows(&rows);
    say!();
    say!("Load per section (estimated from notation):");
    let mut rows = vec![
        [
            "section",
            "sung min",
            "high min",
            "high from",
            "high in a row",
            "rest",
            "least rest",
            "peak load",
        ]
        .iter()
        .map(|c| c.to_string())
        .collect::<Vec<_>>(),
    ];
    for label in &plan.layout {
        if let Some(s) = plan.sections.get(label) {
            rows.push(vec![
                label.clone(),
                format!("{:.1}", s.sung_minutes),
                format!("{:.1}", s.high_minutes),
                s.high_from.clone(),
                format!("{:.1}", s.longest_high_stretch_minutes),
                format!("{:.0}%", 100.0 * s.rest_share),
                format!(
                    "{:.0}% at {}–{}",
                    100.0 * s.least_window_rest_share,
                    clock(s.least_rest_window.0),
                    clock(s.least_rest_window.1)
                ),
                format!(
                    "{:.1} at {}–{}",
                    s.peak_window_load_minutes,
                    clock(s.peak_load_window.0),
                    clock(s.peak_load_window.1)
                ),
            ]);
        }
    }
    print_rows(&rows);
    say!(
        "Order found by {} search ({} orders examined).",
        match plan.search.method {
            ambit::rehearsal::order::Method::Exact => "exact",
            ambit::rehearsal::order::Method::Heuristic => "heuristic",
            ambit::rehearsal::order::Method::BruteForce => "brute-force",
        },
        plan.search.examined
    );
    say!();
    say!("Rules:");
    for rule in &plan.rules {
        say!(
            "  [{}] {} — {} ({})",
            if rule.met { "met" } else { "NOT MET" },
            rule.label,
            rule.setting,
            rule.source
        );
    }
    say!();
    for line in &plan.estimate {
        say!("{line}");
    }
    if !plan.singers.is_empty() {
        say!();
        say!("Singers (minutes at or above their own secondo passaggio):");
        let mut rows = vec![
            [
                "singer",
                "section",
                "secondo",
                "own high min",
                "section high min",
            ]
            .iter()
            .map(|c| c.to_string())
            .collect::<Vec<_>>(),
        ];
        for singer in &plan.singers {
            rows.push(vec![
                singer.name.clone(),
                singer.section.clone(),
                singer.secondo.clone(),
                format!("{:.1}", singer.high_minutes),
                format!("{:.1}", singer.section_high_minutes),
            ]);
        }
        print_rows(&rows);
    }
    if !plan.warnings.is_empty() {
        say!();
        say!("Warnings:");
        for warning in &plan.warnings {
            say!("  ! {warning}");
        }
    }
    say!();
    for caution in &plan.cautions {
        say!("• {caution}");
    }
}
