//! Programme planning: turns a section-fit matrix and the director's
//! constraints, given by name ("T1=3..5", "Ada=A1"), into a placement
//! problem, and after the placement asks for each divisi split.
//!
//! Architecture invariant: no analysis of its own. Fits come from `fit`, the
//! optimum and the divisi splits from `placement`; this module only maps
//! names to indices and
//! turns each pair's fit details into the short note and the beyond-range
//! flag that placement passes into its explanations. Shared by the CLI, the
//! report and the app so that all three pose the same problem.

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::fit::SectionFitMatrix;
use crate::placement::{PlacementProblem, SizeLimit};

/// The director's constraints, by singer and section name.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct PlanConstraints {
    /// Size limits per section; a section not named here may hold any
    /// number of singers, including none.
    pub sizes: Vec<(String, SizeLimit)>,
    /// (singer, section): the singer must sit there.
    pub locks: Vec<(String, String)>,
    /// (singer, section): the singer must not sit there.
    pub exclusions: Vec<(String, String)>,
    /// Optional balance weight (see `PlacementProblem::balance`).
    pub balance: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum PlanError {
    #[error("{what}: no singer called \"{name}\" in the roster")]
    UnknownSinger { what: String, name: String },
    #[error("{what}: no section \"{name}\" in the layout (sections: {known})")]
    UnknownSection {
        what: String,
        name: String,
        known: String,
    },
    #[error("size of {section} given twice")]
    DuplicateSize { section: String },
}

/// The placement problem for `matrix` under `constraints`. Per-pair notes
/// give the share of sung time outside the comfort zone ("4 % of sung time
/// above comfort"); pairs with any time beyond the singer's range are flagged.
pub fn placement_problem(
    matrix: &SectionFitMatrix,
    constraints: &PlanConstraints,
) -> Result<PlacementProblem, PlanError> {
    let section_index = |what: &str, name: &str| {
        matrix
            .sections
            .iter()
            .position(|section| section.eq_ignore_ascii_case(name.trim()))
            .ok_or_else(|| PlanError::UnknownSection {
                what: what.to_string(),
                name: name.to_string(),
                known: matrix.sections.join(", "),
            })
    };
    let singer_index = |what: &str, name: &str| {
        matrix
            .singers
            .iter()
            .position(|singer| singer == name.trim())
            .ok_or_else(|| PlanError::UnknownSinger {
                what: what.to_string(),
                name: name.to_string(),
            })
    };
    let mut sizes = vec![None; matrix.sections.len()];
    for (section, limit) in &constraints.sizes {
        let index = section_index("size", section)?;
        if sizes[index].replace(*limit).is_some() {
            return Err(PlanError::DuplicateSize {
                section: matrix.sections[index].clone(),
            });
        }
    }
    let pairs = |what: &str, pairs: &[(String, String)]| {
        pairs
            .iter()
            .map(|(singer, section)| {
                let what = format!("{what} {singer}={section}");
                Ok((singer_index(&what, singer)?, section_index(&what, section)?))
            })
            .collect::<Result<Vec<_>, PlanError>>()
    };
    let notes = matrix
        .details
        .iter()
        .map(|row| {
            row.iter()
                .map(|detail| {
                    detail.fit.map(|_| {
                        let (share, side) =
                            if detail.above_comfort_share >= detail.below_comfort_share {
                                (detail.above_comfort_share, "above")
                            } else {
                                (detail.below_comfort_share, "below")
                            };
                        format!("{:.0} % of sung time {side} comfort", share * 100.0)
                    })
                })
                .collect()
        })
        .collect();
    let beyond_range = matrix
        .details
        .iter()
        .map(|row| {
            row.iter()
                .map(|detail| detail.beyond_range_seconds > 0.0)
                .collect()
        })
        .collect();
    Ok(PlacementProblem {
        singers: matrix.singers.clone(),
        sections: matrix.sections.clone(),
        fit: matrix.fit.clone(),
        sizes: sizes
            .into_iter()
            .map(|limit| limit.unwrap_or_else(SizeLimit::any))
            .collect(),
        locks: pairs("lock", &constraints.locks)?,
        exclusions: pairs("exclusion", &constraints.exclusions)?,
        balance: constraints.balance,
        beyond_range,
        pair_notes: notes,
    })
}

