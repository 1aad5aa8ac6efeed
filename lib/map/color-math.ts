/**
 * Colour arithmetic for the map's palettes: sRGB ↔ linear ↔ CIELAB (D65), the CIEDE2000 colour
 * difference, colour-vision-deficiency simulation and WCAG 2.1 contrast. Pure and browser-safe, so
 * the palette tests and any legend code can use the same formulas. Nothing here runs per point: the
 * per-point paths (lib/map/color-scales.ts) read lookup tables built from these functions.
 */

/** An sRGB colour with 0–255 channels. */
export type Rgb = readonly [number, number, number];

/** A CIELAB colour (D65 white): L* 0–100, a*, b* roughly −128…127. */
export type Lab = readonly [number, number, number];

/** sRGB transfer function, decoding one 0–1 channel to linear light (IEC 61966-2-1). */
export function srgbToLinear(channel: number): number {
  return channel <= 0.04045 ? channel / 12.92 : ((channel + 0.055) / 1.055) ** 2.4;
}

/** sRGB transfer function, encoding one linear 0–1 channel (clamped) to 0–1 sRGB. */
export function linearToSrgb(linear: number): number {
  const c = Math.min(1, Math.max(0, linear));
  return c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055;
}

/** Linear RGB (0–1 per channel) of an 8-bit sRGB colour. */
export function rgbToLinear(rgb: Rgb): [number, number, number] {
  return [srgbToLinear(rgb[0] / 255), srgbToLinear(rgb[1] / 255), srgbToLinear(rgb[2] / 255)];
}

/** 8-bit sRGB of a linear RGB colour, clamped into the gamut and rounded. */
export function linearToRgb(linear: readonly [number, number, number]): Rgb {
  return [
    Math.round(255 * linearToSrgb(linear[0])),
    Math.round(255 * linearToSrgb(linear[1])),
    Math.round(255 * linearToSrgb(linear[2])),
  ];
}

// D65 reference white of sRGB, Y normalised to 1 (IEC 61966-2-1 primaries, as tabulated by
// B. Lindbloom, "RGB/XYZ matrices").
const WHITE_X = 0.95047;
const WHITE_Z = 1.08883;
const EPSILON = (6 / 29) ** 3;
const KAPPA_SLOPE = 1 / (3 * (6 / 29) ** 2);

function labF(t: number): number {
  return t > EPSILON ? Math.cbrt(t) : t * KAPPA_SLOPE + 4 / 29;
}

function labFInverse(f: number): number {
  return f > 6 / 29 ? f * f * f : (f - 4 / 29) / KAPPA_SLOPE;
}

