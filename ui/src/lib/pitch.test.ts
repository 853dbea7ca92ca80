import { describe, expect, it } from "vitest";
import { centsFromNearest, hzToMidi, isBlackKey, midiToHz, midiToName, nameToMidi, spelledWithFlats } from "./pitch";

describe("pitch names and equal temperament", () => {
  it("A4 = MIDI 69 = 440 Hz (ISO 16:1975 standard tuning frequency)", () => {
    expect(midiToName(69)).toBe("A4");
    expect(midiToHz(69)).toBe(440);
    expect(hzToMidi(440)).toBe(69);
  });

  it("middle C = C4 = MIDI 60 ≈ 261.63 Hz (scientific pitch notation; 12-TET f = 440·2^((m−69)/12))", () => {
    expect(midiToName(60)).toBe("C4");
    // 440 · 2^(−9/12) = 261.6256 Hz, the handbook value for middle C in equal temperament.
    expect(midiToHz(60)).toBeCloseTo(261.6256, 4);
  });

  it("the piano's ends: A0 = 27.5 Hz (MIDI 21) and C8 ≈ 4186.01 Hz (MIDI 108)", () => {
    // Handbook values for the 88-key piano in 12-TET at A4 = 440 Hz.
    expect(midiToName(21)).toBe("A0");
    expect(midiToHz(21)).toBeCloseTo(27.5, 10);
    expect(midiToName(108)).toBe("C8");
    expect(midiToHz(108)).toBeCloseTo(4186.009, 3);
  });

  it("an octave doubles the frequency and a semitone is the twelfth root of two", () => {
    expect(midiToHz(81) / midiToHz(69)).toBeCloseTo(2, 12);
    expect(midiToHz(70) / midiToHz(69)).toBeCloseTo(Math.pow(2, 1 / 12), 12);
  });

  it("another reference pitch: A4 = 415 Hz (baroque pitch, common practice) moves every note with it", () => {
    expect(midiToHz(69, 415)).toBe(415);
    expect(hzToMidi(415, 415)).toBe(69);
    // G#4 at A4 = 440 is 415.30 Hz (12-TET), one semitone below 440.
    expect(hzToMidi(415.3047)).toBeCloseTo(68, 4);
  });

  it("octave numbers change at C, not at A (scientific pitch notation)", () => {
    expect(midiToName(59)).toBe("B3");
    expect(midiToName(61)).toBe("C#4");
    expect(midiToName(0)).toBe("C-1");
    expect(midiToName(127)).toBe("G9");
  });

  it("names round trip for every MIDI note and accept flats the engine may print in a key", () => {
    for (let midi = 0; midi <= 127; midi++) expect(nameToMidi(midiToName(midi))).toBe(midi);
    expect(nameToMidi("Bb2")).toBe(46);
    expect(nameToMidi("E♭4")).toBe(63);
    expect(nameToMidi("Cb4")).toBe(59);
    expect(nameToMidi("H4")).toBeNull();
    expect(nameToMidi("")).toBeNull();
  });

  it("spells black keys with flats on request, the enharmonic equivalents (Bb3 = A#3 = MIDI 58)", () => {
    expect(midiToName(58, true)).toBe("Bb3");
    expect(midiToName(58)).toBe("A#3");
    expect(nameToMidi(midiToName(58, true))).toBe(nameToMidi("A#3"));
    expect(midiToName(60, true)).toBe("C4");
    expect(spelledWithFlats(["C4", "Bb4"])).toBe(true);
    expect(spelledWithFlats(["B4", "F#3"])).toBe(false);
  });

  it("black keys are C#, D#, F#, G#, A# (the piano keyboard)", () => {
    const black = Array.from({ length: 12 }, (_, i) => 60 + i).filter(isBlackKey).map((midi) => midiToName(midi));
    expect(black).toEqual(["C#4", "D#4", "F#4", "G#4", "A#4"]);
  });

  it("cents from the nearest note: 40 cents above A4 is +40, 440 → 436 Hz is −16 cents (1200·log2 ratio)", () => {
    expect(centsFromNearest(hzToMidi(440 * Math.pow(2, 0.4 / 12))!)).toBe(40);
    expect(centsFromNearest(hzToMidi(436)!)).toBe(-16);
    expect(hzToMidi(0)).toBeNull();
  });
});
