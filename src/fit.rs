//! Fit: how well one singer suits one part, and every singer each section of
//! a layout over a whole programme.
//!
//! For a singer and a part, over the part's sounding notes in seconds:
//! - the share and the seconds of sung time outside the comfort zone (the
//!   primary figure);
//! - severity: semitone-seconds beyond the comfort zone per sung second;
//! - seconds beyond the range (a hard flag);
//! - passaggio load: seconds within ±1 semitone of the primo or secondo;
//! - the longest continuous stretch above the comfort zone;
//! - the upper and lower reserves (Herbst et al. 2012);
//! - the worst passages by bar;
//! - one 0–100 fit figure combining them (formula and weights in
//!   docs/METHODS.md, "Fit").
//!
//! A section's fit over a programme is the sung-time-weighted mean over the
//! pieces of the fit to the line that section sings in each piece
//! ([`section_fit_matrix`]); the placement solver consumes that matrix.
//!
//! Architecture invariant: fit knows nothing of how a roster was obtained
//! (typed in, or measured from an audition) nor of how a score was read; it
//! takes a [`Singer`] and sounding notes and is a pure function of them and a
//! [`FitConfig`]. It never decides a placement.

use serde::{Deserialize, Serialize};

use crate::roster::{Roster, Singer};
use crate::score::{Note, Part, Piece};
use crate::sections::{self, Layout, LineRole, MappingConfig, MappingError, PieceMapping};
use crate::tessitura::{PitchDistribution, Weight};

/// Weights of the fit formula (see docs/METHODS.md, "Fit"). All are
/// non-negative; `passaggio` is never allowed to exceed `share_outside`, which
/// is what keeps the figure monotone when a note leaves the comfort zone.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FitWeights {
    /// a: per unit share of sung time outside the comfort zone.
    pub share_outside: f64,
    /// b: per semitone-second outside the comfort zone, per comfortable second.
    pub severity: f64,
    /// c: per second beyond the range, per comfortable second.
    pub beyond_range: f64,
    /// d: per unit share of sung time in a passaggio band while inside the comfort zone.
    pub passaggio: f64,
    /// e: for the longest high stretch, saturating (L / (L + reference)).
    pub stretch: f64,
}

impl Default for FitWeights {
    fn default() -> Self {
        FitWeights {
            share_outside: 1.5,
            severity: 0.5,
            beyond_range: 5.0,
            passaggio: 0.25,
            stretch: 0.4,
        }
    }
}

/// Settings of the fit analysis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FitConfig {
    pub weights: FitWeights,
    /// τ: comfortable seconds added to the denominator of the severity and
    /// beyond-range terms, so a part sung wholly outside the comfort zone
    /// still gets a finite, graded figure.
    pub comfort_reference_seconds: f64,
    /// Longest high stretch at which the stretch term reaches half its weight.
    pub stretch_reference_seconds: f64,
    /// Gaps shorter than this (a breath) keep a stretch continuous.
    pub breath_seconds: f64,
    /// Half-width of the band around each passaggio, in semitones.
    pub passaggio_band_semitones: f64,
    /// Length of the sliding window for the worst passages.
    pub passage_window_seconds: f64,
    /// How many worst passages to report (0 skips the search).
    pub worst_passages: usize,
}

impl Default for FitConfig {
    fn default() -> Self {
        FitConfig {
            weights: FitWeights::default(),
            comfort_reference_seconds: 10.0,
            stretch_reference_seconds: 30.0,
            breath_seconds: 1.0,
            passaggio_band_semitones: 1.0,
            passage_window_seconds: 6.0,
            worst_passages: 3,
        }
    }
}

/// A stretch of a part that sits worst for a singer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Passage {
    /// Printed bar range, e.g. "12–15".
    pub bars: String,
    pub start_seconds: f64,
    pub end_seconds: f64,
    /// Semitone-seconds outside the comfort zone within the passage.
    pub outside_semitone_seconds: f64,
    /// Seconds outside the comfort zone within the passage.
    pub outside_seconds: f64,
    /// "above" or "below" the comfort zone (where most of it lies).
    pub side: String,
}

