import { describe, expect, it } from "vitest";
import { VIRIDIS_CONTROL_POINTS, viridisHex, viridisRgb } from "./palette";
import { parseHex, relativeLuminance } from "./contrast";
import { referencePython, runReference } from "./reference";

describe("viridis heatmap scale", () => {
  it("matches the published viridis stops at 0, ¼, ½, ¾ and 1 within two 8-bit steps", () => {
    // The five-colour viridis as published by its authors' colormap docs and the
    // R viridisLite package's viridis(5): #440154 #3B528B #21908C #5DC863 #FDE725.
    const published = ["#440154", "#3b528b", "#21908c", "#5dc863", "#fde725"];
    published.forEach((hex, i) => {
      const ours = viridisRgb(i / 4);
      parseHex(hex).forEach((channel, c) => expect(Math.abs(ours[c] - channel)).toBeLessThanOrEqual(2));
    });
  });

  it("is monotone in lightness from dark to light, so it reads in grey as well (the scale's design aim)", () => {
    let previous = -1;
    for (let t = 0; t <= 1.0001; t += 0.01) {
      const luminance = relativeLuminance(viridisHex(t));
      expect(luminance).toBeGreaterThan(previous);
      previous = luminance;
    }
  });

  it("clamps outside 0–1 and treats NaN as the low end", () => {
    expect(viridisHex(-3)).toBe(viridisHex(0));
    expect(viridisHex(7)).toBe(viridisHex(1));
    expect(viridisHex(Number.NaN)).toBe(viridisHex(0));
    expect(VIRIDIS_CONTROL_POINTS[0][0]).toBe(0);
    expect(VIRIDIS_CONTROL_POINTS[VIRIDIS_CONTROL_POINTS.length - 1][0]).toBe(1);
  });

  it("stays within 2 of 255 per channel of matplotlib's full 256-entry table (live reference)", () => {
    const python = referencePython("viridis against matplotlib");
    if (python === null) return;
    const table = runReference(python, "viridis.py") as number[][];
    expect(table).toHaveLength(256);
    table.forEach((rgb, i) => {
      const ours = viridisRgb(i / 255);
      rgb.forEach((channel, c) => expect(Math.abs(ours[c] - channel * 255)).toBeLessThanOrEqual(2));
    });
  });
});
