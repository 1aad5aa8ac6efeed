import { describe, expect, it } from 'vitest';
import {
  ciede2000,
  contrastRatio,
  DEFICIENCIES,
  hexOf,
  labToRgb,
  rgbOfHex,
  rgbToLab,
  simulateDeficiencyLinear,
  type Lab,
  type Rgb,
} from '@/lib/map/color-math';

/**
 * Worked examples from Sharma, Wu & Dalal (2005), "The CIEDE2000 color-difference formula:
 * implementation notes, supplementary test data, and mathematical observations", Color Research &
 * Application 30(1) 21–30, Table 1 (values as published, four decimals). They include the cases
 * their notes single out: hue angles either side of 0°/360° (pairs 9, 11, 13) and near-neutral
 * colours (pairs 7, 33, 34). Pair numbers as in the table.
 */
const SHARMA_2005: ReadonlyArray<{ pair: number; lab1: Lab; lab2: Lab; deltaE: number }> = [
  { pair: 1, lab1: [50, 2.6772, -79.7751], lab2: [50, 0, -82.7485], deltaE: 2.0425 },
  { pair: 2, lab1: [50, 3.1571, -77.2803], lab2: [50, 0, -82.7485], deltaE: 2.8615 },
  { pair: 4, lab1: [50, -1.3802, -84.2814], lab2: [50, 0, -82.7485], deltaE: 1.0 },
  { pair: 7, lab1: [50, 0, 0], lab2: [50, -1, 2], deltaE: 2.3669 },
  { pair: 9, lab1: [50, 2.49, -0.001], lab2: [50, -2.49, 0.0009], deltaE: 7.1792 },
  { pair: 11, lab1: [50, 2.49, -0.001], lab2: [50, -2.49, 0.0011], deltaE: 7.2195 },
  { pair: 13, lab1: [50, -0.001, 2.49], lab2: [50, 0.0009, -2.49], deltaE: 4.8045 },
  { pair: 17, lab1: [50, 2.5, 0], lab2: [73, 25, -18], deltaE: 27.1492 },
  { pair: 18, lab1: [50, 2.5, 0], lab2: [61, -5, 29], deltaE: 22.8977 },
  { pair: 19, lab1: [50, 2.5, 0], lab2: [56, -27, -3], deltaE: 31.903 },
  { pair: 20, lab1: [50, 2.5, 0], lab2: [58, 24, 15], deltaE: 19.4535 },
  { pair: 25, lab1: [60.2574, -34.0099, 36.2677], lab2: [60.4626, -34.1751, 39.4387], deltaE: 1.2644 },
  { pair: 29, lab1: [22.7233, 20.0904, -46.694], lab2: [23.0331, 14.973, -42.5619], deltaE: 2.0373 },
  { pair: 33, lab1: [6.7747, -0.2908, -2.4247], lab2: [5.8714, -0.0985, -2.2286], deltaE: 0.6377 },
  { pair: 34, lab1: [2.0776, 0.0795, -1.135], lab2: [0.9033, -0.0636, -0.5514], deltaE: 0.9082 },
];

describe('CIEDE2000 against Sharma, Wu & Dalal (2005) Table 1', () => {
  for (const { pair, lab1, lab2, deltaE } of SHARMA_2005) {
    it(`pair ${pair}: ΔE00 = ${deltaE}`, () => {
      // The table has four decimals, so agreement to half a unit in the last place is exact.
      expect(Math.abs(ciede2000(lab1, lab2) - deltaE)).toBeLessThan(5e-5);
      // CIEDE2000 is symmetric in its arguments (their "mathematical observations").
      expect(Math.abs(ciede2000(lab2, lab1) - deltaE)).toBeLessThan(5e-5);
    });
  }

  it('is zero for identical colours', () => {
    expect(ciede2000([40, 30, -20], [40, 30, -20])).toBe(0);
    expect(ciede2000([0, 0, 0], [0, 0, 0])).toBe(0);
  });
});

