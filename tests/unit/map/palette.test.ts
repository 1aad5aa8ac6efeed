import { describe, expect, it } from 'vitest';
import {
  ciede2000,
  contrastRatio,
  DEFICIENCIES,
  rgbToLab,
  simulateDeficiencyLab,
  type Deficiency,
  type Lab,
  type Rgb,
} from '@/lib/map/color-math';
import {
  CATEGORICAL_DARK,
  CATEGORICAL_LIGHT,
  categoricalColor,
  fidelityRamp,
  hexOf,
  OTHER_COLOR_DARK,
  OTHER_COLOR_LIGHT,
  PAPER_DARK,
  PAPER_LIGHT,
  sequentialRamp,
  UNASSIGNED_COLOR_DARK,
  UNASSIGNED_COLOR_LIGHT,
} from '@/lib/map/palette';

/**
 * Colour-blind safety, measured: colours as a dichromat sees them are simulated with the
 * severity-1.0 matrices of Machado, Oliveira & Fernandes (2009), "A physiologically-based model for
 * simulation of color vision deficiency", IEEE TVCG 15(6) 1291–1298, applied in linear RGB, and
 * compared with CIEDE2000 (checked in color-math.test.ts against Sharma, Wu & Dalal 2005).
 *
 * Thresholds (rule of thumb, common practice — not a standard): a ΔE00 of about 1–2.3 is a just
 * noticeable difference between large patches, but small marks need far more to be told apart
 * (Szafir 2017, "Modeling color difference for visualization design", IEEE TVCG 24(1), finds the
 * needed difference grows steeply as marks shrink), and designers commonly ask ≥ 10 between the
 * categorical colours of a scatterplot. We ask 12 under each simulation for margin, and 15 in normal
 * vision, for the first eight colours — the ones a typical column uses. Colours 9 and 10 and the
 * "other" grey are a weaker tier, held to 7 against everything.
 */
const MIN_DELTA_E_SIMULATED = 12;
const MIN_DELTA_E_NORMAL = 15;
const MIN_DELTA_E_TAIL = 7;
/** WCAG 2.1 SC 1.4.11 (non-text contrast) asks 3:1 for graphical objects. */
const MIN_CONTRAST = 3;

type Vision = 'normal' | Deficiency;
const VISIONS: readonly Vision[] = ['normal', ...DEFICIENCIES];

function seen(rgb: Rgb, vision: Vision): Lab {
  return vision === 'normal' ? rgbToLab(rgb) : simulateDeficiencyLab(rgb, vision);
}

function minPairwise(colors: readonly Rgb[], vision: Vision): { deltaE: number; pair: [string, string] } {
  let deltaE = Infinity;
  let pair: [string, string] = ['', ''];
  for (let i = 0; i < colors.length; i++)
    for (let j = i + 1; j < colors.length; j++) {
      const a = colors[i];
      const b = colors[j];
      if (!a || !b) continue;
      const d = ciede2000(seen(a, vision), seen(b, vision));
      if (d < deltaE) {
        deltaE = d;
        pair = [hexOf(a), hexOf(b)];
      }
    }
  return { deltaE, pair };
}

const PALETTES = [
  { name: 'light', palette: CATEGORICAL_LIGHT, paper: PAPER_LIGHT, other: OTHER_COLOR_LIGHT, unassigned: UNASSIGNED_COLOR_LIGHT },
  { name: 'dark', palette: CATEGORICAL_DARK, paper: PAPER_DARK, other: OTHER_COLOR_DARK, unassigned: UNASSIGNED_COLOR_DARK },
] as const;

describe.each(PALETTES)('the $name categorical palette', ({ name, palette, paper, other, unassigned }) => {
  it('has ten distinct colours', () => {
    expect(palette).toHaveLength(10);
    expect(new Set(palette.map(hexOf)).size).toBe(10);
  });

  for (const vision of VISIONS) {
    const threshold = vision === 'normal' ? MIN_DELTA_E_NORMAL : MIN_DELTA_E_SIMULATED;
    it(`keeps the first eight ≥ ${threshold} ΔE00 apart (${vision})`, () => {
      const { deltaE, pair } = minPairwise(palette.slice(0, 8), vision);
      // Printed so the measured margins are on record with every run.
      console.log(`${name} palette, ${vision}: min ΔE00 among the first 8 = ${deltaE.toFixed(1)} (${pair.join(' vs ')})`);
      expect(deltaE).toBeGreaterThanOrEqual(threshold);
    });

    it(`keeps all ten and "other" ≥ ${MIN_DELTA_E_TAIL} ΔE00 apart (${vision})`, () => {
      const { deltaE } = minPairwise([...palette, other], vision);
      console.log(`${name} palette, ${vision}: min ΔE00 among all 10 + other = ${deltaE.toFixed(1)}`);
      expect(deltaE).toBeGreaterThanOrEqual(MIN_DELTA_E_TAIL);
    });
  }

  it(`stands ≥ ${MIN_CONTRAST}:1 against the paper (WCAG 2.1 relative luminance), "other" included`, () => {
    for (const color of [...palette, other]) {
      const ratio = contrastRatio(color, paper);
      expect(ratio, `${hexOf(color)} on ${hexOf(paper)}: ${ratio.toFixed(2)}:1`).toBeGreaterThanOrEqual(MIN_CONTRAST);
    }
    console.log(`${name} contrasts: ${palette.map((c) => `${hexOf(c)} ${contrastRatio(c, paper).toFixed(2)}`).join(', ')}; other ${hexOf(other)} ${contrastRatio(other, paper).toFixed(2)}`);
  });

  it('keeps "unassigned" deliberately quiet: below 3:1 (context, not a category) yet visible', () => {
    const ratio = contrastRatio(unassigned, paper);
    expect(ratio).toBeGreaterThan(1.3);
    expect(ratio).toBeLessThan(MIN_CONTRAST);
    // …and it does not pass for one of the palette's hues.
    for (const color of palette) expect(ciede2000(rgbToLab(color), rgbToLab(unassigned))).toBeGreaterThan(MIN_DELTA_E_TAIL);
  });
});

