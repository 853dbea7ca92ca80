//! The week: several rehearsals and a concert day, the load per section per
//! day, and a warning when the day before a concert is heavy (a dress
//! rehearsal that leaves nothing for the concert).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::sections::Layout;

use super::{
    RehearsalConfig, RehearsalError, RehearsalItem, RehearsalPiece, RehearsalPlan,
    RehearsalRequest, high_references, item_figures, plan_rehearsal,
};

/// What happens on a day.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum DayPlan {
    /// A rehearsal, planned like any other.
    Rehearsal { request: RehearsalRequest },
    /// The concert: each item sung as written, without stops.
    Concert { items: Vec<RehearsalItem> },
}

/// One day of the week.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WeekDay {
    /// Day number (1, 2, …): consecutive numbers are consecutive days.
    pub day: u32,
    pub label: String,
    pub plan: DayPlan,
}

/// One section's load on one day.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct DayLoad {
    pub sung_minutes: f64,
    pub high_minutes: f64,
}

/// One day's result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DayResult {
    pub day: u32,
    pub label: String,
    pub concert: bool,
    /// The rehearsal's plan (none on a concert day).
    pub rehearsal: Option<RehearsalPlan>,
    /// Load per section label.
    pub sections: BTreeMap<String, DayLoad>,
}

/// The week's plan.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WeekPlan {
    pub layout: Vec<String>,
    pub days: Vec<DayResult>,
    pub warnings: Vec<String>,
}

/// Plans every rehearsal of the week, adds up the load per section per day,
/// and warns when the day before a concert asks more of a section than the
/// concert itself (more than `heavy_before_concert_share` of its sung or
/// high minutes).
pub fn plan_week(
    pieces: &[RehearsalPiece],
    layout: &Layout,
    days: &[WeekDay],
    config: &RehearsalConfig,
) -> Result<WeekPlan, RehearsalError> {
    let labels = layout.labels();
    let references = high_references(layout, config);
    let mut results = Vec::with_capacity(days.len());
    let mut warnings = Vec::new();
    for day in days {
        let (rehearsal, sections) = match &day.plan {
            DayPlan::Rehearsal { request } => {
                let plan = plan_rehearsal(pieces, layout, request, config)?;
                let sections = plan
                    .sections
                    .iter()
                    .map(|(label, summary)| {
                        (
                            label.clone(),
                            DayLoad {
                                sung_minutes: summary.sung_minutes,
                                high_minutes: summary.high_minutes,
                            },
                        )
                    })
                    .collect();
                for warning in &plan.warnings {
                    warnings.push(format!("day {} ({}): {warning}", day.day, day.label));
                }
                (Some(plan), sections)
            }
            DayPlan::Concert { items } => {
                let mut item_warnings = Vec::new();
                let figures = item_figures(
                    pieces,
                    layout,
                    items,
                    config,
                    &references,
                    false,
                    &mut item_warnings,
                )?;
                let sections = labels
                    .iter()
                    .enumerate()
                    .map(|(s, label)| {
                        let load = DayLoad {
                            sung_minutes: figures.iter().map(|f| f.loads[s].sung_minutes).sum(),
                            high_minutes: figures.iter().map(|f| f.loads[s].high_minutes).sum(),
                        };
                        (label.clone(), load)
                    })
                    .collect();
                (None, sections)
            }
        };
        results.push(DayResult {
            day: day.day,
            label: day.label.clone(),
            concert: matches!(day.plan, DayPlan::Concert { .. }),
            rehearsal,
            sections,
        });
    }
    let share = config.heavy_before_concert_share;
    for concert in results.iter().filter(|d| d.concert) {
        let Some(before) = results
            .iter()
            .find(|d| !d.concert && d.day + 1 == concert.day)
        else {
            continue;
        };
        let heavy: Vec<String> = labels
            .iter()
            .filter_map(|label| {
                let day = before.sections.get(label)?;
                let show = concert.sections.get(label)?;
                let sung =
                    day.sung_minutes > share * show.sung_minutes + 1e-9 && day.sung_minutes > 0.0;
                let high =
                    day.high_minutes > share * show.high_minutes + 1e-9 && day.high_minutes > 0.0;
                (sung || high).then(|| {
                    format!(
                        "{label} {:.0} sung / {:.1} high min against {:.0} / {:.1} at the concert",
                        day.sung_minutes, day.high_minutes, show.sung_minutes, show.high_minutes
                    )
                })
            })
            .collect();
        if !heavy.is_empty() {
            warnings.push(format!(
                "day {} ({}) is heavy for the day before the concert on day {}: {}; lighten it (mark rather than sing out, fewer run-throughs, more rest)",
                before.day,
                before.label,
                concert.day,
                heavy.join("; ")
            ));
        }
    }
    Ok(WeekPlan {
        layout: labels,
        days: results,
        warnings,
    })
}
