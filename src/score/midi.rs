//! Standard MIDI File reader (SMF format 0 and 1) built on `midly`.
//!
//! The file is framed here (header, track chunks, an optional RIFF RMID
//! wrapper) so that every problem can be named by byte offset and track;
//! `midly` decodes the events inside each track chunk. The rules, with their
//! sources, are in `docs/METHODS.md` under "Score reading: MIDI":
//!
//! - timing in ticks per quarter (PPQ) through the merged tempo map of *all*
//!   tracks (120 per quarter until the first Set Tempo, the SMF default), or
//!   SMPTE ticks per second converted to seconds directly;
//! - note-on with velocity 0 is a note-off; overlapping notes of one pitch on
//!   one channel are paired first-in, first-out; a note never released (a
//!   stray note-on) is dropped with a warning naming its track and pitch;
//! - parts are the tracks that have notes (format 1) or the channels of the
//!   single track (format 0); channel 10 (percussion) is skipped;
//! - time signatures give measures numbered 1, 2, 3 … from the first tick.
//!
//! Architecture invariant: the reader turns bytes into a [`Piece`] and nothing
//! else. It never panics on input, and its memory is bounded by
//! [`MAX_MIDI_TRACKS`], [`MAX_MIDI_EVENTS`], [`MAX_MIDI_NOTES`] and
//! [`MAX_MIDI_MEASURES`].

use std::collections::{HashMap, VecDeque};
use std::path::Path;

use midly::{EventIter, MetaMessage, MidiMessage, TrackEventKind};

use super::{KeySignature, Location, Measure, Mode, Note, Part, PartKind, Piece, ScoreError};
use crate::pitch::midi_name;

/// Most events read from one file. A dense orchestral MIDI file has a few
/// hundred thousand; beyond this the file is hostile or not a score.
pub const MAX_MIDI_EVENTS: usize = 5_000_000;
/// Most pitched notes kept from one file (bounds the `Piece` in memory).
pub const MAX_MIDI_NOTES: usize = 1_000_000;
/// Most measures laid out from the time signatures (about four hours of 4/4
/// at 120 per quarter).
pub const MAX_MIDI_MEASURES: usize = 200_000;

/// The SMF default tempo: 500 000 µs per quarter = 120 quarters per minute
/// (Standard MIDI Files 1.0, "Set Tempo").
const DEFAULT_MICROSECONDS_PER_QUARTER: u32 = 500_000;
/// Channel 10 in the 1-based numbering of General MIDI, the percussion channel.
const PERCUSSION_CHANNEL: u8 = 9;
/// Most track chunks read from one file. A full orchestral score has well
/// under a hundred; the header can declare at most 65 535, and a file may
/// hold more chunks than it declares. Each track costs memory before its
/// events are read, so the count is capped on its own.
pub const MAX_MIDI_TRACKS: usize = 1024;
/// Hanging-note warnings listed one by one before they are summarised.
const MAX_LISTED_WARNINGS: usize = 20;
/// Names longer than this are cut (a track name is a label, not a payload).
const MAX_NAME_CHARS: usize = 200;
/// Positions closer than this (in quarters) are the same position.
const EPSILON_QUARTERS: f64 = 1e-9;

/// Reads an SMF into a [`Piece`]: one part per track with notes (format 1) or
/// per channel (format 0), timed through the full tempo map.
pub fn read_midi(path: &Path, bytes: &[u8]) -> Result<Piece, ScoreError> {
    let mut reader = Reader {
        path,
        warnings: Vec::new(),
        hanging_notes: 0,
    };
    reader.read(bytes)
}

/// How ticks map to time, from the header's division field.
#[derive(Debug, Clone, Copy)]
enum Clock {
    /// Ticks per quarter note (PPQ).
    Metrical { ticks_per_quarter: f64 },
    /// SMPTE: frames per second × ticks per frame.
    Timecode { ticks_per_second: f64 },
}

/// One note in ticks, before timing is known.
#[derive(Debug, Clone, Copy)]
struct TickNote {
    start_tick: u64,
    end_tick: u64,
    key: u8,
    channel: u8,
    velocity: u8,
}

/// A meta event that applies to the whole piece, wherever its track.
#[derive(Debug, Clone, Copy)]
struct GlobalEvent<T> {
    tick: u64,
    /// 1-based track number, for messages.
    track: usize,
    byte_offset: u64,
    value: T,
}

