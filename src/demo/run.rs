//! `ambit demo` as a library call: the whole pipeline on the bundled demo
//! choir and the bundled sample scores, returning plain data.
//!
//! 1. Each singer's five audition tasks are synthesised, tracked and
//!    profiled (`voice::profile`), singers in parallel (rayon); with an
//!    output folder, the recordings are also written as 16-bit WAV files.
//! 2. The measured profiles become roster rows (`roster::singer_from_profile`).
//! 3. The four sample scores (compiled into the binary, so the demo runs from
//!    any folder) are read and planned as a programme (`plan::plan_programme`):
//!    part tessituras, the singer × section fit matrix, the optimal
//!    placement and the key sweep for the choir as placed.
//!
//! Architecture invariant: no figure is computed here; every number comes
//! from the stage that owns it. The only files touched are the ones under
//! the output folder the caller names ([`write_outputs`]).

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use thiserror::Error;

use super::seed::{DEMO_LAYOUT, SAMPLE_SCORES, audition_seed, singer_slug};
use super::{DEMO_CHOIR, DemoSinger, audition_to};
use crate::placement::SizeLimit;
use crate::plan::{
    PlanConstraints, ProgrammeConfig, ProgrammeError, ProgrammePlan, plan_programme,
};
use crate::roster::{Roster, Singer, roster_to_csv, singer_from_profile};
use crate::score::{Piece, ReadOptions, ScoreError, read_score_bytes};
use crate::sections::{Layout, LayoutError};
use crate::voice::{Profile, ProfileConfig, VoiceError, profile};

/// The demo choir's name (invented, like its singers).
pub const CHOIR_NAME: &str = "Wrenhaven Harbour Choir";

/// Settings of the demo run.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoConfig {
    /// Where to write each singer's audition as WAV files
    /// (`<dir>/<singer-slug>/<task>.wav`); `None` writes nothing.
    pub auditions_dir: Option<PathBuf>,
    /// The layout the choir is placed into.
    pub layout: String,
    /// Size limit for every section of the layout.
    pub section_size: SizeLimit,
    pub profile: ProfileConfig,
    pub programme: ProgrammeConfig,
}

impl Default for DemoConfig {
    fn default() -> Self {
        DemoConfig {
            auditions_dir: None,
            // The programme has an SSAATTBB piece with divisi in every
            // section, so the choir is seated in eight sections; 24 singers
            // give three a section on average, and every section needs two
            // to cover a divisi.
            layout: DEMO_LAYOUT.into(),
            section_size: SizeLimit { min: 2, max: 4 },
            profile: ProfileConfig::default(),
            programme: ProgrammeConfig::default(),
        }
    }
}

/// One demo singer as measured.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MeasuredSinger {
    pub name: String,
    /// The director's note from the demo choir ("16, voice still settling").
    pub note: String,
    pub profile: Profile,
    /// The WAV files written for this singer, in task order (empty when none).
    pub recordings: Vec<PathBuf>,
}

/// Everything `ambit demo` found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DemoResult {
    pub choir: String,
    pub singers: Vec<MeasuredSinger>,
    /// The measured roster (one row per singer, from their profile).
    pub roster: Roster,
    /// The programme planned for that roster (its roster has the placement
    /// in the `section` column).
    pub plan: ProgrammePlan,
}

