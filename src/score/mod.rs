//! Score reading: MIDI (SMF) and MusicXML (`.musicxml`, `.xml`, `.mxl`) files
//! become one [`Piece`] of *sounding* notes on a time line, in seconds and in
//! quarter notes.
//!
//! Every reader produces the same `Piece`; nothing downstream knows which
//! format a note came from. Adding a format means adding a reader here.
//!
//! Architecture invariant: `score` knows nothing about singers, sections or
//! fit. It turns bytes into notes and nothing else.

pub mod midi;
pub mod musicxml;

use std::fmt;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

/// Largest score file Ambit reads, compressed or not. The longest choral
/// works in MusicXML are a few MB; anything far beyond is hostile or a mistake.
pub const MAX_SCORE_BYTES: u64 = 64 * 1024 * 1024;

/// A piece of music as sounding notes, parts in score order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Piece {
    pub title: Option<String>,
    pub parts: Vec<Part>,
    /// Measures in performance order (after repeats are unrolled), with the
    /// printed number and where each starts. Hot spots and excerpts are
    /// labelled from this.
    pub measures: Vec<Measure>,
    /// The first key signature, when the format carries one.
    pub key: Option<KeySignature>,
    /// Things the reader noticed but could work around (a hanging MIDI note,
    /// a missing tempo, a D.C. that was not unrolled). Each names its place.
    pub warnings: Vec<String>,
}

/// One part (a MusicXML `<part>` or a MIDI track/channel).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Part {
    pub name: String,
    /// The format's own identifier (MusicXML part id, or "track N").
    pub id: String,
    pub kind: PartKind,
    /// Sounding notes sorted by onset, then pitch.
    pub notes: Vec<Note>,
}

/// Whether a part is sung.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PartKind {
    Voice,
    /// Keyboard or other accompaniment (e.g. a two-staff piano part).
    Accompaniment,
    /// Unpitched percussion (MIDI channel 10, or a percussion clef).
    Percussion,
}

/// One sounding note.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Note {
    pub onset_seconds: f64,
    pub duration_seconds: f64,
    pub onset_quarters: f64,
    pub duration_quarters: f64,
    /// Sounding pitch as a MIDI number (transposing parts already applied).
    /// Fractional only for microtonal alterations.
    pub midi: f64,
    /// Index into [`Piece::measures`] of the measure the note starts in.
    pub measure_index: usize,
    /// The measure number as printed (MusicXML `number` attribute, or the
    /// bar count from MIDI time signatures). Pickup bars keep theirs.
    pub measure: String,
    /// Voice within the part (MusicXML `<voice>`, 1 when absent; MIDI channel + 1).
    pub voice: u32,
    /// Staff within the part, 1-based.
    pub staff: u32,
    /// The dynamic mark in force (pp … ff), when the score has one.
    pub dynamic: Option<String>,
    /// MIDI note-on velocity, kept as a dynamic proxy.
    pub velocity: Option<u8>,
    /// The note continues a tie from the previous note of the same pitch.
    pub tied_from_previous: bool,
    /// Grace notes have zero notated duration and are kept for completeness.
    pub grace: bool,
}

/// A measure in performance order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Measure {
    /// Printed measure number (may be "0" for a pickup, or "12a").
    pub number: String,
    pub onset_seconds: f64,
    pub onset_quarters: f64,
    pub duration_quarters: f64,
}

/// A key signature: `fifths` sharps (positive) or flats (negative).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct KeySignature {
    pub fifths: i32,
    pub mode: Mode,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Mode {
    Major,
    Minor,
    Other,
}

/// How to read a score.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct ReadOptions {
    /// Unroll repeats and first/second endings in performance order.
    pub unroll_repeats: bool,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            unroll_repeats: true,
        }
    }
}

/// Where in a file a problem sits.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Location {
    ByteOffset(u64),
    LineColumn { line: u32, column: u32 },
    Measure { part: String, measure: String },
    Track(usize),
    ZipEntry(String),
    Whole,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Location::ByteOffset(offset) => write!(f, "byte {offset}"),
            Location::LineColumn { line, column } => write!(f, "line {line}, column {column}"),
            Location::Measure { part, measure } => write!(f, "part {part}, measure {measure}"),
            Location::Track(track) => write!(f, "track {track}"),
            Location::ZipEntry(entry) => write!(f, "archive entry {entry}"),
            Location::Whole => write!(f, "whole file"),
        }
    }
}

