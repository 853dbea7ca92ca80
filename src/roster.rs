//! Roster: the singers of a choir or studio with their typed-in or measured
//! ranges, comfort zones and passaggi.
//!
//! A roster is read from a CSV with a header row (`name, range_low,
//! range_high, comfort_low, comfort_high`, optionally `primo, secondo,
//! voice_type, section, notes`) or from the JSON Ambit writes, and written back
//! to either. Pitches are note names or MIDI numbers, parsed by
//! [`crate::pitch::parse_pitch`]; a decimal MIDI number (`63.5`) is kept as
//! such so measured profiles survive a round trip.
//!
//! Architecture invariant: the roster knows nothing of scores or fit. Every
//! bad row is an `Err` naming the file, the line and the column; nothing here
//! panics on input.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::pitch;

/// Largest roster file read. A choir of thousands is a few hundred KB.
pub const MAX_ROSTER_BYTES: u64 = 16 * 1024 * 1024;

/// Most singers in one roster.
pub const MAX_SINGERS: usize = 100_000;

/// One singer as the engine sees them. All pitches are MIDI numbers.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Singer {
    pub name: String,
    pub range_low_midi: f64,
    pub range_high_midi: f64,
    pub comfort_low_midi: f64,
    pub comfort_high_midi: f64,
    #[serde(default)]
    pub primo_midi: Option<f64>,
    #[serde(default)]
    pub secondo_midi: Option<f64>,
    #[serde(default)]
    pub voice_type: Option<String>,
    /// The section the singer sits in now (S1 … B2), if known.
    #[serde(default)]
    pub section: Option<String>,
    #[serde(default)]
    pub notes: Option<String>,
}

/// The singers of a choir or studio, in the order given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Roster {
    pub singers: Vec<Singer>,
}

/// Where in a roster file a problem sits.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RosterPlace {
    /// A CSV cell: 1-based line, column name and 1-based column number.
    Cell {
        line: u64,
        column: String,
        column_number: usize,
    },
    /// A CSV row as a whole.
    Row {
        line: u64,
    },
    /// A JSON singer, by index and name.
    Singer {
        index: usize,
        name: String,
    },
    Whole,
}

impl std::fmt::Display for RosterPlace {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            RosterPlace::Cell {
                line,
                column,
                column_number,
            } => write!(f, "line {line}, column {column_number} `{column}`"),
            RosterPlace::Row { line } => write!(f, "line {line}"),
            RosterPlace::Singer { index, name } => {
                write!(f, "singer {} `{name}`", index + 1)
            }
            RosterPlace::Whole => write!(f, "whole file"),
        }
    }
}

/// Everything that can go wrong reading a roster. Every variant names the file.
#[derive(Debug, Error)]
pub enum RosterError {
    #[error("{}: cannot read: {source}", file.display())]
    Io {
        file: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{}: {}", file.display(), crate::input::too_large_message(MAX_ROSTER_BYTES, "rosters"))]
    TooLarge { file: PathBuf },
    #[error("{}: {place}: {message}", file.display())]
    Invalid {
        file: PathBuf,
        place: RosterPlace,
        message: String,
    },
    #[error("{}: the roster has no singers", file.display())]
    Empty { file: PathBuf },
}

impl RosterError {
    fn at(file: &Path, place: RosterPlace, message: impl Into<String>) -> RosterError {
        RosterError::Invalid {
            file: file.to_path_buf(),
            place,
            message: message.into(),
        }
    }

