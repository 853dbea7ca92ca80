//! Sections and layouts (SATB, SSAATTBB, …), and which line of a piece each
//! section sings.
//!
//! A piece's voice parts are recognised by name in English, German, Italian
//! and French ("Soprano I", "Sopr. 1", "Alt", "Contralto", "Ténor", "Basso",
//! "Bariton", "Dessus", "Haute-contre", "Taille", …), by score order when no
//! part is named, or by an explicit override. Accompaniment, instruments and
//! solo parts are excluded. Then each section of the layout is given a line:
//! - fewer lines than sections (SATB sung by SSAATTBB): both halves of a
//!   section sing the same part;
//! - a part the piece divides but the layout does not (two soprano parts for
//!   one S section, or chords within one part found by
//!   [`crate::tessitura::split_divisi`]): the section sings a divisi, and both
//!   lines are kept so the placement can choose who sings upper and lower;
//! - a section with no line in the piece (men in an SSA piece) is tacet;
//! - a part no section sings is an error naming the piece and the part.
//!
//! Architecture invariant: knows nothing of singers or fit. It maps parts to
//! sections and nothing else; a pure function of a `Piece`, a `Layout` and a
//! `MappingConfig`.

use std::fmt;

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::score::{Part, PartKind, Piece};
use crate::tessitura::split_divisi;

/// The four voices of choral writing, high to low.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Voice {
    Soprano,
    Alto,
    Tenor,
    Bass,
}

impl Voice {
    pub fn letter(self) -> char {
        match self {
            Voice::Soprano => 'S',
            Voice::Alto => 'A',
            Voice::Tenor => 'T',
            Voice::Bass => 'B',
        }
    }

    fn from_letter(letter: char) -> Option<Voice> {
        match letter.to_ascii_uppercase() {
            'S' => Some(Voice::Soprano),
            'A' => Some(Voice::Alto),
            'T' => Some(Voice::Tenor),
            'B' => Some(Voice::Bass),
            _ => None,
        }
    }
}

/// A section of a choir (S1, A, T2, …): a voice and, when divided, a number.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub struct Section {
    pub voice: Voice,
    pub number: Option<u32>,
}

impl fmt::Display for Section {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.number {
            Some(number) => write!(f, "{}{number}", self.voice.letter()),
            None => write!(f, "{}", self.voice.letter()),
        }
    }
}

impl Section {
    /// Parses a section label: a voice letter and an optional number (`S1`, `A`, `t2`).
    pub fn parse(label: &str) -> Result<Section, LayoutError> {
        let label = label.trim();
        let mut chars = label.chars();
        let voice = chars
            .next()
            .and_then(Voice::from_letter)
            .ok_or_else(|| LayoutError::BadSection(label.to_string()))?;
        let rest = chars.as_str();
        let number = if rest.is_empty() {
            None
        } else {
            match rest.parse::<u32>() {
                Ok(number @ 1..=9) => Some(number),
                _ => return Err(LayoutError::BadSection(label.to_string())),
            }
        };
        Ok(Section { voice, number })
    }
}

/// A choir layout: its sections in score order (high to low as given).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Layout {
    pub name: String,
    pub sections: Vec<Section>,
}

#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum LayoutError {
    #[error(
        "`{0}` is not a section: expected S, A, T or B with an optional number 1–9 (e.g. S1, A, T2)"
    )]
    BadSection(String),
    #[error(
        "`{0}` is not a layout: use SATB, SSAATTBB, SSA, SSAA, TTBB, SAB (any string of the letters S, A, T, B) or a list such as S1,S2,A,T,B"
    )]
    BadLayout(String),
    #[error("layout `{layout}` names section {section} twice")]
    Duplicate { layout: String, section: String },
}

impl Layout {
    /// Parses a layout: a string of voice letters (`SATB`, `SSAATTBB`, `SSA`,
    /// `SSAA`, `TTBB`, `SAB`, …), where a letter written once is one section
    /// and a letter written n times is sections 1…n; or a comma-separated
    /// list of sections (`S1,S2,A,T,B`).
    pub fn parse(text: &str) -> Result<Layout, LayoutError> {
        let trimmed = text.trim();
        let sections: Vec<Section> = if trimmed.contains(',') {
            trimmed
                .split(',')
                .map(Section::parse)
                .collect::<Result<_, _>>()?
        } else {
            let letters: Vec<Voice> = trimmed
                .chars()
                .map(Voice::from_letter)
                .collect::<Option<_>>()
                .ok_or_else(|| LayoutError::BadLayout(trimmed.to_string()))?;
            let mut sections = Vec::new();
            for (index, &voice) in letters.iter().enumerate() {
                let total = letters.iter().filter(|&&other| other == voice).count();
                let before = letters
                    .get(..index)
                    .unwrap_or(&[])
                    .iter()
                    .filter(|&&other| other == voice)
                    .count();
                let number = (total > 1).then_some(before as u32 + 1);
                sections.push(Section { voice, number });
            }
            sections
        };
        Layout::from_sections(trimmed, sections)
    }

