//! The report's view model: what the template shows, with every number
//! already formatted, every chart element placed in pixels and every colour
//! chosen. Built from a [`ProgrammePlan`] without computing any figure of
//! the analysis.

use std::collections::BTreeMap;

use askama::Template;

use super::ReportDocument;
use super::palette::{Rgb, fit_colour, text_colour_on, viridis};
use crate::pitch::{midi_name, midi_name_in_key, nearest_name};
use crate::placement::RiskReason;
use crate::plan::{LineDistribution, ProgrammePlan};
use crate::roster::Singer;
use crate::score::PartKind;
use crate::tessitura::{HotSpotKind, PartTessitura};

/// Chart width in CSS pixels (the page's text column).
const CHART_WIDTH: f64 = 960.0;
/// Left margin of the keyboard charts, for row labels.
const LABEL_WIDTH: f64 = 250.0;
/// Right margin, for each row's figure.
const FIGURE_WIDTH: f64 = 70.0;
const HISTOGRAM_ROW: f64 = 36.0;
const SINGER_ROW: f64 = 24.0;
const KEYBOARD_HEIGHT: f64 = 34.0;
/// A section mean fit below this is called weak in the key advice: the
/// placement's default at-risk threshold (`PlacementConfig::risk_threshold`).
const WEAK_FIT: f64 = 50.0;

#[derive(Template)]
#[template(path = "report.html")]
pub struct Page {
    pub title: String,
    pub source: String,
    pub layout: String,
    pub facts: Vec<Fact>,
    pub cautions: Vec<String>,
    pub sections: Vec<SectionRow>,
    pub placement: Vec<PlacementRow>,
    pub heatmap: Heatmap,
    pub section_charts: Vec<SectionChart>,
    pub pieces: Vec<PieceView>,
    pub keys: Vec<KeyAdvice>,
    pub key_shifts: Vec<String>,
    pub singers: Vec<SingerRow>,
}

/// A headline figure.
pub struct Fact {
    pub value: String,
    pub label: String,
}

pub struct SectionRow {
    pub section: String,
    pub count: String,
    pub mean_fit: String,
    pub colour: Cell,
}

/// Background and text colour of a coloured cell.
pub struct Cell {
    pub background: String,
    pub text: String,
}

fn cell(background: Rgb) -> Cell {
    Cell {
        background: background.hex(),
        text: text_colour_on(background).hex(),
    }
}

fn neutral_cell() -> Cell {
    Cell {
        background: "#eeeeee".into(),
        text: "#222222".into(),
    }
}

pub struct PlacementRow {
    pub section: String,
    /// Whether this row starts a new section (a rule above it).
    pub first_in_section: bool,
    pub singer: String,
    pub voice_type: String,
    pub fit: String,
    pub colour: Cell,
    pub explanation: String,
    pub flags: Vec<String>,
}

pub struct Heatmap {
    pub width: String,
    pub height: String,
    pub columns: Vec<HeatColumn>,
    pub rows: Vec<HeatRow>,
    /// Horizontal rules between section groups.
    pub rules: Vec<Rule>,
    pub legend: Vec<LegendStep>,
    pub legend_y: String,
    pub legend_labels: Vec<Label>,
}

pub struct HeatColumn {
    pub label: String,
    pub x: String,
}

pub struct HeatRow {
    pub label: String,
    pub label_y: String,
    pub cells: Vec<HeatCell>,
}

pub struct HeatCell {
    pub x: String,
    pub y: String,
    pub text_x: String,
    pub text_y: String,
    pub fill: String,
    pub text_colour: String,
    pub text: String,
    pub assigned: bool,
}

pub struct Rule {
    pub x1: String,
    pub x2: String,
    pub y: String,
}

pub struct LegendStep {
    pub x: String,
    pub width: String,
    pub fill: String,
}

pub struct Label {
    pub x: String,
    pub y: String,
    pub text: String,
}

/// One section's keyboard chart: the lines it sings, then its singers.
pub struct SectionChart {
    pub section: String,
    pub sings: String,
    pub height: String,
    pub histograms: Vec<HistogramRow>,
    pub singers: Vec<SingerBar>,
    pub keyboard: Keyboard,
    /// Vertical guides at every C, full chart height.
    pub guides: Vec<Guide>,
    pub divider_y: String,
}

