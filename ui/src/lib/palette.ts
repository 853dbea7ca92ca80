/**
 * The sequential colour scale of the fit heatmap: viridis (van der Walt &
 * Smith, 2015, designed for matplotlib 2.0 as a perceptually uniform scale
 * that stays readable with the common colour-vision deficiencies and in grey).
 *
 * The control points are every 8th entry (and the last) of matplotlib's
 * published 256-entry table (`matplotlib/_cm_listed.py`, `_viridis_data`);
 * between them the scale is interpolated linearly in sRGB, which stays within
 * two 8-bit steps of the full table (the largest gap, 1.7, is in blue near the
 * yellow end, where the table bends) (checked live against matplotlib in
 * palette.test.ts).
 *
 * Invariant: colour is never the only carrier: every heatmap cell prints its
 * number, in black or white, whichever contrasts more (contrast.ts).
 */
import { type Rgb, readableTextOn, toHex } from "./contrast";

/** [table index 0–255, r, g, b] with channels 0–1, from matplotlib's viridis table. */
const VIRIDIS_TABLE_ROWS: readonly (readonly [number, number, number, number])[] = [
  [0, 0.267004, 0.004874, 0.329415],
  [8, 0.277018, 0.050344, 0.375715],
  [16, 0.282327, 0.094955, 0.417331],
  [24, 0.282884, 0.135920, 0.453427],
  [32, 0.278826, 0.175490, 0.483397],
  [40, 0.270595, 0.214069, 0.507052],
  [48, 0.258965, 0.251537, 0.524736],
  [56, 0.244972, 0.287675, 0.537260],
  [64, 0.229739, 0.322361, 0.545706],
  [72, 0.214298, 0.355619, 0.551184],
  [80, 0.199430, 0.387607, 0.554642],
  [88, 0.185556, 0.418570, 0.556753],
  [96, 0.172719, 0.448791, 0.557885],
  [104, 0.160665, 0.478540, 0.558115],
  [112, 0.149039, 0.508051, 0.557250],
  [120, 0.137770, 0.537492, 0.554906],
  [128, 0.127568, 0.566949, 0.550556],
  [136, 0.120565, 0.596422, 0.543611],
  [144, 0.120638, 0.625828, 0.533488],
  [152, 0.132268, 0.655014, 0.519661],
  [160, 0.157851, 0.683765, 0.501686],
  [168, 0.196571, 0.711827, 0.479221],
  [176, 0.246070, 0.738910, 0.452024],
  [184, 0.304148, 0.764704, 0.419943],
  [192, 0.369214, 0.788888, 0.382914],
  [200, 0.440137, 0.811138, 0.340967],
  [208, 0.515992, 0.831158, 0.294279],
  [216, 0.595839, 0.848717, 0.243329],
  [224, 0.678489, 0.863742, 0.189503],
  [232, 0.762373, 0.876424, 0.137064],
  [240, 0.845561, 0.887322, 0.099702],
  [248, 0.926106, 0.897330, 0.104071],
  [255, 0.993248, 0.906157, 0.143936],
];

/** [position 0–1, r, g, b]: the rows above placed on the 0–1 scale. */
export const VIRIDIS_CONTROL_POINTS = VIRIDIS_TABLE_ROWS.map(([index, r, g, b]) => [index / 255, r, g, b] as const);

/** Viridis at t in [0, 1] (clamped) as 0–255 channels. */
export function viridisRgb(t: number): Rgb {
  const points = VIRIDIS_CONTROL_POINTS;
  const x = Number.isFinite(t) ? Math.max(0, Math.min(1, t)) : 0;
  let upper = points.findIndex((point) => point[0] >= x);
  if (upper <= 0) upper = 1;
  const [t0, r0, g0, b0] = points[upper - 1];
  const [t1, r1, g1, b1] = points[upper];
  const w = (x - t0) / (t1 - t0);
  const mix = (a: number, b: number) => (a + (b - a) * w) * 255;
  return [mix(r0, r1), mix(g0, g1), mix(b0, b1)];
}

export function viridisHex(t: number): string {
  return toHex(viridisRgb(t));
}

/** Background and text colour of a heatmap cell for a fit figure 0–100. */
export function fitCellColours(fit: number): { background: string; text: string } {
  const background = viridisHex(fit / 100);
  return { background, text: readableTextOn(background) };
}
