//! Transposition: the key in which a piece sits best, for one singer or for
//! a whole choir as placed.
//!
//! A sweep over −6…+6 semitones (configurable). For a soloist (one singer,
//! one part) the best key is the one with the highest fit. For a choir, each
//! singer is fitted to the line their section sings; the best key maximises
//! the worst section's mean fit, breaking ties on the total fit, then on the
//! smaller transposition. Keys are named when the score has a key signature,
//! by the circle of fifths with the simpler spelling.
//!
//! Architecture invariant: transposition moves pitches only (every note by the
//! same number of semitones, durations untouched) and reuses `fit`; it holds
//! no fit formula of its own and never changes a placement.

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::fit::{
    PartFit, SectionFitConfig, fit_profile, map_programme, profile_notes,
    section_fit_matrix_from_mappings,
};
use crate::roster::{Roster, Singer};
use crate::score::{KeySignature, Mode, Note, Piece};
use crate::sections::{Layout, LayoutError, MappingError, Section};

/// Settings of a transposition sweep.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TransposeConfig {
    /// Lowest transposition tried, in semitones (−6 by default).
    pub lowest_semitones: i32,
    /// Highest transposition tried (+6 by default).
    pub highest_semitones: i32,
    /// Fit differences up to this many points (0–100 scale) count as a tie,
    /// so a key is not moved for a difference nobody could hear in rehearsal;
    /// among tied keys the smaller move wins.
    pub equal_fit_points: f64,
    pub section_fit: SectionFitConfig,
}

impl Default for TransposeConfig {
    fn default() -> Self {
        TransposeConfig {
            lowest_semitones: -6,
            highest_semitones: 6,
            equal_fit_points: 1.0,
            section_fit: SectionFitConfig::default(),
        }
    }
}

impl TransposeConfig {
    fn shifts(&self) -> std::ops::RangeInclusive<i32> {
        let low = self.lowest_semitones.clamp(-24, 24);
        let high = self.highest_semitones.clamp(low, 24);
        low..=high
    }
}

/// One candidate key for a soloist.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SoloistKey {
    pub transpose_semitones: i32,
    /// "up a major second", "as written", …
    pub interval: String,
    /// The key's name when the score has a key signature.
    pub key: Option<String>,
    pub fit: PartFit,
}

/// The sweep for one singer on one line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SoloistAdvice {
    pub singer: String,
    pub part: String,
    pub written_key: Option<String>,
    /// Every key tried, lowest transposition first.
    pub keys: Vec<SoloistKey>,
    /// The best transposition in semitones.
    pub best_semitones: i32,
}

/// A section's mean fit in one key.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionMean {
    pub section: String,
    pub singers: usize,
    pub mean_fit: f64,
}

/// One candidate key for a choir.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChoirKey {
    pub transpose_semitones: i32,
    pub interval: String,
    pub key: Option<String>,
    /// The section with the lowest mean fit, and that mean.
    pub worst_section: String,
    pub worst_mean_fit: f64,
    /// Sum of every placed singer's fit.
    pub total_fit: f64,
    pub sections: Vec<SectionMean>,
}

/// The sweep for a choir as placed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChoirAdvice {
    pub piece: String,
    pub layout: Vec<String>,
    pub written_key: Option<String>,
    pub keys: Vec<ChoirKey>,
    pub best_semitones: i32,
    /// Singers with no section in the placement (left out of the sweep).
    pub unplaced: Vec<String>,
    /// Sections of the layout with nobody placed or nothing to sing.
    pub empty_sections: Vec<String>,
}