#[derive(Debug, Clone, Copy)]
struct TimeSignature {
    numerator: u8,
    denominator_power: u8,
}

/// What one track chunk holds, in ticks.
#[derive(Debug, Default)]
struct TrackData {
    /// 1-based track number.
    number: usize,
    name: Option<String>,
    instrument: Option<String>,
    notes: Vec<TickNote>,
    /// The first program change seen on each channel.
    programs: [Option<u8>; 16],
    end_tick: u64,
    percussion_notes: usize,
}

/// Everything gathered from all tracks.
#[derive(Debug, Default)]
struct Gathered {
    tracks: Vec<TrackData>,
    tempos: Vec<GlobalEvent<u32>>,
    time_signatures: Vec<GlobalEvent<TimeSignature>>,
    keys: Vec<GlobalEvent<KeySignature>>,
    events: usize,
    notes: usize,
}

struct Reader<'a> {
    path: &'a Path,
    warnings: Vec<String>,
    hanging_notes: usize,
}

impl Reader<'_> {
    fn malformed(&self, byte_offset: u64, message: String) -> ScoreError {
        ScoreError::Malformed {
            file: self.path.to_path_buf(),
            location: Location::ByteOffset(byte_offset),
            message,
        }
    }

    fn too_large(&self, message: String) -> ScoreError {
        ScoreError::TooLarge {
            file: self.path.to_path_buf(),
            message,
        }
    }

    fn read(&mut self, bytes: &[u8]) -> Result<Piece, ScoreError> {
        let (smf, base_offset) = self.unwrap_rmid(bytes)?;
        let (format, declared_tracks, clock, body_start) = self.read_header(smf, base_offset)?;
        let chunks = self.track_chunks(smf, body_start, base_offset, declared_tracks)?;

        let mut gathered = Gathered::default();
        for (index, (data_offset, data)) in chunks.into_iter().enumerate() {
            self.read_track(index + 1, data_offset, data, &mut gathered)?;
        }

        let time_map = self.time_map(clock, &mut gathered.tempos);
        let measures = self.measures(&gathered, &time_map)?;

        let key = first_by_tick(&gathered.keys).map(|event| event.value);
        let single_track = gathered.tracks.len() == 1;
        if format == 0 && !single_track {
            self.warnings.push(format!(
                "SMF format 0 should hold one track but this file holds {}; \
                 each track with notes is read as a part, as in format 1",
                gathered.tracks.len()
            ));
        }
        let by_channel = format == 0 && single_track;
        let title = self.title(&gathered.tracks, by_channel);
        let parts = self.parts(&gathered.tracks, by_channel, &time_map, &measures);
        if parts.is_empty() {
            self.warnings
                .push("the file holds no pitched notes (outside channel 10)".into());
        }
        for track in &gathered.tracks {
            if track.percussion_notes > 0 {
                self.warnings.push(format!(
                    "track {}: {} note(s) on channel 10 (percussion) skipped",
                    track.number, track.percussion_notes
                ));
            }
        }
        if self.hanging_notes > MAX_LISTED_WARNINGS {
            self.warnings.push(format!(
                "{} more notes were never released and were dropped as stray note-ons",
                self.hanging_notes - MAX_LISTED_WARNINGS
            ));
        }

        Ok(Piece {
            title,
            parts,
            measures,
            key,
            warnings: std::mem::take(&mut self.warnings),
        })
    }

    /// Strips a RIFF RMID wrapper (Microsoft's RIFF MIDI), returning the SMF
    /// inside and its byte offset in the file.
    fn unwrap_rmid<'b>(&self, bytes: &'b [u8]) -> Result<(&'b [u8], u64), ScoreError> {
        let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
        if !bytes.starts_with(b"RIFF") {
            return Ok((bytes, 0));
        }
        if bytes.get(8..12) != Some(b"RMID".as_slice()) {
            return Err(self.malformed(8, "a RIFF file that is not RIFF MIDI (RMID)".into()));
        }
        let mut offset = 12usize;
        while let Some(header) = offset.checked_add(8).and_then(|end| bytes.get(offset..end)) {
            let id = &header[..4];
            let length = u32::from_le_bytes([header[4], header[5], header[6], header[7]]) as usize;
            let start = offset + 8;
            if id == b"data" {
                return match bytes.get(start..start.saturating_add(length)) {
                    Some(data) => Ok((data, start as u64)),
                    None => Err(self.malformed(
                        offset as u64,
                        format!(
                            "the RMID data chunk declares {length} bytes but only {} remain: \
                             the file is truncated",
                            bytes.len() - start
                        ),
                    )),
                };
            }
            // RIFF chunks are padded to an even length.
            offset = start.saturating_add(length).saturating_add(length % 2);
        }
        Err(self.malformed(12, "a RIFF MIDI (RMID) file without a data chunk".into()))
    }

    /// Reads the MThd chunk: format, declared track count, division.
    fn read_header(
        &self,
        smf: &[u8],
        base_offset: u64,
    ) -> Result<(u16, u16, Clock, usize), ScoreError> {
        if !smf.starts_with(b"MThd") {
            return Err(self.malformed(base_offset, "expected a MIDI header chunk (MThd)".into()));
        }
        let Some(header) = smf.get(..14) else {
            return Err(self.malformed(
                base_offset + smf.len() as u64,
                format!(
                    "the MIDI header is cut off after {} of its 14 bytes: the file is truncated",
                    smf.len()
                ),
            ));
        };
        let length = u32::from_be_bytes([header[4], header[5], header[6], header[7]]) as usize;
        if length < 6 {
            return Err(self.malformed(
                base_offset + 4,
                format!("the MIDI header declares {length} bytes; it needs at least 6"),
            ));
        }
        let body_start = 8usize.saturating_add(length);
        if body_start > smf.len() {
            return Err(self.malformed(
                base_offset + 4,
                format!(
                    "the MIDI header declares {length} bytes but only {} remain",
                    smf.len() - 8
                ),
            ));
        }
        let format = u16::from_be_bytes([header[8], header[9]]);
        let declared_tracks = u16::from_be_bytes([header[10], header[11]]);
        let division = u16::from_be_bytes([header[12], header[13]]);
        match format {
            0 | 1 => {}
            2 => {
                return Err(ScoreError::Unsupported {
                    file: self.path.to_path_buf(),
                    location: Location::ByteOffset(base_offset + 8),
                    message: "SMF format 2 (a set of independent sequences, not one piece); \
                              save the piece as format 0 or 1"
                        .into(),
                });
            }
            other => {
                return Err(self.malformed(
                    base_offset + 8,
                    format!("unknown SMF format {other} (expected 0 or 1)"),
                ));
            }
        }
        if declared_tracks == 0 {
            return Err(self.malformed(
                base_offset + 10,
                "the MIDI header declares no tracks".into(),
            ));
        }
        let clock = if division & 0x8000 == 0 {
            if division == 0 {
                return Err(self.malformed(
                    base_offset + 12,
                    "the MIDI header gives 0 ticks per quarter note".into(),
                ));
            }
            Clock::Metrical {
                ticks_per_quarter: f64::from(division),
            }
        } else {
            // SMPTE division: the high byte is minus the frame rate, the low
            // byte the ticks per frame (Standard MIDI Files 1.0, "Header Chunks").
            let frames = ((division >> 8) as u8 as i8).wrapping_neg() as u8;
            let ticks_per_frame = (division & 0xFF) as u8;
            let frames_per_second = match frames {
                24 => 24.0,
                25 => 25.0,
                // "29" is 30-frame drop-frame: 30/1.001 frames per second.
                29 => 30.0 / 1.001,
                30 => 30.0,
                other => {
                    return Err(self.malformed(
                        base_offset + 12,
                        format!(
                            "SMPTE timing with {other} frames per second (expected 24, 25, 29 or 30)"
                        ),
                    ));
                }
            };
            if ticks_per_frame == 0 {
                return Err(self.malformed(
                    base_offset + 13,
                    "SMPTE timing with 0 ticks per frame".into(),
                ));
            }
            Clock::Timecode {
                ticks_per_second: frames_per_second * f64::from(ticks_per_frame),
            }
        };
        Ok((format, declared_tracks, clock, body_start))
    }

    /// Walks the chunks after the header and returns each track chunk's data
    /// with its byte offset in the file. Unknown chunks with a printable
    /// four-letter id are skipped, as the SMF specification asks.
    fn track_chunks<'b>(
        &mut self,
        smf: &'b [u8],
        body_start: usize,
        base_offset: u64,
        declared_tracks: u16,
    ) -> Result<Vec<(u64, &'b [u8])>, ScoreError> {
        let mut chunks = Vec::new();
        let mut offset = body_start;
        while let Some(header) = smf.get(offset..offset + 8) {
            let id = &header[..4];
            let length = u32::from_be_bytes([header[4], header[5], header[6], header[7]]) as usize;
            let file_offset = base_offset + offset as u64;
            let is_track = id == b"MTrk";
            if !is_track
                && !id
                    .iter()
                    .all(|byte| byte.is_ascii_graphic() || *byte == b' ')
            {
                return Err(self.malformed(
                    file_offset,
                    format!(
                        "expected a track chunk (MTrk) for track {}, found bytes {}",
                        chunks.len() + 1,
                        hex(id)
                    ),
                ));
            }
            let start = offset + 8;
            let remaining = smf.len() - start;
            if length > remaining {
                let what = if is_track {
                    format!("track {}", chunks.len() + 1)
                } else {
                    format!("chunk {:?}", String::from_utf8_lossy(id))
                };
                return Err(self.malformed(
                    file_offset,
                    format!(
                        "{what} declares {length} bytes but only {remaining} remain: \
                         the file is truncated or the length is corrupt"
                    ),
                ));
            }
            if is_track {
                if chunks.len() >= MAX_MIDI_TRACKS {
                    return Err(self.too_large(format!(
                        "more than {MAX_MIDI_TRACKS} tracks (track {} starts at byte {file_offset}); \
                         a score has at most a few dozen",
                        chunks.len() + 1
                    )));
                }
                chunks.push((base_offset + start as u64, &smf[start..start + length]));
            }
            offset = start + length;
        }
        let trailing = &smf[offset.min(smf.len())..];
        if trailing.iter().any(|byte| *byte != 0) {
            self.warnings.push(format!(
                "{} stray byte(s) after the last chunk at byte {} ignored",
                trailing.len(),
                base_offset + offset as u64
            ));
        }
        if chunks.len() < usize::from(declared_tracks) {
            return Err(self.malformed(
                base_offset + 10,
                format!(
                    "the header declares {declared_tracks} tracks but the file holds {}: \
                     the file is truncated or the track count is corrupt",
                    chunks.len()
                ),
            ));
        }
        if chunks.len() > usize::from(declared_tracks) {
            self.warnings.push(format!(
                "the header declares {declared_tracks} tracks but the file holds {}; all are read",
                chunks.len()
            ));
        }
        Ok(chunks)
    }

    /// Decodes one track chunk's events, pairing notes in ticks.
    fn read_track(
        &mut self,
        number: usize,
        data_offset: u64,
        data: &[u8],
        gathered: &mut Gathered,
    ) -> Result<(), ScoreError> {
        let mut track = TrackData {
            number,
            ..TrackData::default()
        };
        // Open notes per (channel, key), oldest first: (start tick, velocity).
        let mut open: HashMap<(u8, u8), VecDeque<(u64, u8)>> = HashMap::new();
        let mut events = EventIter::new(data);
        let mut tick: u64 = 0;
        loop {
            let unread = events.unread().len();
            let byte_offset = data_offset + (data.len() - unread) as u64;
            let event = match events.next() {
                Some(Ok(event)) => event,
                // midly, built without its `strict` feature, ends the
                // iteration silently at an event it cannot decode: unread
                // bytes before the end mean exactly that.
                None if unread == 0 => break,
                None | Some(Err(_)) => {
                    return Err(self.malformed(
                        byte_offset,
                        format!(
                            "track {number}: cannot decode the event after tick {tick} \
                             (cut off, or data without a status byte)"
                        ),
                    ));
                }
            };
            gathered.events += 1;
            if gathered.events > MAX_MIDI_EVENTS {
                return Err(self.too_large(format!(
                    "more than {MAX_MIDI_EVENTS} events (limit reached in track {number}, \
                     byte {byte_offset})"
                )));
            }
            tick = tick.saturating_add(u64::from(event.delta.as_int()));
            match event.kind {
                TrackEventKind::Midi { channel, message } => {
                    let channel = channel.as_int();
                    match message {
                        MidiMessage::NoteOn { key, vel } if vel.as_int() > 0 => {
                            if channel == PERCUSSION_CHANNEL {
                                track.percussion_notes += 1;
                                continue;
                            }
                            open.entry((channel, key.as_int()))
                                .or_default()
                                .push_back((tick, vel.as_int()));
                        }
                        // A note-on with velocity 0 is a note-off (SMF 1.0 / MIDI 1.0).
                        MidiMessage::NoteOn { key, .. } | MidiMessage::NoteOff { key, .. } => {
                            if channel == PERCUSSION_CHANNEL {
                                continue;
                            }
                            let Some(queue) = open.get_mut(&(channel, key.as_int())) else {
                                continue; // a note-off without a note: nothing to close
                            };
                            // First in, first out: the oldest open note of this
                            // pitch on this channel ends here.
                            if let Some((start_tick, velocity)) = queue.pop_front()
                                && start_tick < tick
                            {
                                self.push_note(
                                    &mut track,
                                    gathered,
                                    TickNote {
                                        start_tick,
                                        end_tick: tick,
                                        key: key.as_int(),
                                        channel,
                                        velocity,
                                    },
                                    byte_offset,
                                )?;
                            }
                        }
                        MidiMessage::ProgramChange { program } => {
                            if let Some(slot) = track.programs.get_mut(usize::from(channel)) {
                                slot.get_or_insert(program.as_int());
                            }
                        }
                        _ => {}
                    }
                }
                TrackEventKind::Meta(meta) => match meta {
                    MetaMessage::Tempo(microseconds) => {
                        let microseconds = microseconds.as_int();
                        if microseconds == 0 {
                            return Err(self.malformed(
                                byte_offset,
                                format!(
                                    "track {number}: a Set Tempo of 0 µs per quarter note \
                                     at tick {tick}"
                                ),
                            ));
                        }
                        gathered.tempos.push(GlobalEvent {
                            tick,
                            track: number,
                            byte_offset,
                            value: microseconds,
                        });
                    }
                    MetaMessage::TimeSignature(numerator, denominator_power, _, _) => {
                        gathered.time_signatures.push(GlobalEvent {
                            tick,
                            track: number,
                            byte_offset,
                            value: TimeSignature {
                                numerator,
                                denominator_power,
                            },
                        });
                    }
                    MetaMessage::KeySignature(sharps, minor) => {
                        gathered.keys.push(GlobalEvent {
                            tick,
                            track: number,
                            byte_offset,
                            value: KeySignature {
                                fifths: i32::from(sharps),
                                mode: if minor { Mode::Minor } else { Mode::Major },
                            },
                        });
                    }
                    MetaMessage::TrackName(name) if track.name.is_none() => {
                        track.name = decode_name(name);
                    }
                    MetaMessage::InstrumentName(name) if track.instrument.is_none() => {
                        track.instrument = decode_name(name);
                    }
                    // Anything after End of Track is not part of the track.
                    MetaMessage::EndOfTrack => break,
                    _ => {}
                },
                _ => {}
            }
        }
        track.end_tick = tick;

        // Notes never released are stray note-ons: dropped, as pretty_midi
        // drops them. Closing them at the end of the track (as Ambit once
        // did) made notes of minutes that doubled a part's sung time and
        // turned a sung line into "accompaniment".
        let mut hanging: Vec<((u8, u8), u64)> = open
            .into_iter()
            .flat_map(|(key, queue)| queue.into_iter().map(move |(start, _)| (key, start)))
            .collect();
        hanging.sort_by_key(|&((channel, key), start)| (start, channel, key));
        for ((channel, key), start_tick) in hanging {
            self.hanging_notes += 1;
            if self.hanging_notes <= MAX_LISTED_WARNINGS {
                self.warnings.push(format!(
                    "track {number}: note {} (MIDI {key}) on channel {} from tick {start_tick} \
                     was never released; dropped as a stray note-on (the track ends at tick {tick})",
                    midi_name(i32::from(key)),
                    channel + 1
                ));
            }
        }
        gathered.tracks.push(track);
        Ok(())
    }

    fn push_note(
        &self,
        track: &mut TrackData,
        gathered: &mut Gathered,
        note: TickNote,
        byte_offset: u64,
    ) -> Result<(), ScoreError> {
        gathered.notes += 1;
        if gathered.notes > MAX_MIDI_NOTES {
            return Err(self.too_large(format!(
                "more than {MAX_MIDI_NOTES} notes (limit reached in track {}, byte {byte_offset})",
                track.number
            )));
        }
        track.notes.push(note);
        Ok(())
    }

    /// Builds the tempo map from every track's Set Tempo events.
    fn time_map(&mut self, clock: Clock, tempos: &mut [GlobalEvent<u32>]) -> TimeMap {
        // Stable: at one tick, the later track's (then later event's) tempo wins,
        // as when the tracks are merged in order and played.
        tempos.sort_by_key(|event| event.tick);
        if tempos.is_empty() {
            self.warnings.push(
                "no Set Tempo event: 120 quarter notes per minute assumed (the SMF default)".into(),
            );
        }
        if let Clock::Timecode { ticks_per_second } = clock {
            self.warnings.push(format!(
                "SMPTE timing ({ticks_per_second:.3} ticks per second): seconds come from the \
                 clock; quarter notes are derived through the Set Tempo events"
            ));
        }
        let seconds_per_quarter = |microseconds: u32| f64::from(microseconds) / 1e6;
        let mut segments = vec![Segment {
            tick: 0,
            quarters: 0.0,
            seconds: 0.0,
            seconds_per_quarter: seconds_per_quarter(DEFAULT_MICROSECONDS_PER_QUARTER),
        }];
        for tempo in tempos.iter() {
            let (quarters, seconds) = TimeMap::position_in(&segments, clock, tempo.tick);
            let segment = Segment {
                tick: tempo.tick,
                quarters,
                seconds,
                seconds_per_quarter: seconds_per_quarter(tempo.value),
            };
            match segments.last_mut() {
                Some(last) if last.tick == tempo.tick => *last = segment,
                _ => segments.push(segment),
            }
        }
        TimeMap { clock, segments }
    }

    /// Lays out measures from the time signatures of all tracks, from tick 0
    /// to the end of the last note. 4/4 until the first time signature (the
    /// SMF default). A time signature that falls inside a bar cuts that bar
    /// short.
    fn measures(
        &mut self,
        gathered: &Gathered,
        time_map: &TimeMap,
    ) -> Result<Vec<Measure>, ScoreError> {
        // The last note's end: (end tick, track number).
        let last_end = gathered
            .tracks
            .iter()
            .flat_map(|track| track.notes.iter().map(|note| (note.end_tick, track.number)))
            .max();
        let end_quarters = last_end.map_or(0.0, |(tick, _)| time_map.position(tick).0);
        let mut signatures: Vec<(f64, f64)> = Vec::new(); // (position, bar length), in quarters
        let mut sorted: Vec<&GlobalEvent<TimeSignature>> =
            gathered.time_signatures.iter().collect();
        sorted.sort_by_key(|event| event.tick);
        for event in sorted {
            let TimeSignature {
                numerator,
                denominator_power,
            } = event.value;
            if numerator == 0 || denominator_power > 8 {
                self.warnings.push(format!(
                    "track {}: time signature {numerator}/2^{denominator_power} at tick {} \
                     (byte {}) ignored",
                    event.track, event.tick, event.byte_offset
                ));
                continue;
            }
            // numerator beats of a 1/2^power note; a quarter is 1/4.
            let bar_quarters = f64::from(numerator) * 4.0 / f64::from(1u32 << denominator_power);
            signatures.push((time_map.position(event.tick).0, bar_quarters));
        }
        let mut measures = Vec::new();
        let mut bar_quarters = 4.0;
        let mut next_signature = 0;
        let mut position = 0.0;
        while position < end_quarters - EPSILON_QUARTERS {
            while let Some(&(at, length)) = signatures.get(next_signature) {
                if at > position + EPSILON_QUARTERS {
                    break;
                }
                bar_quarters = length;
                next_signature += 1;
            }
            let mut length = bar_quarters;
            if let Some(&(at, _)) = signatures.get(next_signature)
                && at < position + length - EPSILON_QUARTERS
            {
                length = at - position;
            }
            if measures.len() >= MAX_MIDI_MEASURES {
                let (tick, track) = last_end.unwrap_or_default();
                return Err(self.too_large(format!(
                    "more than {MAX_MIDI_MEASURES} measures: the last note (track {track}) \
                     ends at tick {tick}, {end_quarters} quarter notes in"
                )));
            }
            measures.push(Measure {
                number: (measures.len() + 1).to_string(),
                onset_seconds: time_map.seconds_at_quarters(position),
                onset_quarters: position,
                duration_quarters: length,
            });
            position += length;
        }
        Ok(measures)
    }

    /// Format 0: the single track's name. Format 1: the name of the first
    /// track when it holds no notes (the conventional tempo track).
    fn title(&self, tracks: &[TrackData], by_channel: bool) -> Option<String> {
        let first = tracks.first()?;
        if by_channel || first.notes.is_empty() {
            first.name.clone()
        } else {
            None
        }
    }

    fn parts(
        &self,
        tracks: &[TrackData],
        by_channel: bool,
        time_map: &TimeMap,
        measures: &[Measure],
    ) -> Vec<Part> {
        let mut parts = Vec::new();
        if by_channel {
            let Some(track) = tracks.first() else {
                return parts;
            };
            for channel in 0..16u8 {
                let notes: Vec<TickNote> = track
                    .notes
                    .iter()
                    .filter(|note| note.channel == channel)
                    .copied()
                    .collect();
                if notes.is_empty() {
                    continue;
                }
                let name = format!("Channel {}", channel + 1);
                let program = track.programs.get(usize::from(channel)).copied().flatten();
                parts.push(Part {
                    kind: part_kind(&name, program, &notes),
                    name,
                    id: format!("channel {}", channel + 1),
                    notes: timed_notes(&notes, time_map, measures),
                });
            }
        } else {
            for track in tracks.iter().filter(|track| !track.notes.is_empty()) {
                let name = track
                    .name
                    .clone()
                    .or_else(|| track.instrument.clone())
                    .unwrap_or_else(|| format!("Track {}", track.number));
                let main_channel = main_channel(&track.notes);
                let program = track
                    .programs
                    .get(usize::from(main_channel))
                    .copied()
                    .flatten();
                parts.push(Part {
                    kind: part_kind(&name, program, &track.notes),
                    name,
                    id: format!("track {}", track.number),
                    notes: timed_notes(&track.notes, time_map, measures),
                });
            }
        }
        parts
    }
}

