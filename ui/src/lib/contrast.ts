/**
 * Colour contrast as defined by WCAG 2.x (W3C, "Web Content Accessibility
 * Guidelines 2.1", definitions of *relative luminance* and *contrast ratio*;
 * success criterion 1.4.3 asks ≥ 4.5:1 for body text and ≥ 3:1 for large text
 * and graphical objects, 1.4.11).
 *
 * Invariant: pure functions of colours; the palette's tests use them to prove
 * every text/background pair the UI draws.
 */

export type Rgb = [number, number, number];

export function parseHex(hex: string): Rgb {
  const match = /^#?([0-9a-f]{6})$/i.exec(hex.trim());
  if (!match) throw new Error(`not a #rrggbb colour: ${hex}`);
  const value = parseInt(match[1], 16);
  return [(value >> 16) & 255, (value >> 8) & 255, value & 255];
}

export function toHex([r, g, b]: Rgb): string {
  const byte = (v: number) => Math.max(0, Math.min(255, Math.round(v))).toString(16).padStart(2, "0");
  return `#${byte(r)}${byte(g)}${byte(b)}`;
}

/**
 * WCAG 2.x relative luminance: each sRGB channel linearised
 * (c ≤ 0.04045 ? c/12.92 : ((c+0.055)/1.055)^2.4; the sRGB standard IEC 61966-2-1
 * threshold, which WCAG 2.2's note adopts over the older 0.03928 — the two
 * differ by nothing visible), then L = 0.2126 R + 0.7152 G + 0.0722 B.
 */
export function relativeLuminance(colour: string | Rgb): number {
  const [r, g, b] = (typeof colour === "string" ? parseHex(colour) : colour).map((channel) => {
    const c = channel / 255;
    return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
  });
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

/** WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05), L1 the lighter; 1 … 21. */
export function contrastRatio(a: string | Rgb, b: string | Rgb): number {
  const la = relativeLuminance(a);
  const lb = relativeLuminance(b);
  return (Math.max(la, lb) + 0.05) / (Math.min(la, lb) + 0.05);
}

/** Black or white text, whichever contrasts more with the background. */
export function readableTextOn(background: string | Rgb): "#000000" | "#ffffff" {
  return contrastRatio(background, "#000000") >= contrastRatio(background, "#ffffff") ? "#000000" : "#ffffff";
}
