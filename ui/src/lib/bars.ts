/**
 * Bar ranges as the engine prints them for hot spots and worst passages:
 * "12", "4–7", or, across a repeat, "8, 1–3" (bar 8, then bars 1–3 again).
 *
 * Invariant: reads the engine's own bar text to ask it for a notation
 * excerpt; it computes nothing about the music.
 */

export interface BarSpan {
  first: number;
  last: number;
}

/** The spans of a bar text, in the order sung; [] when there is none. */
export function parseBars(text: string): BarSpan[] {
  const spans: BarSpan[] = [];
  for (const piece of text.split(",")) {
    const match = /^\s*(\d+)\s*(?:[–—-]\s*(\d+))?\s*$/.exec(piece);
    if (!match) continue;
    const first = Number(match[1]);
    const last = match[2] === undefined ? first : Number(match[2]);
    spans.push({ first: Math.min(first, last), last: Math.max(first, last) });
  }
  return spans;
}

/**
 * The written bars to show for a bar text: the whole stretch when it runs
 * forward, else the first span (a passage across a repeat starts there).
 */
export function excerptBars(text: string): BarSpan | null {
  const spans = parseBars(text);
  if (spans.length === 0) return null;
  const forward = spans.every((span, i) => i === 0 || span.first > spans[i - 1].last);
  return forward ? { first: spans[0].first, last: spans[spans.length - 1].last } : spans[0];
}