    /// A layout from sections, checked for duplicates.
    pub fn from_sections(name: &str, sections: Vec<Section>) -> Result<Layout, LayoutError> {
        if sections.is_empty() {
            return Err(LayoutError::BadLayout(name.to_string()));
        }
        for (index, section) in sections.iter().enumerate() {
            if sections.get(..index).unwrap_or(&[]).contains(section) {
                return Err(LayoutError::Duplicate {
                    layout: name.to_string(),
                    section: section.to_string(),
                });
            }
        }
        Ok(Layout {
            name: name.to_string(),
            sections,
        })
    }

    /// A layout from the section labels found in a roster (e.g. the current
    /// placement), ordered high to low: S before A before T before B, and
    /// within a voice unnumbered first, then by number.
    pub fn from_labels<'a>(
        labels: impl IntoIterator<Item = &'a str>,
    ) -> Result<Layout, LayoutError> {
        let mut sections: Vec<Section> = labels
            .into_iter()
            .map(Section::parse)
            .collect::<Result<_, _>>()?;
        sections.sort_by_key(|section| (section.voice, section.number));
        sections.dedup();
        let name = sections
            .iter()
            .map(Section::to_string)
            .collect::<Vec<_>>()
            .join(",");
        Layout::from_sections(&name, sections)
    }

    pub fn labels(&self) -> Vec<String> {
        self.sections.iter().map(Section::to_string).collect()
    }

    /// The shortest name that [`Layout::parse`] reads back as exactly these
    /// section labels: the string of voice letters (`SSAATTBB`) when that
    /// gives them, else the comma list (`S1,S2,A,T,B`).
    pub fn name_of(labels: &[String]) -> String {
        let letters: String = labels
            .iter()
            .filter_map(|label| label.chars().next())
            .collect();
        match Layout::parse(&letters) {
            Ok(layout) if letters.len() == labels.len() && layout.labels() == labels => letters,
            _ => labels.join(","),
        }
    }
}

/// What a part was recognised as.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Recognised {
    /// A choir line: a voice and, when numbered ("Soprano II"), its number.
    Line { voice: Voice, number: Option<u32> },
    /// A solo part, an instrument or accompaniment: sung by no section.
    Excluded,
    /// The name says nothing Ambit knows.
    Unknown,
}

/// Folds the accents of the part-name vocabulary (Ténor, Flöte, …).
fn fold_accents(c: char) -> char {
    match c {
        'à' | 'á' | 'â' | 'ä' => 'a',
        'è' | 'é' | 'ê' | 'ë' => 'e',
        'ì' | 'í' | 'î' | 'ï' => 'i',
        'ò' | 'ó' | 'ô' | 'ö' => 'o',
        'ù' | 'ú' | 'û' | 'ü' => 'u',
        'ç' => 'c',
        other => other,
    }
}

/// Part-name words for each voice (English, German, Italian, French, Latin
/// partbook names; common practice). Single letters count only as the first word.
const VOICE_WORDS: [(Voice, &[&str]); 4] = [
    (
        Voice::Soprano,
        &[
            "soprano",
            "sopranos",
            "soprani",
            "sopran",
            "sopr",
            "sop",
            "dessus",
            "superius",
            "cantus",
            "canto",
            "treble",
            "trebles",
            "diskant",
            "discantus",
        ],
    ),
    (
        Voice::Alto,
        &[
            "alto",
            "altos",
            "alti",
            "alt",
            "contralto",
            "contralti",
            "altus",
            "hautecontre",
        ],
    ),
    (
        Voice::Tenor,
        &["tenor", "tenors", "tenore", "tenori", "ten", "taille"],
    ),
    (
        Voice::Bass,
        &[
            "bass",
            "basses",
            "basso",
            "bassi",
            "basse",
            "bassus",
            "baritone",
            "baritones",
            "bariton",
            "baritono",
            "baritoni",
            "bar",
            "bari",
        ],
    ),
];

