//! Tessitura: where a part sits over the time actually sung.
//!
//! The central object is the duration-weighted pitch distribution of a part
//! (Titze 2008, "Quantifying tessitura in a song"): every sounding note
//! counts its full duration, every chord tone counts, rests count nothing.
//! From it come the mean and SD in semitones, percentiles, the histogram of
//! seconds per semitone and the share of sung time above or below a pitch.
//! Beside it: the range, the longest held note, hot spots (the windows of
//! sung music where the mean pitch is highest or lowest, by printed bar), the
//! vocal cycle dose (Titze, Švec & Popolo 2003) and divisi lines.
//!
//! Architecture invariant: a pure function of a [`Piece`] and a
//! [`TessituraConfig`]; it reads no files and knows nothing of singers.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::pitch::Tuning;
use crate::score::{Note, Part, PartKind, Piece};

/// Settings of the analysis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TessituraConfig {
    /// Reference pitch for the cycle dose (Hz of each note).
    pub tuning: Tuning,
    /// Length of a hot-spot window, in seconds of sung music (rests skipped).
    pub hot_spot_window_seconds: f64,
    /// How many highest windows to report (the lowest one is always added).
    pub high_hot_spots: usize,
}

impl Default for TessituraConfig {
    fn default() -> Self {
        TessituraConfig {
            tuning: Tuning::default(),
            hot_spot_window_seconds: 8.0,
            high_hot_spots: 2,
        }
    }
}

/// A duration-weighted pitch distribution: the one histogram every figure
/// of sung time is computed from (tessitura, fit, reports).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct PitchDistribution {
    /// (MIDI pitch, weight) sorted by pitch; weights are positive.
    points: Vec<(f64, f64)>,
    total: f64,
}

/// What a note's weight is measured in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Weight {
    Seconds,
    Quarters,
}

impl PitchDistribution {
    /// The distribution of `notes` weighted by their duration. Grace notes and
    /// anything of zero or undefined duration weigh nothing.
    pub fn from_notes<'a>(notes: impl IntoIterator<Item = &'a Note>, weight: Weight) -> Self {
        let mut points: Vec<(f64, f64)> = notes
            .into_iter()
            .map(|note| {
                let duration = match weight {
                    Weight::Seconds => note.duration_seconds,
                    Weight::Quarters => note.duration_quarters,
                };
                (note.midi, duration)
            })
            .filter(|&(midi, duration)| midi.is_finite() && duration.is_finite() && duration > 0.0)
            .collect();
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let total = points.iter().map(|&(_, duration)| duration).sum();
        PitchDistribution { points, total }
    }

    /// The (MIDI pitch, weight) points sorted by pitch, for figures that need
    /// more than a share (e.g. semitone-seconds beyond a limit in `fit`).
    pub fn points(&self) -> &[(f64, f64)] {
        &self.points
    }

    /// Total weight (sung seconds or quarters, every chord tone counted).
    pub fn total(&self) -> f64 {
        self.total
    }

    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    pub fn lowest(&self) -> Option<f64> {
        self.points.first().map(|&(midi, _)| midi)
    }

    pub fn highest(&self) -> Option<f64> {
        self.points.last().map(|&(midi, _)| midi)
    }

    /// Weighted mean pitch.
    pub fn mean(&self) -> Option<f64> {
        (self.total > 0.0).then(|| {
            self.points
                .iter()
                .map(|&(midi, weight)| midi * weight)
                .sum::<f64>()
                / self.total
        })
    }

    /// Weighted (population) standard deviation in semitones.
    pub fn sd(&self) -> Option<f64> {
        let mean = self.mean()?;
        let variance = self
            .points
            .iter()
            .map(|&(midi, weight)| weight * (midi - mean).powi(2))
            .sum::<f64>()
            / self.total;
        Some(variance.sqrt())
    }

    /// The weighted percentile `p` (0–100): the lowest pitch at which the
    /// cumulative weight reaches p % of the total (inverted CDF, so the
    /// result is always a pitch that is actually sung).
    pub fn percentile(&self, p: f64) -> Option<f64> {
        if self.points.is_empty() {
            return None;
        }
        let target = (p.clamp(0.0, 100.0) / 100.0) * self.total;
        let mut cumulative = 0.0;
        for &(midi, weight) in &self.points {
            cumulative += weight;
            // A relative tolerance keeps exact quarter fractions (e.g. 50 %
            // of 4 quarters) from missing by one rounding step.
            if cumulative >= target - 1e-12 * self.total {
                return Some(midi);
            }
        }
        self.highest()
    }

    /// Share (0–1) of the weight strictly above `midi`.
    pub fn share_above(&self, midi: f64) -> f64 {
        self.share_where(|pitch| pitch > midi)
    }

    /// Share (0–1) of the weight strictly below `midi`.
    pub fn share_below(&self, midi: f64) -> f64 {
        self.share_where(|pitch| pitch < midi)
    }

    fn share_where(&self, keep: impl Fn(f64) -> bool) -> f64 {
        if self.total <= 0.0 {
            return 0.0;
        }
        self.points
            .iter()
            .filter(|&&(pitch, _)| keep(pitch))
            .map(|&(_, weight)| weight)
            .sum::<f64>()
            / self.total
    }

    /// Weight per semitone (pitches rounded to the nearest whole MIDI number).
    pub fn histogram(&self) -> BTreeMap<i32, f64> {
        let mut bins = BTreeMap::new();
        for &(midi, weight) in &self.points {
            *bins.entry(midi.round() as i32).or_insert(0.0) += weight;
        }
        bins
    }
}

