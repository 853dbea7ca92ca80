//! Programme planning: turns a section-fit matrix and the director's
//! constraints, given by name ("T1=3..5", "Ada=A1"), into a placement
//! problem.
//!
//! Architecture invariant: no analysis of its own. Fits come from `fit`, the
//! optimum from `placement`; this module only maps names to indices and
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
