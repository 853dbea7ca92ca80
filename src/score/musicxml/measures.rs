//! One walk over the MusicXML tree: each part becomes a list of written
//! measures, its notes placed in quarter notes from the measure's start, with
//! the tempo, dynamic, repeat and navigation marks found on the way.
//!
//! Time inside a measure follows the MusicXML cursor model (MusicXML 4.0,
//! `<backup>`, `<forward>`, `<chord>`): each `<note>` starts at the cursor and
//! moves it on by its `<duration>`; a `<chord/>` note starts with the note
//! before it and does not move the cursor; `<backup>`/`<forward>` move it back
//! and on. Durations are in `<divisions>` per quarter note, which may change
//! at any `<attributes>`.
//!
//! Invariant: positions stay in written order here (no repeats, no seconds);
//! the tree is walked iteratively over children, never recursively over depth.

use std::collections::HashMap;
use std::path::Path;

use roxmltree::{Document, Node};

use crate::score::{KeySignature, Location, Mode, PartKind, ScoreError};

/// Longest single duration, backup or forward accepted, in quarter notes.
/// Ten thousand quarters is over an hour at any singable tempo.
const MAX_DURATION_QUARTERS: f64 = 10_000.0;

/// A whole document in written order.
#[derive(Debug, Default)]
pub struct Written {
    pub title: Option<String>,
    pub key: Option<KeySignature>,
    pub parts: Vec<WrittenPart>,
}

#[derive(Debug)]
pub struct WrittenPart {
    pub id: String,
    pub name: String,
    pub kind: PartKind,
    pub measures: Vec<WrittenMeasure>,
}

#[derive(Debug, Default)]
pub struct WrittenMeasure {
    /// The printed number (`number` attribute).
    pub number: String,
    /// The furthest the cursor reached: the measure's length as written.
    pub length_quarters: f64,
    /// The time signature in force, as a length in quarter notes.
    pub time_signature_quarters: Option<f64>,
    pub notes: Vec<WrittenNote>,
    /// Tempo marks: position in the measure (quarters) and quarter notes per minute.
    pub tempos: Vec<(f64, f64)>,
    /// Dynamic marks: position in the measure (quarters) and the mark (`pp`, `sfz`, …).
    pub dynamics: Vec<(f64, String)>,
    pub repeat_forward: bool,
    /// A backward repeat at the end, with the number of times the section is played.
    pub repeat_backward: Option<u32>,
    /// An ending (volta) starts here, for these passes.
    pub ending_start: Option<Vec<u32>>,
    /// An ending stops (or is discontinued) at the end of this measure.
    pub ending_stop: bool,
    pub navigation: Navigation,
}

/// Jumps (from `<sound>` attributes, which carry playback meaning) and the
/// printed signs and words that may ask for one.
#[derive(Debug, Default, Clone)]
pub struct Navigation {
    pub segno: Option<String>,
    pub coda: Option<String>,
    pub tocoda: Option<String>,
    pub dacapo: bool,
    pub dalsegno: Option<String>,
    pub fine: bool,
    /// Printed signs and words (segno, coda, "D.C. al Fine", …), for warnings.
    pub printed: Vec<String>,
}

impl Navigation {
    fn merge(&mut self, other: &Navigation) {
        self.segno = self.segno.take().or_else(|| other.segno.clone());
        self.coda = self.coda.take().or_else(|| other.coda.clone());
        self.tocoda = self.tocoda.take().or_else(|| other.tocoda.clone());
        self.dalsegno = self.dalsegno.take().or_else(|| other.dalsegno.clone());
        self.dacapo |= other.dacapo;
        self.fine |= other.fine;
        for mark in &other.printed {
            if !self.printed.contains(mark) {
                self.printed.push(mark.clone());
            }
        }
    }

    pub fn has_jump_data(&self) -> bool {
        self.segno.is_some()
            || self.coda.is_some()
            || self.tocoda.is_some()
            || self.dacapo
            || self.dalsegno.is_some()
            || self.fine
    }
}

#[derive(Debug, Clone)]
pub struct WrittenNote {
    pub offset_quarters: f64,
    pub duration_quarters: f64,
    pub midi: f64,
    pub voice: u32,
    pub staff: u32,
    pub tied_from_previous: bool,
    pub grace: bool,
}