/// A stretch of constant tempo starting at `tick`.
#[derive(Debug, Clone, Copy)]
struct Segment {
    tick: u64,
    quarters: f64,
    seconds: f64,
    seconds_per_quarter: f64,
}

/// Ticks → (quarters, seconds) through the tempo map, and quarters → seconds.
#[derive(Debug)]
struct TimeMap {
    clock: Clock,
    segments: Vec<Segment>,
}

impl TimeMap {
    /// (quarters, seconds) at `tick`.
    ///
    /// PPQ: quarters = ticks / PPQ, and seconds add up ticks / PPQ × µs per
    /// quarter / 10⁶ over each stretch of constant tempo (Standard MIDI Files
    /// 1.0, "Set Tempo"). SMPTE: seconds = ticks / (frames per second × ticks
    /// per frame), and quarters add up seconds / seconds-per-quarter.
    fn position(&self, tick: u64) -> (f64, f64) {
        Self::position_in(&self.segments, self.clock, tick)
    }

    fn position_in(segments: &[Segment], clock: Clock, tick: u64) -> (f64, f64) {
        let index = segments
            .partition_point(|segment| segment.tick <= tick)
            .saturating_sub(1);
        let Some(segment) = segments.get(index) else {
            return (0.0, 0.0);
        };
        let ticks_in = (tick - segment.tick.min(tick)) as f64;
        match clock {
            Clock::Metrical { ticks_per_quarter } => {
                let quarters_in = ticks_in / ticks_per_quarter;
                (
                    tick as f64 / ticks_per_quarter,
                    segment.seconds + quarters_in * segment.seconds_per_quarter,
                )
            }
            Clock::Timecode { ticks_per_second } => {
                let seconds_in = ticks_in / ticks_per_second;
                (
                    segment.quarters + seconds_in / segment.seconds_per_quarter,
                    tick as f64 / ticks_per_second,
                )
            }
        }
    }