/// Mean, spread and percentiles of one distribution.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Spread {
    pub mean_midi: f64,
    pub sd_semitones: f64,
    /// The 5th, 25th, 50th, 75th and 95th percentiles, in that order.
    pub percentiles_midi: [f64; 5],
}

/// The percentiles reported in [`Spread::percentiles_midi`].
pub const PERCENTILES: [f64; 5] = [5.0, 25.0, 50.0, 75.0, 95.0];

impl Spread {
    fn of(distribution: &PitchDistribution) -> Option<Spread> {
        let mut percentiles_midi = [0.0; 5];
        for (slot, p) in percentiles_midi.iter_mut().zip(PERCENTILES) {
            *slot = distribution.percentile(p)?;
        }
        Some(Spread {
            mean_midi: distribution.mean()?,
            sd_semitones: distribution.sd()?,
            percentiles_midi,
        })
    }
}

/// The longest note held without a break (tied notes joined).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HeldNote {
    pub midi: f64,
    pub seconds: f64,
    pub quarters: f64,
    pub start_seconds: f64,
    pub bars: String,
}

/// Which end of the part a hot spot marks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum HotSpotKind {
    High,
    Low,
}

/// A window of sung music where the part sits highest or lowest.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HotSpot {
    pub kind: HotSpotKind,
    /// Printed bar range, e.g. "12–19".
    pub bars: String,
    pub start_seconds: f64,
    pub end_seconds: f64,
    /// Duration-weighted mean pitch inside the window.
    pub mean_midi: f64,
}

/// Everything measured about one part.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PartTessitura {
    pub name: String,
    pub kind: PartKind,
    /// Sounding notes (grace notes excluded).
    pub notes: usize,
    /// Time during which the part sings (overlapping chord tones counted once).
    pub sung_seconds: f64,
    pub sung_quarters: f64,
    pub lowest_midi: f64,
    pub highest_midi: f64,
    /// Duration-weighted over seconds: the tessitura proper.
    pub over_seconds: Spread,
    /// The same over notated quarter notes (tempo ignored).
    pub over_quarters: Spread,
    /// Seconds per semitone (every chord tone counts its full duration).
    pub histogram_seconds: BTreeMap<i32, f64>,
    pub histogram_quarters: BTreeMap<i32, f64>,
    pub longest_note: HeldNote,
    pub hot_spots: Vec<HotSpot>,
    /// Time dose: seconds of phonation (Titze, Švec & Popolo 2003, kᵥ = 1 while sounding).
    pub time_dose_seconds: f64,
    /// Cycle dose: Σ f0 · duration over the sounding notes, in vocal-fold cycles.
    pub cycle_dose: f64,
    /// When the part divides (chords, or two voices on a staff): its upper
    /// and lower lines, each analysed as a part of its own.
    pub divisi: Vec<PartTessitura>,
}