impl WrittenMeasure {
    /// Repeat, ending and jump marks of another part's copy of this measure.
    pub fn merge_structure(&mut self, other: &WrittenMeasure) {
        self.repeat_forward |= other.repeat_forward;
        self.repeat_backward = match (self.repeat_backward, other.repeat_backward) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
        if self.ending_start.is_none() {
            self.ending_start = other.ending_start.clone();
        }
        self.ending_stop |= other.ending_stop;
        self.navigation.merge(&other.navigation);
    }
}

struct Context<'a> {
    file: &'a Path,
    part: String,
    measure: String,
}

impl Context<'_> {
    fn error(&self, message: impl Into<String>) -> ScoreError {
        ScoreError::Malformed {
            file: self.file.to_path_buf(),
            location: Location::Measure {
                part: self.part.clone(),
                measure: self.measure.clone(),
            },
            message: message.into(),
        }
    }

    /// A finite number from an element's text.
    fn number(&self, node: Node, what: &str) -> Result<f64, ScoreError> {
        let text = node.text().unwrap_or("").trim();
        text.parse::<f64>()
            .ok()
            .filter(|value| value.is_finite())
            .ok_or_else(|| self.error(format!("<{what}> is not a number: {text:?}")))
    }
}

fn line_column(document: &Document, node: Node) -> Location {
    let position = document.text_pos_at(node.range().start);
    Location::LineColumn {
        line: position.row,
        column: position.col,
    }
}

fn child<'a, 'input>(node: Node<'a, 'input>, name: &str) -> Option<Node<'a, 'input>> {
    node.children().find(|child| child.has_tag_name(name))
}

fn child_text<'a>(node: Node<'a, '_>, name: &str) -> Option<&'a str> {
    child(node, name)
        .and_then(|child| child.text())
        .map(str::trim)
}

/// Reads the whole document in written order.
pub fn read_document(file: &Path, document: &Document) -> Result<Written, ScoreError> {
    let root = document.root_element();
    let timewise = match root.tag_name().name() {
        "score-partwise" => false,
        "score-timewise" => true,
        other => {
            return Err(ScoreError::Unsupported {
                file: file.to_path_buf(),
                location: line_column(document, root),
                message: format!(
                    "the root element is <{other}>; a MusicXML score is <score-partwise> or <score-timewise>"
                ),
            });
        }
    };
    let mut written = Written {
        title: title(root),
        ..Written::default()
    };
    let list = part_list(root);

    // (part id, [(measure element, element holding the measure's content)])
    let mut sequences: Vec<(String, Vec<(Node, Node)>)> = Vec::new();
    // Index by id: a hostile file may list very many parts.
    let mut positions: HashMap<&str, usize> = HashMap::new();
    if timewise {
        // score-timewise: measure > part. Converted to the partwise view by
        // collecting each part's content in measure order.
        for measure in root.children().filter(|node| node.has_tag_name("measure")) {
            for part in measure.children().filter(|node| node.has_tag_name("part")) {
                let id = part.attribute("id").unwrap_or("");
                match positions.get(id) {
                    Some(&position) => sequences[position].1.push((measure, part)),
                    None => {
                        positions.insert(id, sequences.len());
                        sequences.push((id.to_string(), vec![(measure, part)]));
                    }
                }
            }
        }
    } else {
        for part in root.children().filter(|node| node.has_tag_name("part")) {
            let id = part.attribute("id").unwrap_or("").to_string();
            let measures = part
                .children()
                .filter(|node| node.has_tag_name("measure"))
                .map(|measure| (measure, measure))
                .collect();
            sequences.push((id, measures));
        }
    }
    if sequences.is_empty() {
        return Err(ScoreError::Malformed {
            file: file.to_path_buf(),
            location: line_column(document, root),
            message: "the score has no <part>".into(),
        });
    }
    let list_index: HashMap<&str, &PartListEntry> = list
        .iter()
        .rev()
        .map(|entry| (entry.id.as_str(), entry))
        .collect();
    for (id, measures) in sequences {
        let info = list_index.get(id.as_str()).copied();
        let name = info
            .map(|entry| entry.name.clone())
            .filter(|name| !name.is_empty())
            .unwrap_or_else(|| id.clone());
        let part = read_part(file, &id, &name, info, &measures, &mut written.key)?;
        written.parts.push(part);
    }
    Ok(written)
}