/// Every figure for one singer and one part.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PartFit {
    /// Transposition applied, in semitones (0 as written).
    pub transpose_semitones: i32,
    pub sung_seconds: f64,
    pub outside_comfort_seconds: f64,
    /// The primary figure: outside_comfort_seconds / sung_seconds.
    pub outside_comfort_share: f64,
    pub above_comfort_seconds: f64,
    pub below_comfort_seconds: f64,
    /// Σ duration × semitones beyond the nearer comfort limit.
    pub outside_semitone_seconds: f64,
    /// outside_semitone_seconds / sung_seconds.
    pub severity_semitones: f64,
    pub beyond_range_seconds: f64,
    pub beyond_range_share: f64,
    /// Any sounding note (grace notes included) beyond the range.
    pub beyond_range: bool,
    /// Seconds within ±band of the primo or secondo (0 when neither is known).
    pub passaggio_seconds: f64,
    pub passaggio_share: f64,
    /// Whether the singer has a passaggio on record at all.
    pub passaggio_known: bool,
    pub longest_high_stretch_seconds: f64,
    pub part_lowest_midi: Option<f64>,
    pub part_highest_midi: Option<f64>,
    /// Singer's range_high − part's highest, in semitones (Herbst et al. 2012).
    pub upper_reserve_semitones: Option<f64>,
    /// Part's lowest − singer's range_low, in semitones.
    pub lower_reserve_semitones: Option<f64>,
    pub worst_passages: Vec<Passage>,
    /// 0–100, higher is better.
    pub fit: f64,
}

/// A part reduced to what fit needs, computed once and reused for every
/// singer and every transposition.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PartProfile {
    /// The one duration-weighted distribution (tessitura), over seconds.
    distribution: PitchDistribution,
    /// Its points with equal pitches merged: a part sings a few dozen
    /// distinct pitches, so every singer × key costs that many steps.
    merged: Vec<(f64, f64)>,
    lowest_midi: Option<f64>,
    highest_midi: Option<f64>,
    /// (threshold, longest stretch of notes strictly above it), thresholds
    /// ascending: the distinct sung pitches.
    stretch_above: Vec<(f64, f64)>,
    /// Longest stretch over all sung notes (threshold below every pitch).
    stretch_all: f64,
}

/// A note that is actually sung for some time.
fn is_sung(note: &Note) -> bool {
    !note.grace
        && note.duration_seconds.is_finite()
        && note.duration_seconds > 0.0
        && note.onset_seconds.is_finite()
        && note.midi.is_finite()
}

/// Longest stretch of notes (in onset order) chained by gaps shorter than a
/// breath; other notes in between do not break it. Ties have no gap, so they merge.
pub(crate) fn longest_stretch<'a>(
    notes: impl Iterator<Item = &'a Note>,
    breath_seconds: f64,
) -> f64 {
    let mut longest: f64 = 0.0;
    let mut run: Option<(f64, f64)> = None;
    for note in notes {
        let (onset, end) = (note.onset_seconds, note.end_seconds());
        run = match run {
            Some((start, run_end)) if onset - run_end < breath_seconds => {
                Some((start, run_end.max(end)))
            }
            Some((start, run_end)) => {
                longest = longest.max(run_end - start);
                Some((onset, end))
            }
            None => Some((onset, end)),
        };
    }
    if let Some((start, end)) = run {
        longest = longest.max(end - start);
    }
    longest
}