/// Analyses every part of a piece that has sounding notes, in score order.
/// Percussion parts are skipped; accompaniment is analysed but marked.
pub fn analyse_piece(piece: &Piece, config: &TessituraConfig) -> Vec<PartTessitura> {
    piece
        .parts
        .iter()
        .filter(|part| part.kind != PartKind::Percussion)
        .filter_map(|part| analyse_part(piece, part, config))
        .collect()
}

/// Analyses one part; `None` when it has no sounding note.
pub fn analyse_part(piece: &Piece, part: &Part, config: &TessituraConfig) -> Option<PartTessitura> {
    let mut analysis = analyse_line(piece, part, config)?;
    if part.kind == PartKind::Voice
        && let Some(lines) = split_divisi(part)
    {
        analysis.divisi = lines
            .iter()
            .filter_map(|line| analyse_line(piece, line, config))
            .collect();
    }
    Some(analysis)
}

fn analyse_line(piece: &Piece, part: &Part, config: &TessituraConfig) -> Option<PartTessitura> {
    let sounding: Vec<&Note> = sounding_notes(part).collect();
    let by_seconds = PitchDistribution::from_notes(sounding.iter().copied(), Weight::Seconds);
    let by_quarters = PitchDistribution::from_notes(sounding.iter().copied(), Weight::Quarters);
    let over_seconds = Spread::of(&by_seconds)?;
    let over_quarters = Spread::of(&by_quarters).unwrap_or_else(|| over_seconds.clone());
    let cycle_dose = sounding
        .iter()
        .map(|note| config.tuning.midi_to_hz(note.midi) * note.duration_seconds)
        .sum();
    let sung_seconds = union_length(sounding.iter().map(|n| (n.onset_seconds, n.end_seconds())));
    Some(PartTessitura {
        name: part.name.clone(),
        kind: part.kind,
        notes: sounding.len(),
        sung_seconds,
        sung_quarters: union_length(
            sounding
                .iter()
                .map(|n| (n.onset_quarters, n.end_quarters())),
        ),
        lowest_midi: by_seconds.lowest()?,
        highest_midi: by_seconds.highest()?,
        histogram_seconds: by_seconds.histogram(),
        histogram_quarters: by_quarters.histogram(),
        longest_note: longest_held_note(piece, &sounding)?,
        hot_spots: hot_spots(piece, &sounding, config),
        time_dose_seconds: sung_seconds,
        cycle_dose,
        over_seconds,
        over_quarters,
        divisi: Vec::new(),
    })
}

/// Notes that sound: not grace notes, positive duration, a finite pitch.
fn sounding_notes(part: &Part) -> impl Iterator<Item = &Note> {
    part.notes
        .iter()
        .filter(|note| !note.grace && note.duration_seconds > 0.0 && note.midi.is_finite())
}

/// Length of the union of intervals.
pub(crate) fn union_length(intervals: impl Iterator<Item = (f64, f64)>) -> f64 {
    let mut spans: Vec<(f64, f64)> = intervals.filter(|(a, b)| b > a).collect();
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut total = 0.0;
    let mut current: Option<(f64, f64)> = None;
    for (start, end) in spans {
        current = match current {
            Some((open, close)) if start <= close => Some((open, close.max(end))),
            Some((open, close)) => {
                total += close - open;
                Some((start, end))
            }
            None => Some((start, end)),
        };
    }
    total + current.map_or(0.0, |(open, close)| close - open)
}

/// A tie chain being followed: its first note, seconds, quarters and end.
type TieChain<'a> = (&'a Note, f64, f64, f64);

