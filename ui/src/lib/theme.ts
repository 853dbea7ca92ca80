/**
 * The UI's colours, in one place, so that the contrast test can check every
 * text/background pair the stylesheet uses (styles.css reads these through
 * CSS custom properties set in main.tsx).
 *
 * Invariant: no colour carries meaning alone; every coloured mark also has a
 * text label or number next to it.
 */
export const theme = {
  page: "#f6f5f1",
  surface: "#ffffff",
  text: "#1f2328",
  muted: "#565d66",
  accent: "#1d4f91",
  accentText: "#ffffff",
  border: "#8a9099",
  focus: "#b3261e",
  danger: "#a11d1d",
  errorBg: "#fdecea",
  dangerText: "#ffffff",
  warnBg: "#fff4d6",
  warnText: "#5a3e00",
  bannerBg: "#e4ecf7",
  bannerText: "#1b2f4d",
  comfort: "#2c7a4b",
  range: "#9ab8d9",
  passaggio: "#b3261e",
  keyWhite: "#ffffff",
  keyBlack: "#30343a",
  keyLabel: "#1f2328",
} as const;

/** Text/background pairs the UI draws; each must reach WCAG AA for text (4.5:1). */
export const textPairs: [keyof typeof theme, keyof typeof theme][] = [
  ["text", "page"],
  ["text", "surface"],
  ["muted", "page"],
  ["muted", "surface"],
  ["accent", "surface"],
  ["accent", "page"],
  ["accentText", "accent"],
  ["danger", "surface"],
  ["danger", "errorBg"],
  ["text", "bannerBg"],
  ["muted", "bannerBg"],
  ["accent", "bannerBg"],
  ["dangerText", "danger"],
  ["warnText", "warnBg"],
  ["bannerText", "bannerBg"],
  ["comfort", "surface"],
  ["passaggio", "surface"],
  ["keyLabel", "keyWhite"],
];

/** Non-text marks (borders, focus ring, chart shapes) need 3:1 against their surface (WCAG 1.4.11). */
export const graphicPairs: [keyof typeof theme, keyof typeof theme][] = [
  ["border", "surface"],
  ["focus", "surface"],
  ["focus", "page"],
  ["comfort", "surface"],
  ["passaggio", "surface"],
  ["keyBlack", "keyWhite"],
  ["accent", "surface"],
];