    /// The file the error is about.
    pub fn file(&self) -> &Path {
        match self {
            RosterError::Io { file, .. }
            | RosterError::TooLarge { file, .. }
            | RosterError::Invalid { file, .. }
            | RosterError::Empty { file } => file,
        }
    }
}

const REQUIRED_COLUMNS: [&str; 5] = [
    "name",
    "range_low",
    "range_high",
    "comfort_low",
    "comfort_high",
];
const OPTIONAL_COLUMNS: [&str; 5] = ["primo", "secondo", "voice_type", "section", "notes"];

/// Reads a roster file, CSV or JSON (recognised by its first character).
pub fn read_roster(path: &Path) -> Result<Roster, RosterError> {
    let data =
        crate::input::read_bounded(path, MAX_ROSTER_BYTES, "rosters").map_err(
            |error| match error {
                crate::input::InputError::Io { file, source } => RosterError::Io { file, source },
                crate::input::InputError::TooLarge { file, .. } => RosterError::TooLarge { file },
            },
        )?;
    parse_roster(path, &data)
}

/// Parses a roster already in memory; `path` is used for messages only.
pub fn parse_roster(path: &Path, data: &[u8]) -> Result<Roster, RosterError> {
    if data.starts_with(b"\xFF\xFE") || data.starts_with(b"\xFE\xFF") {
        return Err(RosterError::at(
            path,
            RosterPlace::Whole,
            "the file is UTF-16; save the roster as UTF-8 CSV",
        ));
    }
    let body = data.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(data);
    match body.iter().find(|byte| !byte.is_ascii_whitespace()) {
        None => Err(RosterError::Empty {
            file: path.to_path_buf(),
        }),
        Some(b'{') => parse_roster_json(path, body),
        Some(_) => parse_roster_csv(path, body),
    }
}

/// Parses the JSON Ambit writes (`{"singers":[…]}`) and checks every singer.
pub fn parse_roster_json(path: &Path, data: &[u8]) -> Result<Roster, RosterError> {
    let roster: Roster = serde_json::from_slice(data).map_err(|error| {
        RosterError::at(
            path,
            RosterPlace::Cell {
                line: error.line() as u64,
                column: "json".into(),
                column_number: error.column(),
            },
            format!("not a roster in Ambit's JSON: {error}"),
        )
    })?;
    if roster.singers.is_empty() {
        return Err(RosterError::Empty {
            file: path.to_path_buf(),
        });
    }
    if roster.singers.len() > MAX_SINGERS {
        return Err(RosterError::at(
            path,
            RosterPlace::Whole,
            format!("more than {MAX_SINGERS} singers"),
        ));
    }
    let mut seen: HashMap<String, usize> = HashMap::new();
    for (index, singer) in roster.singers.iter().enumerate() {
        let place = || RosterPlace::Singer {
            index,
            name: singer.name.clone(),
        };
        crate::text::check_name("the name", &singer.name)
            .map_err(|message| RosterError::at(path, place(), message))?;
        for (label, value) in [
            ("range_low_midi", Some(singer.range_low_midi)),
            ("range_high_midi", Some(singer.range_high_midi)),
            ("comfort_low_midi", Some(singer.comfort_low_midi)),
            ("comfort_high_midi", Some(singer.comfort_high_midi)),
            ("primo_midi", singer.primo_midi),
            ("secondo_midi", singer.secondo_midi),
        ] {
            if let Some(value) = value
                && !(value.is_finite() && (0.0..=127.0).contains(&value))
            {
                return Err(RosterError::at(
                    path,
                    place(),
                    format!("{label} = {value} is not a MIDI pitch 0–127"),
                ));
            }
        }
        check_singer(singer).map_err(|message| RosterError::at(path, place(), message))?;
        if let Some(first) = seen.insert(name_key(&singer.name), index) {
            return Err(RosterError::at(
                path,
                place(),
                format!(
                    "duplicate name `{}` (also singer {})",
                    singer.name,
                    first + 1
                ),
            ));
        }
    }
    Ok(roster)
}

/// Parses a roster CSV with a header row.
pub fn parse_roster_csv(path: &Path, data: &[u8]) -> Result<Roster, RosterError> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .trim(csv::Trim::All)
        // No comment lines: a name may start with `#`, and a row is never
        // dropped without a word.
        .from_reader(data);
    let csv_error = |error: csv::Error| {
        let line = error
            .position()
            .map(|position| position.line())
            .unwrap_or(1);
        RosterError::at(
            path,
            RosterPlace::Row { line },
            format!("not readable as CSV: {error}"),
        )
    };
    let header = reader.byte_headers().map_err(csv_error)?.clone();
    let mut columns: HashMap<String, usize> = HashMap::new();
    for (index, cell) in header.iter().enumerate() {
        let name = std::str::from_utf8(cell).map_err(|_| {
            RosterError::at(
                path,
                RosterPlace::Row { line: 1 },
                format!(
                    "header cell {} is not valid UTF-8; save the roster as UTF-8",
                    index + 1
                ),
            )
        })?;
        let key = name.trim().to_ascii_lowercase().replace([' ', '-'], "_");
        if !key.is_empty() && columns.insert(key.clone(), index).is_some() {
            return Err(RosterError::at(
                path,
                RosterPlace::Row { line: 1 },
                format!("the header names column `{key}` twice"),
            ));
        }
    }
    if columns.is_empty() {
        return Err(RosterError::Empty {
            file: path.to_path_buf(),
        });
    }
    let missing: Vec<&str> = REQUIRED_COLUMNS
        .iter()
        .copied()
        .filter(|column| !columns.contains_key(*column))
        .collect();
    if !missing.is_empty() {
        return Err(RosterError::at(
            path,
            RosterPlace::Row { line: 1 },
            format!(
                "missing required column{} {}; the header must name {} (optional: {})",
                if missing.len() > 1 { "s" } else { "" },
                missing.join(", "),
                REQUIRED_COLUMNS.join(", "),
                OPTIONAL_COLUMNS.join(", ")
            ),
        ));
    }
    let header_width = header.len();
    let mut singers = Vec::new();
    let mut seen: HashMap<String, u64> = HashMap::new();
    for record in reader.byte_records() {
        let record = record.map_err(csv_error)?;
        let line = record
            .position()
            .map(|position| position.line())
            .unwrap_or(0);
        if record.iter().all(|cell| cell.is_empty()) {
            continue;
        }
        if record.len() > header_width {
            return Err(RosterError::at(
                path,
                RosterPlace::Row { line },
                format!(
                    "{} cells but the header has {header_width} columns",
                    record.len()
                ),
            ));
        }
        if singers.len() >= MAX_SINGERS {
            return Err(RosterError::at(
                path,
                RosterPlace::Row { line },
                format!("more than {MAX_SINGERS} singers"),
            ));
        }
        let row = Row {
            path,
            line,
            record: &record,
            columns: &columns,
        };
        let name = row.text("name")?.unwrap_or_default();
        crate::text::check_name("the name", &name).map_err(|message| row.error("name", message))?;
        let singer = Singer {
            range_low_midi: row.required_pitch("range_low")?,
            range_high_midi: row.required_pitch("range_high")?,
            comfort_low_midi: row.required_pitch("comfort_low")?,
            comfort_high_midi: row.required_pitch("comfort_high")?,
            primo_midi: row.pitch("primo")?,
            secondo_midi: row.pitch("secondo")?,
            voice_type: row.text("voice_type")?,
            section: row.text("section")?,
            notes: row.text("notes")?,
            name,
        };
        check_singer(&singer).map_err(|message| {
            let column = blame_column(&singer);
            row.error(column, message)
        })?;
        if let Some(first_line) = seen.insert(name_key(&singer.name), line) {
            return Err(row.error(
                "name",
                format!(
                    "duplicate name `{}` (first on line {first_line})",
                    singer.name
                ),
            ));
        }
        singers.push(singer);
    }
    if singers.is_empty() {
        return Err(RosterError::Empty {
            file: path.to_path_buf(),
        });
    }
    Ok(Roster { singers })
}