/// Precomputes the pitch–time profile of a part's notes.
pub fn profile_notes(notes: &[Note], config: &FitConfig) -> PartProfile {
    let mut sung: Vec<&Note> = notes.iter().filter(|note| is_sung(note)).collect();
    sung.sort_by(|a, b| a.onset_seconds.total_cmp(&b.onset_seconds));
    let distribution = PitchDistribution::from_notes(sung.iter().copied(), Weight::Seconds);
    let mut merged: Vec<(f64, f64)> = Vec::new();
    for &(midi, seconds) in distribution.points() {
        match merged.last_mut() {
            Some(last) if last.0 == midi => last.1 += seconds,
            _ => merged.push((midi, seconds)),
        }
    }
    let thresholds: Vec<f64> = merged.iter().map(|&(midi, _)| midi).collect();
    let sounding = notes
        .iter()
        .filter(|note| note.midi.is_finite())
        .map(|note| note.midi);
    let lowest_midi = sounding.clone().reduce(f64::min);
    let highest_midi = sounding.reduce(f64::max);
    let stretch_above = thresholds
        .into_iter()
        .map(|threshold| {
            let above = sung.iter().copied().filter(|note| note.midi > threshold);
            (threshold, longest_stretch(above, config.breath_seconds))
        })
        .collect();
    PartProfile {
        stretch_all: longest_stretch(sung.iter().copied(), config.breath_seconds),
        distribution,
        merged,
        lowest_midi,
        highest_midi,
        stretch_above,
    }
}

impl PartProfile {
    /// Longest stretch of notes strictly above `threshold_midi`.
    fn stretch_above(&self, threshold_midi: f64) -> f64 {
        let at_or_below = self
            .stretch_above
            .partition_point(|&(threshold, _)| threshold <= threshold_midi);
        match at_or_below.checked_sub(1) {
            None => self.stretch_all,
            Some(index) => self
                .stretch_above
                .get(index)
                .map_or(0.0, |&(_, longest)| longest),
        }
    }

    /// Sung seconds, every chord tone counted (the distribution's total).
    pub fn sung_seconds(&self) -> f64 {
        self.distribution.total()
    }
}

/// The figures for a singer and a profiled part transposed by
/// `transpose_semitones`, without the worst-passage search.
pub fn fit_profile(
    singer: &Singer,
    profile: &PartProfile,
    transpose_semitones: i32,
    config: &FitConfig,
) -> PartFit {
    let shift = f64::from(transpose_semitones);
    let band = config.passaggio_band_semitones;
    let passaggi = [singer.primo_midi, singer.secondo_midi];
    let (mut above, mut below, mut semitone_seconds) = (0.0, 0.0, 0.0);
    let (mut beyond, mut passaggio, mut passaggio_inside) = (0.0, 0.0, 0.0);
    for &(written_midi, seconds) in &profile.merged {
        let midi = written_midi + shift;
        let over = midi - singer.comfort_high_midi;
        let under = singer.comfort_low_midi - midi;
        let inside = over <= 0.0 && under <= 0.0;
        if over > 0.0 {
            above += seconds;
            semitone_seconds += over * seconds;
        } else if under > 0.0 {
            below += seconds;
            semitone_seconds += under * seconds;
        }
        if midi < singer.range_low_midi || midi > singer.range_high_midi {
            beyond += seconds;
        }
        if passaggi.iter().flatten().any(|p| (midi - p).abs() <= band) {
            passaggio += seconds;
            if inside {
                passaggio_inside += seconds;
            }
        }
    }
    let sung = profile.sung_seconds();
    let share = |seconds: f64| if sung > 0.0 { seconds / sung } else { 0.0 };
    let outside = above + below;
    let stretch = profile.stretch_above(singer.comfort_high_midi - shift);
    let lowest = profile.lowest_midi.map(|midi| midi + shift);
    let highest = profile.highest_midi.map(|midi| midi + shift);
    let beyond_flag = lowest.is_some_and(|low| low < singer.range_low_midi)
        || highest.is_some_and(|high| high > singer.range_high_midi);
    let terms = FitTerms {
        sung_seconds: sung,
        outside_seconds: outside,
        outside_semitone_seconds: semitone_seconds,
        beyond_range_seconds: beyond,
        passaggio_inside_seconds: passaggio_inside,
        longest_high_stretch_seconds: stretch,
    };
    PartFit {
        transpose_semitones,
        sung_seconds: sung,
        outside_comfort_seconds: outside,
        outside_comfort_share: share(outside),
        above_comfort_seconds: above,
        below_comfort_seconds: below,
        outside_semitone_seconds: semitone_seconds,
        severity_semitones: share(semitone_seconds),
        beyond_range_seconds: beyond,
        beyond_range_share: share(beyond),
        beyond_range: beyond_flag,
        passaggio_seconds: passaggio,
        passaggio_share: share(passaggio),
        passaggio_known: passaggi.iter().any(Option::is_some),
        longest_high_stretch_seconds: stretch,
        part_lowest_midi: lowest,
        part_highest_midi: highest,
        upper_reserve_semitones: highest.map(|high| singer.range_high_midi - high),
        lower_reserve_semitones: lowest.map(|low| low - singer.range_low_midi),
        worst_passages: Vec::new(),
        fit: fit_figure(&terms, config),
    }
}

