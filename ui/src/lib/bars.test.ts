import { describe, expect, it } from "vitest";
import { excerptBars, parseBars } from "./bars";

// Bar texts as `ambit parts --json` prints them for the sample score
// sample-scores/haul-away.musicxml (hot spots "4–7" and "8, 1–3" across its repeat).
describe("bar ranges", () => {
  it("reads a single bar, a span with an en dash and a span with a hyphen", () => {
    expect(parseBars("12")).toEqual([{ first: 12, last: 12 }]);
    expect(parseBars("4–7")).toEqual([{ first: 4, last: 7 }]);
    expect(parseBars("4-7")).toEqual([{ first: 4, last: 7 }]);
  });

  it("shows the whole stretch of forward spans and the first span across a repeat", () => {
    expect(excerptBars("4–7")).toEqual({ first: 4, last: 7 });
    expect(excerptBars("2, 4–5")).toEqual({ first: 2, last: 5 });
    // Bar 8, then back to bar 1 after the repeat: show bar 8 alone.
    expect(excerptBars("8, 1–3")).toEqual({ first: 8, last: 8 });
  });

  it("gives nothing for text without bar numbers", () => {
    expect(excerptBars("")).toBeNull();
    expect(excerptBars("—")).toBeNull();
  });
});
