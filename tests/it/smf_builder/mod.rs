//! Builds Standard MIDI Files byte by byte for the tests, following the
//! layout in the Standard MIDI Files 1.0 specification (MIDI Manufacturers
//! Association): an `MThd` chunk (length 6, format, track count, division)
//! and `MTrk` chunks of <delta-time> <event> pairs, delta-times as
//! variable-length quantities of 7 bits per byte, high bit = "more follows".
//!
//! Written by hand rather than with midly's writer so that the reader is
//! checked against the specification, not against its own library.
#![allow(dead_code)]

/// A variable-length quantity (SMF 1.0, "Conventions").
pub fn varlen(mut value: u32) -> Vec<u8> {
    let mut bytes = vec![(value & 0x7F) as u8];
    value >>= 7;
    while value > 0 {
        bytes.push(((value & 0x7F) as u8) | 0x80);
        value >>= 7;
    }
    bytes.reverse();
    bytes
}

/// One track's events, written in order with delta-times.
#[derive(Default, Clone)]
pub struct Track {
    pub bytes: Vec<u8>,
}

impl Track {
    pub fn new() -> Self {
        Track::default()
    }

    /// Any event: delta-time, then the raw event bytes.
    pub fn event(mut self, delta: u32, data: &[u8]) -> Self {
        self.bytes.extend(varlen(delta));
        self.bytes.extend_from_slice(data);
        self
    }

    /// A meta event FF type length data.
    pub fn meta(self, delta: u32, kind: u8, data: &[u8]) -> Self {
        let mut bytes = vec![0xFF, kind];
        bytes.extend(varlen(data.len() as u32));
        bytes.extend_from_slice(data);
        self.event(delta, &bytes)
    }

    /// FF 03: sequence/track name.
    pub fn name(self, delta: u32, name: &str) -> Self {
        self.meta(delta, 0x03, name.as_bytes())
    }

    /// FF 04: instrument name.
    pub fn instrument(self, delta: u32, name: &str) -> Self {
        self.meta(delta, 0x04, name.as_bytes())
    }

    /// FF 51 03 tttttt: Set Tempo in microseconds per quarter note.
    pub fn tempo(self, delta: u32, microseconds_per_quarter: u32) -> Self {
        let t = microseconds_per_quarter.to_be_bytes();
        self.meta(delta, 0x51, &t[1..])
    }

    /// FF 58 04 nn dd cc bb: time signature nn/2^dd.
    pub fn time_signature(self, delta: u32, numerator: u8, denominator_power: u8) -> Self {
        self.meta(delta, 0x58, &[numerator, denominator_power, 24, 8])
    }

    /// FF 59 02 sf mi: key signature (sf sharps, negative = flats; mi 1 = minor).
    pub fn key_signature(self, delta: u32, sharps: i8, minor: bool) -> Self {
        self.meta(delta, 0x59, &[sharps as u8, u8::from(minor)])
    }

    /// 9n kk vv: note on (channel 0-based).
    pub fn note_on(self, delta: u32, channel: u8, key: u8, velocity: u8) -> Self {
        self.event(delta, &[0x90 | channel, key, velocity])
    }

    /// 8n kk 40: note off.
    pub fn note_off(self, delta: u32, channel: u8, key: u8) -> Self {
        self.event(delta, &[0x80 | channel, key, 0x40])
    }

    /// Cn pp: program change.
    pub fn program(self, delta: u32, channel: u8, program: u8) -> Self {
        self.event(delta, &[0xC0 | channel, program])
    }

    /// FF 2F 00: end of track.
    pub fn end(self, delta: u32) -> Self {
        self.meta(delta, 0x2F, &[])
    }

    /// The MTrk chunk.
    pub fn chunk(&self) -> Vec<u8> {
        let mut bytes = b"MTrk".to_vec();
        bytes.extend((self.bytes.len() as u32).to_be_bytes());
        bytes.extend_from_slice(&self.bytes);
        bytes
    }
}

/// The MThd chunk: format, track count, division (ticks per quarter, or an
/// SMPTE division with the high bit set).
pub fn header(format: u16, tracks: u16, division: u16) -> Vec<u8> {
    let mut bytes = b"MThd".to_vec();
    bytes.extend(6u32.to_be_bytes());
    bytes.extend(format.to_be_bytes());
    bytes.extend(tracks.to_be_bytes());
    bytes.extend(division.to_be_bytes());
    bytes
}

/// A whole file with `ticks_per_quarter` timing.
pub fn smf(format: u16, ticks_per_quarter: u16, tracks: &[Track]) -> Vec<u8> {
    let mut bytes = header(format, tracks.len() as u16, ticks_per_quarter);
    for track in tracks {
        bytes.extend(track.chunk());
    }
    bytes
}