/// Words marking a part no choir section sings.
const EXCLUDED_WORDS: [&str; 34] = [
    "solo",
    "soloist",
    "piano",
    "pianoforte",
    "pno",
    "pf",
    "organ",
    "orgel",
    "organo",
    "orgue",
    "org",
    "klavier",
    "clavier",
    "keyboard",
    "kbd",
    "harp",
    "harpe",
    "harfe",
    "arpa",
    "guitar",
    "gitarre",
    "violin",
    "violino",
    "violon",
    "viola",
    "cello",
    "violoncello",
    "continuo",
    "accompaniment",
    "accomp",
    "begleitung",
    "flute",
    "strings",
    "percussion",
];

fn number_word(word: &str) -> Option<u32> {
    match word {
        "1" | "i" | "primo" | "prima" | "1st" | "1er" | "1e" | "erster" => Some(1),
        "2" | "ii" | "secondo" | "seconda" | "2nd" | "2e" | "2eme" | "zweiter" => Some(2),
        "3" | "iii" | "terzo" | "3rd" | "3e" => Some(3),
        "4" | "iv" | "4th" | "4e" => Some(4),
        _ => None,
    }
}

/// Recognises a part by its name.
pub fn recognise_part_name(name: &str) -> Recognised {
    let lowered: String = name.to_lowercase().chars().map(fold_accents).collect();
    let joined = lowered
        .replace("haute-contre", "hautecontre")
        .replace("haute contre", "hautecontre");
    // Split at punctuation and between letters and digits ("S1", "Sopr.1").
    let mut words: Vec<String> = Vec::new();
    let mut current = String::new();
    let mut previous_digit: Option<bool> = None;
    for c in joined.chars() {
        if c.is_alphanumeric() {
            let digit = c.is_ascii_digit();
            if previous_digit.is_some_and(|was| was != digit) && !current.is_empty() {
                // "1st", "2nd", "1er" stay together: digits followed by a suffix.
                let ordinal_suffix = !digit && matches!(c, 's' | 'n' | 'r' | 'e' | 't');
                if !(ordinal_suffix && current.chars().all(|c| c.is_ascii_digit())) {
                    words.push(std::mem::take(&mut current));
                }
            }
            current.push(c);
            previous_digit = Some(digit);
        } else {
            if !current.is_empty() {
                words.push(std::mem::take(&mut current));
            }
            previous_digit = None;
        }
    }
    if !current.is_empty() {
        words.push(current);
    }
    if words
        .iter()
        .any(|word| EXCLUDED_WORDS.contains(&word.as_str()))
    {
        return Recognised::Excluded;
    }
    let mut voice = None;
    let mut voice_at = 0;
    for (index, word) in words.iter().enumerate() {
        let single_letter = word.len() == 1;
        if single_letter && index > 0 {
            continue;
        }
        let found = if single_letter {
            word.chars().next().and_then(Voice::from_letter)
        } else {
            VOICE_WORDS
                .iter()
                .find(|(_, list)| list.contains(&word.as_str()))
                .map(|(voice, _)| *voice)
        };
        if found.is_some() {
            voice = found;
            voice_at = index;
            break;
        }
    }
    let Some(voice) = voice else {
        return Recognised::Unknown;
    };
    let number = words
        .iter()
        .skip(voice_at + 1)
        .find_map(|word| number_word(word));
    Recognised::Line { voice, number }
}

/// Overrides what a part is taken to be.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct PartOverride {
    /// Only for the piece with this title (any piece when `None`).
    pub piece: Option<String>,
    /// The part's name or id.
    pub part: String,
    /// The line it is (`T`, `S2`, …), or `None` to exclude it.
    pub line: Option<String>,
}

/// How parts are mapped to sections.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct MappingConfig {
    pub overrides: Vec<PartOverride>,
    /// Do not look for divisi within a part (every part is one line).
    pub ignore_divisi: bool,
}

/// Which line of a part a section sings.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LineRole {
    /// The part as written.
    Whole,
    /// The upper line of a divisi.
    Upper,
    /// The lower line of a divisi.
    Lower,
}