/// The quantities the fit figure is built from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitTerms {
    pub sung_seconds: f64,
    pub outside_seconds: f64,
    pub outside_semitone_seconds: f64,
    pub beyond_range_seconds: f64,
    /// Seconds in a passaggio band while inside the comfort zone.
    pub passaggio_inside_seconds: f64,
    pub longest_high_stretch_seconds: f64,
}

/// The 0–100 fit figure (docs/METHODS.md, "Fit"):
///
/// fit = 100 · exp(−(a·X/S + b·E/(S_in+τ) + c·B/(S_in+τ) + d·Q/S + e·L/(L+τ_L)))
///
/// with S sung seconds, X seconds outside comfort, S_in = S − X, E
/// semitone-seconds outside, B seconds beyond range, Q passaggio seconds inside
/// comfort, L the longest high stretch. Every term grows (or stays) when a note
/// moves further outside or time outside is added, provided d ≤ a; d is capped
/// at a here so a bad configuration cannot break that.
pub fn fit_figure(terms: &FitTerms, config: &FitConfig) -> f64 {
    let weights = &config.weights;
    let sung = terms.sung_seconds;
    if sung <= 0.0 {
        return 100.0;
    }
    let non_negative = |value: f64| {
        if value.is_finite() {
            value.max(0.0)
        } else {
            0.0
        }
    };
    let a = non_negative(weights.share_outside);
    let d = non_negative(weights.passaggio).min(a);
    let comfortable = (sung - terms.outside_seconds).max(0.0);
    let tau = non_negative(config.comfort_reference_seconds).max(1e-6);
    let tau_stretch = non_negative(config.stretch_reference_seconds).max(1e-6);
    let stretch = terms.longest_high_stretch_seconds;
    let penalty = a * terms.outside_seconds / sung
        + non_negative(weights.severity) * terms.outside_semitone_seconds / (comfortable + tau)
        + non_negative(weights.beyond_range) * terms.beyond_range_seconds / (comfortable + tau)
        + d * terms.passaggio_inside_seconds / sung
        + non_negative(weights.stretch) * stretch / (stretch + tau_stretch);
    100.0 * (-penalty).exp()
}

/// All figures for a singer and a part as written, with the worst passages
/// labelled by printed bars from `piece`.
pub fn part_fit(singer: &Singer, piece: &Piece, part: &Part, config: &FitConfig) -> PartFit {
    notes_fit(singer, piece, &part.notes, config)
}

/// As [`part_fit`], for a bare list of notes (e.g. one line of a divisi).
pub fn notes_fit(singer: &Singer, piece: &Piece, notes: &[Note], config: &FitConfig) -> PartFit {
    let profile = profile_notes(notes, config);
    let mut fit = fit_profile(singer, &profile, 0, config);
    fit.worst_passages = worst_passages(singer, piece, notes, config);
    fit
}

/// Semitones a pitch lies beyond the comfort zone (0 inside), and on which side.
fn beyond_comfort(singer: &Singer, midi: f64) -> (f64, bool) {
    let over = midi - singer.comfort_high_midi;
    let under = singer.comfort_low_midi - midi;
    if over > 0.0 {
        (over, true)
    } else if under > 0.0 {
        (under, false)
    } else {
        (0.0, false)
    }
}