#[derive(Debug, Error)]
pub enum TransposeError {
    #[error(
        "nobody in the roster has a section, so there is no placement to transpose for; fill the roster's `section` column (S1, A, T2, …) or run `ambit place` first"
    )]
    NoPlacement,
    #[error("singer `{singer}`: {source}")]
    BadSection {
        singer: String,
        #[source]
        source: LayoutError,
    },
    #[error(transparent)]
    Layout(#[from] LayoutError),
    #[error(transparent)]
    Mapping(#[from] MappingError),
    #[error("no placed singer sings anything in {piece}")]
    NothingSung { piece: String },
    #[error("{piece}: which part? {message} (voice parts: {parts})")]
    WhichPart {
        piece: String,
        message: String,
        parts: String,
    },
}

/// The line a soloist sings: the voice part named `part_name` (a part or
/// one of its divisi lines, e.g. "Tenor (upper)"), or the piece's only voice
/// part. Returns the line's label and notes.
pub fn soloist_line(
    piece: &Piece,
    part_name: Option<&str>,
) -> Result<(String, Vec<Note>), TransposeError> {
    let mut lines: Vec<(String, Vec<Note>)> = Vec::new();
    for part in piece.voice_parts() {
        lines.push((part.name.clone(), part.notes.clone()));
        if let Some([upper, lower]) = crate::tessitura::split_divisi(part) {
            lines.push((upper.name, upper.notes));
            lines.push((lower.name, lower.notes));
        }
    }
    let voice_parts: Vec<&str> = piece.voice_parts().map(|part| part.name.as_str()).collect();
    let which = |message: String| TransposeError::WhichPart {
        piece: piece
            .title
            .clone()
            .unwrap_or_else(|| "the piece".to_string()),
        message,
        parts: if voice_parts.is_empty() {
            "none".to_string()
        } else {
            voice_parts
                .iter()
                .map(|name| format!("`{name}`"))
                .collect::<Vec<_>>()
                .join(", ")
        },
    };
    match part_name {
        Some(wanted) => lines
            .into_iter()
            .find(|(name, _)| name.eq_ignore_ascii_case(wanted.trim()))
            .ok_or_else(|| which(format!("there is no voice part `{wanted}`"))),
        None if voice_parts.len() == 1 => lines
            .into_iter()
            .next()
            .ok_or_else(|| which("the piece has no voice part".to_string())),
        None if voice_parts.is_empty() => Err(which("the piece has no voice part".to_string())),
        None => Err(which("name the part to sing with --part".to_string())),
    }
}

/// Names an interval of `semitones` up or down.
pub fn interval_name(semitones: i32) -> String {
    const NAMES: [&str; 12] = [
        "unison",
        "minor second",
        "major second",
        "minor third",
        "major third",
        "perfect fourth",
        "tritone",
        "perfect fifth",
        "minor sixth",
        "major sixth",
        "minor seventh",
        "major seventh",
    ];
    if semitones == 0 {
        return "as written".to_string();
    }
    let size = semitones.unsigned_abs() as usize;
    let name = if size.is_multiple_of(12) {
        format!("{} octave{}", size / 12, if size >= 24 { "s" } else { "" })
    } else if size > 12 {
        format!("octave and a {}", NAMES[size % 12])
    } else {
        NAMES[size % 12].to_string()
    };
    format!("{} a {name}", if semitones > 0 { "up" } else { "down" })
}

const MAJOR_BY_FIFTHS: [&str; 15] = [
    "C♭", "G♭", "D♭", "A♭", "E♭", "B♭", "F", "C", "G", "D", "A", "E", "B", "F♯", "C♯",
];
const MINOR_BY_FIFTHS: [&str; 15] = [
    "A♭", "E♭", "B♭", "F", "C", "G", "D", "A", "E", "B", "F♯", "C♯", "G♯", "D♯", "A♯",
];

/// The key signature after transposing by `semitones`, spelled with the
/// fewest accidentals; at six either way, the original's side (sharps or
/// flats) is kept, and from C the direction of the move decides.
pub fn transposed_key(key: KeySignature, semitones: i32) -> KeySignature {
    // A semitone up is seven fifths up on the circle of fifths.
    let raw = key.fifths + 7 * semitones;
    let base = raw.rem_euclid(12); // 0…11
    let candidates = [base, base - 12];
    let best = candidates
        .into_iter()
        .min_by_key(|&fifths| {
            let side_penalty = if fifths.abs() == 6 {
                let prefer_sharps = key.fifths > 0 || (key.fifths == 0 && semitones > 0);
                i32::from((fifths > 0) != prefer_sharps)
            } else {
                0
            };
            (fifths.abs(), side_penalty)
        })
        .unwrap_or(base);
    KeySignature {
        fifths: best,
        mode: key.mode,
    }
}

/// The name of a key signature: "E♭ major", "F♯ minor", or, for other modes,
/// the signature itself ("3 flats").
pub fn key_name(key: KeySignature) -> String {
    let index = usize::try_from(key.fifths + 7).ok();
    let named = |table: &[&'static str; 15]| -> Option<&'static str> {
        index.and_then(|index| table.get(index).copied())
    };
    match key.mode {
        Mode::Major => named(&MAJOR_BY_FIFTHS).map(|tonic| format!("{tonic} major")),
        Mode::Minor => named(&MINOR_BY_FIFTHS).map(|tonic| format!("{tonic} minor")),
        Mode::Other => None,
    }
    .unwrap_or_else(|| match key.fifths {
        0 => "no sharps or flats".to_string(),
        1 => "1 sharp".to_string(),
        -1 => "1 flat".to_string(),
        n if n > 0 => format!("{n} sharps"),
        n => format!("{} flats", -n),
    })
}

fn key_after(piece: &Piece, semitones: i32) -> Option<String> {
    piece
        .key
        .map(|key| key_name(transposed_key(key, semitones)))
}

/// The best key for one singer on one line (the notes of a part or of a
/// divisi line of `piece`).
pub fn soloist_keys(
    singer: &Singer,
    piece: &Piece,
    part_label: &str,
    notes: &[Note],
    config: &TransposeConfig,
) -> SoloistAdvice {
    let fit_config = &config.section_fit.fit;
    let profile = profile_notes(notes, fit_config);
    let keys: Vec<SoloistKey> = config
        .shifts()
        .map(|semitones| SoloistKey {
            transpose_semitones: semitones,
            interval: interval_name(semitones),
            key: key_after(piece, semitones),
            fit: fit_profile(singer, &profile, semitones, fit_config),
        })
        .collect();
    let tie = config.equal_fit_points.max(0.0);
    let top = keys
        .iter()
        .map(|key| key.fit.fit)
        .fold(f64::NEG_INFINITY, f64::max);
    // The smallest move among the keys within `tie` of the best fit.
    let best_semitones = keys
        .iter()
        .filter(|key| key.fit.fit >= top - tie)
        .min_by_key(|key| (key.transpose_semitones.abs(), key.transpose_semitones))
        .map_or(0, |key| key.transpose_semitones);
    SoloistAdvice {
        singer: singer.name.clone(),
        part: part_label.to_string(),
        written_key: key_after(piece, 0),
        keys,
        best_semitones,
    }
}

/// A placement: each placed singer with their section.
pub type Placement = Vec<(Singer, Section)>;

/// The placement recorded in a roster's `section` column: the placed
/// singers, and the names of the unplaced.
pub fn roster_placement(roster: &Roster) -> Result<(Placement, Vec<String>), TransposeError> {
    let mut placed = Vec::new();
    let mut unplaced = Vec::new();
    for singer in &roster.singers {
        match singer.section.as_deref().map(str::trim) {
            Some(label) if !label.is_empty() => {
                let section =
                    Section::parse(label).map_err(|source| TransposeError::BadSection {
                        singer: singer.name.clone(),
                        source,
                    })?;
                placed.push((singer.clone(), section));
            }
            _ => unplaced.push(singer.name.clone()),
        }
    }
    if placed.is_empty() {
        return Err(TransposeError::NoPlacement);
    }
    Ok((placed, unplaced))
}

/// The best key for a choir placed as in the roster's `section` column, over
/// the layout those sections form.
pub fn choir_keys(
    roster: &Roster,
    piece: &Piece,
    config: &TransposeConfig,
) -> Result<ChoirAdvice, TransposeError> {
    let (placed, unplaced) = roster_placement(roster)?;
    let labels: Vec<String> = placed
        .iter()
        .map(|(_, section)| section.to_string())
        .collect();
    let layout = Layout::from_labels(labels.iter().map(String::as_str))?;
    let mappings = map_programme(
        std::slice::from_ref(piece),
        &layout,
        &config.section_fit.mapping,
    )?;
    let piece_name = mappings
        .first()
        .map_or_else(|| "the piece".to_string(), |mapping| mapping.piece.clone());
    let placed_roster = Roster {
        singers: placed.iter().map(|(singer, _)| singer.clone()).collect(),
    };
    let mut keys = Vec::new();
    let mut empty_sections = Vec::new();
    for semitones in config.shifts() {
        let matrix = section_fit_matrix_from_mappings(
            &placed_roster,
            mappings.clone(),
            &layout,
            &config.section_fit,
            semitones,
        );
        let mut sections = Vec::new();
        let mut total_fit = 0.0;
        for (column, section) in layout.sections.iter().enumerate() {
            let fits: Vec<f64> = placed
                .iter()
                .enumerate()
                .filter(|(_, (_, placed_in))| placed_in == section)
                .filter(|(row, _)| {
                    // Only singers whose section sings something in this piece.
                    matrix
                        .details
                        .get(*row)
                        .and_then(|details| details.get(column))
                        .is_some_and(|detail| detail.sung_seconds > 0.0 || detail.fit.is_none())
                })
                .map(|(row, _)| {
                    matrix
                        .fit
                        .get(row)
                        .and_then(|fits| fits.get(column))
                        .copied()
                        .flatten()
                        .unwrap_or(0.0)
                })
                .collect();
            if fits.is_empty() {
                if semitones == 0 {
                    empty_sections.push(section.to_string());
                }
                continue;
            }
            total_fit += fits.iter().sum::<f64>();
            sections.push(SectionMean {
                section: section.to_string(),
                singers: fits.len(),
                mean_fit: fits.iter().sum::<f64>() / fits.len() as f64,
            });
        }
        let Some(worst) = sections
            .iter()
            .min_by(|a, b| a.mean_fit.total_cmp(&b.mean_fit))
            .cloned()
        else {
            return Err(TransposeError::NothingSung { piece: piece_name });
        };
        keys.push(ChoirKey {
            transpose_semitones: semitones,
            interval: interval_name(semitones),
            key: key_after(piece, semitones),
            worst_section: worst.section,
            worst_mean_fit: worst.mean_fit,
            total_fit,
            sections,
        });
    }
    // Maximise the worst section's mean; among keys within the tie margin of
    // the best worst-section mean, maximise the total (again with a margin,
    // per placed singer); then prefer the smaller move.
    let tie = config.equal_fit_points.max(0.0);
    let top_worst = keys
        .iter()
        .map(|key| key.worst_mean_fit)
        .fold(f64::NEG_INFINITY, f64::max);
    let contenders: Vec<&ChoirKey> = keys
        .iter()
        .filter(|key| key.worst_mean_fit >= top_worst - tie)
        .collect();
    let top_total = contenders
        .iter()
        .map(|key| key.total_fit)
        .fold(f64::NEG_INFINITY, f64::max);
    let total_tie = tie * placed.len() as f64;
    let best_semitones = contenders
        .iter()
        .filter(|key| key.total_fit >= top_total - total_tie)
        .min_by_key(|key| (key.transpose_semitones.abs(), key.transpose_semitones))
        .map_or(0, |key| key.transpose_semitones);
    Ok(ChoirAdvice {
        piece: piece_name,
        layout: layout.labels(),
        written_key: key_after(piece, 0),
        keys,
        best_semitones,
        unplaced,
        empty_sections,
    })
}