pub struct HistogramRow {
    pub title: String,
    pub line: String,
    pub title_y: String,
    pub line_y: String,
    pub figure: String,
    pub figure_y: String,
    pub baseline_y: String,
    pub bars: Vec<Bar>,
}

pub struct Bar {
    pub x: String,
    pub y: String,
    pub width: String,
    pub height: String,
    pub tip: String,
}

pub struct SingerBar {
    pub name: String,
    pub label_y: String,
    pub range_x1: String,
    pub range_x2: String,
    pub line_y: String,
    pub comfort_x: String,
    pub comfort_y: String,
    pub comfort_width: String,
    pub passaggi: Vec<Mark>,
    pub fit: String,
    pub fit_fill: String,
    pub fit_text: String,
    pub chip_y: String,
    pub chip_text_y: String,
    pub tip: String,
}

pub struct Mark {
    pub x: String,
    pub y1: String,
    pub y2: String,
    pub tip: String,
}

pub struct Guide {
    pub x: String,
    pub y2: String,
}

pub struct Keyboard {
    pub y: String,
    pub white: Vec<Key>,
    pub black: Vec<Key>,
    pub names: Vec<Label>,
}

pub struct Key {
    pub x: String,
    pub width: String,
    pub height: String,
}

pub struct PieceView {
    pub title: String,
    pub key: String,
    pub mapping: String,
    pub excluded: String,
    pub parts: Vec<PartRow>,
}

pub struct PartRow {
    pub name: String,
    pub range: String,
    pub tessitura: String,
    pub middle: String,
    pub sung_seconds: String,
    pub high_spots: String,
    pub low_spots: String,
    pub longest: String,
    pub divisi: bool,
}

pub struct KeyAdvice {
    pub piece: String,
    pub written: String,
    pub advice: String,
    pub cells: Vec<KeyCell>,
}

pub struct KeyCell {
    pub text: String,
    pub colour: Cell,
    pub best: bool,
    pub tip: String,
}

pub struct SingerRow {
    pub name: String,
    pub section: String,
    pub voice_type: String,
    pub range: String,
    pub comfort: String,
    pub passaggi: String,
    pub notes: String,
}

/// Pixels, rounded to a tenth: enough for print, short in the file.
fn px(value: f64) -> String {
    let rounded = (value * 10.0).round() / 10.0;
    if rounded == rounded.trunc() {
        format!("{rounded:.0}")
    } else {
        format!("{rounded:.1}")
    }
}

fn fit_text(fit: f64) -> String {
    format!("{fit:.0}")
}

fn span(low: f64, high: f64) -> String {
    format!("{}–{}", nearest_name(low), nearest_name(high))
}

fn is_black_key(midi: i32) -> bool {
    matches!(midi.rem_euclid(12), 1 | 3 | 6 | 8 | 10)
}

/// The pitch axis shared by every keyboard chart.
struct Axis {
    low_midi: i32,
    high_midi: i32,
    step: f64,
}

impl Axis {
    fn new(plan: &ProgrammePlan) -> Axis {
        let mut low = f64::INFINITY;
        let mut high = f64::NEG_INFINITY;
        let mut widen = |midi: Option<f64>| {
            if let Some(midi) = midi.filter(|midi| midi.is_finite()) {
                low = low.min(midi);
                high = high.max(midi);
            }
        };
        for singer in &plan.roster.singers {
            widen(Some(singer.range_low_midi));
            widen(Some(singer.range_high_midi));
        }
        for piece in &plan.pieces {
            for section in &piece.sections {
                for line in &section.lines {
                    widen(line.lowest_midi);
                    widen(line.highest_midi);
                }
            }
        }
        if !low.is_finite() || !high.is_finite() {
            (low, high) = (48.0, 72.0);
        }
        // Two semitones of margin each side.
        let low_midi = (low.floor() as i32 - 2).clamp(0, 127);
        let high_midi = (high.ceil() as i32 + 2).clamp(low_midi, 127);
        let keys = f64::from(high_midi - low_midi + 1);
        Axis {
            low_midi,
            high_midi,
            step: (CHART_WIDTH - LABEL_WIDTH - FIGURE_WIDTH) / keys,
        }
    }