/// The worst non-overlapping windows of `passage_window_seconds`, ranked by
/// semitone-seconds outside the comfort zone. Windows start at the onsets of
/// notes outside the zone (a window starting elsewhere can be slid right to
/// the next such onset without losing any outside time).
pub fn worst_passages(
    singer: &Singer,
    piece: &Piece,
    notes: &[Note],
    config: &FitConfig,
) -> Vec<Passage> {
    let window = config.passage_window_seconds;
    if config.worst_passages == 0 || window.is_nan() || window <= 0.0 {
        return Vec::new();
    }
    let mut outside: Vec<(&Note, f64, bool)> = notes
        .iter()
        .filter(|note| is_sung(note))
        .filter_map(|note| {
            let (semitones, high) = beyond_comfort(singer, note.midi);
            (semitones > 0.0).then_some((note, semitones, high))
        })
        .collect();
    outside.sort_by(|a, b| a.0.onset_seconds.total_cmp(&b.0.onset_seconds));
    let score = |start: f64| {
        let end = start + window;
        let (mut weighted, mut seconds, mut high_seconds) = (0.0, 0.0, 0.0);
        let (mut first, mut last): (Option<&Note>, Option<&Note>) = (None, None);
        let from = outside.partition_point(|(note, _, _)| note.end_seconds() <= start);
        for &(note, semitones, high) in outside.get(from..).unwrap_or(&[]) {
            if note.onset_seconds >= end {
                break;
            }
            let overlap = note.end_seconds().min(end) - note.onset_seconds.max(start);
            if overlap <= 0.0 {
                continue;
            }
            weighted += overlap * semitones;
            seconds += overlap;
            if high {
                high_seconds += overlap;
            }
            first = first.or(Some(note));
            last = Some(note);
        }
        (weighted, seconds, high_seconds, first, last)
    };
    let mut candidates: Vec<(f64, f64)> = outside
        .iter()
        .map(|(note, _, _)| (note.onset_seconds, score(note.onset_seconds).0))
        .collect();
    candidates.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.total_cmp(&b.0)));
    let mut chosen: Vec<Passage> = Vec::new();
    for (start, weight) in candidates {
        if chosen.len() >= config.worst_passages || weight <= 0.0 {
            break;
        }
        let (weighted, seconds, high_seconds, first, last) = score(start);
        let (Some(first), Some(last)) = (first, last) else {
            continue;
        };
        let start_seconds = first.onset_seconds.max(start);
        let end_seconds = (start + window).min(
            outside
                .iter()
                .filter(|(note, _, _)| note.onset_seconds < start + window)
                .map(|(note, _, _)| note.end_seconds())
                .fold(start, f64::max),
        );
        let overlaps = chosen.iter().any(|passage| {
            start_seconds < passage.end_seconds && passage.start_seconds < end_seconds
        });
        if overlaps {
            continue;
        }
        chosen.push(Passage {
            bars: piece.bar_range(
                first.measure_index,
                last.measure_index.max(first.measure_index),
            ),
            start_seconds,
            end_seconds,
            outside_semitone_seconds: weighted,
            outside_seconds: seconds,
            side: if high_seconds * 2.0 >= seconds {
                "above"
            } else {
                "below"
            }
            .into(),
        });
    }
    chosen
}

/// What happens to a singer for whom a section's line goes beyond their range.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BeyondRangePolicy {
    /// The time beyond the range lowers the fit (the beyond-range term); the
    /// singer stays eligible.
    #[default]
    Penalise,
    /// The pair is not allowed (`None` in the matrix) when any piece asks the
    /// singer for a note beyond their range on every line they could sing.
    NotAllowed,
}

/// How a divisi within a section counts before the placement chooses who
/// sings which line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DivisiRule {
    /// The mean of the two lines: a section member may be asked for either.
    #[default]
    Mean,
    /// The better of the two lines: assumes the singer gets the line that suits them.
    Better,
}

/// A singer who must not sing a section.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Exclusion {
    pub singer: String,
    pub section: String,
}

/// Settings of the programme-level section fit.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct SectionFitConfig {
    pub fit: FitConfig,
    pub mapping: MappingConfig,
    pub beyond_range: BeyondRangePolicy,
    pub divisi: DivisiRule,
    pub exclusions: Vec<Exclusion>,
    /// Leave `SectionFitDetail::pieces` empty (the per-piece, per-line
    /// figures): for very large rosters, where they would take hundreds of
    /// MB; the programme-level figures are still filled in.
    pub skip_piece_details: bool,
}

