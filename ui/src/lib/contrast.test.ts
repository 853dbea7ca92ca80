import { describe, expect, it } from "vitest";
import { contrastRatio, parseHex, readableTextOn, relativeLuminance } from "./contrast";
import { graphicPairs, textPairs, theme } from "./theme";
import { fitCellColours } from "./palette";

// Expected values from the WCAG 2.x definitions (W3C WCAG 2.1, "contrast ratio"
// and "relative luminance"; understanding document for SC 1.4.3).
describe("WCAG 2.x contrast", () => {
  it("black on white is 21:1 and a colour on itself 1:1 (the formula's ends)", () => {
    expect(relativeLuminance("#ffffff")).toBeCloseTo(1, 12);
    expect(relativeLuminance("#000000")).toBe(0);
    expect(contrastRatio("#000000", "#ffffff")).toBeCloseTo(21, 12);
    expect(contrastRatio("#ffffff", "#000000")).toBeCloseTo(21, 12);
    expect(contrastRatio("#1d4f91", "#1d4f91")).toBe(1);
  });

  it("mid grey #777777 on white just fails AA (≈4.48:1) and #767676 just passes (≈4.54:1)", () => {
    // The well-known boundary greys for 4.5:1 on white (WebAIM contrast checker; from memory).
    expect(contrastRatio("#777777", "#ffffff")).toBeCloseTo(4.48, 2);
    expect(contrastRatio("#767676", "#ffffff")).toBeCloseTo(4.54, 2);
  });

  it("pure sRGB primaries weigh by the ITU-R BT.709 coefficients 0.2126, 0.7152, 0.0722", () => {
    expect(relativeLuminance("#ff0000")).toBeCloseTo(0.2126, 4);
    expect(relativeLuminance("#00ff00")).toBeCloseTo(0.7152, 4);
    expect(relativeLuminance("#0000ff")).toBeCloseTo(0.0722, 4);
  });

  it("rejects what is not a #rrggbb colour", () => {
    expect(() => parseHex("#12345")).toThrow(/not a #rrggbb/);
    expect(parseHex("#0a0B0c")).toEqual([10, 11, 12]);
  });

  it.each(textPairs)("UI text %s on %s reaches AA for body text (≥ 4.5:1, WCAG SC 1.4.3)", (fg, bg) => {
    expect(contrastRatio(theme[fg], theme[bg])).toBeGreaterThanOrEqual(4.5);
  });

  it.each(graphicPairs)("UI mark %s on %s reaches 3:1 (WCAG SC 1.4.11 non-text contrast)", (fg, bg) => {
    expect(contrastRatio(theme[fg], theme[bg])).toBeGreaterThanOrEqual(3);
  });

  it("every heatmap cell's number is readable on its viridis background (≥ 4.5:1 for fit 0…100)", () => {
    for (let fit = 0; fit <= 100; fit += 0.5) {
      const { background, text } = fitCellColours(fit);
      expect(contrastRatio(text, background)).toBeGreaterThanOrEqual(4.5);
    }
    // viridis' dark end takes white text and its yellow end black.
    expect(readableTextOn(fitCellColours(0).background)).toBe("#ffffff");
    expect(readableTextOn(fitCellColours(100).background)).toBe("#000000");
  });
});