    /// Left edge of the semitone `midi` (a fractional pitch sits inside its key).
    fn left(&self, midi: f64) -> f64 {
        LABEL_WIDTH + (midi - f64::from(self.low_midi)) * self.step
    }

    /// Centre of the pitch `midi`.
    fn centre(&self, midi: f64) -> f64 {
        self.left(midi) + self.step / 2.0
    }

    fn clamp(&self, midi: f64) -> f64 {
        midi.clamp(f64::from(self.low_midi), f64::from(self.high_midi))
    }

    fn keyboard(&self, y: f64) -> Keyboard {
        let mut white = Vec::new();
        let mut black = Vec::new();
        let mut names = Vec::new();
        for midi in self.low_midi..=self.high_midi {
            // White keys fill their semitone; black keys are narrower and
            // shorter, as on a keyboard.
            let (inset, height) = if is_black_key(midi) {
                (self.step * 0.12, KEYBOARD_HEIGHT * 0.45)
            } else {
                (0.0, KEYBOARD_HEIGHT * 0.65)
            };
            let key = Key {
                x: px(self.left(f64::from(midi)) + inset),
                width: px(self.step - 2.0 * inset),
                height: px(height),
            };
            if is_black_key(midi) {
                black.push(key);
            } else {
                white.push(key);
            }
            if midi.rem_euclid(12) == 0 {
                names.push(Label {
                    x: px(self.centre(f64::from(midi))),
                    y: px(y + KEYBOARD_HEIGHT - 2.0),
                    text: midi_name(midi),
                });
            }
        }
        Keyboard {
            y: px(y),
            white,
            black,
            names,
        }
    }

    fn guides(&self, height: f64) -> Vec<Guide> {
        (self.low_midi..=self.high_midi)
            .filter(|midi| midi.rem_euclid(12) == 0)
            .map(|midi| Guide {
                x: px(self.left(f64::from(midi))),
                y2: px(height),
            })
            .collect()
    }
}

fn histogram_row(axis: &Axis, y: f64, piece: &str, line: &LineDistribution) -> HistogramRow {
    let tallest = line
        .histogram_seconds
        .values()
        .copied()
        .fold(0.0_f64, f64::max);
    let usable = HISTOGRAM_ROW - 8.0;
    let baseline = y + HISTOGRAM_ROW - 3.0;
    let bars = line
        .histogram_seconds
        .iter()
        .filter(|(_, seconds)| **seconds > 0.0 && tallest > 0.0)
        .map(|(&midi, &seconds)| {
            let midi_f = axis.clamp(f64::from(midi));
            let height = (seconds / tallest * usable).max(1.0);
            Bar {
                x: px(axis.left(midi_f) + 0.5),
                y: px(baseline - height),
                width: px((axis.step - 1.0).max(1.0)),
                height: px(height),
                tip: format!("{}: {seconds:.1} s", midi_name(midi)),
            }
        })
        .collect();
    HistogramRow {
        title: piece.to_string(),
        line: line.label.clone(),
        title_y: px(y + 15.0),
        line_y: px(y + 29.0),
        figure: format!("{:.0} s", line.sung_seconds),
        figure_y: px(y + 22.0),
        baseline_y: px(baseline),
        bars,
    }
}

fn singer_bar(axis: &Axis, y: f64, singer: &Singer, fit: Option<f64>) -> SingerBar {
    let line_y = y + SINGER_ROW / 2.0;
    let low = axis.clamp(singer.range_low_midi);
    let high = axis.clamp(singer.range_high_midi);
    let comfort_low = axis.clamp(singer.comfort_low_midi);
    let comfort_high = axis.clamp(singer.comfort_high_midi);
    let passaggi = [
        ("primo", singer.primo_midi),
        ("secondo", singer.secondo_midi),
    ]
    .into_iter()
    .filter_map(|(kind, midi)| {
        let midi = midi?;
        Some(Mark {
            x: px(axis.centre(axis.clamp(midi))),
            y1: px(line_y - 9.0),
            y2: px(line_y + 9.0),
            tip: format!("{kind} passaggio {}", nearest_name(midi)),
        })
    })
    .collect();
    let (fit_label, fill) = match fit {
        Some(fit) => (fit_text(fit), cell(fit_colour(fit))),
        None => ("—".to_string(), neutral_cell()),
    };
    SingerBar {
        name: singer.name.clone(),
        label_y: px(line_y + 4.0),
        range_x1: px(axis.left(low)),
        range_x2: px(axis.left(high) + axis.step),
        line_y: px(line_y),
        comfort_x: px(axis.left(comfort_low)),
        comfort_y: px(line_y - 5.0),
        comfort_width: px((axis.left(comfort_high) + axis.step - axis.left(comfort_low)).max(1.0)),
        passaggi,
        fit: fit_label,
        fit_fill: fill.background,
        fit_text: fill.text,
        chip_y: px(line_y - 9.0),
        chip_text_y: px(line_y + 4.0),
        tip: format!(
            "{}: range {}, comfort {}",
            singer.name,
            span(singer.range_low_midi, singer.range_high_midi),
            span(singer.comfort_low_midi, singer.comfort_high_midi)
        ),
    }
}