/// A singer's fit to one line of one piece.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LineFit {
    pub line: String,
    pub role: LineRole,
    pub fit: PartFit,
}

/// What a section sings in one piece, and how the singer fits it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PieceSectionFit {
    pub piece: String,
    /// The lines the section sings (two for a divisi, none when tacet).
    pub lines: Vec<LineFit>,
    /// The piece's weight in the programme mean: the sung seconds of the
    /// section's line (the mean of the two for a divisi).
    pub weight_seconds: f64,
    /// The piece-level fit (`None` when tacet or not allowed).
    pub fit: Option<f64>,
}

/// Everything behind one cell of the section-fit matrix.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionFitDetail {
    pub singer: String,
    pub section: String,
    /// Sung-time-weighted mean fit over the programme; `None` = not allowed.
    pub fit: Option<f64>,
    /// Why the pair is not allowed, when it is not.
    pub not_allowed: Option<String>,
    /// Total sung seconds the section sings over the programme.
    pub sung_seconds: f64,
    /// Programme-level shares of sung time (weighted like the fit).
    pub outside_comfort_share: f64,
    pub above_comfort_share: f64,
    pub below_comfort_share: f64,
    pub severity_semitones: f64,
    pub beyond_range_seconds: f64,
    pub passaggio_share: f64,
    pub pieces: Vec<PieceSectionFit>,
}

/// A piece's mapping as shown to people (without the notes).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MappingSummary {
    pub piece: String,
    /// (section, what it sings: a part name, "divisi: X / Y" or "tacet").
    pub sections: Vec<(String, String)>,
    pub excluded: Vec<(String, String)>,
    pub notes: Vec<String>,
}

impl MappingSummary {
    pub fn of(mapping: &PieceMapping) -> MappingSummary {
        MappingSummary {
            piece: mapping.piece.clone(),
            sections: mapping
                .sections
                .iter()
                .map(|(section, sings)| {
                    let text = match sings {
                        sections::SectionSings::Line { line } => line.label.clone(),
                        sections::SectionSings::Divisi { upper, lower } => {
                            format!("divisi: {} / {}", upper.label, lower.label)
                        }
                        sections::SectionSings::Tacet => "tacet".to_string(),
                    };
                    (section.to_string(), text)
                })
                .collect(),
            excluded: mapping.excluded.clone(),
            notes: mapping.notes.clone(),
        }
    }
}

/// Singer × section fit over a programme: what the placement solver consumes.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionFitMatrix {
    /// Singer names in roster order (rows).
    pub singers: Vec<String>,
    /// Section labels in layout order (columns).
    pub sections: Vec<String>,
    /// `fit[singer][section]`, 0–100; `None` = not allowed (an exclusion, or
    /// beyond range under [`BeyondRangePolicy::NotAllowed`]).
    pub fit: Vec<Vec<Option<f64>>>,
    /// `details[singer][section]`: the figures behind each cell.
    pub details: Vec<Vec<SectionFitDetail>>,
    /// How each piece maps to the layout.
    pub pieces: Vec<MappingSummary>,
    /// The full mappings, with the notes of every line (not serialised).
    #[serde(skip)]
    pub mappings: Vec<PieceMapping>,
}

/// Maps every piece of a programme to the layout; the first piece that
/// cannot be mapped is the error.
pub fn map_programme(
    programme: &[Piece],
    layout: &Layout,
    config: &MappingConfig,
) -> Result<Vec<PieceMapping>, MappingError> {
    programme
        .iter()
        .enumerate()
        .map(|(index, piece)| sections::map_piece(piece, index, layout, config))
        .collect()
}

/// The singer × section fit matrix over a programme (see the module docs).
pub fn section_fit_matrix(
    roster: &Roster,
    programme: &[Piece],
    layout: &Layout,
    config: &SectionFitConfig,
) -> Result<SectionFitMatrix, MappingError> {
    let mappings = map_programme(programme, layout, &config.mapping)?;
    Ok(section_fit_matrix_from_mappings(
        roster, mappings, layout, config, 0,
    ))
}

