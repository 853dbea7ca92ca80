/**
 * Section labels of a layout name, for the UI's pickers: a letter written once
 * is one section, a letter written n times is sections 1…n ("SATB" → S A T B;
 * "SSAATTBB" → S1 S2 A1 A2 T1 T2 B1 B2; "SSA" → S1 S2 A), or a comma list
 * ("S1,S2,A,T,B"). This is the rule `ambit::sections::Layout::parse` applies;
 * the engine remains the judge and reports a bad layout itself.
 */

export const COMMON_LAYOUTS = ["SATB", "SSAATTBB", "SSATB", "SATBB", "SSA", "SSAA", "TTBB", "SAB"];

export function layoutSections(layout: string): string[] {
  const text = layout.trim().toUpperCase();
  if (text.includes(",")) return text.split(",").map((label) => label.trim()).filter(Boolean);
  const letters = [...text].filter((c) => "SATB".includes(c));
  const seen: Record<string, number> = {};
  return letters.map((letter) => {
    const total = letters.filter((other) => other === letter).length;
    seen[letter] = (seen[letter] ?? 0) + 1;
    return total > 1 ? `${letter}${seen[letter]}` : letter;
  });
}