/// Everything that can go wrong reading a score. Every variant names the file.
#[derive(Debug, Error)]
pub enum ScoreError {
    #[error("{}: cannot read: {source}", file.display())]
    Io {
        file: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{}: {message} ({location})", file.display())]
    Malformed {
        file: PathBuf,
        location: Location,
        message: String,
    },
    #[error("{}: not supported: {message} ({location})", file.display())]
    Unsupported {
        file: PathBuf,
        location: Location,
        message: String,
    },
    #[error("{}: too large: {message}", file.display())]
    TooLarge { file: PathBuf, message: String },
    #[error("{}: not a score Ambit can read: {message}", file.display())]
    UnknownFormat { file: PathBuf, message: String },
}

impl ScoreError {
    /// The file the error is about.
    pub fn file(&self) -> &Path {
        match self {
            ScoreError::Io { file, .. }
            | ScoreError::Malformed { file, .. }
            | ScoreError::Unsupported { file, .. }
            | ScoreError::TooLarge { file, .. }
            | ScoreError::UnknownFormat { file, .. } => file,
        }
    }
}

/// The formats a score can come in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Midi,
    MusicXml,
    CompressedMusicXml,
}

/// Recognises a score by its first bytes, not its extension.
pub fn sniff_format(bytes: &[u8]) -> Option<Format> {
    let body = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    if body.starts_with(b"MThd") || body.starts_with(b"RIFF") && body.get(8..12) == Some(b"RMID") {
        Some(Format::Midi)
    } else if body.starts_with(b"PK\x03\x04") {
        Some(Format::CompressedMusicXml)
    } else if body
        .iter()
        .find(|b| !b.is_ascii_whitespace())
        .is_some_and(|&b| b == b'<')
        || body.starts_with(b"\xFF\xFE")
        || body.starts_with(b"\xFE\xFF")
    {
        Some(Format::MusicXml)
    } else {
        None
    }
}

/// Reads a score file of any supported format.
pub fn read_score(path: &Path, options: &ReadOptions) -> Result<Piece, ScoreError> {
    read_score_bytes(path, &read_limited(path)?, options)
}

/// Bars `first_bar`…`last_bar` (printed numbers) of the part named or
/// identified `part` in a MusicXML or `.mxl` file, as a MusicXML document of
/// their own (for a notation renderer).
pub fn musicxml_excerpt(
    path: &Path,
    part: &str,
    first_bar: &str,
    last_bar: &str,
) -> Result<String, ScoreError> {
    musicxml::excerpt_bytes(path, &read_limited(path)?, part, first_bar, last_bar)
}

/// A score file's bytes, through the byte budget of [`crate::input`]
/// (at most [`MAX_SCORE_BYTES`], whatever length the file reports).
fn read_limited(path: &Path) -> Result<Vec<u8>, ScoreError> {
    crate::input::read_bounded(path, MAX_SCORE_BYTES, "scores").map_err(|error| match error {
        crate::input::InputError::Io { file, source } => ScoreError::Io { file, source },
        crate::input::InputError::TooLarge { file, budget, what } => ScoreError::TooLarge {
            file,
            message: crate::input::too_large_message(budget, what)
                .trim_start_matches("too large: ")
                .to_string(),
        },
    })
}

/// Reads a score already in memory; `path` is used for messages only.
pub fn read_score_bytes(
    path: &Path,
    bytes: &[u8],
    options: &ReadOptions,
) -> Result<Piece, ScoreError> {
    if bytes.is_empty() {
        return Err(ScoreError::UnknownFormat {
            file: path.to_path_buf(),
            message: "the file is empty".into(),
        });
    }
    match sniff_format(bytes) {
        Some(Format::Midi) => midi::read_midi(path, bytes),
        Some(Format::MusicXml) => musicxml::read_musicxml(path, bytes, options),
        Some(Format::CompressedMusicXml) => musicxml::read_mxl(path, bytes, options),
        None => Err(ScoreError::UnknownFormat {
            file: path.to_path_buf(),
            message: "expected a standard MIDI file (MThd) or MusicXML (.musicxml, .xml, .mxl)"
                .into(),
        }),
    }
}

impl Piece {
    /// Parts that are sung (not accompaniment or percussion).
    pub fn voice_parts(&self) -> impl Iterator<Item = &Part> {
        self.parts
            .iter()
            .filter(|part| part.kind == PartKind::Voice)
    }

