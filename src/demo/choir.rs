//! The demo choir: an invented community choir of 24 singers, with the
//! figures each one "really" has. The demo synthesises their auditions from
//! these figures, so they double as ground truth in tests — never as the
//! only proof that something is right.
//!
//! Names and people are invented for this project's scenario.

use serde::{Deserialize, Serialize};

use crate::voice::types::VoiceType;

/// One invented singer and their true voice.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DemoSinger {
    pub name: &'static str,
    pub voice_type: VoiceType,
    /// Lowest and highest pitch this singer can hold (MIDI).
    pub range_low_midi: f64,
    pub range_high_midi: f64,
    /// Where the voice is easy (MIDI).
    pub comfort_low_midi: f64,
    pub comfort_high_midi: f64,
    pub primo_midi: f64,
    pub secondo_midi: f64,
    /// Whether the singer's glide shows an audible register break at the
    /// secondo (trained singers often blend it away).
    pub glide_breaks: bool,
    pub speaking_f0_hz: f64,
    /// Vibrato rate and extent (± cents).
    pub vibrato_hz: f64,
    pub vibrato_cents: f64,
    /// A short note for the director.
    pub notes: &'static str,
}

const fn singer(
    name: &'static str,
    voice_type: VoiceType,
    range: (f64, f64),
    comfort: (f64, f64),
    passaggi: (f64, f64),
    // Whether the glide breaks, the speaking f0, and vibrato rate and extent.
    (glide_breaks, speaking_f0_hz, vibrato): (bool, f64, (f64, f64)),
    notes: &'static str,
) -> DemoSinger {
    DemoSinger {
        name,
        voice_type,
        range_low_midi: range.0,
        range_high_midi: range.1,
        comfort_low_midi: comfort.0,
        comfort_high_midi: comfort.1,
        primo_midi: passaggi.0,
        secondo_midi: passaggi.1,
        glide_breaks,
        speaking_f0_hz,
        vibrato_hz: vibrato.0,
        vibrato_cents: vibrato.1,
        notes,
    }
}

use VoiceType::*;