/// As [`section_fit_matrix`], from mappings already made, with every piece
/// transposed by `transpose_semitones`.
pub fn section_fit_matrix_from_mappings(
    roster: &Roster,
    mappings: Vec<PieceMapping>,
    layout: &Layout,
    config: &SectionFitConfig,
    transpose_semitones: i32,
) -> SectionFitMatrix {
    // Profile every line once: [piece][section] → profiles of its lines.
    let profiles: Vec<Vec<Vec<PartProfile>>> = mappings
        .iter()
        .map(|mapping| {
            mapping
                .sections
                .iter()
                .map(|(_, sings)| {
                    sings
                        .lines()
                        .iter()
                        .map(|line| profile_notes(&line.part.notes, &config.fit))
                        .collect()
                })
                .collect()
        })
        .collect();
    let mut matrix = SectionFitMatrix {
        singers: roster.singers.iter().map(|s| s.name.clone()).collect(),
        sections: layout.labels(),
        fit: Vec::with_capacity(roster.singers.len()),
        details: Vec::with_capacity(roster.singers.len()),
        pieces: mappings.iter().map(MappingSummary::of).collect(),
        mappings: Vec::new(),
    };
    for singer in &roster.singers {
        let mut fit_row = Vec::with_capacity(layout.sections.len());
        let mut detail_row = Vec::with_capacity(layout.sections.len());
        for (section_index, section) in layout.sections.iter().enumerate() {
            let label = section.to_string();
            let excluded = config
                .exclusions
                .iter()
                .any(|rule| rule.singer == singer.name && rule.section == label);
            let detail = singer_section_fit(
                singer,
                &label,
                section_index,
                &mappings,
                &profiles,
                config,
                transpose_semitones,
                excluded,
            );
            fit_row.push(detail.fit);
            detail_row.push(detail);
        }
        matrix.fit.push(fit_row);
        matrix.details.push(detail_row);
    }
    matrix.mappings = mappings;
    matrix
}