/// Names are compared without case or surrounding space (in rosters and in
/// the library alike).
pub(crate) fn name_key(name: &str) -> String {
    name.trim().to_lowercase()
}

/// The consistency rules every singer obeys, whatever the source.
fn check_singer(singer: &Singer) -> Result<(), String> {
    let name = pitch::name_with_cents;
    if singer.range_low_midi > singer.range_high_midi {
        return Err(format!(
            "range_low {} is above range_high {}",
            name(singer.range_low_midi),
            name(singer.range_high_midi)
        ));
    }
    if singer.comfort_low_midi > singer.comfort_high_midi {
        return Err(format!(
            "comfort_low {} is above comfort_high {}",
            name(singer.comfort_low_midi),
            name(singer.comfort_high_midi)
        ));
    }
    if singer.comfort_low_midi < singer.range_low_midi
        || singer.comfort_high_midi > singer.range_high_midi
    {
        return Err(format!(
            "the comfort zone {}–{} lies outside the range {}–{}",
            name(singer.comfort_low_midi),
            name(singer.comfort_high_midi),
            name(singer.range_low_midi),
            name(singer.range_high_midi)
        ));
    }
    if let (Some(primo), Some(secondo)) = (singer.primo_midi, singer.secondo_midi)
        && primo > secondo
    {
        return Err(format!(
            "primo passaggio {} is above secondo {}",
            name(primo),
            name(secondo)
        ));
    }
    Ok(())
}

/// The column to name when [`check_singer`] rejects a row.
fn blame_column(singer: &Singer) -> &'static str {
    if singer.range_low_midi > singer.range_high_midi {
        "range_low"
    } else if singer.comfort_low_midi > singer.comfort_high_midi
        || singer.comfort_low_midi < singer.range_low_midi
    {
        "comfort_low"
    } else if singer.comfort_high_midi > singer.range_high_midi {
        "comfort_high"
    } else {
        "primo"
    }
}

