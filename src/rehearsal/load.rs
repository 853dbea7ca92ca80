//! The vocal load of a passage, per line, estimated from notation: how long
//! the line sings, how long at or above a high reference, and its longest
//! stretch without a rest. A note counts as sung for its written length
//! (Titze, Švec & Popolo 2003 define the time dose over phonation; from a
//! score the written length is the only estimate of it).

use serde::{Deserialize, Serialize};

use crate::fit::longest_stretch;
use crate::score::{Note, Part, Piece};
use crate::sections::{Section, Voice};
use crate::tessitura::union_length;
use crate::voice::types::VoiceType;

/// Two sung spans closer than this are one stretch (ties, legato).
const TOUCHING_SECONDS: f64 = 1e-6;

/// Printed bars `first`–`last`, both included.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct BarRange {
    pub first: i64,
    pub last: i64,
}

impl std::fmt::Display for BarRange {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.first == self.last {
            write!(f, "{}", self.first)
        } else {
            write!(f, "{}–{}", self.first, self.last)
        }
    }
}

/// The measures (performance order) a rehearsal item sings, and how long one
/// run-through takes at the written tempo.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Passage {
    /// `true` for each measure index (into `Piece::measures`) in the passage.
    pub in_passage: Vec<bool>,
    pub seconds: f64,
    /// The printed bars as shown ("34–52"), `None` for the whole piece.
    pub bars: Option<String>,
}

/// The leading number of a printed bar ("12a" → 12); `None` when there is none.
fn bar_number(printed: &str) -> Option<i64> {
    let digits: String = printed
        .trim()
        .chars()
        .take_while(|c| c.is_ascii_digit())
        .collect();
    digits.parse().ok()
}

/// The end of the piece: its last note's end or the last measure's start.
fn piece_end_seconds(piece: &Piece) -> f64 {
    let last_note = piece
        .parts
        .iter()
        .flat_map(|part| part.notes.iter())
        .map(Note::end_seconds)
        .filter(|end| end.is_finite())
        .fold(0.0, f64::max);
    let last_measure = piece.measures.last().map_or(0.0, |m| m.onset_seconds);
    last_note.max(last_measure)
}

/// Selects a passage: every measure in performance order whose printed
/// number lies in `bars` (so a repeated passage is sung as performed,
/// repeats included), or the whole piece. `Err` says what is wrong in words.
pub fn select_passage(piece: &Piece, bars: Option<BarRange>) -> Result<Passage, String> {
    let end = piece_end_seconds(piece);
    let Some(range) = bars else {
        return Ok(Passage {
            in_passage: vec![true; piece.measures.len()],
            seconds: end,
            bars: None,
        });
    };
    if range.first > range.last {
        return Err(format!(
            "bars {}-{}: the first bar comes after the last",
            range.first, range.last
        ));
    }
    if piece.measures.is_empty() {
        return Err("the score has no bars to select from".to_string());
    }
    let mut in_passage = vec![false; piece.measures.len()];
    let mut seconds = 0.0;
    for (index, measure) in piece.measures.iter().enumerate() {
        let inside = bar_number(&measure.number)
            .is_some_and(|number| (range.first..=range.last).contains(&number));
        if inside {
            in_passage[index] = true;
            let next = piece
                .measures
                .get(index + 1)
                .map_or(end, |next| next.onset_seconds);
            seconds += (next - measure.onset_seconds).max(0.0);
        }
    }
    if !in_passage.iter().any(|&inside| inside) {
        let numbers: Vec<i64> = piece
            .measures
            .iter()
            .filter_map(|m| bar_number(&m.number))
            .collect();
        let span = match (numbers.iter().min(), numbers.iter().max()) {
            (Some(low), Some(high)) => format!("the score's bars run {low}–{high}"),
            _ => "the score's bars carry no numbers".to_string(),
        };
        return Err(format!("no bar {range} in the score ({span})"));
    }
    Ok(Passage {
        in_passage,
        seconds,
        bars: Some(range.to_string()),
    })
}