#[allow(clippy::too_many_arguments)]
fn singer_section_fit(
    singer: &Singer,
    section: &str,
    section_index: usize,
    mappings: &[PieceMapping],
    profiles: &[Vec<Vec<PartProfile>>],
    config: &SectionFitConfig,
    transpose_semitones: i32,
    excluded: bool,
) -> SectionFitDetail {
    let mut not_allowed = excluded.then(|| "excluded by the director".to_string());
    let mut pieces = Vec::with_capacity(mappings.len());
    let (mut weighted_fit, mut total_weight) = (0.0, 0.0);
    let (mut sung, mut outside, mut above, mut below) = (0.0, 0.0, 0.0, 0.0);
    let (mut semitone_seconds, mut beyond, mut passaggio) = (0.0, 0.0, 0.0);
    for (mapping, piece_profiles) in mappings.iter().zip(profiles) {
        let (Some((_, sings)), Some(line_profiles)) = (
            mapping.sections.get(section_index),
            piece_profiles.get(section_index),
        ) else {
            continue;
        };
        let lines: Vec<LineFit> = sings
            .lines()
            .iter()
            .zip(line_profiles)
            .map(|(line, profile)| LineFit {
                line: line.label.clone(),
                role: line.role,
                fit: fit_profile(singer, profile, transpose_semitones, &config.fit),
            })
            .collect();
        // The lines this singer could be given.
        let usable: Vec<&LineFit> = lines
            .iter()
            .filter(|line| {
                config.beyond_range == BeyondRangePolicy::Penalise || !line.fit.beyond_range
            })
            .collect();
        let mut piece_fit = None;
        let mut weight = 0.0;
        if lines.is_empty() {
            // Tacet: the piece does not count for this section.
        } else if usable.is_empty() {
            if not_allowed.is_none() {
                let worst = lines.first().map(|line| &line.fit);
                not_allowed = Some(format!(
                    "beyond range in {} ({}): the line spans {}–{}, the range {}–{}",
                    mapping.piece,
                    lines.first().map_or("", |line| line.line.as_str()),
                    worst
                        .and_then(|fit| fit.part_lowest_midi)
                        .map_or_else(String::new, crate::pitch::name_with_cents),
                    worst
                        .and_then(|fit| fit.part_highest_midi)
                        .map_or_else(String::new, crate::pitch::name_with_cents),
                    crate::pitch::name_with_cents(singer.range_low_midi),
                    crate::pitch::name_with_cents(singer.range_high_midi),
                ));
            }
        } else {
            let count = usable.len() as f64;
            weight = usable.iter().map(|line| line.fit.sung_seconds).sum::<f64>() / count;
            piece_fit = Some(match config.divisi {
                DivisiRule::Mean => usable.iter().map(|line| line.fit.fit).sum::<f64>() / count,
                DivisiRule::Better => usable
                    .iter()
                    .map(|line| line.fit.fit)
                    .fold(f64::NEG_INFINITY, f64::max),
            });
            for line in &usable {
                let figures = &line.fit;
                sung += figures.sung_seconds / count;
                outside += figures.outside_comfort_seconds / count;
                above += figures.above_comfort_seconds / count;
                below += figures.below_comfort_seconds / count;
                semitone_seconds += figures.outside_semitone_seconds / count;
                beyond += figures.beyond_range_seconds / count;
                passaggio += figures.passaggio_seconds / count;
            }
            if let Some(fit) = piece_fit {
                weighted_fit += weight * fit;
                total_weight += weight;
            }
        }
        if config.skip_piece_details {
            continue;
        }
        pieces.push(PieceSectionFit {
            piece: mapping.piece.clone(),
            lines,
            weight_seconds: weight,
            fit: piece_fit,
        });
    }
    let share = |seconds: f64| if sung > 0.0 { seconds / sung } else { 0.0 };
    let fit = if not_allowed.is_some() {
        None
    } else if total_weight > 0.0 {
        Some(weighted_fit / total_weight)
    } else {
        // The section sings nothing in the programme: nothing can sit badly.
        Some(100.0)
    };
    SectionFitDetail {
        singer: singer.name.clone(),
        section: section.to_string(),
        fit,
        not_allowed,
        sung_seconds: sung,
        outside_comfort_share: share(outside),
        above_comfort_share: share(above),
        below_comfort_share: share(below),
        severity_semitones: share(semitone_seconds),
        beyond_range_seconds: beyond,
        passaggio_share: share(passaggio),
        pieces,
    }
}

/// One singer on one line of one piece: the record `ambit fit` prints.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LineFitRecord {
    pub singer: String,
    pub piece: String,
    /// The part's name, with "(upper)"/"(lower)" for a divisi line.
    pub part: String,
    pub role: LineRole,
    pub fit: PartFit,
}

/// Every singer against every sung line of a piece: each voice part as
/// written and, when it divides, its upper and lower lines.
pub fn piece_fits(roster: &Roster, piece: &Piece, config: &FitConfig) -> Vec<LineFitRecord> {
    let title = piece
        .title
        .clone()
        .unwrap_or_else(|| "untitled".to_string());
    let mut lines: Vec<(String, LineRole, &[Note])> = Vec::new();
    let mut divisi_parts: Vec<(String, LineRole, Part)> = Vec::new();
    for part in piece.voice_parts() {
        lines.push((part.name.clone(), LineRole::Whole, &part.notes));
        if let Some([upper, lower]) = crate::tessitura::split_divisi(part) {
            divisi_parts.push((upper.name.clone(), LineRole::Upper, upper));
            divisi_parts.push((lower.name.clone(), LineRole::Lower, lower));
        }
    }
    for (name, role, part) in &divisi_parts {
        lines.push((name.clone(), *role, &part.notes));
    }
    let mut records = Vec::with_capacity(roster.singers.len() * lines.len());
    for singer in &roster.singers {
        for (name, role, notes) in &lines {
            records.push(LineFitRecord {
                singer: singer.name.clone(),
                piece: title.clone(),
                part: name.clone(),
                role: *role,
                fit: notes_fit(singer, piece, notes, config),
            });
        }
    }
    records
}