/// `<work-title>`, else `<movement-title>`, else a title credit.
fn title(root: Node) -> Option<String> {
    let clean = |text: &str| {
        let text = text.split_whitespace().collect::<Vec<_>>().join(" ");
        (!text.is_empty()).then_some(text)
    };
    child(root, "work")
        .and_then(|work| child_text(work, "work-title"))
        .and_then(clean)
        .or_else(|| child_text(root, "movement-title").and_then(clean))
        .or_else(|| {
            root.children()
                .filter(|node| node.has_tag_name("credit"))
                .find(|credit| child_text(*credit, "credit-type") == Some("title"))
                .and_then(|credit| {
                    let words: Vec<&str> = credit
                        .children()
                        .filter(|node| node.has_tag_name("credit-words"))
                        .filter_map(|node| node.text())
                        .collect();
                    clean(&words.join(" "))
                })
        })
        .or_else(|| {
            // Older exporters type no credit: the largest words on page 1
            // are the title by engraving convention.
            root.children()
                .filter(|node| node.has_tag_name("credit"))
                .filter(|credit| {
                    credit
                        .attribute("page")
                        .is_none_or(|page| page.trim() == "1")
                })
                .flat_map(|credit| {
                    credit
                        .children()
                        .filter(|node| node.has_tag_name("credit-words"))
                })
                .filter_map(|words| {
                    let size = words
                        .attribute("font-size")
                        .and_then(|size| size.trim().parse::<f64>().ok())
                        .unwrap_or(0.0);
                    Some((size, clean(words.text()?)?))
                })
                .fold(
                    None,
                    |best: Option<(f64, String)>, (size, text)| match best {
                        Some((best_size, _)) if best_size >= size => best,
                        _ => Some((size, text)),
                    },
                )
                .map(|(_, text)| text)
        })
}

struct PartListEntry {
    id: String,
    name: String,
    /// `<instrument-name>` and `<instrument-sound>` texts, lower case.
    instruments: Vec<String>,
}

/// `<part-list>`: names from `<part-name>`, else `<part-abbreviation>`.
fn part_list(root: Node) -> Vec<PartListEntry> {
    let Some(list) = child(root, "part-list") else {
        return Vec::new();
    };
    list.children()
        .filter(|node| node.has_tag_name("score-part"))
        .map(|part| {
            let clean = |text: Option<&str>| {
                text.map(|text| text.split_whitespace().collect::<Vec<_>>().join(" "))
                    .filter(|text| !text.is_empty())
            };
            let name = clean(child_text(part, "part-name"))
                .or_else(|| clean(child_text(part, "part-abbreviation")))
                .unwrap_or_default();
            let instruments = part
                .descendants()
                .filter(|node| {
                    node.has_tag_name("instrument-name") || node.has_tag_name("instrument-sound")
                })
                .filter_map(|node| node.text())
                .map(|text| text.trim().to_lowercase())
                .collect();
            PartListEntry {
                id: part.attribute("id").unwrap_or("").to_string(),
                name,
                instruments,
            }
        })
        .collect()
}

/// Words in a part name that mark a sung part (English, Italian, German).
const VOICE_WORDS: &[&str] = &[
    "soprano",
    "sopran",
    "mezzo",
    "alto",
    "alt",
    "contralto",
    "countertenor",
    "tenor",
    "tenore",
    "baritone",
    "bariton",
    "bass",
    "basso",
    "voice",
    "voices",
    "choir",
    "chorus",
    "coro",
    "chor",
    "canto",
    "cantus",
    "solo",
];

/// Part or instrument names that mark a keyboard or other instrument rather
/// than a voice (common practice English, Italian and German names). "Bass"
/// alone is a voice, so only compounds of it are listed.
const INSTRUMENT_WORDS: &[&str] = &[
    "piano",
    "organ",
    "keyboard",
    "harpsichord",
    "cembalo",
    "klavier",
    "clavier",
    "orgel",
    "accomp",
    "continuo",
    "harp",
    "celesta",
    "synth",
    "guitar",
    "horn",
    "corno",
    "trumpet",
    "tromba",
    "trombone",
    "tuba",
    "flute",
    "flauto",
    "oboe",
    "clarinet",
    "bassoon",
    "fagott",
    "violin",
    "violino",
    "viola",
    "cello",
    "contrabass",
    "double bass",
    "string",
    "timpani",
    "recorder",
    "sax",
];