    /// The printed bars of a span of measure indices (performance order),
    /// as runs: "12–19", "7", or "15–16, 1–4" when the span crosses a repeat.
    pub fn bar_range(&self, first_index: usize, last_index: usize) -> String {
        let number = |index: usize| {
            self.measures
                .get(index)
                .map(|measure| measure.number.clone())
                .unwrap_or_else(|| (index + 1).to_string())
        };
        let follows =
            |previous: &str, next: &str| match (previous.parse::<i64>(), next.parse::<i64>()) {
                (Ok(a), Ok(b)) => b == a + 1,
                _ => false,
            };
        let mut runs: Vec<(String, String)> = Vec::new();
        for index in first_index..=last_index.max(first_index) {
            let printed = number(index);
            match runs.last_mut() {
                Some((_, end)) if follows(end, &printed) || *end == printed => *end = printed,
                _ => runs.push((printed.clone(), printed)),
            }
        }
        runs.iter()
            .map(|(start, end)| {
                if start == end {
                    start.clone()
                } else {
                    format!("{start}–{end}")
                }
            })
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The printed bar numbers of a span of measure indices.
    pub fn printed_bars(&self, first_index: usize, last_index: usize) -> Vec<String> {
        (first_index..=last_index.max(first_index))
            .map(|index| {
                self.measures
                    .get(index)
                    .map(|measure| measure.number.clone())
                    .unwrap_or_else(|| (index + 1).to_string())
            })
            .collect()
    }

    /// Index of the measure sounding at `seconds` (the last one starting at or before it).
    pub fn measure_at_seconds(&self, seconds: f64) -> usize {
        self.measures
            .partition_point(|measure| measure.onset_seconds <= seconds)
            .saturating_sub(1)
    }
}

impl Note {
    pub fn end_seconds(&self) -> f64 {
        self.onset_seconds + self.duration_seconds
    }

    pub fn end_quarters(&self) -> f64 {
        self.onset_quarters + self.duration_quarters
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sniffs_formats_by_content() {
        assert_eq!(sniff_format(b"MThd\0\0\0\x06"), Some(Format::Midi));
        assert_eq!(
            sniff_format(b"PK\x03\x04rest"),
            Some(Format::CompressedMusicXml)
        );
        assert_eq!(sniff_format(b"\xEF\xBB\xBF<?xml"), Some(Format::MusicXml));
        assert_eq!(
            sniff_format(b"  \n<score-partwise>"),
            Some(Format::MusicXml)
        );
        assert_eq!(sniff_format(b"%PDF-1.4"), None);
    }

    fn piece_with_bars(numbers: &[&str]) -> Piece {
        Piece {
            title: None,
            parts: Vec::new(),
            measures: numbers
                .iter()
                .enumerate()
                .map(|(index, number)| Measure {
                    number: number.to_string(),
                    onset_seconds: index as f64 * 2.0,
                    onset_quarters: index as f64 * 4.0,
                    duration_quarters: 4.0,
                })
                .collect(),
            key: None,
            warnings: Vec::new(),
        }
    }

    #[test]
    fn bar_ranges_follow_the_printed_numbers_across_repeats() {
        // Bars 1–4 repeated, then 5–6: performance order 1 2 3 4 1 2 3 4 5 6.
        let piece = piece_with_bars(&["1", "2", "3", "4", "1", "2", "3", "4", "5", "6"]);
        assert_eq!(piece.bar_range(0, 3), "1–4");
        assert_eq!(piece.bar_range(2, 5), "3–4, 1–2");
        assert_eq!(piece.bar_range(8, 8), "5");
        // A pickup numbered 0 runs into bar 1.
        let pickup = piece_with_bars(&["0", "1", "2"]);
        assert_eq!(pickup.bar_range(0, 2), "0–2");
        assert_eq!(pickup.measure_at_seconds(2.5), 1);
    }

    #[test]
    fn empty_and_unknown_files_name_the_file() {
        let path = Path::new("choir/empty.xml");
        let error = read_score_bytes(path, b"", &ReadOptions::default()).unwrap_err();
        assert!(error.to_string().contains("choir/empty.xml"), "{error}");
        assert!(error.to_string().contains("empty"), "{error}");
        let error = read_score_bytes(path, b"%PDF-1.4", &ReadOptions::default()).unwrap_err();
        assert!(matches!(error, ScoreError::UnknownFormat { .. }));
    }
}