/** CIELAB of a linear RGB colour (channels 0–1). */
export function linearToLab(linear: readonly [number, number, number]): Lab {
  const [r, g, b] = linear;
  const x = 0.4124564 * r + 0.3575761 * g + 0.1804375 * b;
  const y = 0.2126729 * r + 0.7151522 * g + 0.072175 * b;
  const z = 0.0193339 * r + 0.119192 * g + 0.9503041 * b;
  const fx = labF(x / WHITE_X);
  const fy = labF(y);
  const fz = labF(z / WHITE_Z);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** CIELAB of an 8-bit sRGB colour. */
export function rgbToLab(rgb: Rgb): Lab {
  return linearToLab(rgbToLinear(rgb));
}

/** Linear RGB of a CIELAB colour, unclamped (a channel outside 0–1 means out of the sRGB gamut). */
export function labToLinear(lab: Lab): [number, number, number] {
  const fy = (lab[0] + 16) / 116;
  const x = WHITE_X * labFInverse(fy + lab[1] / 500);
  const y = labFInverse(fy);
  const z = WHITE_Z * labFInverse(fy - lab[2] / 200);
  return [
    3.2404542 * x - 1.5371385 * y - 0.4985314 * z,
    -0.969266 * x + 1.8760108 * y + 0.041556 * z,
    0.0556434 * x - 0.2040259 * y + 1.0572252 * z,
  ];
}

/** 8-bit sRGB of a CIELAB colour, clamped into the gamut. */
export function labToRgb(lab: Lab): Rgb {
  return linearToRgb(labToLinear(lab));
}

const DEG = Math.PI / 180;
const POW25_7 = 25 ** 7;

/**
 * The CIEDE2000 colour difference ΔE₀₀ between two CIELAB colours, with kL = kC = kH = 1, written
 * from the formula as set out by Sharma, Wu & Dalal (2005), "The CIEDE2000 color-difference
 * formula: implementation notes, supplementary test data, and mathematical observations", Color
 * Research & Application 30(1) 21–30, including their notes on the hue-angle discontinuities.
 */
export function ciede2000(lab1: Lab, lab2: Lab): number {
  const [l1, a1, b1] = lab1;
  const [l2, a2, b2] = lab2;
  const cBar = (Math.hypot(a1, b1) + Math.hypot(a2, b2)) / 2;
  const cBar7 = cBar ** 7;
  const g = 0.5 * (1 - Math.sqrt(cBar7 / (cBar7 + POW25_7)));
  const a1p = (1 + g) * a1;
  const a2p = (1 + g) * a2;
  const c1p = Math.hypot(a1p, b1);
  const c2p = Math.hypot(a2p, b2);
  // Hue angles in degrees, [0, 360); an achromatic colour gets hue 0 (Sharma et al., eq. 4).
  const hueOf = (b: number, ap: number): number => {
    if (b === 0 && ap === 0) return 0;
    const h = Math.atan2(b, ap) / DEG;
    return h < 0 ? h + 360 : h;
  };
  const h1p = hueOf(b1, a1p);
  const h2p = hueOf(b2, a2p);

  const deltaLp = l2 - l1;
  const deltaCp = c2p - c1p;
  const chromaProduct = c1p * c2p;
  let deltahp = 0;
  if (chromaProduct !== 0) {
    deltahp = h2p - h1p;
    if (deltahp > 180) deltahp -= 360;
    else if (deltahp < -180) deltahp += 360;
  }
  const deltaHp = 2 * Math.sqrt(chromaProduct) * Math.sin((deltahp * DEG) / 2);

  const lBarP = (l1 + l2) / 2;
  const cBarP = (c1p + c2p) / 2;
  let hBarP: number;
  if (chromaProduct === 0) hBarP = h1p + h2p;
  else if (Math.abs(h1p - h2p) <= 180) hBarP = (h1p + h2p) / 2;
  else if (h1p + h2p < 360) hBarP = (h1p + h2p + 360) / 2;
  else hBarP = (h1p + h2p - 360) / 2;

  const t =
    1 -
    0.17 * Math.cos((hBarP - 30) * DEG) +
    0.24 * Math.cos(2 * hBarP * DEG) +
    0.32 * Math.cos((3 * hBarP + 6) * DEG) -
    0.2 * Math.cos((4 * hBarP - 63) * DEG);
  const deltaTheta = 30 * Math.exp(-(((hBarP - 275) / 25) ** 2));
  const cBarP7 = cBarP ** 7;
  const rC = 2 * Math.sqrt(cBarP7 / (cBarP7 + POW25_7));
  const lOffset = (lBarP - 50) ** 2;
  const sL = 1 + (0.015 * lOffset) / Math.sqrt(20 + lOffset);
  const sC = 1 + 0.045 * cBarP;
  const sH = 1 + 0.015 * cBarP * t;
  const rT = -Math.sin(2 * deltaTheta * DEG) * rC;

  const termL = deltaLp / sL;
  const termC = deltaCp / sC;
  const termH = deltaHp / sH;
  return Math.sqrt(termL * termL + termC * termC + termH * termH + rT * termC * termH);
}

/** CIEDE2000 between two 8-bit sRGB colours. */
export function deltaE2000(rgb1: Rgb, rgb2: Rgb): number {
  return ciede2000(rgbToLab(rgb1), rgbToLab(rgb2));
}

export type Deficiency = 'protanopia' | 'deuteranopia' | 'tritanopia';

export const DEFICIENCIES: readonly Deficiency[] = ['protanopia', 'deuteranopia', 'tritanopia'];

type Matrix3 = readonly [
  readonly [number, number, number],
  readonly [number, number, number],
  readonly [number, number, number],
];

/**
 * Dichromat simulation matrices at severity 1.0 from Machado, Oliveira & Fernandes (2009), "A
 * physiologically-based model for simulation of color vision deficiency", IEEE TVCG 15(6)
 * 1291–1298 (their published table of precomputed matrices). They act on linear RGB.
 */
export const MACHADO_2009: Readonly<Record<Deficiency, Matrix3>> = {
  protanopia: [
    [0.152286, 1.052583, -0.204868],
    [0.114503, 0.786281, 0.099216],
    [-0.003882, -0.048116, 1.051998],
  ],
  deuteranopia: [
    [0.367322, 0.860646, -0.227968],
    [0.280085, 0.672501, 0.047413],
    [-0.01182, 0.04294, 0.968881],
  ],
  tritanopia: [
    [1.255528, -0.076749, -0.178779],
    [-0.078411, 0.930809, 0.147602],
    [0.004733, 0.691367, 0.3039],
  ],
};

/**
 * How a colour looks to a dichromat, as linear RGB clamped to 0–1 (the simulated colour must be
 * displayable, so it is clamped before it is compared).
 */
export function simulateDeficiencyLinear(rgb: Rgb, deficiency: Deficiency): [number, number, number] {
  const [r, g, b] = rgbToLinear(rgb);
  const m = MACHADO_2009[deficiency];
  const clamp = (v: number): number => Math.min(1, Math.max(0, v));
  return [
    clamp(m[0][0] * r + m[0][1] * g + m[0][2] * b),
    clamp(m[1][0] * r + m[1][1] * g + m[1][2] * b),
    clamp(m[2][0] * r + m[2][1] * g + m[2][2] * b),
  ];
}

/** How a colour looks to a dichromat, in CIELAB (unrounded, so small differences are not lost to 8 bits). */
export function simulateDeficiencyLab(rgb: Rgb, deficiency: Deficiency): Lab {
  return linearToLab(simulateDeficiencyLinear(rgb, deficiency));
}

/**
 * WCAG 2.1 relative luminance (success criterion 1.4.3's definition, with its 0.03928 threshold,
 * which differs from sRGB's 0.04045 only in the fourth decimal of a channel).
 */
export function relativeLuminance(rgb: Rgb): number {
  const channel = (c8: number): number => {
    const c = c8 / 255;
    return c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * channel(rgb[0]) + 0.7152 * channel(rgb[1]) + 0.0722 * channel(rgb[2]);
}

/** WCAG 2.1 contrast ratio, (L_lighter + 0.05) / (L_darker + 0.05), from 1 to 21. */
export function contrastRatio(a: Rgb, b: Rgb): number {
  const la = relativeLuminance(a);
  const lb = relativeLuminance(b);
  return (Math.max(la, lb) + 0.05) / (Math.min(la, lb) + 0.05);
}

/** `#rrggbb` of an 8-bit colour (channels rounded and clamped, so a computed colour is safe to print). */
export function hexOf(rgb: Rgb): string {
  const part = (c: number): string => Math.min(255, Math.max(0, Math.round(c))).toString(16).padStart(2, '0');
  return `#${part(rgb[0])}${part(rgb[1])}${part(rgb[2])}`;
}

/** The colour of `#rrggbb` (or `#rgb`); null when the text is not such a hex colour. */
export function rgbOfHex(hex: string): Rgb | null {
  const long = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (long) return [parseInt(long[1] ?? '0', 16), parseInt(long[2] ?? '0', 16), parseInt(long[3] ?? '0', 16)];
  const short = /^#([0-9a-f])([0-9a-f])([0-9a-f])$/i.exec(hex);
  if (short) return [parseInt((short[1] ?? '0').repeat(2), 16), parseInt((short[2] ?? '0').repeat(2), 16), parseInt((short[3] ?? '0').repeat(2), 16)];
  return null;
}