/// Everything a programme plan needs besides the roster and the scores.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ProgrammeConfig {
    pub section_fit: crate::fit::SectionFitConfig,
    pub placement: crate::placement::PlacementConfig,
    pub tessitura: crate::tessitura::TessituraConfig,
    pub transpose: crate::transpose::TransposeConfig,
}

/// The sung-time distribution of one line a section sings in one piece.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LineDistribution {
    /// The line's label: a part name, with "(upper)"/"(lower)" for a divisi line.
    pub label: String,
    pub role: crate::sections::LineRole,
    /// Seconds sung on each semitone (MIDI number → seconds), from the one
    /// duration-weighted distribution (`tessitura::PitchDistribution`).
    pub histogram_seconds: std::collections::BTreeMap<i32, f64>,
    pub lowest_midi: Option<f64>,
    pub highest_midi: Option<f64>,
    pub sung_seconds: f64,
}

/// What one section sings in one piece.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionLines {
    pub section: String,
    /// None when tacet, one line, or the two lines of a divisi.
    pub lines: Vec<LineDistribution>,
}

/// One piece of the programme: its parts' tessituras, what each section
/// sings, and the key advice for the choir as placed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PiecePlan {
    pub title: String,
    /// The first key signature's sharps (+) or flats (−), when the score has one.
    pub key_fifths: Option<i32>,
    /// Every part with sounding notes (accompaniment included, marked by its kind).
    pub parts: Vec<crate::tessitura::PartTessitura>,
    /// One entry per layout section, in layout order.
    pub sections: Vec<SectionLines>,
    pub mapping: crate::fit::MappingSummary,
    pub keys: crate::transpose::ChoirAdvice,
}

/// A whole programme plan: fit matrix, optimal placement, per-piece
/// tessituras and key advice. What `ambit place --report` and `ambit demo`
/// show.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ProgrammePlan {
    pub layout: String,
    /// The roster with each singer's `section` set to the placement.
    pub roster: crate::roster::Roster,
    pub matrix: crate::fit::SectionFitMatrix,
    pub constraints: PlanConstraints,
    pub placement: crate::placement::Placement,
    /// Who sings which line of each divisi, per piece and section.
    pub divisi: Vec<DivisiChoice>,
    pub pieces: Vec<PiecePlan>,
    pub cautions: Vec<String>,
}