/// State carried from measure to measure within one part.
struct PartState {
    divisions: Option<f64>,
    /// Written → sounding interval in semitones, for all staves (`None` key)
    /// or one staff (`<transpose number="n">`).
    transpose: Vec<(Option<u32>, f64)>,
    time_signature_quarters: Option<f64>,
    clefs: Vec<(u32, String)>,
    max_staff: u32,
    has_lyrics: bool,
    has_pitched: bool,
    has_unpitched: bool,
}

impl PartState {
    fn transpose_for(&self, staff: u32) -> f64 {
        self.transpose
            .iter()
            .find(|(number, _)| *number == Some(staff))
            .or_else(|| self.transpose.iter().find(|(number, _)| number.is_none()))
            .map_or(0.0, |(_, semitones)| *semitones)
    }
}

fn read_part(
    file: &Path,
    id: &str,
    name: &str,
    info: Option<&PartListEntry>,
    measures: &[(Node, Node)],
    key: &mut Option<KeySignature>,
) -> Result<WrittenPart, ScoreError> {
    let mut state = PartState {
        divisions: None,
        transpose: Vec::new(),
        time_signature_quarters: None,
        clefs: Vec::new(),
        max_staff: 1,
        has_lyrics: false,
        has_pitched: false,
        has_unpitched: false,
    };
    let mut written_measures = Vec::with_capacity(measures.len());
    for (index, (measure, content)) in measures.iter().enumerate() {
        let number = measure
            .attribute("number")
            .map(str::trim)
            .filter(|number| !number.is_empty())
            .map_or_else(|| (index + 1).to_string(), str::to_string);
        let context = Context {
            file,
            part: name.to_string(),
            measure: number.clone(),
        };
        let mut written = read_measure(&context, *content, &mut state, key)?;
        written.number = number;
        written_measures.push(written);
    }
    let instruments: &[String] = info.map_or(&[], |entry| entry.instruments.as_slice());
    let lower_name = name.to_lowercase();
    let name_words: Vec<&str> = lower_name
        .split(|character: char| !character.is_alphabetic())
        .filter(|word| !word.is_empty())
        .collect();
    let voice_named = name_words.iter().any(|word| VOICE_WORDS.contains(word));
    let instrument_named = INSTRUMENT_WORDS
        .iter()
        .any(|word| lower_name.contains(word));
    // `<instrument-name>` is often only the playback sound ("Acoustic Grand
    // Piano" on a soprano line), so it counts only when nothing is sung.
    let instrument_sound = instruments.iter().any(|instrument| {
        !instrument.starts_with("voice")
            && INSTRUMENT_WORDS
                .iter()
                .any(|word| instrument.contains(word))
    });
    let sung_sound = instruments
        .iter()
        .any(|instrument| instrument.starts_with("voice."));
    let has_clef = |sign: &str| state.clefs.iter().any(|(_, clef)| clef == sign);
    let kind = if has_clef("percussion") || (state.has_unpitched && !state.has_pitched) {
        PartKind::Percussion
    } else if sung_sound
        || (voice_named && state.has_lyrics)
        || name_words
            .first()
            .is_some_and(|word| VOICE_WORDS.contains(word))
    {
        // "Soprano Oboe 1 Violin 1": a choir line doubled by instruments.
        PartKind::Voice
    } else if instrument_named {
        PartKind::Accompaniment
    } else if voice_named {
        PartKind::Voice
    } else if (instrument_sound && !state.has_lyrics)
        || (state.max_staff >= 2 && has_clef("G") && has_clef("F") && !state.has_lyrics)
    {
        // A two-staff part with treble and bass clefs and no words is a
        // keyboard accompaniment (common practice in choral scores).
        PartKind::Accompaniment
    } else {
        PartKind::Voice
    };
    Ok(WrittenPart {
        id: id.to_string(),
        name: name.to_string(),
        kind,
        measures: written_measures,
    })
}

