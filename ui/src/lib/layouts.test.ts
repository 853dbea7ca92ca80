import { describe, expect, it } from "vitest";
import { layoutSections } from "./layouts";

// Common practice in choral scores: SSAATTBB is eight-part choir, first and
// second of each voice; SSA is two soprano sections over one alto.
describe("layout sections", () => {
  it("expands repeated letters into numbered sections, in the written order", () => {
    expect(layoutSections("SATB")).toEqual(["S", "A", "T", "B"]);
    expect(layoutSections("SSAATTBB")).toEqual(["S1", "S2", "A1", "A2", "T1", "T2", "B1", "B2"]);
    expect(layoutSections("SSA")).toEqual(["S1", "S2", "A"]);
    expect(layoutSections("TTBB")).toEqual(["T1", "T2", "B1", "B2"]);
  });

  it("takes an explicit comma list as it is", () => {
    expect(layoutSections("S1, S2,A,T,B")).toEqual(["S1", "S2", "A", "T", "B"]);
  });
});