    fn seconds_at_quarters(&self, quarters: f64) -> f64 {
        let index = self
            .segments
            .partition_point(|segment| segment.quarters <= quarters)
            .saturating_sub(1);
        match self.segments.get(index) {
            Some(segment) => {
                segment.seconds + (quarters - segment.quarters) * segment.seconds_per_quarter
            }
            None => 0.0,
        }
    }
}

/// Times the notes of one part and sorts them by onset, then pitch.
fn timed_notes(notes: &[TickNote], time_map: &TimeMap, measures: &[Measure]) -> Vec<Note> {
    let mut timed: Vec<Note> = notes
        .iter()
        .map(|note| {
            let (onset_quarters, onset_seconds) = time_map.position(note.start_tick);
            let (end_quarters, end_seconds) = time_map.position(note.end_tick);
            let measure_index = measures
                .partition_point(|measure| {
                    measure.onset_quarters <= onset_quarters + EPSILON_QUARTERS
                })
                .saturating_sub(1);
            Note {
                onset_seconds,
                duration_seconds: end_seconds - onset_seconds,
                onset_quarters,
                duration_quarters: end_quarters - onset_quarters,
                midi: f64::from(note.key),
                measure_index,
                measure: measures
                    .get(measure_index)
                    .map(|measure| measure.number.clone())
                    .unwrap_or_else(|| "1".into()),
                voice: u32::from(note.channel) + 1,
                staff: 1,
                dynamic: None,
                velocity: Some(note.velocity),
                tied_from_previous: false,
                grace: false,
            }
        })
        .collect();
    timed.sort_by(|a, b| {
        a.onset_quarters
            .total_cmp(&b.onset_quarters)
            .then(a.midi.total_cmp(&b.midi))
            .then(a.voice.cmp(&b.voice))
    });
    timed
}