fn section_charts(plan: &ProgrammePlan, axis: &Axis) -> Vec<SectionChart> {
    let assignments = &plan.placement.assignments;
    plan.matrix
        .sections
        .iter()
        .enumerate()
        .map(|(column, section)| {
            let mut histograms = Vec::new();
            let mut sings = Vec::new();
            let mut y = 4.0;
            for piece in &plan.pieces {
                let Some(lines) = piece
                    .sections
                    .iter()
                    .find(|candidate| &candidate.section == section)
                else {
                    continue;
                };
                if lines.lines.is_empty() {
                    sings.push(format!("{}: tacet", piece.title));
                    continue;
                }
                let labels: Vec<&str> = lines.lines.iter().map(|l| l.label.as_str()).collect();
                sings.push(format!("{}: {}", piece.title, labels.join(" / ")));
                for line in &lines.lines {
                    histograms.push(histogram_row(axis, y, &piece.title, line));
                    y += HISTOGRAM_ROW;
                }
            }
            let divider_y = y + 4.0;
            y += 10.0;
            let singers: Vec<SingerBar> = assignments
                .iter()
                .filter(|assignment| assignment.section_index == column)
                .filter_map(|assignment| {
                    let singer = plan.roster.singers.get(assignment.singer_index)?;
                    let bar = singer_bar(axis, y, singer, Some(assignment.fit));
                    y += SINGER_ROW;
                    Some(bar)
                })
                .collect();
            y += 6.0;
            let keyboard = axis.keyboard(y);
            let height = y + KEYBOARD_HEIGHT + 2.0;
            SectionChart {
                section: section.clone(),
                sings: sings.join(" · "),
                height: px(height),
                histograms,
                singers,
                keyboard,
                guides: axis.guides(y),
                divider_y: px(divider_y),
            }
        })
        .collect()
}

