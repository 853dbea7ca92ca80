//! Pitch notation: MIDI numbers, scientific pitch names, frequencies and cents.
//!
//! Inside the engine every pitch is a MIDI number held as `f64`, so fractions
//! of a semitone (cents) survive. Names are produced only at the edges (CLI,
//! reports, UI). Scientific pitch notation is used throughout: middle C is
//! C4 = MIDI 60, and A4 defaults to 440 Hz (ISO 16:1975). Frequencies follow
//! twelve-tone equal temperament: f = A4 · 2^((m − 69) / 12).

use serde::{Deserialize, Serialize};
use thiserror::Error;

/// The standard reference pitch, A4 = 440 Hz (ISO 16:1975).
pub const A4_HZ_ISO16: f64 = 440.0;

/// MIDI number of A4.
pub const A4_MIDI: f64 = 69.0;

/// Tuning reference for frequency conversions.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Tuning {
    /// Frequency of A4 in hertz (ISO 16: 440; baroque practice often 415).
    pub a4_hz: f64,
}

impl Default for Tuning {
    fn default() -> Self {
        Tuning { a4_hz: A4_HZ_ISO16 }
    }
}

impl Tuning {
    /// A tuning with the given A4, rejecting values no choir would tune to.
    pub fn with_a4(a4_hz: f64) -> Result<Tuning, PitchError> {
        if !(a4_hz.is_finite() && (300.0..=600.0).contains(&a4_hz)) {
            return Err(PitchError::BadReference(a4_hz));
        }
        Ok(Tuning { a4_hz })
    }

    /// Equal-tempered frequency of a (possibly fractional) MIDI number.
    pub fn midi_to_hz(&self, midi: f64) -> f64 {
        self.a4_hz * 2f64.powf((midi - A4_MIDI) / 12.0)
    }

    /// Fractional MIDI number of a frequency. Non-positive input gives `None`.
    pub fn hz_to_midi(&self, hz: f64) -> Option<f64> {
        (hz > 0.0 && hz.is_finite()).then(|| A4_MIDI + 12.0 * (hz / self.a4_hz).log2())
    }
}

/// Equal-tempered frequency at A4 = 440 Hz.
pub fn midi_to_hz(midi: f64) -> f64 {
    Tuning::default().midi_to_hz(midi)
}

/// Fractional MIDI number at A4 = 440 Hz.
pub fn hz_to_midi(hz: f64) -> Option<f64> {
    Tuning::default().hz_to_midi(hz)
}

/// Interval from `reference_hz` to `hz` in cents (1200 per octave).
pub fn cents_between(reference_hz: f64, hz: f64) -> Option<f64> {
    (reference_hz > 0.0 && hz > 0.0 && hz.is_finite() && reference_hz.is_finite())
        .then(|| 1200.0 * (hz / reference_hz).log2())
}

/// Converts a difference of MIDI numbers to cents.
pub fn semitones_to_cents(semitones: f64) -> f64 {
    semitones * 100.0
}

#[derive(Debug, Clone, PartialEq, Error)]
pub enum PitchError {
    #[error(
        "`{0}` is not a pitch name: expected a letter A–G, an optional accidental (#, b, ♯, ♭, x, bb) and an octave, e.g. F#3 or Bb4, or a MIDI number 0–127"
    )]
    BadName(String),
    #[error("pitch `{0}` lies outside MIDI 0–127")]
    OutOfRange(String),
    #[error("A4 = {0} Hz is not a usable reference pitch (expected 300–600 Hz)")]
    BadReference(f64),
}

const SHARP_NAMES: [&str; 12] = [
    "C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B",
];

/// Scientific pitch name of a whole MIDI number, spelled with sharps
/// (60 → "C4", 61 → "C#4", 21 → "A0").
pub fn midi_name(midi: i32) -> String {
    let pitch_class = midi.rem_euclid(12) as usize;
    let octave = midi.div_euclid(12) - 1;
    format!("{}{}", SHARP_NAMES[pitch_class], octave)
}

const FLAT_NAMES: [&str; 12] = [
    "C", "Db", "D", "Eb", "E", "F", "Gb", "G", "Ab", "A", "Bb", "B",
];

