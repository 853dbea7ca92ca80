import { describe, expect, it } from "vitest";
import { axisKeys, axisLabels, keyboardAxis, labelSides, xOfMidi } from "./keyboard";

describe("keyboard axis", () => {
  it("pads a range out to whole octaves from C to B", () => {
    // E3 (52) … G4 (67) becomes C3 (48) … B4 (71): two octaves, 24 keys.
    const axis = keyboardAxis(52, 67, 240);
    expect(axis.lowMidi).toBe(48);
    expect(axis.highMidi).toBe(71);
    expect(axis.step).toBe(10);
    expect(axisKeys(axis)).toHaveLength(24);
  });

  it("puts C4 at the centre of its column, and one semitone is one step", () => {
    const axis = keyboardAxis(60, 71, 120, 30);
    expect(xOfMidi(axis, 60)).toBe(35);
    expect(xOfMidi(axis, 61) - xOfMidi(axis, 60)).toBe(10);
    // A fractional pitch (a quarter tone above C4) lands between the columns.
    expect(xOfMidi(axis, 60.5)).toBe(40);
  });

  it("colours the keys as a piano octave has them: 7 white, 5 black (C# D# F# G# A#)", () => {
    const keys = axisKeys(keyboardAxis(60, 71, 120));
    expect(keys.filter((key) => key.black).map((key) => key.name)).toEqual(["C#4", "D#4", "F#4", "G#4", "A#4"]);
    expect(keys.filter((key) => !key.black)).toHaveLength(7);
  });

  it("labels every C with its scientific pitch name (C4 = middle C = MIDI 60)", () => {
    // E2 (40) … G#5 (80) pads to C2 (36) … B5 (83): four octaves, four Cs.
    const labels = axisLabels(keyboardAxis(40, 80, 480));
    expect(labels.map((label) => label.name)).toEqual(["C2", "C3", "C4", "C5"]);
    expect(labels.find((label) => label.name === "C4")?.midi).toBe(60);
  });

  it("widens a single held note to a minimum span around it", () => {
    // A3 (57) alone, 24 semitones asked: A2 (45)…A4 (69), then padded out to
    // whole octaves, C2 (36)…B4 (71).
    const axis = keyboardAxis(57, 57, 360, 0, 24);
    expect([axis.lowMidi, axis.highMidi]).toEqual([36, 71]);
    // Without a minimum, the same note gets its own octave only.
    const bare = keyboardAxis(57, 57, 360);
    expect([bare.lowMidi, bare.highMidi]).toEqual([48, 59]);
  });

  it("gives a usable axis for a reversed or empty range instead of failing", () => {
    const reversed = keyboardAxis(67, 52, 240);
    expect([reversed.lowMidi, reversed.highMidi]).toEqual([48, 71]);
    const empty = keyboardAxis(Number.NaN, Number.NaN, 240);
    expect(empty.lowMidi).toBe(48);
    expect(empty.highMidi).toBe(83);
  });
});

describe("passaggio labels beside their marks", () => {
  it("puts the lower of two close marks' labels to the left, so neither crosses the other mark", () => {
    // Marks 40 px apart with 150 px labels, bounds −100…600: to the right,
    // the first label would span 100…250 and cross the mark at 140; to the
    // left it spans −50…100 and crosses nothing.
    const sides = labelSides(
      [
        { x: 100, width: 150 },
        { x: 140, width: 150 },
      ],
      -100,
      600,
    );
    expect(sides).toEqual(["left", "right"]);
    // Check the geometry itself: no label's span holds the other mark.
    const spans = sides.map((side, i) => {
      const x = [100, 140][i];
      return side === "right" ? [x, x + 150] : [x - 150, x];
    });
    expect(140 > spans[0][0] && 140 < spans[0][1]).toBe(false);
    expect(100 > spans[1][0] && 100 < spans[1][1]).toBe(false);
  });

  it("keeps a label inside the chart before it avoids a mark", () => {
    // A mark 20 px from the right edge: its 150 px label cannot go right.
    expect(labelSides([{ x: 580, width: 150 }], 0, 600)).toEqual(["left"]);
    // A mark 20 px from the left edge: its label cannot go left.
    expect(labelSides([{ x: 20, width: 150 }], 0, 600)).toEqual(["right"]);
  });

  it("prefers the right when both sides are clear", () => {
    expect(
      labelSides(
        [
          { x: 100, width: 50 },
          { x: 400, width: 50 },
        ],
        0,
        600,
      ),
    ).toEqual(["right", "right"]);
  });
});