/// Why a programme cannot be planned.
#[derive(Debug, Error)]
pub enum ProgrammeError {
    #[error(transparent)]
    Mapping(#[from] crate::sections::MappingError),
    #[error(transparent)]
    Plan(#[from] PlanError),
    #[error(transparent)]
    Placement(#[from] crate::placement::PlacementError),
    #[error(transparent)]
    Transpose(#[from] crate::transpose::TransposeError),
}

/// Who sings the upper and who the lower line of one section's divisi in
/// one piece.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DivisiChoice {
    pub piece: String,
    pub section: String,
    /// The labels of the two lines ("Soprano (upper)", "Soprano I").
    pub upper_line: String,
    pub lower_line: String,
    /// The section's placed members on each line, in roster order.
    pub upper: Vec<String>,
    pub lower: Vec<String>,
    /// The members' total fit over the two lines (the split's objective).
    pub total_fit: f64,
    /// Set when an even split within every member's range was impossible
    /// and the split was chosen with the beyond-range lines penalised
    /// instead of forbidden.
    pub note: Option<String>,
}

/// The section-fit matrix, the optimal placement and each divisi split:
/// what [`place_programme`] returns.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlacedProgramme {
    pub matrix: crate::fit::SectionFitMatrix,
    /// The problem the placement solves, for what-if moves on it.
    pub problem: crate::placement::PlacementProblem,
    pub placement: crate::placement::Placement,
    pub divisi: Vec<DivisiChoice>,
}

/// For every piece and every section that divides in it, the even split of
/// the section's placed members between the upper and the lower line that
/// maximises their total fit (`placement::split_divisi_lines`, the same
/// exact solver as the placement). Each member's fit to each line comes
/// from `fit::fit_profile`; under `BeyondRangePolicy::NotAllowed` a line
/// beyond a member's range is not allowed, and when that leaves no even
/// split the lines are penalised instead, with a note. Among splits of
/// equal total fit the higher voices (comfort-zone centre) take the upper
/// line (`placement::raise_tied_divisi`). Sections with no members get no
/// choice.
pub fn divisi_choices(
    roster: &crate::roster::Roster,
    matrix: &crate::fit::SectionFitMatrix,
    placement: &crate::placement::Placement,
    config: &ProgrammeConfig,
) -> Result<Vec<DivisiChoice>, crate::placement::PlacementError> {
    use crate::fit::{BeyondRangePolicy, fit_profile, profile_notes};
    use crate::placement::{DivisiBalance, raise_tied_divisi, split_divisi_lines};
    let fit_config = &config.section_fit.fit;
    let mut choices = Vec::new();
    for mapping in &matrix.mappings {
        for (section_index, (section, sings)) in mapping.sections.iter().enumerate() {
            let crate::sections::SectionSings::Divisi { upper, lower } = sings else {
                continue;
            };
            let members: Vec<&crate::roster::Singer> = placement
                .assignments
                .iter()
                .filter(|assignment| assignment.section_index == section_index)
                .filter_map(|assignment| roster.singers.get(assignment.singer_index))
                .collect();
            if members.is_empty() {
                continue;
            }
            let names: Vec<String> = members.iter().map(|singer| singer.name.clone()).collect();
            let line_fits = |line: &crate::sections::Line| {
                let profile = profile_notes(&line.part.notes, fit_config);
                members
                    .iter()
                    .map(|singer| fit_profile(singer, &profile, 0, fit_config))
                    .collect::<Vec<_>>()
            };
            let (upper_fits, lower_fits) = (line_fits(upper), line_fits(lower));
            let allowed = |fits: &[crate::fit::PartFit], strict: bool| {
                fits.iter()
                    .map(|fit| (!(strict && fit.beyond_range)).then_some(fit.fit))
                    .collect::<Vec<_>>()
            };
            let strict = config.section_fit.beyond_range == BeyondRangePolicy::NotAllowed;
            let solve = |strict: bool| {
                split_divisi_lines(
                    &names,
                    &allowed(&upper_fits, strict),
                    &allowed(&lower_fits, strict),
                    DivisiBalance::Even,
                    &config.placement,
                )
            };
            let (mut split, note) = match solve(strict) {
                Ok(split) => (split, None),
                Err(error) if strict => (
                    solve(false)?,
                    Some(format!(
                        "no even split keeps every singer within range ({error}); \
                         beyond-range lines penalised instead"
                    )),
                ),
                Err(error) => return Err(error),
            };
            // Equal fits leave the split open; the higher voices then take
            // the upper line (first sopranos and first tenors are the higher
            // voices; common practice), by the centre of the comfort zone.
            let heights: Vec<f64> = members
                .iter()
                .map(|singer| (singer.comfort_low_midi + singer.comfort_high_midi) / 2.0)
                .collect();
            let strict_fits = note.is_none() && strict;
            raise_tied_divisi(
                &mut split,
                &allowed(&upper_fits, strict_fits),
                &allowed(&lower_fits, strict_fits),
                &heights,
            );
            let named = |indices: &[usize]| {
                indices
                    .iter()
                    .filter_map(|&index| names.get(index).cloned())
                    .collect()
            };
            choices.push(DivisiChoice {
                piece: mapping.piece.clone(),
                section: section.to_string(),
                upper_line: upper.label.clone(),
                lower_line: lower.label.clone(),
                upper: named(&split.upper),
                lower: named(&split.lower),
                total_fit: split.objective,
                note,
            });
        }
    }
    Ok(choices)
}

/// The section-fit matrix over a programme, the optimal placement under
/// `constraints` and the divisi split of every divided section: the part
/// of [`plan_programme`] that `ambit place` needs without a report.
pub fn place_programme(
    roster: &crate::roster::Roster,
    programme: &[crate::score::Piece],
    layout: &crate::sections::Layout,
    constraints: &PlanConstraints,
    config: &ProgrammeConfig,
) -> Result<PlacedProgramme, ProgrammeError> {
    let matrix = crate::fit::section_fit_matrix(roster, programme, layout, &config.section_fit)?;
    let problem = placement_problem(&matrix, constraints)?;
    let placement = crate::placement::place(&problem, &config.placement)?;
    let divisi = divisi_choices(roster, &matrix, &placement, config)?;
    Ok(PlacedProgramme {
        matrix,
        problem,
        placement,
        divisi,
    })
}

/// Plans a programme: the section-fit matrix, the optimal placement under
/// `constraints`, each part's tessitura, what each section sings, and the
/// key sweep for the choir as placed. Every figure comes from its stage
/// (`fit`, `placement`, `tessitura`, `transpose`); this only runs them in
/// order and joins their outputs.
pub fn plan_programme(
    roster: &crate::roster::Roster,
    programme: &[crate::score::Piece],
    layout: &crate::sections::Layout,
    constraints: &PlanConstraints,
    config: &ProgrammeConfig,
) -> Result<ProgrammePlan, ProgrammeError> {
    use crate::tessitura::{PitchDistribution, Weight, analyse_piece};
    let PlacedProgramme {
        matrix,
        placement,
        divisi,
        ..
    } = place_programme(roster, programme, layout, constraints, config)?;
    let mut placed = roster.clone();
    for (singer, assignment) in placed.singers.iter_mut().zip(&placement.assignments) {
        singer.section = Some(assignment.section.clone());
    }
    let mut pieces = Vec::with_capacity(programme.len());
    for ((piece, mapping), summary) in programme.iter().zip(&matrix.mappings).zip(&matrix.pieces) {
        let sections = mapping
            .sections
            .iter()
            .map(|(section, sings)| SectionLines {
                section: section.to_string(),
                lines: sings
                    .lines()
                    .iter()
                    .map(|line| {
                        let distribution =
                            PitchDistribution::from_notes(&line.part.notes, Weight::Seconds);
                        LineDistribution {
                            label: line.label.clone(),
                            role: line.role,
                            histogram_seconds: distribution.histogram(),
                            lowest_midi: distribution.lowest(),
                            highest_midi: distribution.highest(),
                            sung_seconds: distribution.total(),
                        }
                    })
                    .collect(),
            })
            .collect();
        let mut keys_config = config.transpose.clone();
        keys_config.section_fit = config.section_fit.clone();
        pieces.push(PiecePlan {
            title: mapping.piece.clone(),
            key_fifths: piece.key.map(|key| key.fifths),
            parts: analyse_piece(piece, &config.tessitura),
            sections,
            mapping: summary.clone(),
            keys: crate::transpose::choir_keys(&placed, piece, &keys_config)?,
        });
    }
    Ok(ProgrammePlan {
        layout: layout.name.clone(),
        roster: placed,
        matrix,
        constraints: constraints.clone(),
        placement,
        divisi,
        pieces,
        cautions: crate::cautions::cautions(),
    })
}