fn heatmap(plan: &ProgrammePlan) -> Heatmap {
    const LABEL: f64 = 200.0;
    const CELL_WIDTH: f64 = 72.0;
    const CELL_HEIGHT: f64 = 22.0;
    const HEADER: f64 = 26.0;
    let matrix = &plan.matrix;
    let assigned: Vec<Option<usize>> = (0..matrix.singers.len())
        .map(|row| {
            plan.placement
                .assignments
                .iter()
                .find(|assignment| assignment.singer_index == row)
                .map(|assignment| assignment.section_index)
        })
        .collect();
    // Rows grouped by the section each singer is placed in, in layout order.
    let mut order: Vec<usize> = (0..matrix.singers.len()).collect();
    order.sort_by_key(|&row| (assigned[row].unwrap_or(usize::MAX), row));
    let columns = matrix
        .sections
        .iter()
        .enumerate()
        .map(|(index, label)| HeatColumn {
            label: label.clone(),
            x: px(LABEL + index as f64 * CELL_WIDTH + CELL_WIDTH / 2.0),
        })
        .collect();
    let grid_right = LABEL + matrix.sections.len() as f64 * CELL_WIDTH;
    let mut rows = Vec::new();
    let mut rules = Vec::new();
    let mut previous_section = None;
    for (position, &row) in order.iter().enumerate() {
        let y = HEADER + position as f64 * CELL_HEIGHT;
        if position > 0 && assigned[row] != previous_section {
            rules.push(Rule {
                x1: px(4.0),
                x2: px(grid_right),
                y: px(y),
            });
        }
        previous_section = assigned[row];
        let cells = matrix
            .fit
            .get(row)
            .map(|fits| {
                fits.iter()
                    .enumerate()
                    .map(|(column, fit)| {
                        let x = LABEL + column as f64 * CELL_WIDTH;
                        let colours = fit.map_or_else(neutral_cell, |fit| cell(fit_colour(fit)));
                        HeatCell {
                            x: px(x + 1.0),
                            y: px(y + 1.0),
                            text_x: px(x + CELL_WIDTH / 2.0),
                            text_y: px(y + CELL_HEIGHT / 2.0 + 4.5),
                            fill: colours.background,
                            text_colour: colours.text,
                            text: fit.map_or_else(|| "—".to_string(), fit_text),
                            assigned: assigned[row] == Some(column),
                        }
                    })
                    .collect()
            })
            .unwrap_or_default();
        rows.push(HeatRow {
            label: matrix.singers.get(row).cloned().unwrap_or_default(),
            label_y: px(y + CELL_HEIGHT / 2.0 + 4.5),
            cells,
        });
    }
    let grid_bottom = HEADER + order.len() as f64 * CELL_HEIGHT;
    let legend_y = grid_bottom + 18.0;
    let legend_width = 300.0;
    let steps = 50;
    let legend = (0..steps)
        .map(|step| {
            let share = f64::from(step) / f64::from(steps - 1);
            LegendStep {
                x: px(LABEL + f64::from(step) * legend_width / f64::from(steps)),
                width: px(legend_width / f64::from(steps) + 0.4),
                fill: viridis(share).hex(),
            }
        })
        .collect();
    let legend_labels = [0, 25, 50, 75, 100]
        .into_iter()
        .map(|fit| Label {
            x: px(LABEL + f64::from(fit) / 100.0 * legend_width),
            y: px(legend_y + 30.0),
            text: fit.to_string(),
        })
        .collect();
    Heatmap {
        width: px(grid_right.max(LABEL + legend_width + 20.0) + 8.0),
        height: px(legend_y + 38.0),
        columns,
        rows,
        rules,
        legend,
        legend_y: px(legend_y),
        legend_labels,
    }
}

fn placement_rows(plan: &ProgrammePlan) -> Vec<PlacementRow> {
    let mut assignments: Vec<_> = plan.placement.assignments.iter().collect();
    assignments.sort_by_key(|assignment| (assignment.section_index, assignment.singer_index));
    let mut previous = None;
    assignments
        .into_iter()
        .map(|assignment| {
            let mut flags: Vec<String> = plan
                .placement
                .at_risk
                .iter()
                .filter(|risk| risk.singer_index == assignment.singer_index)
                .flat_map(|risk| risk.reasons.iter().map(RiskReason::describe))
                .collect();
            if assignment.locked {
                flags.push("locked by the director".into());
            }
            let first_in_section = previous != Some(assignment.section_index);
            previous = Some(assignment.section_index);
            PlacementRow {
                section: assignment.section.clone(),
                first_in_section,
                singer: assignment.singer.clone(),
                voice_type: plan
                    .roster
                    .singers
                    .get(assignment.singer_index)
                    .and_then(|singer| singer.voice_type.clone())
                    .unwrap_or_default(),
                fit: fit_text(assignment.fit),
                colour: cell(fit_colour(assignment.fit)),
                explanation: assignment.explanation.clone(),
                flags,
            }
        })
        .collect()
}

/// Note names spelled for the piece's key (flats in flat keys).
fn name_in_key(midi: f64, fifths: Option<i32>) -> String {
    midi_name_in_key(midi.round() as i32, fifths.unwrap_or(0))
}

fn span_in_key(low: f64, high: f64, fifths: Option<i32>) -> String {
    format!("{}–{}", name_in_key(low, fifths), name_in_key(high, fifths))
}

fn spots(part: &PartTessitura, kind: HotSpotKind, fifths: Option<i32>) -> String {
    part.hot_spots
        .iter()
        .filter(|spot| spot.kind == kind)
        .map(|spot| {
            format!(
                "bars {} (mean {})",
                spot.bars,
                name_in_key(spot.mean_midi, fifths)
            )
        })
        .collect::<Vec<_>>()
        .join("; ")
}