/// The channel that carries most of a track's notes (lowest on a tie).
fn main_channel(notes: &[TickNote]) -> u8 {
    let mut counts = [0usize; 16];
    for note in notes {
        if let Some(count) = counts.get_mut(usize::from(note.channel)) {
            *count += 1;
        }
    }
    (0..16u8)
        .max_by_key(|&channel| (counts[usize::from(channel)], std::cmp::Reverse(channel)))
        .unwrap_or(0)
}

/// A part is accompaniment when it is a keyboard (a General MIDI piano
/// program 1–8, given explicitly, or a keyboard word in its name) *and* it
/// sounds three or more notes at once for at least a fifth of the time it
/// sounds at all. Anything else is a voice part: a choir part played with a
/// piano sound and a two-note divisi stays a voice.
fn part_kind(name: &str, program: Option<u8>, notes: &[TickNote]) -> PartKind {
    let lower = name.to_lowercase();
    let keyboard_name = [
        "piano",
        "organ",
        "keyboard",
        "accomp",
        "harpsichord",
        "klavier",
    ]
    .iter()
    .any(|word| lower.contains(word));
    let piano_program = program.is_some_and(|program| program <= 7);
    if (keyboard_name || piano_program) && chord_share(notes) >= 0.2 {
        PartKind::Accompaniment
    } else {
        PartKind::Voice
    }
}