describe('categoricalColor', () => {
  it('takes the palette for 0–9, "other" beyond, "unassigned" below 0', () => {
    expect(categoricalColor(0, false)).toEqual(CATEGORICAL_LIGHT[0]);
    expect(categoricalColor(9, true)).toEqual(CATEGORICAL_DARK[9]);
    expect(categoricalColor(10, false)).toEqual(OTHER_COLOR_LIGHT);
    expect(categoricalColor(1234, true)).toEqual(OTHER_COLOR_DARK);
    expect(categoricalColor(-1, false)).toEqual(UNASSIGNED_COLOR_LIGHT);
    expect(categoricalColor(Number.NaN, true)).toEqual(UNASSIGNED_COLOR_DARK);
  });
});

/** L* of the ramp at `steps` + 1 evenly spaced t. */
function lightness(ramp: (t: number, dark: boolean) => Rgb, dark: boolean, steps: number): number[] {
  return Array.from({ length: steps + 1 }, (_, k) => rgbToLab(ramp(k / steps, dark))[0]);
}

describe.each([
  { ramp: sequentialRamp, name: 'sequentialRamp', dark: false, rising: false },
  { ramp: sequentialRamp, name: 'sequentialRamp', dark: true, rising: true },
  { ramp: fidelityRamp, name: 'fidelityRamp', dark: false, rising: true },
  { ramp: fidelityRamp, name: 'fidelityRamp', dark: true, rising: false },
])('$name (dark: $dark)', ({ ramp, dark, rising }) => {
  const sign = rising ? 1 : -1;

  it('is monotone in CIELAB lightness at the lookup table’s 256 steps (to 8-bit rounding)', () => {
    const l = lightness(ramp, dark, 255);
    // One 8-bit step of one channel moves L* by at most ~0.4, so rounding may wobble by that much.
    for (let k = 1; k < l.length; k++) expect(sign * ((l[k] ?? 0) - (l[k - 1] ?? 0))).toBeGreaterThan(-0.4);
  });

  it('is strictly monotone over sixteenths, with a usable span', () => {
    const l = lightness(ramp, dark, 16);
    for (let k = 1; k < l.length; k++) expect(sign * ((l[k] ?? 0) - (l[k - 1] ?? 0))).toBeGreaterThan(1);
    expect(Math.abs((l[16] ?? 0) - (l[0] ?? 0))).toBeGreaterThan(25);
  });

  it('clamps t outside [0, 1] and reads NaN as 0', () => {
    expect(ramp(-3, dark)).toEqual(ramp(0, dark));
    expect(ramp(7, dark)).toEqual(ramp(1, dark));
    expect(ramp(Number.NaN, dark)).toEqual(ramp(0, dark));
  });

  it('stays monotone in lightness for each dichromat too (order survives colour-vision deficiency)', () => {
    for (const deficiency of DEFICIENCIES) {
      const l = Array.from({ length: 9 }, (_, k) => simulateDeficiencyLab(ramp(k / 8, dark), deficiency)[0]);
      for (let k = 1; k < l.length; k++) expect(sign * ((l[k] ?? 0) - (l[k - 1] ?? 0))).toBeGreaterThan(0.5);
    }
  });
});

describe('fidelityRamp', () => {
  it('makes low fidelity more conspicuous against the paper than high fidelity', () => {
    for (const [dark, paper] of [[false, PAPER_LIGHT], [true, PAPER_DARK]] as const) {
      expect(contrastRatio(fidelityRamp(0, dark), paper)).toBeGreaterThan(contrastRatio(fidelityRamp(1, dark), paper) + 1.5);
      expect(contrastRatio(fidelityRamp(1, dark), paper)).toBeGreaterThan(1.8); // quiet, not invisible
    }
  });
});
