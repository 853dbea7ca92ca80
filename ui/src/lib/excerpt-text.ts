/**
 * A notation excerpt as words, bar by bar ("bar 4: F#4 quarter, A4 quarter,
 * B4 half"): the text alternative to the engraved excerpt, for screen readers
 * and for when the engraving fails.
 *
 * Invariant: reads the MusicXML the engine sent (MusicXML 4.0 elements
 * measure, note, pitch/step/alter/octave, rest, type, dot, chord, tie) and
 * spells it; nothing is computed.
 */

export interface BarText {
  bar: string;
  notes: string[];
}

const ALTER: Record<string, string> = { "-2": "bb", "-1": "b", "0": "", "1": "#", "2": "##" };

export function excerptAsText(document: Document): BarText[] {
  const bars: BarText[] = [];
  for (const measure of Array.from(document.getElementsByTagName("measure"))) {
    const notes: string[] = [];
    for (const note of Array.from(measure.getElementsByTagName("note"))) {
      const type = note.getElementsByTagName("type")[0]?.textContent?.trim() ?? "";
      const dots = note.getElementsByTagName("dot").length;
      const length = type ? ` ${"dotted ".repeat(dots)}${type}` : "";
      const tied = Array.from(note.getElementsByTagName("tie")).some((tie) => tie.getAttribute("type") === "start") ? " tied" : "";
      if (note.getElementsByTagName("rest").length > 0) {
        notes.push(`rest${length}`);
        continue;
      }
      const pitch = note.getElementsByTagName("pitch")[0];
      if (!pitch) continue;
      const step = pitch.getElementsByTagName("step")[0]?.textContent?.trim() ?? "?";
      const alter = pitch.getElementsByTagName("alter")[0]?.textContent?.trim() ?? "0";
      const octave = pitch.getElementsByTagName("octave")[0]?.textContent?.trim() ?? "";
      const name = `${step}${ALTER[alter] ?? ""}${octave}${length}${tied}`;
      if (note.getElementsByTagName("chord").length > 0 && notes.length > 0) notes[notes.length - 1] += ` + ${name}`;
      else notes.push(name);
    }
    bars.push({ bar: measure.getAttribute("number") ?? "?", notes });
  }
  return bars;
}