/// Share of the sounding ticks during which three or more notes sound.
fn chord_share(notes: &[TickNote]) -> f64 {
    let mut changes: Vec<(u64, i32)> = notes
        .iter()
        .flat_map(|note| [(note.start_tick, 1), (note.end_tick, -1)])
        .collect();
    // Ends before starts at one tick: a repeated chord is not six notes.
    changes.sort_unstable();
    let (mut sounding, mut chord) = (0u64, 0u64);
    let mut count = 0i32;
    let mut previous = 0u64;
    for (tick, change) in changes {
        let span = tick.saturating_sub(previous);
        if count >= 1 {
            sounding += span;
        }
        if count >= 3 {
            chord += span;
        }
        count += change;
        previous = tick;
    }
    if sounding == 0 {
        0.0
    } else {
        chord as f64 / sounding as f64
    }
}

/// The earliest event by tick (the first in file order on a tie).
fn first_by_tick<T>(events: &[GlobalEvent<T>]) -> Option<&GlobalEvent<T>> {
    events.iter().min_by_key(|event| event.tick)
}

/// A track or instrument name: UTF-8 when valid, else Latin-1 (what most
/// older sequencers wrote), trimmed and shortened.
fn decode_name(bytes: &[u8]) -> Option<String> {
    let text = match std::str::from_utf8(bytes) {
        Ok(text) => text.to_string(),
        Err(_) => bytes.iter().map(|&byte| char::from(byte)).collect(),
    };
    let text: String = text
        .trim_matches(|c: char| c.is_whitespace() || c.is_control())
        .chars()
        .take(MAX_NAME_CHARS)
        .collect();
    (!text.is_empty()).then_some(text)
}

fn hex(bytes: &[u8]) -> String {
    bytes
        .iter()
        .map(|byte| format!("{byte:02X}"))
        .collect::<Vec<_>>()
        .join(" ")
}