/// One run-through of a line over a passage, as notated.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct LineLoad {
    /// Time the line sings (chord tones overlapping counted once).
    pub sung_seconds: f64,
    /// Time the line sings at or above the high reference.
    pub high_seconds: f64,
    /// The longest stretch without a rest (tied and legato notes joined).
    pub longest_unbroken_seconds: f64,
}

impl LineLoad {
    /// The heavier of two lines, figure by figure (a divisi: half the section
    /// sings each line, and the heavier one is what a singer may get).
    pub fn heavier(self, other: LineLoad) -> LineLoad {
        LineLoad {
            sung_seconds: self.sung_seconds.max(other.sung_seconds),
            high_seconds: self.high_seconds.max(other.high_seconds),
            longest_unbroken_seconds: self
                .longest_unbroken_seconds
                .max(other.longest_unbroken_seconds),
        }
    }
}

/// The sounding notes of `line` that start in the passage.
pub fn passage_notes<'a>(line: &'a Part, passage: &'a Passage) -> impl Iterator<Item = &'a Note> {
    line.notes.iter().filter(move |note| {
        !note.grace
            && note.duration_seconds > 0.0
            && note.midi.is_finite()
            && passage
                .in_passage
                .get(note.measure_index)
                .copied()
                // A score without measures is one passage: the whole piece.
                .unwrap_or(passage.bars.is_none())
    })
}

/// The load of one run-through of `line` over `passage`, with `high_from_midi`
/// as the high reference (a note at or above it is high).
pub fn line_load(line: &Part, passage: &Passage, high_from_midi: f64) -> LineLoad {
    let notes: Vec<&Note> = passage_notes(line, passage).collect();
    let spans = |high_only: bool| {
        notes
            .iter()
            .filter(move |note| !high_only || note.midi >= high_from_midi - 1e-6)
            .map(|note| (note.onset_seconds, note.end_seconds()))
    };
    LineLoad {
        sung_seconds: union_length(spans(false)),
        high_seconds: union_length(spans(true)),
        // Notes are in onset order (`Part::notes`); a gap of any length is a rest.
        longest_unbroken_seconds: longest_stretch(notes.iter().copied(), TOUCHING_SECONDS),
    }
}

/// A section's high reference: the secondo passaggio of the voice type that
/// usually sings it, from the pedagogy table (`voice::types::TYPICAL`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HighReference {
    pub midi: f64,
    /// Where the figure comes from ("secondo passaggio of a tenor (Miller)", …).
    pub source: String,
}

/// The voice type whose secondo passaggio is a section's default high
/// reference. Which type sings which section is common practice: first
/// sopranos are sopranos, second sopranos and first altos mezzo-sopranos,
/// altos contraltos, tenors tenors, first basses (and an undivided bass
/// section, mostly baritones in amateur choirs, from memory) baritones,
/// second basses basses.
pub fn reference_voice_type(section: &Section) -> VoiceType {
    match (section.voice, section.number) {
        (Voice::Soprano, Some(2)) => VoiceType::MezzoSoprano,
        (Voice::Soprano, _) => VoiceType::Soprano,
        (Voice::Alto, Some(1)) => VoiceType::MezzoSoprano,
        (Voice::Alto, _) => VoiceType::Contralto,
        (Voice::Tenor, _) => VoiceType::Tenor,
        (Voice::Bass, Some(2)) => VoiceType::Bass,
        (Voice::Bass, _) => VoiceType::Baritone,
    }
}

/// The default high reference of a section.
pub fn section_high_reference(section: &Section) -> HighReference {
    let kind = reference_voice_type(section);
    let typical = kind.typical();
    HighReference {
        midi: typical.secondo_midi,
        source: format!(
            "secondo passaggio of a typical {} ({})",
            kind.label(),
            typical.passaggi_source
        ),
    }
}