fn part_row(part: &PartTessitura, divisi: bool, fifths: Option<i32>) -> PartRow {
    let spread = &part.over_seconds;
    PartRow {
        name: part.name.clone(),
        range: span_in_key(part.lowest_midi, part.highest_midi, fifths),
        tessitura: format!(
            "{} ± {:.1} st",
            name_in_key(spread.mean_midi, fifths),
            spread.sd_semitones
        ),
        middle: span_in_key(
            spread.percentiles_midi[1],
            spread.percentiles_midi[3],
            fifths,
        ),
        sung_seconds: format!("{:.0}", part.sung_seconds),
        high_spots: spots(part, HotSpotKind::High, fifths),
        low_spots: spots(part, HotSpotKind::Low, fifths),
        longest: format!(
            "{} for {:.1} s (bars {})",
            name_in_key(part.longest_note.midi, fifths),
            part.longest_note.seconds,
            part.longest_note.bars
        ),
        divisi,
    }
}

fn pieces(plan: &ProgrammePlan) -> Vec<PieceView> {
    plan.pieces
        .iter()
        .map(|piece| {
            let mut parts = Vec::new();
            for part in piece.parts.iter().filter(|p| p.kind == PartKind::Voice) {
                parts.push(part_row(part, false, piece.key_fifths));
                for line in &part.divisi {
                    parts.push(part_row(line, true, piece.key_fifths));
                }
            }
            // Which sections sing each line, in layout order.
            let mut by_line: BTreeMap<String, Vec<String>> = BTreeMap::new();
            let mut line_order = Vec::new();
            for (section, sings) in &piece.mapping.sections {
                if !by_line.contains_key(sings) {
                    line_order.push(sings.clone());
                }
                by_line
                    .entry(sings.clone())
                    .or_default()
                    .push(section.clone());
            }
            let mapping = line_order
                .iter()
                .map(|line| {
                    let sections = by_line.get(line).map(|s| s.join(", ")).unwrap_or_default();
                    format!("{sections}: {line}")
                })
                .collect::<Vec<_>>()
                .join(" · ");
            let excluded = piece
                .mapping
                .excluded
                .iter()
                .map(|(part, why)| format!("{part} ({why})"))
                .collect::<Vec<_>>()
                .join(", ");
            PieceView {
                title: piece.title.clone(),
                key: piece
                    .keys
                    .written_key
                    .clone()
                    .unwrap_or_else(|| "no key signature".into()),
                mapping,
                excluded,
                parts,
            }
        })
        .collect()
}

fn key_advice(plan: &ProgrammePlan) -> (Vec<KeyAdvice>, Vec<String>) {
    let mut shifts: Vec<i32> = plan
        .pieces
        .iter()
        .flat_map(|piece| piece.keys.keys.iter().map(|key| key.transpose_semitones))
        .collect();
    shifts.sort_unstable();
    shifts.dedup();
    let advice = plan
        .pieces
        .iter()
        .map(|piece| {
            let advice = &piece.keys;
            let as_written = advice.keys.iter().find(|key| key.transpose_semitones == 0);
            let best = advice
                .keys
                .iter()
                .find(|key| key.transpose_semitones == advice.best_semitones);
            let text = match (best, as_written) {
                (Some(best), _) if best.transpose_semitones == 0 => format!(
                    "Keep the written key: no other key raises the weakest section ({}, mean fit {:.0}) by more than the tie margin.",
                    best.worst_section, best.worst_mean_fit
                ),
                (Some(best), Some(written)) => format!(
                    "Consider {}{}: the weakest section's mean fit goes from {:.0} ({}) to {:.0} ({}).",
                    best.interval,
                    best.key
                        .as_ref()
                        .map(|key| format!(" (to {key})"))
                        .unwrap_or_default(),
                    written.worst_mean_fit,
                    written.worst_section,
                    best.worst_mean_fit,
                    best.worst_section
                ),
                _ => "No key advice: no placed section sings this piece.".to_string(),
            };
            let text = match best {
                Some(best) if best.worst_mean_fit < WEAK_FIT => format!(
                    "{text} Even then {} stays below {WEAK_FIT:.0}: no key fixes this; the line asks more than that section can give (consider re-voicing it or giving it to fewer, chosen singers).",
                    best.worst_section
                ),
                _ => text,
            };
            let cells = shifts
                .iter()
                .map(|shift| {
                    match advice
                        .keys
                        .iter()
                        .find(|key| key.transpose_semitones == *shift)
                    {
                        Some(key) => KeyCell {
                            text: fit_text(key.worst_mean_fit),
                            colour: cell(fit_colour(key.worst_mean_fit)),
                            best: key.transpose_semitones == advice.best_semitones,
                            tip: format!(
                                "{}{}: weakest section {} (mean fit {:.1}), total fit {:.0}",
                                key.interval,
                                key.key
                                    .as_ref()
                                    .map(|name| format!(", {name}"))
                                    .unwrap_or_default(),
                                key.worst_section,
                                key.worst_mean_fit,
                                key.total_fit
                            ),
                        },
                        None => KeyCell {
                            text: String::new(),
                            colour: neutral_cell(),
                            best: false,
                            tip: String::new(),
                        },
                    }
                })
                .collect();
            KeyAdvice {
                piece: piece.title.clone(),
                written: advice
                    .written_key
                    .clone()
                    .unwrap_or_else(|| "as written".into()),
                advice: text,
                cells,
            }
        })
        .collect();
    let labels = shifts
        .iter()
        .map(|shift| match shift {
            0 => "0".to_string(),
            shift => format!("{shift:+}"),
        })
        .collect();
    (advice, labels)
}

