/**
 * The keyboard axis shared by every pitch chart (range cards, tessitura
 * histograms, the history chart): one equal step per semitone, piano-coloured
 * keys, note names at every C and at both ends.
 *
 * Invariant: layout only; it gets MIDI numbers from the engine's results and
 * decides where they go, never what they are.
 */
import { isBlackKey, midiToName, pitchClass } from "./pitch";

export interface KeyboardAxis {
  lowMidi: number;
  highMidi: number;
  /** Pixels per semitone. */
  step: number;
  /** x of the left edge of the low key. */
  left: number;
}

export interface AxisKey {
  midi: number;
  name: string;
  black: boolean;
  /** Left edge and width of the key's column. */
  x: number;
  width: number;
}

/**
 * An axis covering lowMidi…highMidi (whole semitones, widened evenly to at
 * least `minSemitones`, then padded to the nearest C below and B above, so
 * that labels sit at the octave's start) across `width` pixels from `left`.
 */
export function keyboardAxis(lowMidi: number, highMidi: number, width: number, left = 0, minSemitones = 0): KeyboardAxis {
  let low = Math.floor(Math.min(lowMidi, highMidi));
  let high = Math.ceil(Math.max(lowMidi, highMidi));
  if (!Number.isFinite(low) || !Number.isFinite(high)) {
    low = 48;
    high = 72;
  }
  // Widen a narrow span evenly on both sides, so one held note still sits in context.
  const missing = minSemitones - (high - low);
  if (missing > 0) {
    low -= Math.floor(missing / 2);
    high += Math.ceil(missing / 2);
  }
  low -= pitchClass(low); // down to a C
  high += 11 - pitchClass(high); // up to a B
  const semitones = high - low + 1;
  return { lowMidi: low, highMidi: high, step: width / semitones, left };
}

/** Centre x of a (fractional) MIDI number's column. */
export function xOfMidi(axis: KeyboardAxis, midi: number): number {
  return axis.left + (midi - axis.lowMidi + 0.5) * axis.step;
}

/** Left edge x of a whole semitone's column. */
export function keyLeft(axis: KeyboardAxis, midi: number): number {
  return axis.left + (midi - axis.lowMidi) * axis.step;
}

export function axisKeys(axis: KeyboardAxis): AxisKey[] {
  const keys: AxisKey[] = [];
  for (let midi = axis.lowMidi; midi <= axis.highMidi; midi++) {
    keys.push({ midi, name: midiToName(midi), black: isBlackKey(midi), x: keyLeft(axis, midi), width: axis.step });
  }
  return keys;
}

/** The labelled notes: every C, plus the ends when a C is not there. */
export function axisLabels(axis: KeyboardAxis): { midi: number; name: string; x: number }[] {
  const labels = [];
  for (let midi = axis.lowMidi; midi <= axis.highMidi; midi++) {
    if (pitchClass(midi) === 0) labels.push({ midi, name: midiToName(midi), x: xOfMidi(axis, midi) });
  }
  return labels;
}

/** A label beside a vertical mark at `x`, about `width` pixels wide. */
export interface MarkLabel {
  x: number;
  width: number;
}

/**
 * Which side of its mark each label goes, so that labels stay inside
 * minX…maxX and cross as few of the other marks as possible (a label on the
 * right spans x…x + width, on the left x − width…x); right wins a tie.
 * Labels sit on rows of their own, so only the marks can be crossed.
 */
export function labelSides(labels: MarkLabel[], minX: number, maxX: number): ("left" | "right")[] {
  return labels.map((label, index) => {
    const score = (side: "left" | "right") => {
      const from = side === "right" ? label.x : label.x - label.width;
      const to = from + label.width;
      const overflow = Math.max(0, minX - from) + Math.max(0, to - maxX);
      const crossed = labels.filter((other, j) => j !== index && other.x > from && other.x < to).length;
      return { overflow, crossed };
    };
    const right = score("right");
    const left = score("left");
    if (right.overflow !== left.overflow && (right.overflow > 0 || left.overflow > 0)) {
      return right.overflow < left.overflow ? "right" : "left";
    }
    return left.crossed < right.crossed ? "left" : "right";
  });
}
