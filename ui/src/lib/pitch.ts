/**
 * Pitch names and frequencies for display: scientific pitch notation
 * (middle C = C4 = MIDI 60) and twelve-tone equal temperament around a
 * reference A4 (ISO 16: 440 Hz).
 *
 * Invariant: display only. The engine (`ambit::pitch`) is the one parser of
 * pitch names the user types; the UI sends typed names to it as they are and
 * reads back the names and MIDI numbers it returns. `nameToMidi` here only
 * places engine-produced names on an axis.
 */

export const ISO16_A4_HZ = 440;

const SHARP_NAMES = ["C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"];
const FLAT_NAMES = ["C", "Db", "D", "Eb", "E", "F", "Gb", "G", "Ab", "A", "Bb", "B"];
const LETTER_SEMITONES: Record<string, number> = { C: 0, D: 2, E: 4, F: 5, G: 7, A: 9, B: 11 };

/** Black keys of a piano keyboard, as pitch classes. */
const BLACK_PITCH_CLASSES = new Set([1, 3, 6, 8, 10]);

/** The pitch class 0–11 of a (rounded) MIDI number, also for negative numbers. */
export function pitchClass(midi: number): number {
  return ((Math.round(midi) % 12) + 12) % 12;
}

export function isBlackKey(midi: number): boolean {
  return BLACK_PITCH_CLASSES.has(pitchClass(midi));
}

/**
 * "C4" for 60, "F#3" for 54: the nearest equal-tempered note, sharps for black
 * keys, or flats ("Gb3") when `flats` is set (to match names the engine spelled
 * in a flat key).
 */
export function midiToName(midi: number, flats = false): string {
  const rounded = Math.round(midi);
  const octave = Math.floor(rounded / 12) - 1;
  return `${(flats ? FLAT_NAMES : SHARP_NAMES)[pitchClass(rounded)]}${octave}`;
}

/** Whether engine-produced names use flats (so the UI's own names should too). */
export function spelledWithFlats(names: string[]): boolean {
  return names.some((name) => /^[A-G](b|♭)/.test(name));
}

/** Frequency of a (fractional) MIDI number: f = A4 · 2^((m − 69)/12). */
export function midiToHz(midi: number, a4Hz: number = ISO16_A4_HZ): number {
  return a4Hz * Math.pow(2, (midi - 69) / 12);
}

/** The inverse of `midiToHz`; `null` for a non-positive or non-finite frequency. */
export function hzToMidi(hz: number, a4Hz: number = ISO16_A4_HZ): number | null {
  if (!(hz > 0) || !Number.isFinite(hz)) return null;
  return 69 + 12 * Math.log2(hz / a4Hz);
}

/** Cents from the nearest equal-tempered note (−50 … +50). */
export function centsFromNearest(midi: number): number {
  return Math.round((midi - Math.round(midi)) * 100);
}

/**
 * MIDI number of an engine-produced name such as "F#3", "Bb2", "E♭4", "C-1";
 * `null` when it is not such a name.
 */
export function nameToMidi(name: string): number | null {
  const match = /^\s*([A-Ga-g])([#♯b♭]*)(-?\d+)\s*$/.exec(name);
  if (!match) return null;
  const [, letter, accidentals, octaveText] = match;
  let semitone = LETTER_SEMITONES[letter.toUpperCase()];
  for (const accidental of accidentals) {
    semitone += accidental === "#" || accidental === "♯" ? 1 : -1;
  }
  return (Number(octaveText) + 1) * 12 + semitone;
}

/** "C4 (261.6 Hz)" */
export function nameWithHz(midi: number, a4Hz: number = ISO16_A4_HZ): string {
  return `${midiToName(midi)} (${midiToHz(midi, a4Hz).toFixed(1)} Hz)`;
}