/// The longest note, joining each tie chain (same voice, same pitch, the
/// later note marked as tied from the previous one and starting where it ends).
fn longest_held_note<'a>(piece: &Piece, sounding: &[&'a Note]) -> Option<HeldNote> {
    // Open chains keyed by (voice, pitch in cents): (first note, seconds, quarters, end).
    let mut open: BTreeMap<(u32, u32, i64), TieChain<'a>> = BTreeMap::new();
    let mut best: Option<(&'a Note, f64, f64)> = None;
    let mut consider = |first: &'a Note, seconds: f64, quarters: f64| {
        if best.is_none_or(|(_, longest, _)| seconds > longest + 1e-9) {
            best = Some((first, seconds, quarters));
        }
    };
    let mut notes: Vec<&'a Note> = sounding.to_vec();
    notes.sort_by(|a, b| a.onset_seconds.total_cmp(&b.onset_seconds));
    for note in notes {
        let key = (note.staff, note.voice, (note.midi * 100.0).round() as i64);
        let continues = note.tied_from_previous
            && open
                .get(&key)
                .is_some_and(|&(_, _, _, end)| (note.onset_seconds - end).abs() < 1e-6);
        if continues {
            if let Some(chain) = open.get_mut(&key) {
                chain.1 += note.duration_seconds;
                chain.2 += note.duration_quarters;
                chain.3 = note.end_seconds();
            }
        } else if let Some((first, seconds, quarters, _)) = open.insert(
            key,
            (
                note,
                note.duration_seconds,
                note.duration_quarters,
                note.end_seconds(),
            ),
        ) {
            consider(first, seconds, quarters);
        }
    }
    for (first, seconds, quarters, _) in open.into_values() {
        consider(first, seconds, quarters);
    }
    let (first, seconds, quarters) = best?;
    let last_index = piece.measure_at_seconds(first.onset_seconds + seconds - 1e-6);
    Some(HeldNote {
        midi: first.midi,
        seconds,
        quarters,
        start_seconds: first.onset_seconds,
        bars: piece.bar_range(first.measure_index, last_index.max(first.measure_index)),
    })
}

/// Hot spots: windows of `hot_spot_window_seconds` of *sung* time (rests are
/// skipped, so a window may span a rest), slid in steps of a quarter second;
/// the highest windows that do not overlap, then the lowest one.
fn hot_spots(piece: &Piece, sounding: &[&Note], config: &TessituraConfig) -> Vec<HotSpot> {
    let mut spans: Vec<(f64, f64)> = sounding
        .iter()
        .map(|note| (note.onset_seconds, note.end_seconds()))
        .collect();
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    let sung = merge_spans(&spans);
    let total_sung: f64 = sung.iter().map(|(a, b)| b - a).sum();
    if total_sung <= 0.0 {
        return Vec::new();
    }
    let window = config
        .hot_spot_window_seconds
        .clamp(0.5, f64::MAX)
        .min(total_sung);
    // Real time at a given amount of sung time.
    let real_time_at = |sung_time: f64| -> f64 {
        let mut remaining = sung_time;
        for &(start, end) in &sung {
            if remaining <= end - start {
                return start + remaining;
            }
            remaining -= end - start;
        }
        sung.last().map_or(0.0, |&(_, end)| end)
    };
    let step = 0.25;
    let mut windows = Vec::new();
    let mut sung_start = 0.0;
    loop {
        let start = real_time_at(sung_start);
        let end = real_time_at(sung_start + window);
        let (mut weighted, mut weight) = (0.0, 0.0);
        for note in sounding {
            let overlap = note.end_seconds().min(end) - note.onset_seconds.max(start);
            if overlap > 0.0 {
                weighted += note.midi * overlap;
                weight += overlap;
            }
        }
        if weight > 0.0 {
            windows.push((start, end, weighted / weight));
        }
        if sung_start + window >= total_sung - 1e-9 {
            break;
        }
        sung_start = (sung_start + step).min(total_sung - window);
    }
    let mut by_height = windows.clone();
    by_height.sort_by(|a, b| b.2.total_cmp(&a.2).then(a.0.total_cmp(&b.0)));
    // The printed bars a window covers: a repeated passage is the same
    // hot spot on each pass, so windows sharing printed bars are one spot.
    let bars_of = |start: f64, end: f64| -> Vec<String> {
        let first = piece.measure_at_seconds(start);
        let last = piece.measure_at_seconds((end - 1e-6).max(start));
        piece.printed_bars(first, last.max(first))
    };
    let mut chosen: Vec<(f64, f64, f64, HotSpotKind)> = Vec::new();
    let mut chosen_bars: Vec<Vec<String>> = Vec::new();
    for &(start, end, mean) in &by_height {
        if chosen.len() >= config.high_hot_spots {
            break;
        }
        let bars = bars_of(start, end);
        let apart_in_time = chosen.iter().all(|&(s, e, _, _)| end <= s || start >= e);
        let new_bars = chosen_bars
            .iter()
            .all(|taken| !bars.iter().any(|bar| taken.contains(bar)));
        if apart_in_time && new_bars {
            chosen.push((start, end, mean, HotSpotKind::High));
            chosen_bars.push(bars);
        }
    }
    if let Some(&(start, end, mean)) = by_height.last()
        && !chosen
            .iter()
            .any(|&(s, e, _, _)| (s - start).abs() < 1e-9 && (e - end).abs() < 1e-9)
    {
        chosen.push((start, end, mean, HotSpotKind::Low));
    }
    chosen
        .into_iter()
        .map(|(start, end, mean_midi, kind)| {
            let first = piece.measure_at_seconds(start);
            let last = piece.measure_at_seconds((end - 1e-6).max(start));
            HotSpot {
                kind,
                bars: piece.bar_range(first, last.max(first)),
                start_seconds: start,
                end_seconds: end,
                mean_midi,
            }
        })
        .collect()
}