fn read_measure(
    context: &Context,
    content: Node,
    state: &mut PartState,
    key: &mut Option<KeySignature>,
) -> Result<WrittenMeasure, ScoreError> {
    let mut measure = WrittenMeasure::default();
    let mut cursor = 0.0_f64;
    let mut furthest = 0.0_f64;
    let mut chord_onset = 0.0_f64;
    let quarters = |state: &PartState, node: Node, what: &str| -> Result<f64, ScoreError> {
        let value = context.number(node, what)?;
        let divisions = state.divisions.ok_or_else(|| {
            context.error(format!(
                "<{what}> before any <divisions>: durations cannot be measured"
            ))
        })?;
        let quarters = value / divisions;
        if !(0.0..=MAX_DURATION_QUARTERS).contains(&quarters) {
            return Err(context.error(format!(
                "<{what}> of {value} divisions ({quarters} quarter notes) is out of range"
            )));
        }
        Ok(quarters)
    };
    for node in content.children().filter(Node::is_element) {
        match node.tag_name().name() {
            "attributes" => read_attributes(context, node, state, key)?,
            "note" => {
                let grace = child(node, "grace").is_some();
                let cue = child(node, "cue").is_some();
                let chord = child(node, "chord").is_some();
                let duration = match child(node, "duration") {
                    Some(duration) if !grace => quarters(state, duration, "duration")?,
                    _ if grace => 0.0,
                    _ => return Err(context.error("a <note> without <duration>")),
                };
                let onset = if chord { chord_onset } else { cursor };
                if !chord {
                    chord_onset = cursor;
                    cursor += duration;
                    furthest = furthest.max(cursor);
                }
                if child(node, "lyric").is_some() {
                    state.has_lyrics = true;
                }
                if let Some(notations) = child(node, "notations") {
                    for dynamics in notations
                        .children()
                        .filter(|child| child.has_tag_name("dynamics"))
                    {
                        measure
                            .dynamics
                            .extend(dynamic_marks(dynamics).map(|mark| (onset, mark)));
                    }
                }
                if cue || child(node, "rest").is_some() {
                    continue;
                }
                let staff = child_text(node, "staff")
                    .and_then(|text| text.parse::<u32>().ok())
                    .unwrap_or(1)
                    .max(1);
                state.max_staff = state.max_staff.max(staff.min(64));
                let written_midi = if let Some(pitch) = child(node, "pitch") {
                    state.has_pitched = true;
                    pitch_midi(context, pitch, "step", "octave", true)?
                } else if let Some(unpitched) = child(node, "unpitched") {
                    state.has_unpitched = true;
                    if child(unpitched, "display-step").is_none() {
                        continue;
                    }
                    pitch_midi(context, unpitched, "display-step", "display-octave", false)?
                } else {
                    return Err(
                        context.error("a <note> with neither <pitch>, <unpitched> nor <rest>")
                    );
                };
                let midi = written_midi + state.transpose_for(staff);
                if !(0.0..=127.0).contains(&midi) {
                    return Err(context.error(format!(
                        "sounding pitch {midi} is outside the MIDI range 0–127"
                    )));
                }
                let tie_stop = node
                    .children()
                    .filter(|child| child.has_tag_name("tie"))
                    .chain(
                        child(node, "notations")
                            .into_iter()
                            .flat_map(|notations| notations.children())
                            .filter(|child| child.has_tag_name("tied")),
                    )
                    .any(|tie| tie.attribute("type") == Some("stop"));
                let voice = child_text(node, "voice")
                    .and_then(|text| text.parse::<u32>().ok())
                    .unwrap_or(1);
                measure.notes.push(WrittenNote {
                    offset_quarters: onset,
                    duration_quarters: duration,
                    midi,
                    voice,
                    staff,
                    tied_from_previous: tie_stop,
                    grace,
                });
            }
            "backup" => {
                let back = child(node, "duration")
                    .map(|duration| quarters(state, duration, "duration"))
                    .transpose()?
                    .unwrap_or(0.0);
                // A backup past the measure start is an exporter slip; the
                // cursor cannot leave the measure.
                cursor = (cursor - back).max(0.0);
            }
            "forward" => {
                let on = child(node, "duration")
                    .map(|duration| quarters(state, duration, "duration"))
                    .transpose()?
                    .unwrap_or(0.0);
                cursor += on;
                furthest = furthest.max(cursor);
            }
            "direction" => read_direction(context, node, state, cursor, &mut measure)?,
            "sound" => read_sound(context, node, cursor, &mut measure, None)?,
            "barline" => read_barline(node, &mut measure),
            _ => {}
        }
    }
    measure.length_quarters = furthest;
    measure.time_signature_quarters = state.time_signature_quarters;
    Ok(measure)
}