/// One line a section sings: a part as written, or one line of its divisi.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Line {
    /// The name shown to people: the part's name, with "(upper)"/"(lower)" for a divisi line.
    pub label: String,
    /// Index of the source part in `Piece::parts`.
    pub part_index: usize,
    pub role: LineRole,
    /// The sounding notes of this line.
    pub part: Part,
}

/// What one section sings in one piece.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum SectionSings {
    /// One line for everyone in the section.
    Line { line: Line },
    /// A divisi within the section: who sings upper and who lower is chosen
    /// per piece by the placement.
    Divisi { upper: Line, lower: Line },
    /// The section has nothing to sing in this piece.
    Tacet,
}

impl SectionSings {
    /// The lines the section may sing (none when tacet).
    pub fn lines(&self) -> Vec<&Line> {
        match self {
            SectionSings::Line { line } => vec![line],
            SectionSings::Divisi { upper, lower } => vec![upper, lower],
            SectionSings::Tacet => Vec::new(),
        }
    }
}

/// How a piece's parts map onto a layout.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PieceMapping {
    /// The piece's title, or "piece N" when untitled.
    pub piece: String,
    /// One entry per layout section, in layout order.
    pub sections: Vec<(Section, SectionSings)>,
    /// Parts no section sings, with why ("accompaniment", "solo or instrument").
    pub excluded: Vec<(String, String)>,
    /// How the parts were recognised: "by name", "by score order", "override".
    pub notes: Vec<String>,
}

impl PieceMapping {
    pub fn sings(&self, section: &Section) -> Option<&SectionSings> {
        self.sections
            .iter()
            .find(|(candidate, _)| candidate == section)
            .map(|(_, sings)| sings)
    }
}

#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum MappingError {
    #[error("{piece}: no voice parts to map (parts: {parts})")]
    NoVoiceParts { piece: String, parts: String },
    #[error(
        "{piece}: cannot tell which section sings {unknown}; name the parts (Soprano, Alto, Tenor, Bass, …) or give an override"
    )]
    Unrecognised { piece: String, unknown: String },
    #[error(
        "{piece}: {parts} unnamed voice parts cannot be mapped by order to layout {layout} ({sections} sections, {voices} voices); name the parts or give an override"
    )]
    OrderMismatch {
        piece: String,
        parts: usize,
        layout: String,
        sections: usize,
        voices: usize,
    },
    #[error("{piece}: part {part} has no section in layout {layout}")]
    UnmappedPart {
        piece: String,
        part: String,
        layout: String,
    },
    #[error("{piece}: override for part `{part}`: {message}")]
    BadOverride {
        piece: String,
        part: String,
        message: String,
    },
}