describe('sRGB ↔ CIELAB', () => {
  it('puts white at L* 100 and black at 0, both neutral', () => {
    const white = rgbToLab([255, 255, 255]);
    expect(white[0]).toBeCloseTo(100, 3);
    expect(Math.abs(white[1]) + Math.abs(white[2])).toBeLessThan(0.01);
    expect(rgbToLab([0, 0, 0])[0]).toBeCloseTo(0, 6);
  });

  it('matches published values for sRGB red and mid grey (values from memory of B. Lindbloom’s calculator, D65)', () => {
    const red = rgbToLab([255, 0, 0]);
    expect(red[0]).toBeCloseTo(53.24, 1);
    expect(red[1]).toBeCloseTo(80.09, 1);
    expect(red[2]).toBeCloseTo(67.2, 1);
    expect(rgbToLab([128, 128, 128])[0]).toBeCloseTo(53.59, 1);
  });

  it('round-trips every 8-bit colour on a coarse grid', () => {
    for (let r = 0; r <= 255; r += 15)
      for (let g = 0; g <= 255; g += 15)
        for (let b = 0; b <= 255; b += 15) expect(labToRgb(rgbToLab([r, g, b]))).toEqual([r, g, b]);
  });

  it('writes and reads hex', () => {
    expect(hexOf([246, 242, 234])).toBe('#f6f2ea');
    expect(hexOf([300, -4, 10.4])).toBe('#ff000a');
    expect(rgbOfHex('#1E4D5C')).toEqual([0x1e, 0x4d, 0x5c]);
    expect(rgbOfHex('#abc')).toEqual([0xaa, 0xbb, 0xcc]);
    expect(rgbOfHex('1e4d5c')).toBeNull();
  });
});

describe('WCAG 2.1 contrast', () => {
  it('gives 21:1 for black on white and 1:1 for a colour on itself (WCAG 2.1 definition)', () => {
    expect(contrastRatio([0, 0, 0], [255, 255, 255])).toBeCloseTo(21, 10);
    expect(contrastRatio([30, 77, 92], [30, 77, 92])).toBe(1);
  });

  it('gives about 4.54:1 for #767676 on white, the lightest grey commonly cited as passing AA (value from memory)', () => {
    expect(contrastRatio([0x76, 0x76, 0x76], [255, 255, 255])).toBeCloseTo(4.54, 2);
  });

  it('agrees with the ink-on-paper contrast noted in app/globals.css (~15:1)', () => {
    expect(contrastRatio([0x1c, 0x1b, 0x19], [0xf6, 0xf2, 0xea])).toBeGreaterThan(14.5);
  });
});

describe('Machado et al. (2009) simulation', () => {
  it('leaves neutral greys grey (each matrix row sums to 1)', () => {
    for (const deficiency of DEFICIENCIES) {
      const grey = simulateDeficiencyLinear([128, 128, 128], deficiency);
      const expected = simulateDeficiencyLinear([128, 128, 128], 'protanopia')[0];
      for (const channel of grey) expect(channel).toBeCloseTo(expected, 2);
    }
  });

  it('collapses red–green for protanopes and deuteranopes but not for tritanopes', () => {
    const red: Rgb = [200, 40, 40];
    const green: Rgb = [40, 150, 40];
    const normal = ciede2000(rgbToLab(red), rgbToLab(green));
    const simulated = (deficiency: (typeof DEFICIENCIES)[number]): number => {
      const a = simulateDeficiencyLinear(red, deficiency);
      const b = simulateDeficiencyLinear(green, deficiency);
      return ciede2000(rgbToLab(labToRgbLinear(a)), rgbToLab(labToRgbLinear(b)));
    };
    expect(simulated('protanopia')).toBeLessThan(normal / 2);
    expect(simulated('deuteranopia')).toBeLessThan(normal / 2);
    expect(simulated('tritanopia')).toBeGreaterThan(normal / 2);
  });
});

/** Linear RGB (0–1) to 8-bit sRGB, for the simulation test above. */
function labToRgbLinear(linear: [number, number, number]): Rgb {
  const encode = (c: number): number => Math.round(255 * (c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055));
  return [encode(linear[0]), encode(linear[1]), encode(linear[2])];
}