#[derive(Debug, Error)]
pub enum DemoError {
    #[error("demo audition: {0}")]
    Audition(String),
    #[error("demo profile of {singer}: {source}")]
    Profile {
        singer: String,
        #[source]
        source: VoiceError,
    },
    #[error("demo layout: {0}")]
    Layout(#[from] LayoutError),
    #[error("bundled sample score: {0}")]
    Score(#[from] ScoreError),
    #[error("demo programme: {0}")]
    Programme(#[from] ProgrammeError),
    #[error("{}: cannot write: {source}", path.display())]
    Write {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("demo roster as CSV: {0}")]
    Csv(#[from] csv::Error),
    #[error(transparent)]
    Report(#[from] crate::report::ReportError),
    #[error("demo rehearsal: {0}")]
    Mapping(#[from] crate::sections::MappingError),
    #[error("demo rehearsal: {0}")]
    Rehearsal(#[from] crate::rehearsal::RehearsalError),
    #[error("demo rehearsal as JSON: {0}")]
    Json(#[from] serde_json::Error),
}

/// The bundled sample scores, read.
pub fn demo_programme() -> Result<Vec<Piece>, ScoreError> {
    SAMPLE_SCORES
        .iter()
        .map(|(name, bytes)| {
            read_score_bytes(
                &Path::new("sample-scores").join(name),
                bytes,
                &ReadOptions::default(),
            )
        })
        .collect()
}

fn measure(
    index: usize,
    singer: &DemoSinger,
    config: &DemoConfig,
) -> Result<MeasuredSinger, DemoError> {
    let folder = match &config.auditions_dir {
        Some(dir) => {
            let folder = dir.join(singer_slug(singer.name));
            std::fs::create_dir_all(&folder).map_err(|source| DemoError::Write {
                path: folder.clone(),
                source,
            })?;
            Some(folder)
        }
        None => None,
    };
    let recordings = audition_to(singer, audition_seed(index), folder.as_deref())
        .map_err(DemoError::Audition)?;
    let measured = profile(&recordings, &config.profile).map_err(|source| DemoError::Profile {
        singer: singer.name.to_string(),
        source,
    })?;
    Ok(MeasuredSinger {
        name: singer.name.to_string(),
        note: singer.notes.to_string(),
        profile: measured,
        recordings: match folder {
            Some(_) => recordings
                .iter()
                .map(|recording| PathBuf::from(&recording.file))
                .collect(),
            None => Vec::new(),
        },
    })
}

/// The roster row of a measured demo singer: the profile's figures, with the
/// director's note after the measured voice type.
fn roster_row(singer: &MeasuredSinger) -> Singer {
    let mut row = singer_from_profile(&singer.name, &singer.profile);
    if !singer.note.is_empty() {
        row.notes = Some(match row.notes {
            Some(measured) => format!("{measured}; {}", singer.note),
            None => singer.note.clone(),
        });
    }
    row
}

/// Runs the whole demo (see the module docs).
pub fn run_demo(config: &DemoConfig) -> Result<DemoResult, DemoError> {
    run_demo_with_progress(config, &crate::usecases::Quiet)
}

/// [`run_demo`], reporting each singer as they are measured and then the
/// programme plan.
pub fn run_demo_with_progress(
    config: &DemoConfig,
    progress: &dyn crate::usecases::Progress,
) -> Result<DemoResult, DemoError> {
    use std::sync::atomic::{AtomicUsize, Ordering};
    let layout = Layout::parse(&config.layout)?;
    let total = DEMO_CHOIR.len() + 1;
    let measured = AtomicUsize::new(0);
    let singers = DEMO_CHOIR
        .par_iter()
        .enumerate()
        .map(|(index, singer)| {
            let result = measure(index, singer, config);
            let done = measured.fetch_add(1, Ordering::Relaxed) + 1;
            progress.step(
                done,
                total,
                &format!("Measured the audition of {}", singer.name),
            );
            result
        })
        .collect::<Result<Vec<_>, _>>()?;
    let roster = Roster {
        singers: singers.iter().map(roster_row).collect(),
    };
    let programme = demo_programme()?;
    let constraints = PlanConstraints {
        sizes: layout
            .labels()
            .into_iter()
            .map(|section| (section, config.section_size))
            .collect(),
        ..PlanConstraints::default()
    };
    let plan = plan_programme(
        &roster,
        &programme,
        &layout,
        &constraints,
        &config.programme,
    )?;
    progress.step(total, total, "Planned the programme");
    Ok(DemoResult {
        choir: CHOIR_NAME.to_string(),
        singers,
        roster,
        plan,
    })
}

/// Length of the demo rehearsal.
pub const DEMO_REHEARSAL_MINUTES: f64 = 90.0;

/// The demo rehearsal: 90 minutes of the sample programme for `layout`
/// (whole pieces and passages with run-throughs, and a tenors' sectional on
/// the high page of "The Lamplighter"), planned with the default rules.
pub fn demo_rehearsal(
    programme: &[Piece],
    layout: &Layout,
) -> Result<crate::rehearsal::RehearsalPlan, DemoError> {
    use crate::rehearsal::load::BarRange;
    use crate::rehearsal::{
        RehearsalConfig, RehearsalItem, RehearsalPiece, RehearsalRequest, plan_rehearsal,
    };
    use crate::sections::{MappingConfig, Section, map_piece};
    let mappings = programme
        .iter()
        .enumerate()
        .map(|(index, piece)| map_piece(piece, index, layout, &MappingConfig::default()))
        .collect::<Result<Vec<_>, _>>()?;
    let pieces: Vec<RehearsalPiece> = programme
        .iter()
        .zip(&mappings)
        .zip(SAMPLE_SCORES.iter())
        .map(|((piece, mapping), (name, _))| RehearsalPiece {
            name,
            piece,
            mapping,
        })
        .collect();
    let item = |piece: usize, bars: Option<(i64, i64)>, run_throughs: u32| RehearsalItem {
        piece,
        bars: bars.map(|(first, last)| BarRange { first, last }),
        run_throughs,
        sections: None,
        position: None,
    };
    let tenors: Vec<Section> = layout
        .sections
        .iter()
        .copied()
        .filter(|s| s.voice == crate::sections::Voice::Tenor)
        .collect();
    let mut items = vec![
        item(0, None, 4),
        item(1, Some((1, 12)), 4),
        item(2, None, 3),
        item(3, None, 3),
        item(1, None, 3),
        item(0, Some((18, 33)), 3),
    ];
    if !tenors.is_empty() {
        let mut sectional = item(2, Some((5, 12)), 3);
        sectional.sections = Some(tenors);
        items.push(sectional);
    }
    let request = RehearsalRequest {
        minutes: DEMO_REHEARSAL_MINUTES,
        items,
    };
    Ok(plan_rehearsal(
        &pieces,
        layout,
        &request,
        &RehearsalConfig::default(),
    )?)
}

/// The files [`write_outputs`] wrote.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct DemoOutputs {
    pub report: PathBuf,
    pub roster: PathBuf,
    /// The demo rehearsal plan as JSON (`ambit rehearsal --json`'s shape).
    pub rehearsal: PathBuf,
}

/// Writes `dir/roster.csv` (the placed roster: measured figures, the
/// placement in the `section` column), `dir/report.html` and
/// `dir/rehearsal.json` (the demo rehearsal, [`demo_rehearsal`]). Each file is
/// written whole or not at all.
pub fn write_outputs(result: &DemoResult, dir: &Path) -> Result<DemoOutputs, DemoError> {
    std::fs::create_dir_all(dir).map_err(|source| DemoError::Write {
        path: dir.to_path_buf(),
        source,
    })?;
    let roster = dir.join("roster.csv");
    let csv = roster_to_csv(&result.plan.roster)?;
    crate::report::write_atomically(&roster, csv.as_bytes())?;
    let report = dir.join("report.html");
    let title = format!("{}: programme plan", result.choir);
    let source = format!(
        "Demo: {} invented singers, profiled from synthesised auditions; {} sample pieces.",
        result.singers.len(),
        result.plan.pieces.len()
    );
    let document = crate::report::ReportDocument {
        title: &title,
        source: &source,
        plan: &result.plan,
    };
    crate::report::write_report(&report, &document)?;
    let layout = Layout::parse(&result.plan.layout)?;
    let plan = demo_rehearsal(&demo_programme()?, &layout)?;
    let rehearsal = dir.join("rehearsal.json");
    crate::report::write_atomically(&rehearsal, serde_json::to_string_pretty(&plan)?.as_bytes())?;
    Ok(DemoOutputs {
        report,
        roster,
        rehearsal,
    })
}