struct Row<'a> {
    path: &'a Path,
    line: u64,
    record: &'a csv::ByteRecord,
    columns: &'a HashMap<String, usize>,
}

impl Row<'_> {
    fn error(&self, column: &str, message: impl Into<String>) -> RosterError {
        let column_number = self.columns.get(column).map_or(0, |index| index + 1);
        RosterError::at(
            self.path,
            RosterPlace::Cell {
                line: self.line,
                column: column.to_string(),
                column_number,
            },
            message,
        )
    }

    /// The trimmed cell text, `None` when the column is absent or the cell empty.
    fn text(&self, column: &str) -> Result<Option<String>, RosterError> {
        let Some(cell) = self
            .columns
            .get(column)
            .and_then(|&index| self.record.get(index))
        else {
            return Ok(None);
        };
        let text = std::str::from_utf8(cell).map_err(|error| {
            self.error(
                column,
                format!(
                    "not valid UTF-8 (byte {} of the cell); save the roster as UTF-8",
                    error.valid_up_to() + 1
                ),
            )
        })?;
        // Undo the spreadsheet-safe quote our own writer adds (text::csv_cell).
        let text = crate::text::csv_cell_read(text.trim());
        Ok((!text.is_empty()).then(|| text.to_string()))
    }

    fn pitch(&self, column: &str) -> Result<Option<f64>, RosterError> {
        let Some(text) = self.text(column)? else {
            return Ok(None);
        };
        parse_roster_pitch(&text)
            .map(Some)
            .map_err(|message| self.error(column, message))
    }

    fn required_pitch(&self, column: &str) -> Result<f64, RosterError> {
        self.pitch(column)?
            .ok_or_else(|| self.error(column, "missing value: a note name (F#3) or MIDI number"))
    }
}

/// A roster cell as a pitch: a note name or whole MIDI number via the one
/// pitch parser, or a decimal MIDI number (as written for measured profiles).
fn parse_roster_pitch(text: &str) -> Result<f64, String> {
    match pitch::parse_pitch(text) {
        Ok(midi) => Ok(f64::from(midi)),
        Err(pitch_error) => match text.parse::<f64>() {
            Ok(midi) if midi.is_finite() && (0.0..=127.0).contains(&midi) => Ok(midi),
            _ => Err(pitch_error.to_string()),
        },
    }
}

/// A pitch as written to a roster: a note name when whole, else the MIDI
/// number to the cent.
fn format_roster_pitch(midi: f64) -> String {
    if midi.fract() == 0.0 && (0.0..=127.0).contains(&midi) {
        pitch::midi_name(midi as i32)
    } else {
        format!("{midi:.2}")
    }
}

/// The roster row for a measured profile, so measured and typed-in singers
/// mix in one roster. This is the one conversion from a profile to a
/// [`Singer`]: the CLI's roster rows, the library, the app and the demo all
/// call it, so one audition gives the same figures through every front end.
///
/// - Passaggi that were not measured are left out: a roster's primo and
///   secondo are known values, not the typical values a profile falls back
///   to. A measured pair in the wrong order is dropped whole.
/// - Pitches are kept to whole cents, the precision a roster file holds
///   (`format_roster_pitch`), so a singer written to CSV and read back gives
///   the same fits as the profile itself.
/// - The section is the profile's suggestion, `None` when it has none.
pub fn singer_from_profile(name: &str, profile: &crate::voice::Profile) -> Singer {
    use crate::voice::{PassaggioKind, PassaggioSource};
    let measured = |kind: PassaggioKind| {
        profile
            .passaggio(kind)
            .filter(|passaggio| passaggio.source == PassaggioSource::Measured)
            .map(|passaggio| to_cents(passaggio.midi))
    };
    let primo_midi = measured(PassaggioKind::Primo);
    let secondo_midi = measured(PassaggioKind::Secondo);
    // A roster requires primo ≤ secondo; keep them only in that order.
    let (primo_midi, secondo_midi) = match (primo_midi, secondo_midi) {
        (Some(primo), Some(secondo)) if primo > secondo => (None, None),
        pair => pair,
    };
    let section = profile.section.trim();
    Singer {
        name: name.to_string(),
        range_low_midi: to_cents(profile.range.low_midi),
        range_high_midi: to_cents(profile.range.high_midi),
        comfort_low_midi: to_cents(profile.comfort.span.low_midi),
        comfort_high_midi: to_cents(profile.comfort.span.high_midi),
        primo_midi,
        secondo_midi,
        voice_type: Some(profile.voice_type.label.clone()),
        section: (!section.is_empty()).then(|| section.to_string()),
        notes: Some(format!(
            "measured profile: {} ({:.0} %)",
            profile.voice_type.label,
            100.0 * profile.voice_type.confidence
        )),
    }
}