fn singer_rows(plan: &ProgrammePlan) -> Vec<SingerRow> {
    plan.roster
        .singers
        .iter()
        .map(|singer| {
            let passaggi = [
                ("primo", singer.primo_midi),
                ("secondo", singer.secondo_midi),
            ]
            .into_iter()
            .filter_map(|(kind, midi)| midi.map(|midi| format!("{kind} {}", nearest_name(midi))))
            .collect::<Vec<_>>()
            .join(", ");
            SingerRow {
                name: singer.name.clone(),
                section: singer.section.clone().unwrap_or_default(),
                voice_type: singer.voice_type.clone().unwrap_or_default(),
                range: span(singer.range_low_midi, singer.range_high_midi),
                comfort: span(singer.comfort_low_midi, singer.comfort_high_midi),
                passaggi: if passaggi.is_empty() {
                    "not measured".into()
                } else {
                    passaggi
                },
                notes: singer.notes.clone().unwrap_or_default(),
            }
        })
        .collect()
}

pub fn page(document: &ReportDocument) -> Page {
    let plan = document.plan;
    let axis = Axis::new(plan);
    let placement = &plan.placement;
    let singers = placement.assignments.len();
    let mean_fit = if singers > 0 {
        placement.objective / singers as f64
    } else {
        0.0
    };
    let facts = vec![
        Fact {
            value: singers.to_string(),
            label: "singers placed".into(),
        },
        Fact {
            value: plan.matrix.sections.len().to_string(),
            label: format!("sections ({})", plan.layout),
        },
        Fact {
            value: plan.pieces.len().to_string(),
            label: "pieces".into(),
        },
        Fact {
            value: format!("{mean_fit:.0}"),
            label: "mean fit (0–100)".into(),
        },
        Fact {
            value: placement.at_risk.len().to_string(),
            label: "singers flagged".into(),
        },
    ];
    let sections = placement
        .sections
        .iter()
        .map(|section| SectionRow {
            section: section.section.clone(),
            count: section.count.to_string(),
            mean_fit: section.mean_fit.map_or_else(|| "—".into(), fit_text),
            colour: section
                .mean_fit
                .map_or_else(neutral_cell, |fit| cell(fit_colour(fit))),
        })
        .collect();
    let (keys, key_shifts) = key_advice(plan);
    Page {
        title: document.title.to_string(),
        source: document.source.to_string(),
        layout: plan.layout.clone(),
        facts,
        cautions: plan.cautions.clone(),
        sections,
        placement: placement_rows(plan),
        heatmap: heatmap(plan),
        section_charts: section_charts(plan, &axis),
        pieces: pieces(plan),
        keys,
        key_shifts,
        singers: singer_rows(plan),
    }
}