/// MIDI number of a written pitch: (octave + 1) · 12 + step + alter
/// (MusicXML `<pitch>`; C4 = 60 in scientific pitch notation).
fn pitch_midi(
    context: &Context,
    pitch: Node,
    step_tag: &str,
    octave_tag: &str,
    with_alter: bool,
) -> Result<f64, ScoreError> {
    let step = match child_text(pitch, step_tag).unwrap_or("") {
        "C" => 0.0,
        "D" => 2.0,
        "E" => 4.0,
        "F" => 5.0,
        "G" => 7.0,
        "A" => 9.0,
        "B" => 11.0,
        other => {
            return Err(context.error(format!("<{step_tag}> {other:?} is not a note letter A–G")));
        }
    };
    let octave = child_text(pitch, octave_tag)
        .and_then(|text| text.parse::<i32>().ok())
        .filter(|octave| (-1..=10).contains(octave))
        .ok_or_else(|| context.error(format!("<{octave_tag}> missing or not an octave number")))?;
    let alter = match child(pitch, "alter") {
        // Microtonal alterations are decimal semitones (MusicXML `<alter>`).
        Some(alter) if with_alter => {
            let alter = context.number(alter, "alter")?;
            if alter.abs() > 4.0 {
                return Err(context.error(format!("<alter> {alter} is beyond four semitones")));
            }
            alter
        }
        _ => 0.0,
    };
    Ok(f64::from(octave + 1) * 12.0 + step + alter)
}

fn read_attributes(
    context: &Context,
    node: Node,
    state: &mut PartState,
    key: &mut Option<KeySignature>,
) -> Result<(), ScoreError> {
    for child_node in node.children().filter(Node::is_element) {
        match child_node.tag_name().name() {
            "divisions" => {
                let divisions = context.number(child_node, "divisions")?;
                if divisions <= 0.0 {
                    return Err(context.error(format!(
                        "<divisions> is {divisions}; it must be a positive number of divisions per quarter note"
                    )));
                }
                state.divisions = Some(divisions);
            }
            "key" if key.is_none() => {
                if let Some(fifths) =
                    child_text(child_node, "fifths").and_then(|text| text.parse::<i32>().ok())
                {
                    let mode = match child_text(child_node, "mode") {
                        Some("major") => Mode::Major,
                        Some("minor") => Mode::Minor,
                        _ => Mode::Other,
                    };
                    *key = Some(KeySignature {
                        fifths: fifths.clamp(-7, 7),
                        mode,
                    });
                }
            }
            "time" => {
                let beats: Vec<f64> = child_node
                    .children()
                    .filter(|child| child.has_tag_name("beats"))
                    .filter_map(|child| child.text())
                    .map(|text| {
                        text.split('+')
                            .filter_map(|part| part.trim().parse::<f64>().ok())
                            .sum()
                    })
                    .collect();
                let beat_types: Vec<f64> = child_node
                    .children()
                    .filter(|child| child.has_tag_name("beat-type"))
                    .filter_map(|child| child.text())
                    .filter_map(|text| text.trim().parse::<f64>().ok())
                    .collect();
                let length: f64 = beats
                    .iter()
                    .zip(&beat_types)
                    .filter(|(_, beat_type)| **beat_type > 0.0)
                    .map(|(beats, beat_type)| beats * 4.0 / beat_type)
                    .sum();
                state.time_signature_quarters =
                    (length > 0.0 && length <= MAX_DURATION_QUARTERS).then_some(length);
            }
            "staves" => {
                if let Some(staves) = child_node
                    .text()
                    .and_then(|text| text.trim().parse::<u32>().ok())
                {
                    state.max_staff = state.max_staff.max(staves.min(64));
                }
            }
            "clef" => {
                let staff = child_node
                    .attribute("number")
                    .and_then(|text| text.trim().parse::<u32>().ok())
                    .unwrap_or(1);
                if let Some(sign) = child_text(child_node, "sign") {
                    state.max_staff = state.max_staff.max(staff.min(64));
                    if !state
                        .clefs
                        .iter()
                        .any(|(number, known)| *number == staff && known == sign)
                    {
                        state.clefs.push((staff, sign.to_string()));
                    }
                }
            }
            "transpose" => {
                // Sounding = written + chromatic + 12 · octave-change
                // (MusicXML `<transpose>`: the interval from written to sounding).
                let chromatic = child(child_node, "chromatic")
                    .map(|node| context.number(node, "chromatic"))
                    .transpose()?
                    .unwrap_or(0.0);
                let octaves = child(child_node, "octave-change")
                    .map(|node| context.number(node, "octave-change"))
                    .transpose()?
                    .unwrap_or(0.0);
                let semitones = chromatic + 12.0 * octaves;
                if semitones.abs() > 48.0 {
                    return Err(context.error(format!(
                        "<transpose> by {semitones} semitones is beyond four octaves"
                    )));
                }
                let number = child_node
                    .attribute("number")
                    .and_then(|text| text.trim().parse::<u32>().ok());
                state.transpose.retain(|(known, _)| *known != number);
                state.transpose.push((number, semitones));
            }
            _ => {}
        }
    }
    Ok(())
}