/// The choir, sopranos first. Figures are MIDI numbers (C4 = 60).
pub const DEMO_CHOIR: [DemoSinger; 24] = [
    singer(
        "Maren Quist",
        Soprano,
        (60.0, 84.0),
        (65.0, 81.0),
        (65.0, 78.0),
        (true, 225.0, (5.8, 45.0)),
        "bright, light top",
    ),
    singer(
        "Odile Farrant",
        Soprano,
        (59.0, 83.0),
        (64.0, 79.0),
        (64.0, 78.0),
        (true, 215.0, (6.2, 55.0)),
        "",
    ),
    singer(
        "Tamsin Orlo",
        Soprano,
        (60.0, 82.0),
        (64.0, 78.0),
        (65.0, 77.0),
        (false, 230.0, (5.5, 35.0)),
        "joined this season",
    ),
    singer(
        "Hedda Lumm",
        Soprano,
        (58.0, 81.0),
        (63.0, 77.0),
        (64.0, 77.0),
        (true, 210.0, (6.0, 60.0)),
        "",
    ),
    singer(
        "Brisa Kallend",
        Soprano,
        (61.0, 84.0),
        (66.0, 81.0),
        (65.0, 79.0),
        (false, 235.0, (6.4, 40.0)),
        "16, voice still settling",
    ),
    singer(
        "Ysolde Penhale",
        MezzoSoprano,
        (57.0, 80.0),
        (60.0, 76.0),
        (64.0, 76.0),
        (true, 200.0, (5.7, 50.0)),
        "",
    ),
    singer(
        "Carys Vellam",
        MezzoSoprano,
        (56.0, 79.0),
        (60.0, 75.0),
        (63.0, 75.0),
        (true, 195.0, (6.1, 65.0)),
        "strong reader",
    ),
    singer(
        "Ines Tallow",
        MezzoSoprano,
        (57.0, 81.0),
        (61.0, 77.0),
        (64.0, 76.0),
        (false, 205.0, (5.9, 45.0)),
        "",
    ),
    singer(
        "Petra Solvay",
        MezzoSoprano,
        (55.0, 79.0),
        (59.0, 75.0),
        (63.0, 75.0),
        (true, 190.0, (6.3, 55.0)),
        "",
    ),
    singer(
        "Agathe Rinmore",
        Contralto,
        (53.0, 77.0),
        (57.0, 72.0),
        (62.0, 74.0),
        (true, 175.0, (5.6, 50.0)),
        "anchors the altos",
    ),
    singer(
        "Wren Dallory",
        Contralto,
        (52.0, 76.0),
        (56.0, 71.0),
        (61.0, 73.0),
        (true, 170.0, (6.0, 40.0)),
        "",
    ),
    singer(
        "Solenne Broack",
        Contralto,
        (53.0, 75.0),
        (57.0, 71.0),
        (62.0, 73.0),
        (false, 180.0, (5.8, 60.0)),
        "",
    ),
    singer(
        "Lucan Fairweather",
        Countertenor,
        (55.0, 76.0),
        (60.0, 72.0),
        (64.0, 69.0),
        (true, 118.0, (5.9, 35.0)),
        "sings alto in falsetto",
    ),
    singer(
        "Teodor Marsh-Ivey",
        Tenor,
        (48.0, 72.0),
        (52.0, 67.0),
        (62.0, 67.0),
        (true, 130.0, (6.0, 50.0)),
        "",
    ),
    singer(
        "Ansel Cobb",
        Tenor,
        (49.0, 72.0),
        (53.0, 68.0),
        (63.0, 68.0),
        (true, 135.0, (6.2, 45.0)),
        "reliable top",
    ),
    singer(
        "Rafe Quillon",
        Tenor,
        (47.0, 70.0),
        (51.0, 66.0),
        (62.0, 66.0),
        (false, 125.0, (5.7, 55.0)),
        "",
    ),
    singer(
        "Jory Pell",
        Tenor,
        (48.0, 71.0),
        (52.0, 67.0),
        (61.0, 67.0),
        (true, 128.0, (6.4, 40.0)),
        "15, voice changing: re-check in spring",
    ),
    singer(
        "Emrys Holloway",
        Baritone,
        (45.0, 67.0),
        (48.0, 62.0),
        (59.0, 64.0),
        (true, 112.0, (5.8, 50.0)),
        "",
    ),
    singer(
        "Casimir Dunlin",
        Baritone,
        (44.0, 67.0),
        (48.0, 63.0),
        (59.0, 64.0),
        (true, 110.0, (6.0, 60.0)),
        "",
    ),
    singer(
        "Oren Baptiste-Lowe",
        Baritone,
        (45.0, 66.0),
        (49.0, 62.0),
        (58.0, 64.0),
        (false, 115.0, (5.6, 45.0)),
        "new this term",
    ),
    singer(
        "Silas Wren-Adair",
        Baritone,
        (43.0, 66.0),
        (47.0, 61.0),
        (58.0, 63.0),
        (true, 108.0, (6.1, 55.0)),
        "",
    ),
    singer(
        "Magnus Ettrick",
        Bass,
        (40.0, 64.0),
        (45.0, 60.0),
        (55.0, 60.0),
        (true, 98.0, (5.5, 45.0)),
        "low Ds on a good day",
    ),
    singer(
        "Fenn Arkwright",
        Bass,
        (41.0, 63.0),
        (45.0, 59.0),
        (55.0, 60.0),
        (true, 102.0, (5.9, 50.0)),
        "",
    ),
    singer(
        "Bram Tollis",
        Bass,
        (39.0, 62.0),
        (44.0, 58.0),
        (54.0, 59.0),
        (false, 95.0, (6.0, 40.0)),
        "",
    ),
];