/// Maps a piece's parts to the sections of a layout. `index` numbers untitled pieces.
pub fn map_piece(
    piece: &Piece,
    index: usize,
    layout: &Layout,
    config: &MappingConfig,
) -> Result<PieceMapping, MappingError> {
    let title = piece
        .title
        .clone()
        .filter(|title| !title.trim().is_empty())
        .unwrap_or_else(|| format!("piece {}", index + 1));
    let mut excluded = Vec::new();
    let mut notes = Vec::new();
    // (part index, recognised) for the candidate choir parts in score order.
    let mut candidates: Vec<(usize, Recognised)> = Vec::new();
    for (part_index, part) in piece.parts.iter().enumerate() {
        if part.kind != PartKind::Voice {
            excluded.push((part.name.clone(), "accompaniment or percussion".to_string()));
            continue;
        }
        if !part.notes.iter().any(|note| note.duration_seconds > 0.0) {
            excluded.push((part.name.clone(), "no sung notes".to_string()));
            continue;
        }
        let overridden = config.overrides.iter().find(|rule| {
            rule.piece.as_ref().is_none_or(|only| only == &title)
                && (rule.part == part.name || rule.part == part.id)
        });
        let recognised = match overridden {
            Some(rule) => match &rule.line {
                None => Recognised::Excluded,
                Some(line) => {
                    let section =
                        Section::parse(line).map_err(|error| MappingError::BadOverride {
                            piece: title.clone(),
                            part: part.name.clone(),
                            message: error.to_string(),
                        })?;
                    notes.push(format!("{} taken as {section} (override)", part.name));
                    Recognised::Line {
                        voice: section.voice,
                        number: section.number,
                    }
                }
            },
            None => recognise_part_name(&part.name),
        };
        match recognised {
            Recognised::Excluded => {
                excluded.push((part.name.clone(), "solo or instrument".to_string()))
            }
            other => candidates.push((part_index, other)),
        }
    }
    if candidates.is_empty() {
        return Err(MappingError::NoVoiceParts {
            piece: title,
            parts: if piece.parts.is_empty() {
                "none".to_string()
            } else {
                piece
                    .parts
                    .iter()
                    .map(|part| format!("`{}`", part.name))
                    .collect::<Vec<_>>()
                    .join(", ")
            },
        });
    }
    let unknown: Vec<usize> = candidates
        .iter()
        .filter(|(_, recognised)| *recognised == Recognised::Unknown)
        .map(|&(part_index, _)| part_index)
        .collect();
    let part_name = |part_index: usize| {
        piece
            .parts
            .get(part_index)
            .map_or_else(String::new, |part| part.name.clone())
    };
    // (part index, voice, number) of every choir line.
    let lines: Vec<(usize, Voice, Option<u32>)> = if unknown.is_empty() {
        candidates
            .iter()
            .filter_map(|&(part_index, recognised)| match recognised {
                Recognised::Line { voice, number } => Some((part_index, voice, number)),
                _ => None,
            })
            .collect()
    } else if unknown.len() == candidates.len() {
        let by_order =
            by_score_order(&unknown, layout).ok_or_else(|| MappingError::OrderMismatch {
                piece: title.clone(),
                parts: unknown.len(),
                layout: layout.name.clone(),
                sections: layout.sections.len(),
                voices: distinct_voices(layout).len(),
            })?;
        notes.push(format!(
            "parts mapped by score order ({})",
            by_order
                .iter()
                .map(|&(part_index, voice, number)| format!(
                    "{} → {}",
                    part_name(part_index),
                    Section { voice, number }
                ))
                .collect::<Vec<_>>()
                .join(", ")
        ));
        by_order
    } else {
        return Err(MappingError::Unrecognised {
            piece: title,
            unknown: unknown
                .iter()
                .map(|&part_index| format!("part `{}`", part_name(part_index)))
                .collect::<Vec<_>>()
                .join(", "),
        });
    };

    let mut sections: Vec<(Section, SectionSings)> = layout
        .sections
        .iter()
        .map(|&section| (section, SectionSings::Tacet))
        .collect();
    for voice in [Voice::Soprano, Voice::Alto, Voice::Tenor, Voice::Bass] {
        let mut voice_lines: Vec<(usize, Option<u32>)> = lines
            .iter()
            .filter(|(_, line_voice, _)| *line_voice == voice)
            .map(|&(part_index, _, number)| (part_index, number))
            .collect();
        // Numbered parts in number order; otherwise score order is kept.
        if voice_lines.iter().all(|(_, number)| number.is_some()) {
            voice_lines.sort_by_key(|&(_, number)| number);
        }
        let section_slots: Vec<usize> = layout
            .sections
            .iter()
            .enumerate()
            .filter(|(_, section)| section.voice == voice)
            .map(|(slot, _)| slot)
            .collect();
        let voice_part_indices: Vec<usize> = voice_lines.iter().map(|&(index, _)| index).collect();
        let assigned = assign_voice(piece, &voice_part_indices, section_slots.len(), config);
        match assigned {
            Assigned::Sings(per_section) => {
                for (slot, sings) in section_slots.iter().zip(per_section) {
                    if let Some(entry) = sections.get_mut(*slot) {
                        entry.1 = sings;
                    }
                }
            }
            Assigned::Unmapped(part_indices) => {
                let part = part_indices
                    .iter()
                    .map(|&part_index| format!("`{}`", part_name(part_index)))
                    .collect::<Vec<_>>()
                    .join(", ");
                return Err(MappingError::UnmappedPart {
                    piece: title,
                    part: if section_slots.is_empty() {
                        format!("{part} ({voice:?})")
                    } else {
                        format!(
                            "{part} (the piece has {} {voice:?} lines, the layout {} sections)",
                            voice_part_indices.len(),
                            section_slots.len()
                        )
                    },
                    layout: layout.name.clone(),
                });
            }
        }
    }
    Ok(PieceMapping {
        piece: title,
        sections,
        excluded,
        notes,
    })
}

fn distinct_voices(layout: &Layout) -> Vec<Voice> {
    let mut voices: Vec<Voice> = Vec::new();
    for section in &layout.sections {
        if !voices.contains(&section.voice) {
            voices.push(section.voice);
        }
    }
    voices
}