/// A MIDI pitch rounded to a whole cent (0.01 semitone): what a roster
/// file writes, and read back as the same `f64`.
fn to_cents(midi: f64) -> f64 {
    (midi * 100.0).round() / 100.0
}

/// One singer as a roster CSV data row (no header), in the columns that
/// [`roster_to_csv`] writes.
pub fn singer_to_csv_row(singer: &Singer) -> Result<String, csv::Error> {
    let table = roster_to_csv(&Roster {
        singers: vec![singer.clone()],
    })?;
    Ok(table.lines().skip(1).collect::<Vec<_>>().join("\n") + "\n")
}

/// The roster as CSV with every column, readable by [`parse_roster_csv`].
pub fn roster_to_csv(roster: &Roster) -> Result<String, csv::Error> {
    let mut writer = csv::Writer::from_writer(Vec::new());
    let mut header: Vec<&str> = REQUIRED_COLUMNS.to_vec();
    header.extend(OPTIONAL_COLUMNS);
    writer.write_record(&header)?;
    for singer in &roster.singers {
        let optional_pitch = |midi: Option<f64>| midi.map(format_roster_pitch).unwrap_or_default();
        let cells = [
            singer.name.clone(),
            format_roster_pitch(singer.range_low_midi),
            format_roster_pitch(singer.range_high_midi),
            format_roster_pitch(singer.comfort_low_midi),
            format_roster_pitch(singer.comfort_high_midi),
            optional_pitch(singer.primo_midi),
            optional_pitch(singer.secondo_midi),
            singer.voice_type.clone().unwrap_or_default(),
            singer.section.clone().unwrap_or_default(),
            singer.notes.clone().unwrap_or_default(),
        ];
        writer.write_record(
            cells
                .iter()
                .map(|cell| crate::text::csv_cell(cell).into_owned()),
        )?;
    }
    let bytes = writer
        .into_inner()
        .map_err(|error| csv::Error::from(error.into_error()))?;
    Ok(String::from_utf8_lossy(&bytes).into_owned())
}

/// The roster as the JSON Ambit reads back.
pub fn roster_to_json(roster: &Roster) -> String {
    // Serialising plain structs of strings and finite numbers cannot fail.
    serde_json::to_string_pretty(roster).unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<Roster, RosterError> {
        parse_roster(Path::new("choir.csv"), text.as_bytes())
    }

    #[test]
    fn reads_names_numbers_and_optional_columns() {
        // Pitch names in scientific pitch notation (C4 = MIDI 60, ASA).
        let roster = parse(
            "name,range_low,range_high,comfort_low,comfort_high,primo,secondo,section\n\
             Ilse Marwick,F3,C6,A3,F5,E4,F#5,S2\n\
             Tomas Brenner, 40 ,67,Bb2,62,,,\n",
        )
        .unwrap();
        let first = &roster.singers[0];
        assert_eq!(first.range_low_midi, 53.0);
        assert_eq!(first.range_high_midi, 84.0);
        assert_eq!(first.comfort_low_midi, 57.0);
        assert_eq!(first.comfort_high_midi, 77.0);
        assert_eq!(first.primo_midi, Some(64.0));
        assert_eq!(first.secondo_midi, Some(78.0));
        assert_eq!(first.section.as_deref(), Some("S2"));
        let second = &roster.singers[1];
        assert_eq!(second.range_low_midi, 40.0);
        assert_eq!(second.comfort_low_midi, 46.0);
        assert_eq!(second.primo_midi, None);
        assert_eq!(second.section, None);
    }

    #[test]
    fn csv_and_json_round_trip() {
        let roster = parse(
            "name,range_low,range_high,comfort_low,comfort_high,primo,secondo,voice_type,section,notes\n\
             \"Ward, Odile\",E3,63.5,G3,61.25,,,\"alto\",A1,\"says \"\"hi\"\"\"\n",
        )
        .unwrap();
        let csv_text = roster_to_csv(&roster).unwrap();
        assert_eq!(parse(&csv_text).unwrap(), roster);
        let json = roster_to_json(&roster);
        assert_eq!(parse(&json).unwrap(), roster);
    }
}
