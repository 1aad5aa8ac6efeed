/**
 * The map's colours, designed for Asterism: a categorical palette for a warm paper background and
 * one for dark stock, the neutral greys for "other" and "unassigned", and two ramps (a sequential
 * one for continuous columns and posterior spread, one for per-point fidelity).
 *
 * How the categorical palettes were made: ten hue slots of our own choosing (chart inks — a
 * mid blue, oxblood, olive gold, slate violet, aubergine, teal, umber, sage, crimson rose, violet),
 * then lightness and chroma within each slot searched to maximise the smallest CIEDE2000 difference
 * between any two of the first eight, taken as the worst of normal vision and simulated protanopia,
 * deuteranopia and tritanopia (Machado et al. 2009), subject to a WCAG contrast of at least 3:1 on
 * the page's paper and a chroma cap that keeps the look calm and print-like. The slots are in the
 * same order in both palettes, so a category keeps its hue family when the page turns dark; the order
 * is greedy (each colour the most distinct from those before it), so a map with few categories gets
 * the most distinct colours. tests/unit/map/palette.test.ts measures all of this.
 */
import { type Lab, labToRgb, type Rgb } from './color-math';

export type { Rgb } from './color-math';
export { hexOf } from './color-math';

/** The page backgrounds, mirroring `--paper` in app/globals.css (light and dark). */
export const PAPER_LIGHT: Rgb = [0xf6, 0xf2, 0xea];
export const PAPER_DARK: Rgb = [0x1b, 0x1a, 0x17];

/** Ten categorical colours for the light paper (#f6f2ea), every one at least 3:1 against it. */
export const CATEGORICAL_LIGHT: readonly Rgb[] = [
  [0x41, 0x8c, 0xcb], // mid blue
  [0x74, 0x0e, 0x14], // oxblood
  [0x96, 0x80, 0x07], // olive gold
  [0x56, 0x56, 0x9a], // slate violet
  [0x5c, 0x26, 0x4a], // aubergine
  [0x07, 0x75, 0x73], // teal
  [0x89, 0x57, 0x2e], // umber
  [0x72, 0x91, 0x65], // sage
  [0x97, 0x2b, 0x48], // crimson rose
  [0x55, 0x31, 0x71], // violet
];

/** Ten categorical colours for dark stock (#1b1a17), slot for slot the same hue families. */
export const CATEGORICAL_DARK: readonly Rgb[] = [
  [0x84, 0xaa, 0xeb], // cornflower
  [0xfe, 0xb5, 0xad], // shell pink
  [0xf4, 0xe4, 0x7f], // straw
  [0x7a, 0x71, 0xd0], // iris
  [0x99, 0x67, 0x8a], // mauve
  [0x9b, 0xf2, 0xeb], // pale aqua
  [0xc6, 0x8b, 0x38], // amber
  [0x55, 0x81, 0x58], // leaf
  [0xd8, 0x62, 0x6c], // coral
  [0xe5, 0xc6, 0xf9], // lavender
];

/**
 * Categories beyond the tenth share one neutral ink grey: still legible (≥ 3:1 on the paper) but
 * visibly not one of the palette's hues.
 */
export const OTHER_COLOR_LIGHT: Rgb = [0x7d, 0x76, 0x6a];
export const OTHER_COLOR_DARK: Rgb = [0x9a, 0x93, 0x85];

/**
 * Points with no category (code −1) or no value (NaN): a pale grey that deliberately sits close to
 * the paper (about 1.7:1), so they read as context behind the coloured points rather than as a
 * category of their own.
 */
export const UNASSIGNED_COLOR_LIGHT: Rgb = [0xc4, 0xbc, 0xad];
export const UNASSIGNED_COLOR_DARK: Rgb = [0x4f, 0x4b, 0x43];

/** The categorical palette for a background. */
export function categoricalPalette(dark: boolean): readonly Rgb[] {
  return dark ? CATEGORICAL_DARK : CATEGORICAL_LIGHT;
}

/** The colour of category `code`: the palette for 0–9, "other" beyond, "unassigned" below 0. */
export function categoricalColor(code: number, dark: boolean): Rgb {
  const palette = categoricalPalette(dark);
  if (!(code >= 0)) return dark ? UNASSIGNED_COLOR_DARK : UNASSIGNED_COLOR_LIGHT;
  return palette[Math.floor(code)] ?? (dark ? OTHER_COLOR_DARK : OTHER_COLOR_LIGHT);
}

/**
 * Piecewise-linear interpolation through evenly spaced CIELAB stops. Linear in L* between stops
 * whose L* is monotone keeps the ramp's lightness monotone; a, b carry the hue.
 */
function labRamp(stops: readonly Lab[], t: number): Rgb {
  const clamped = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0;
  const segments = stops.length - 1;
  const position = clamped * segments;
  const index = Math.min(segments - 1, Math.floor(position));
  const local = position - index;
  const from = stops[index];
  const to = stops[index + 1];
  if (!from || !to) return labToRgb(stops[0] ?? [50, 0, 0]);
  return labToRgb([
    from[0] + (to[0] - from[0]) * local,
    from[1] + (to[1] - from[1]) * local,
    from[2] + (to[2] - from[2]) * local,
  ]);
}

// Sequential ramp: pale straw → sage → sea teal → slate blue → indigo ink. The pale end stops short
// of the paper's own lightness (L* 86 against about 96) so low values still show. On paper more is darker
// (high values stand out against the light page); on dark stock the same hues run the other way,
// so more is lighter and again stands out from the background.
const SEQUENTIAL_LIGHT: readonly Lab[] = [
  [86, -2, 26],
  [71, -18, 20],
  [55, -24, -6],
  [38, -2, -30],
  [22, 18, -30],
];
const SEQUENTIAL_DARK: readonly Lab[] = [
  [30, 14, -30],
  [45, -4, -28],
  [61, -24, -6],
  [77, -18, 20],
  [92, -3, 24],
];

/**
 * The sequential ramp for continuous columns and posterior spread, t in [0, 1] (clamped; NaN → 0).
 * Lightness is monotone in t (darker with t on paper, lighter with t on dark stock), so the order of
 * values survives greyscale printing and every form of colour-vision deficiency.
 */
export function sequentialRamp(t: number, dark: boolean): Rgb {
  return labRamp(dark ? SEQUENTIAL_DARK : SEQUENTIAL_LIGHT, t);
}

// Fidelity ramp: t = 0 (the projection tore this point's neighbourhood) is a saturated vermilion
// that draws the eye; t = 1 (neighbourhood kept) is a quiet grey-blue that still shows but recedes.
// Sequential rather than diverging, because fidelity has no meaningful midpoint: only "how bad".
const FIDELITY_LIGHT: readonly Lab[] = [
  [40, 54, 42],
  [49, 38, 46],
  [59, 18, 34],
  [68, -4, -6],
];
const FIDELITY_DARK: readonly Lab[] = [
  [68, 40, 50],
  [59, 28, 40],
  [50, 12, 20],
  [41, -6, -9],
];

/**
 * Per-point fidelity, t in [0, 1] (clamped; NaN → 0): low fidelity conspicuous, high fidelity quiet.
 * Lightness is monotone (rising towards the paper in light mode, falling towards the dark stock in
 * dark mode), so low fidelity stands out by lightness as well as by hue.
 */
export function fidelityRamp(t: number, dark: boolean): Rgb {
  return labRamp(dark ? FIDELITY_DARK : FIDELITY_LIGHT, t);
}