/// Unnamed parts in score order, high to low: one per section when the
/// counts agree, else one per voice of the layout.
fn by_score_order(unknown: &[usize], layout: &Layout) -> Option<Vec<(usize, Voice, Option<u32>)>> {
    if unknown.len() == layout.sections.len() {
        return Some(
            unknown
                .iter()
                .zip(&layout.sections)
                .map(|(&part_index, section)| (part_index, section.voice, section.number))
                .collect(),
        );
    }
    let voices = distinct_voices(layout);
    (unknown.len() == voices.len()).then(|| {
        unknown
            .iter()
            .zip(voices)
            .map(|(&part_index, voice)| (part_index, voice, None))
            .collect()
    })
}

enum Assigned {
    /// What each of the voice's sections sings, in layout order.
    Sings(Vec<SectionSings>),
    /// These parts have no section.
    Unmapped(Vec<usize>),
}

fn whole_line(piece: &Piece, part_index: usize) -> Option<Line> {
    piece.parts.get(part_index).map(|part| Line {
        label: part.name.clone(),
        part_index,
        role: LineRole::Whole,
        part: part.clone(),
    })
}

fn divisi_lines(piece: &Piece, part_index: usize, config: &MappingConfig) -> Option<(Line, Line)> {
    if config.ignore_divisi {
        return None;
    }
    let part = piece.parts.get(part_index)?;
    let [upper, lower] = split_divisi(part)?;
    let line = |role: LineRole, part: Part| Line {
        label: part.name.clone(),
        part_index,
        role,
        part,
    };
    Some((line(LineRole::Upper, upper), line(LineRole::Lower, lower)))
}

/// Distributes one voice's lines over its sections.
fn assign_voice(
    piece: &Piece,
    part_indices: &[usize],
    section_count: usize,
    config: &MappingConfig,
) -> Assigned {
    let lines = part_indices.len();
    if lines == 0 {
        return Assigned::Sings(vec![SectionSings::Tacet; section_count]);
    }
    if section_count == 0 {
        return Assigned::Unmapped(part_indices.to_vec());
    }
    let mut sings = Vec::with_capacity(section_count);
    if lines <= section_count {
        // One part for several sections: when it divides and there are two
        // or more sections, the higher sections take the upper line.
        if let [only] = part_indices
            && section_count >= 2
            && let Some((upper, lower)) = divisi_lines(piece, *only, config)
        {
            for slot in 0..section_count {
                let line = if slot * 2 < section_count {
                    upper.clone()
                } else {
                    lower.clone()
                };
                sings.push(SectionSings::Line { line });
            }
            return Assigned::Sings(sings);
        }
        for slot in 0..section_count {
            // Section `slot` sings line ⌊slot·lines/sections⌋: S1,S2 of an SSA
            // piece for a layout S1,S2; both A1 and A2 on an SATB alto part.
            let which = slot * lines / section_count;
            let Some(&part_index) = part_indices.get(which) else {
                return Assigned::Unmapped(part_indices.to_vec());
            };
            let shared = (0..section_count)
                .filter(|other| other * lines / section_count == which)
                .count();
            let divided = if shared == 1 {
                divisi_lines(piece, part_index, config)
            } else {
                None
            };
            match (divided, whole_line(piece, part_index)) {
                (Some((upper, lower)), _) => sings.push(SectionSings::Divisi { upper, lower }),
                (None, Some(line)) => sings.push(SectionSings::Line { line }),
                (None, None) => return Assigned::Unmapped(vec![part_index]),
            }
        }
        return Assigned::Sings(sings);
    }
    if lines == 2 * section_count {
        // Each section sings a divisi of two written parts.
        for pair in part_indices.chunks(2) {
            let (Some(upper), Some(lower)) = (
                pair.first().and_then(|&index| whole_line(piece, index)),
                pair.get(1).and_then(|&index| whole_line(piece, index)),
            ) else {
                return Assigned::Unmapped(pair.to_vec());
            };
            sings.push(SectionSings::Divisi {
                upper: Line {
                    role: LineRole::Upper,
                    ..upper
                },
                lower: Line {
                    role: LineRole::Lower,
                    ..lower
                },
            });
        }
        return Assigned::Sings(sings);
    }
    Assigned::Unmapped(part_indices.get(section_count..).unwrap_or(&[]).to_vec())
}