/// The marks inside a `<dynamics>` element: `pp`, `mf`, `sfz`, … or the text
/// of `<other-dynamics>`.
fn dynamic_marks<'a>(dynamics: Node<'a, '_>) -> impl Iterator<Item = String> + 'a {
    dynamics
        .children()
        .filter(Node::is_element)
        .filter_map(|mark| {
            let name = mark.tag_name().name();
            if name == "other-dynamics" {
                mark.text()
                    .map(|text| text.trim().to_string())
                    .filter(|text| !text.is_empty())
            } else {
                Some(name.to_string())
            }
        })
}

/// Length of a note value in quarter notes, with dots (each dot adds half
/// the previous value: a dotted quarter is 1.5).
fn beat_unit_quarters(unit: &str, dots: usize) -> Option<f64> {
    let base = match unit {
        "maxima" => 32.0,
        "long" => 16.0,
        "breve" => 8.0,
        "whole" => 4.0,
        "half" => 2.0,
        "quarter" => 1.0,
        "eighth" => 0.5,
        "16th" => 0.25,
        "32nd" => 0.125,
        "64th" => 0.0625,
        "128th" => 0.03125,
        _ => return None,
    };
    Some(base * (2.0 - 0.5_f64.powi(dots.min(8) as i32)))
}

fn check_tempo(context: &Context, quarters_per_minute: f64) -> Result<f64, ScoreError> {
    if quarters_per_minute <= 0.0 {
        return Err(context.error(format!(
            "tempo {quarters_per_minute} per minute: a tempo must be above zero"
        )));
    }
    if !(1.0..=10_000.0).contains(&quarters_per_minute) {
        return Err(context.error(format!(
            "tempo {quarters_per_minute} quarter notes per minute is out of range (1–10000)"
        )));
    }
    Ok(quarters_per_minute)
}

fn read_direction(
    context: &Context,
    node: Node,
    state: &PartState,
    cursor: f64,
    measure: &mut WrittenMeasure,
) -> Result<(), ScoreError> {
    let mut position = cursor;
    if let Some(offset) = child(node, "offset")
        && offset.attribute("sound") == Some("yes")
        && let Some(divisions) = state.divisions
    {
        position = (cursor + context.number(offset, "offset")? / divisions).max(0.0);
    }
    let mut metronome_tempo = None;
    for direction_type in node
        .children()
        .filter(|child| child.has_tag_name("direction-type"))
    {
        for mark in direction_type.children().filter(Node::is_element) {
            match mark.tag_name().name() {
                "metronome" => {
                    let units: Vec<Node> = mark
                        .children()
                        .filter(|child| child.has_tag_name("beat-unit"))
                        .collect();
                    // Two beat units are a metric modulation (♩ = 𝅗𝅥), not a tempo.
                    if let ([unit], Some(per_minute)) =
                        (units.as_slice(), child_text(mark, "per-minute"))
                    {
                        let dots = mark
                            .children()
                            .filter(|child| child.has_tag_name("beat-unit-dot"))
                            .count();
                        let number: String = per_minute
                            .chars()
                            .skip_while(|character| !character.is_ascii_digit())
                            .take_while(|character| character.is_ascii_digit() || *character == '.')
                            .collect();
                        if let (Some(unit_quarters), Ok(value)) = (
                            beat_unit_quarters(unit.text().unwrap_or("").trim(), dots),
                            number.parse::<f64>(),
                        ) {
                            metronome_tempo = Some(check_tempo(context, value * unit_quarters)?);
                        }
                    }
                }
                "dynamics" => measure
                    .dynamics
                    .extend(dynamic_marks(mark).map(|dynamic| (position, dynamic))),
                "segno" => measure.navigation.printed.push("segno sign".into()),
                "coda" => measure.navigation.printed.push("coda sign".into()),
                "words" => {
                    let text = mark.text().unwrap_or("").trim();
                    if is_navigation_words(text) {
                        measure.navigation.printed.push(format!("{text:?}"));
                    }
                }
                _ => {}
            }
        }
    }
    let sound = child(node, "sound");
    let sound_has_tempo = sound.is_some_and(|sound| sound.attribute("tempo").is_some());
    if let Some(sound) = sound {
        read_sound(context, sound, cursor, measure, Some(position))?;
    }
    // `<sound tempo>` is the playback value; a metronome mark stands in when
    // the direction has none.
    if !sound_has_tempo && let Some(tempo) = metronome_tempo {
        measure.tempos.push((position, tempo));
    }
    Ok(())
}