/// Scientific pitch name spelled for a key signature: flats in flat keys
/// (`key_fifths` < 0), sharps otherwise (70 in F major → "Bb4").
pub fn midi_name_in_key(midi: i32, key_fifths: i32) -> String {
    if key_fifths < 0 {
        let pitch_class = midi.rem_euclid(12) as usize;
        format!("{}{}", FLAT_NAMES[pitch_class], midi.div_euclid(12) - 1)
    } else {
        midi_name(midi)
    }
}

/// Name of the nearest semitone to a fractional MIDI number.
pub fn nearest_name(midi: f64) -> String {
    midi_name(midi.round() as i32)
}

/// Name of the nearest semitone with the deviation in cents when it is at
/// least one cent, e.g. 60.25 → "C4 +25¢".
pub fn name_with_cents(midi: f64) -> String {
    let nearest = midi.round();
    let cents = ((midi - nearest) * 100.0).round() as i32;
    if cents == 0 {
        midi_name(nearest as i32)
    } else {
        format!("{} {:+}¢", midi_name(nearest as i32), cents)
    }
}

/// Parses a scientific pitch name (`C4`, `F#3`, `Gb3`, `Bb4`, `B♭4`, `Cx5`,
/// `Ebb2`, `C-1`) or a plain MIDI number (`60`) to a MIDI number.
///
/// Letters are case-insensitive. Octaves run from −1 (MIDI 0 = C−1) upward;
/// the result must lie in 0–127.
pub fn parse_pitch(text: &str) -> Result<i32, PitchError> {
    let trimmed = text.trim();
    let bad = || PitchError::BadName(trimmed.to_string());
    if trimmed.is_empty() {
        return Err(bad());
    }
    if let Ok(number) = trimmed.parse::<i64>() {
        return if (0..=127).contains(&number) {
            Ok(number as i32)
        } else {
            Err(PitchError::OutOfRange(trimmed.to_string()))
        };
    }
    let mut chars = trimmed.chars().peekable();
    let letter = chars.next().ok_or_else(bad)?;
    let base = match letter.to_ascii_uppercase() {
        'C' => 0,
        'D' => 2,
        'E' => 4,
        'F' => 5,
        'G' => 7,
        'A' => 9,
        'B' => 11,
        _ => return Err(bad()),
    };
    // Accidentals are all raising or all lowering, at most a double one.
    let (mut raise, mut lower) = (0i32, 0i32);
    while let Some(&c) = chars.peek() {
        match c {
            '#' | '♯' => raise += 1,
            'x' | '𝄪' => raise += 2,
            'b' | '♭' => lower += 1,
            '𝄫' => lower += 2,
            _ => break,
        }
        chars.next();
        if raise > 2 || lower > 2 || (raise > 0 && lower > 0) {
            return Err(bad());
        }
    }
    let alter = raise - lower;
    let octave_text: String = chars.collect();
    let octave: i32 = octave_text.parse().map_err(|_| bad())?;
    if !(-1..=9).contains(&octave) {
        return Err(PitchError::OutOfRange(trimmed.to_string()));
    }
    let midi = (octave + 1) * 12 + base + alter;
    if (0..=127).contains(&midi) {
        Ok(midi)
    } else {
        Err(PitchError::OutOfRange(trimmed.to_string()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tolerance: f64) -> bool {
        (a - b).abs() <= tolerance
    }

    #[test]
    fn reference_pitch_is_iso16() {
        // ISO 16:1975 fixes A4 at 440 Hz.
        assert_eq!(midi_to_hz(69.0), 440.0);
        assert_eq!(hz_to_midi(440.0), Some(69.0));
    }

    #[test]
    fn handbook_frequencies_in_equal_temperament() {
        // Equal-tempered frequencies at A4 = 440 Hz as tabulated in handbooks
        // (e.g. the frequency table in the Acoustical Society's / physics
        // handbooks; f = 440·2^((m−69)/12)): C4 261.63, A0 27.5, C8 4186.01.
        assert!(close(midi_to_hz(60.0), 261.63, 0.005));
        assert!(close(midi_to_hz(21.0), 27.5, 1e-9));
        assert!(close(midi_to_hz(108.0), 4186.01, 0.005));
        // An octave doubles the frequency (definition of the octave).
        assert!(close(midi_to_hz(81.0), 880.0, 1e-9));
    }

    #[test]
    fn other_references_scale_every_pitch() {
        // Baroque pitch A4 = 415 Hz is a common practice; the same formula applies.
        let baroque = Tuning::with_a4(415.0).unwrap();
        assert!(close(baroque.midi_to_hz(69.0), 415.0, 1e-12));
        assert!(close(baroque.hz_to_midi(415.0).unwrap(), 69.0, 1e-12));
        assert!(Tuning::with_a4(0.0).is_err());
        assert!(Tuning::with_a4(f64::NAN).is_err());
    }

    #[test]
    fn cents_follow_the_1200_per_octave_definition() {
        assert!(close(cents_between(440.0, 880.0).unwrap(), 1200.0, 1e-9));
        // One equal-tempered semitone is 100 cents by definition.
        let up = midi_to_hz(70.0);
        assert!(close(cents_between(440.0, up).unwrap(), 100.0, 1e-9));
        assert_eq!(cents_between(0.0, 440.0), None);
        assert_eq!(semitones_to_cents(0.5), 50.0);
    }

    #[test]
    fn names_follow_scientific_pitch_notation() {
        // Scientific pitch notation (ASA): middle C is C4 = MIDI 60.
        assert_eq!(midi_name(60), "C4");
        assert_eq!(midi_name(21), "A0");
        assert_eq!(midi_name(59), "B3");
        assert_eq!(midi_name(0), "C-1");
        assert_eq!(midi_name(127), "G9");
        assert_eq!(name_with_cents(60.25), "C4 +25¢");
        assert_eq!(name_with_cents(68.9), "A4 -10¢");
    }

    #[test]
    fn flat_keys_spell_with_flats() {
        // F major has one flat (B♭): MIDI 70 is B♭4 there, A♯4 in G major.
        assert_eq!(midi_name_in_key(70, -1), "Bb4");
        assert_eq!(midi_name_in_key(70, 1), "A#4");
        assert_eq!(midi_name_in_key(60, -3), "C4");
        for midi in 0..=127 {
            assert_eq!(parse_pitch(&midi_name_in_key(midi, -4)), Ok(midi));
        }
    }

    #[test]
    fn parses_sharps_flats_and_numbers() {
        assert_eq!(parse_pitch("C4"), Ok(60));
        assert_eq!(parse_pitch("F#3"), Ok(54));
        assert_eq!(parse_pitch("Gb3"), Ok(54));
        assert_eq!(parse_pitch("Bb4"), Ok(70));
        assert_eq!(parse_pitch("B♭4"), Ok(70));
        assert_eq!(parse_pitch("a♯4"), Ok(70));
        // B#3 is enharmonically C4, Cb4 is B3.
        assert_eq!(parse_pitch("B#3"), Ok(60));
        assert_eq!(parse_pitch("Cb4"), Ok(59));
        assert_eq!(parse_pitch("Ebb2"), Ok(38));
        assert_eq!(parse_pitch("C-1"), Ok(0));
        assert_eq!(parse_pitch(" 64 "), Ok(64));
    }

    #[test]
    fn rejects_what_is_not_a_pitch() {
        for text in ["", "H4", "C", "C#", "4C", "C#b#4", "Bb", "C4.5", "do4"] {
            assert!(
                matches!(parse_pitch(text), Err(PitchError::BadName(_))),
                "{text}"
            );
        }
        assert!(matches!(parse_pitch("128"), Err(PitchError::OutOfRange(_))));
        assert!(matches!(parse_pitch("G#9"), Err(PitchError::OutOfRange(_))));
        assert!(matches!(
            parse_pitch("Cb-1"),
            Err(PitchError::OutOfRange(_))
        ));
    }

    #[test]
    fn names_and_parsing_round_trip() {
        for midi in 0..=127 {
            assert_eq!(parse_pitch(&midi_name(midi)), Ok(midi));
            let hz = midi_to_hz(midi as f64);
            assert!(close(hz_to_midi(hz).unwrap(), midi as f64, 1e-9));
        }
    }
}
