/**
 * CSV text as RFC 4180 ("Common Format and MIME Type for Comma-Separated
 * Values (CSV) Files", IETF 2005) describes it: records end with CRLF
 * (§2.1–2.2); a field holding a comma, a double quote, CR or LF is enclosed in
 * double quotes (§2.6), and a double quote inside it is doubled (§2.7).
 *
 * Invariant: formatting only; the seating list's content comes from the
 * engine's placement result.
 */

export function csvField(value: string | number | null | undefined): string {
  const text = value === null || value === undefined ? "" : String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function csvText(rows: readonly (readonly (string | number | null | undefined)[])[]): string {
  return rows.map((row) => row.map(csvField).join(",") + "\r\n").join("");
}