/// Merges sorted intervals into disjoint ones.
fn merge_spans(sorted: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut merged: Vec<(f64, f64)> = Vec::new();
    for &(start, end) in sorted {
        match merged.last_mut() {
            Some(last) if start <= last.1 => last.1 = last.1.max(end),
            _ => merged.push((start, end)),
        }
    }
    merged
}

/// Whether two sounding notes of the part overlap in time.
fn has_simultaneous_notes(notes: &[&Note]) -> bool {
    let mut sorted = notes.to_vec();
    sorted.sort_by(|a, b| a.onset_seconds.total_cmp(&b.onset_seconds));
    let mut latest_end = f64::NEG_INFINITY;
    for note in sorted {
        if note.onset_seconds < latest_end - 1e-9 {
            return true;
        }
        latest_end = latest_end.max(note.end_seconds());
    }
    false
}

/// Splits a divided voice part into its upper and lower lines.
///
/// A part divides when two of its notes sound at once: chords in one voice,
/// or two voices on a staff. Wherever several notes sound together, the
/// highest goes to the upper line and the lowest to the lower; where one note
/// sounds alone (the part in unison), both lines sing it. Returns `None` when
/// the part never divides.
pub fn split_divisi(part: &Part) -> Option<[Part; 2]> {
    let sounding: Vec<&Note> = sounding_notes(part).collect();
    if !has_simultaneous_notes(&sounding) {
        return None;
    }
    let mut upper = Vec::new();
    let mut lower = Vec::new();
    for note in &sounding {
        // The notes sounding at any moment of this note decide its role.
        let overlapping: Vec<&&Note> = sounding
            .iter()
            .filter(|other| {
                !std::ptr::eq(**other, *note)
                    && other.onset_seconds < note.end_seconds() - 1e-9
                    && other.end_seconds() > note.onset_seconds + 1e-9
            })
            .collect();
        let is_highest = overlapping.iter().all(|other| other.midi <= note.midi);
        let is_lowest = overlapping.iter().all(|other| other.midi >= note.midi);
        // Two notes at the same pitch (a unison within the divisi) each
        // belong to one line: voice order breaks the tie.
        let unison_partner = overlapping
            .iter()
            .find(|other| (other.midi - note.midi).abs() < 1e-9);
        match unison_partner {
            Some(partner) if overlapping.len() == 1 => {
                if (note.voice, note.staff) <= (partner.voice, partner.staff) {
                    upper.push((*note).clone());
                } else {
                    lower.push((*note).clone());
                }
            }
            _ => {
                if is_highest {
                    upper.push((*note).clone());
                }
                if is_lowest {
                    lower.push((*note).clone());
                }
            }
        }
    }
    let line = |suffix: &str, notes: Vec<Note>| Part {
        name: format!("{} ({suffix})", part.name),
        id: format!("{}-{suffix}", part.id),
        kind: part.kind,
        notes,
    };
    Some([line("upper", upper), line("lower", lower)])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::Measure;

    /// A note in 4/4 at 60 quarter notes per minute, so one quarter = 1 s.
    fn note(midi: f64, onset: f64, duration: f64) -> Note {
        Note {
            onset_seconds: onset,
            duration_seconds: duration,
            onset_quarters: onset,
            duration_quarters: duration,
            midi,
            measure_index: (onset / 4.0) as usize,
            measure: ((onset / 4.0) as usize + 1).to_string(),
            voice: 1,
            staff: 1,
            dynamic: None,
            velocity: None,
            tied_from_previous: false,
            grace: false,
        }
    }

    fn piece_of(notes: Vec<Note>) -> Piece {
        let end = notes.iter().map(Note::end_seconds).fold(0.0, f64::max);
        let bars = (end / 4.0).ceil() as usize;
        Piece {
            title: None,
            parts: vec![Part {
                name: "Tenor".into(),
                id: "P1".into(),
                kind: PartKind::Voice,
                notes,
            }],
            measures: (0..bars)
                .map(|index| Measure {
                    number: (index + 1).to_string(),
                    onset_seconds: index as f64 * 4.0,
                    onset_quarters: index as f64 * 4.0,
                    duration_quarters: 4.0,
                })
                .collect(),
            key: None,
            warnings: Vec::new(),
        }
    }

    #[test]
    fn duration_weighting_follows_titze() {
        // Titze 2008: each pitch weighs its sung duration. 3 s of A3 (57) and
        // 1 s of A4 (69): mean = (57·3 + 69·1) / 4 = 60; variance =
        // (3·9 + 1·81) / 4 = 27, SD = √27 ≈ 5.196 semitones.
        let notes = [note(57.0, 0.0, 3.0), note(69.0, 3.0, 1.0)];
        let distribution = PitchDistribution::from_notes(&notes, Weight::Seconds);
        assert_eq!(distribution.mean(), Some(60.0));
        assert!((distribution.sd().unwrap() - 27f64.sqrt()).abs() < 1e-12);
        // Inverted-CDF percentiles: 75 % of the weight is reached at A3.
        assert_eq!(distribution.percentile(75.0), Some(57.0));
        assert_eq!(distribution.percentile(76.0), Some(69.0));
        assert_eq!(distribution.share_above(60.0), 0.25);
        assert_eq!(distribution.share_below(69.0), 0.75);
        assert_eq!(
            distribution.histogram(),
            BTreeMap::from([(57, 3.0), (69, 1.0)])
        );
    }

    #[test]
    fn grace_notes_and_rests_weigh_nothing() {
        let mut grace = note(80.0, 0.0, 0.0);
        grace.grace = true;
        let notes = [grace, note(60.0, 2.0, 1.0)];
        let distribution = PitchDistribution::from_notes(&notes, Weight::Seconds);
        assert_eq!(distribution.total(), 1.0);
        assert_eq!(distribution.highest(), Some(60.0));
    }

    #[test]
    fn cycle_dose_is_f0_times_duration() {
        // Titze, Švec & Popolo 2003: cycle dose = ∫ f0 dt. Two seconds of A4
        // at 440 Hz (ISO 16) are 880 cycles; one second of A3 is 220.
        let piece = piece_of(vec![note(69.0, 0.0, 2.0), note(57.0, 2.0, 1.0)]);
        let analysis = analyse_piece(&piece, &TessituraConfig::default());
        assert!((analysis[0].cycle_dose - 1100.0).abs() < 1e-9);
        assert_eq!(analysis[0].time_dose_seconds, 3.0);
        // A baroque A4 = 415 Hz scales the dose by 415/440.
        let baroque = TessituraConfig {
            tuning: Tuning::with_a4(415.0).unwrap(),
            ..TessituraConfig::default()
        };
        let analysis = analyse_piece(&piece, &baroque);
        assert!((analysis[0].cycle_dose - 1100.0 * 415.0 / 440.0).abs() < 1e-9);
    }

    #[test]
    fn ties_join_into_one_held_note() {
        // A whole note tied into a half note is held 6 s (at 1 s per quarter),
        // longer than the untied 5 s note later on.
        let first = note(64.0, 0.0, 4.0);
        let mut tied = note(64.0, 4.0, 2.0);
        tied.tied_from_previous = true;
        let piece = piece_of(vec![first, tied, note(62.0, 8.0, 5.0)]);
        let analysis = analyse_piece(&piece, &TessituraConfig::default());
        let held = &analysis[0].longest_note;
        assert_eq!((held.midi, held.seconds, held.quarters), (64.0, 6.0, 6.0));
        assert_eq!(held.bars, "1–2");
    }

    #[test]
    fn hot_spots_find_the_high_stretch_by_bar() {
        // Bars 1–2 sit around C4, bars 3–4 on A4, bars 5–6 on C3: with 8 s
        // windows (two bars at one quarter per second) the highest window is
        // bars 3–4 and the lowest bars 5–6.
        let mut notes = Vec::new();
        for (bar, midi) in [
            (0, 60.0),
            (1, 60.0),
            (2, 69.0),
            (3, 69.0),
            (4, 48.0),
            (5, 48.0),
        ] {
            for beat in 0..4 {
                notes.push(note(midi, (bar * 4 + beat) as f64, 1.0));
            }
        }
        let piece = piece_of(notes);
        let config = TessituraConfig {
            high_hot_spots: 1,
            ..TessituraConfig::default()
        };
        let analysis = analyse_piece(&piece, &config);
        let spots = &analysis[0].hot_spots;
        assert_eq!(spots.len(), 2);
        assert_eq!(
            (spots[0].kind, spots[0].bars.as_str()),
            (HotSpotKind::High, "3–4")
        );
        assert_eq!(spots[0].mean_midi, 69.0);
        assert_eq!(
            (spots[1].kind, spots[1].bars.as_str()),
            (HotSpotKind::Low, "5–6")
        );
    }

    #[test]
    fn rests_are_skipped_by_hot_spot_windows() {
        // Four seconds of G4, a ten-second rest, four seconds of G4: eight
        // seconds of sung music span the rest, so one window covers both.
        let piece = piece_of(vec![note(67.0, 0.0, 4.0), note(67.0, 14.0, 4.0)]);
        let analysis = analyse_piece(&piece, &TessituraConfig::default());
        let spot = &analysis[0].hot_spots[0];
        assert_eq!((spot.start_seconds, spot.end_seconds), (0.0, 18.0));
        assert_eq!(analysis[0].sung_seconds, 8.0);
    }

    #[test]
    fn divisi_splits_chords_and_keeps_unisons_in_both_lines() {
        // Bar 1 in unison on C4; bar 2 a chord E4 over C4: the upper line
        // sings C4 then E4, the lower line C4 then C4.
        let mut part_notes = vec![
            note(60.0, 0.0, 4.0),
            note(60.0, 4.0, 4.0),
            note(64.0, 4.0, 4.0),
        ];
        part_notes[2].voice = 2;
        let piece = piece_of(part_notes);
        let [upper, lower] = split_divisi(&piece.parts[0]).unwrap();
        let pitches = |part: &Part| part.notes.iter().map(|n| n.midi).collect::<Vec<_>>();
        assert_eq!(pitches(&upper), vec![60.0, 64.0]);
        assert_eq!(pitches(&lower), vec![60.0, 60.0]);
        let analysis = analyse_piece(&piece, &TessituraConfig::default());
        assert_eq!(analysis[0].divisi.len(), 2);
        // The whole part counts both chord tones; sung time counts bar 2 once.
        assert_eq!(
            analysis[0].histogram_seconds,
            BTreeMap::from([(60, 8.0), (64, 4.0)])
        );
        assert_eq!(analysis[0].sung_seconds, 8.0);
    }

    #[test]
    fn a_single_line_is_not_divisi() {
        let piece = piece_of(vec![note(60.0, 0.0, 1.0), note(62.0, 1.0, 1.0)]);
        assert!(split_divisi(&piece.parts[0]).is_none());
    }

    #[test]
    fn a_part_without_sounding_notes_is_left_out() {
        let piece = piece_of(vec![]);
        assert!(analyse_piece(&piece, &TessituraConfig::default()).is_empty());
    }
}