/// Words that ask for a jump (common practice Italian and English terms).
fn is_navigation_words(text: &str) -> bool {
    let lower = text.to_lowercase();
    let words: Vec<&str> = lower
        .split(|character: char| !character.is_alphanumeric() && character != '.')
        .filter(|word| !word.is_empty())
        .collect();
    lower.contains("d.c.")
        || lower.contains("d.s.")
        || lower.contains("da capo")
        || lower.contains("dal segno")
        || lower.contains("to coda")
        || lower.contains("al coda")
        || words.iter().any(|word| *word == "fine" || *word == "coda")
}

fn read_sound(
    context: &Context,
    sound: Node,
    cursor: f64,
    measure: &mut WrittenMeasure,
    position: Option<f64>,
) -> Result<(), ScoreError> {
    let position = position.unwrap_or(cursor);
    if let Some(tempo) = sound.attribute("tempo") {
        let value = tempo
            .trim()
            .parse::<f64>()
            .ok()
            .filter(|value| value.is_finite())
            .ok_or_else(|| context.error(format!("<sound tempo={tempo:?}> is not a number")))?;
        // `tempo` is always in quarter notes per minute (MusicXML `<sound>`).
        measure
            .tempos
            .push((position, check_tempo(context, value)?));
    }
    let navigation = &mut measure.navigation;
    let yes = |name: &str| {
        sound
            .attribute(name)
            .is_some_and(|value| value.trim() == "yes")
    };
    let value = |name: &str| sound.attribute(name).map(|value| value.trim().to_string());
    navigation.dacapo |= yes("dacapo");
    // `fine` holds a number of the final beat, or "yes"; present means Fine.
    navigation.fine |= sound.attribute("fine").is_some();
    if let Some(segno) = value("segno") {
        navigation.segno = Some(segno);
    }
    if let Some(coda) = value("coda") {
        navigation.coda = Some(coda);
    }
    if let Some(tocoda) = value("tocoda") {
        navigation.tocoda = Some(tocoda);
    }
    if let Some(dalsegno) = value("dalsegno") {
        navigation.dalsegno = Some(dalsegno);
    }
    Ok(())
}

fn read_barline(barline: Node, measure: &mut WrittenMeasure) {
    if let Some(repeat) = child(barline, "repeat") {
        match repeat.attribute("direction") {
            Some("forward") => measure.repeat_forward = true,
            Some("backward") => {
                // `times` is how often the section is played; 2 unless given
                // (MusicXML `<repeat>`). Capped so a hostile value cannot
                // unroll without end.
                let times = repeat
                    .attribute("times")
                    .and_then(|text| text.trim().parse::<u32>().ok())
                    .unwrap_or(2)
                    .clamp(1, 64);
                measure.repeat_backward = Some(times);
            }
            _ => {}
        }
    }
    if let Some(ending) = child(barline, "ending") {
        match ending.attribute("type") {
            Some("start") => {
                let numbers: Vec<u32> = ending
                    .attribute("number")
                    .unwrap_or("")
                    .split(|character: char| !character.is_ascii_digit())
                    .filter_map(|number| number.parse::<u32>().ok())
                    .filter(|number| (1..=64).contains(number))
                    .collect();
                if !numbers.is_empty() {
                    measure.ending_start = Some(numbers);
                }
            }
            Some("stop") | Some("discontinue") => measure.ending_stop = true,
            _ => {}
        }
    }
    if child(barline, "segno").is_some() {
        measure.navigation.printed.push("segno sign".into());
    }
    if child(barline, "coda").is_some() {
        measure.navigation.printed.push("coda sign".into());
    }
    if let Some(segno) = barline.attribute("segno") {
        measure.navigation.segno = Some(segno.trim().to_string());
    }
    if let Some(coda) = barline.attribute("coda") {
        measure.navigation.coda = Some(coda.trim().to_string());
    }
}
