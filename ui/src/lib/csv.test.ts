import { describe, expect, it } from "vitest";
import { csvField, csvText } from "./csv";

// Each expectation is a rule of RFC 4180 §2, cited beside it.
describe("CSV per RFC 4180", () => {
  it("leaves plain fields as they are and ends every record with CRLF (§2.1, §2.2)", () => {
    expect(csvText([["name", "section"], ["Ada", "S1"]])).toBe("name,section\r\nAda,S1\r\n");
  });

  it("encloses a field with a comma in double quotes (§2.6)", () => {
    expect(csvField("Lane, Robin")).toBe('"Lane, Robin"');
  });

  it("doubles a double quote inside a quoted field (§2.7)", () => {
    expect(csvField('Sam "Low E" Reed')).toBe('"Sam ""Low E"" Reed"');
  });

  it("encloses fields with line breaks (§2.6)", () => {
    expect(csvField("first line\r\nsecond")).toBe('"first line\r\nsecond"');
    expect(csvField("a\nb")).toBe('"a\nb"');
  });

  it("writes numbers, empty and missing values as fields of their own (§2.4: same field count per record)", () => {
    expect(csvText([["x", 84.5, "", null, undefined]])).toBe("x,84.5,,,\r\n");
  });
});
