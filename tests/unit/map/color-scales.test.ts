import { describe, expect, it } from 'vitest';
import {
  applyFade,
  categoricalColors,
  continuousColors,
  legendTicks,
  RAMP_STEPS,
  rampTable,
  robustDomain,
  sizesFrom,
} from '@/lib/map/color-scales';
import type { Rgb } from '@/lib/map/color-math';
import {
  CATEGORICAL_DARK,
  CATEGORICAL_LIGHT,
  OTHER_COLOR_LIGHT,
  sequentialRamp,
  UNASSIGNED_COLOR_DARK,
  UNASSIGNED_COLOR_LIGHT,
} from '@/lib/map/palette';

const rgbaAt = (colors: Uint8Array, i: number): number[] => Array.from(colors.subarray(i * 4, i * 4 + 4));
const opaque = (rgb: Rgb): number[] => [rgb[0], rgb[1], rgb[2], 255];

describe('categoricalColors', () => {
  it('maps codes to the palette, ≥ 10 to "other" and −1 to "unassigned", alpha 255', () => {
    const colors = categoricalColors(Int32Array.from([0, 3, 9, 10, 57, -1]), false);
    expect(colors).toHaveLength(24);
    expect(rgbaAt(colors, 0)).toEqual(opaque(CATEGORICAL_LIGHT[0] ?? [0, 0, 0]));
    expect(rgbaAt(colors, 1)).toEqual(opaque(CATEGORICAL_LIGHT[3] ?? [0, 0, 0]));
    expect(rgbaAt(colors, 2)).toEqual(opaque(CATEGORICAL_LIGHT[9] ?? [0, 0, 0]));
    expect(rgbaAt(colors, 3)).toEqual(opaque(OTHER_COLOR_LIGHT));
    expect(rgbaAt(colors, 4)).toEqual(opaque(OTHER_COLOR_LIGHT));
    expect(rgbaAt(colors, 5)).toEqual(opaque(UNASSIGNED_COLOR_LIGHT));
  });

  it('uses the dark palette on dark stock and writes into a given buffer', () => {
    const out = new Uint8Array(8);
    const colors = categoricalColors(Int32Array.from([1, -1]), true, out);
    expect(colors).toBe(out);
    expect(rgbaAt(out, 0)).toEqual(opaque(CATEGORICAL_DARK[1] ?? [0, 0, 0]));
    expect(rgbaAt(out, 1)).toEqual(opaque(UNASSIGNED_COLOR_DARK));
  });

  it('refuses a buffer too small', () => {
    expect(() => categoricalColors(new Int32Array(3), false, new Uint8Array(8))).toThrow(RangeError);
  });
});

describe('continuousColors', () => {
  const ramp = sequentialRamp;
  const table = rampTable(ramp, false);
  const entry = (step: number): number[] => [table[step * 3] ?? -1, table[step * 3 + 1] ?? -1, table[step * 3 + 2] ?? -1, 255];

  it('builds a 256-entry lookup table from the ramp, once', () => {
    expect(table).toHaveLength(RAMP_STEPS * 3);
    expect(entry(0).slice(0, 3)).toEqual([...ramp(0, false)]);
    expect(entry(255).slice(0, 3)).toEqual([...ramp(1, false)]);
    expect(entry(128).slice(0, 3)).toEqual([...ramp(128 / 255, false)]);
    expect(rampTable(ramp, false)).toBe(table);
    expect(rampTable(ramp, true)).not.toBe(table);
  });

  it('puts the domain’s ends on the ramp’s ends and clamps beyond them', () => {
    const values = Float32Array.from([0, 10, -5, 25, Infinity, -Infinity, 5]);
    const colors = continuousColors(values, { min: 0, max: 10 }, ramp, false);
    expect(rgbaAt(colors, 0)).toEqual(entry(0));
    expect(rgbaAt(colors, 1)).toEqual(entry(255));
    expect(rgbaAt(colors, 2)).toEqual(entry(0));
    expect(rgbaAt(colors, 3)).toEqual(entry(255));
    expect(rgbaAt(colors, 4)).toEqual(entry(255));
    expect(rgbaAt(colors, 5)).toEqual(entry(0));
    expect(rgbaAt(colors, 6)).toEqual(entry(128)); // 127.5 rounds up to the nearest entry
  });

  it('rounds to the nearest table entry', () => {
    const colors = continuousColors(Float32Array.from([1 / 255, 0.4 / 255, 0.6 / 255]), { min: 0, max: 1 }, ramp, false);
    expect(rgbaAt(colors, 0)).toEqual(entry(1));
    expect(rgbaAt(colors, 1)).toEqual(entry(0));
    expect(rgbaAt(colors, 2)).toEqual(entry(1));
  });

  it('paints NaN in the neutral grey', () => {
    const colors = continuousColors(Float32Array.from([Number.NaN, 0.5]), { min: 0, max: 1 }, ramp, false);
    expect(rgbaAt(colors, 0)).toEqual(opaque(UNASSIGNED_COLOR_LIGHT));
    const dark = continuousColors(Float32Array.from([Number.NaN]), { min: 0, max: 1 }, ramp, true);
    expect(rgbaAt(dark, 0)).toEqual(opaque(UNASSIGNED_COLOR_DARK));
  });

  it('gives a constant domain the ramp’s middle', () => {
    const colors = continuousColors(Float32Array.from([3, 3, 100]), { min: 3, max: 3 }, ramp, false);
    expect(rgbaAt(colors, 0)).toEqual(entry(127));
    expect(rgbaAt(colors, 2)).toEqual(entry(127));
  });
});

describe('robustDomain', () => {
  it('takes the 2nd and 98th percentiles (linear interpolation, as numpy.percentile’s default)', () => {
    // 0..100: numpy.percentile(range(101), [2, 98]) is [2, 98].
    const values = Float32Array.from({ length: 101 }, (_, i) => i);
    expect(robustDomain(values)).toEqual({ min: 2, max: 98 });
  });

  it('keeps one outlier from flattening the ramp, and ignores NaN and ±Infinity', () => {
    const values = new Float32Array(1000).map((_, i) => i / 999);
    values[500] = 1e9;
    values[10] = Number.NaN;
    values[11] = Infinity;
    values[12] = -Infinity;
    const domain = robustDomain(values);
    expect(domain.min).toBeGreaterThan(0);
    expect(domain.min).toBeLessThan(0.05);
    expect(domain.max).toBeGreaterThan(0.95);
    expect(domain.max).toBeLessThan(1);
  });

  it('falls back to the full range when the percentiles meet, widens a constant, defaults when empty', () => {
    const mostlyZero = new Float32Array(1000);
    mostlyZero[3] = 7;
    expect(robustDomain(mostlyZero)).toEqual({ min: 0, max: 7 });
    expect(robustDomain(Float32Array.from([4, 4, 4]))).toEqual({ min: 3.5, max: 4.5 });
    expect(robustDomain(new Float32Array(0))).toEqual({ min: 0, max: 1 });
    expect(robustDomain(Float32Array.from([Number.NaN, Number.NaN]))).toEqual({ min: 0, max: 1 });
  });
});

describe('legendTicks (Heckbert, "Nice numbers for graph labels", Graphics Gems 1990)', () => {
  it('0–1 → 0, 0.2, …, 1', () => {
    expect(legendTicks({ min: 0, max: 1 })).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
  });

  it('0.013–0.987 → the nice ticks inside the domain only', () => {
    expect(legendTicks({ min: 0.013, max: 0.987 })).toEqual([0.2, 0.4, 0.6, 0.8]);
  });

  it('handles other scales, negative ranges and reversed domains', () => {
    expect(legendTicks({ min: 0, max: 100 })).toEqual([0, 20, 40, 60, 80, 100]);
    expect(legendTicks({ min: -3.7, max: 12.2 })).toEqual([0, 5, 10]);
    expect(legendTicks({ min: 1, max: 0 })).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    expect(legendTicks({ min: -1, max: 1 })).toEqual([-1, -0.5, 0, 0.5, 1]);
    expect(legendTicks({ min: 1200, max: 98000 }, 3)).toEqual([50000]);
    expect(legendTicks({ min: 0.00012, max: 0.00049 })).toEqual([0.0002, 0.0003, 0.0004]);
  });

  it('prints without floating-point noise and never as −0', () => {
    for (const tick of legendTicks({ min: 0.1, max: 0.7 }, 7)) expect(String(tick).length).toBeLessThanOrEqual(4);
    expect(Object.is(legendTicks({ min: -0.4, max: 0.4 }).find((t) => t === 0), -0)).toBe(false);
  });

  it('degrades gently: a point domain gives one tick, non-finite gives none', () => {
    expect(legendTicks({ min: 2, max: 2 })).toEqual([2]);
    expect(legendTicks({ min: Number.NaN, max: 1 })).toEqual([]);
    expect(legendTicks({ min: 0, max: Infinity })).toEqual([]);
  });
});

describe('applyFade', () => {
  it('fades points outside the filter, restores those inside, leaves colours alone', () => {
    const colors = categoricalColors(Int32Array.from([0, 1, 2]), false);
    const before = Array.from(colors);
    applyFade(colors, Uint8Array.from([1, 0, 1]));
    expect(colors[3]).toBe(255);
    expect(colors[7]).toBe(40);
    expect(colors[11]).toBe(255);
    applyFade(colors, Uint8Array.from([0, 1, 1]), 10);
    expect([colors[3], colors[7], colors[11]]).toEqual([10, 255, 255]);
    for (let i = 0; i < colors.length; i++) if (i % 4 !== 3) expect(colors[i]).toBe(before[i]);
  });

  it('refuses a mask shorter than the points', () => {
    expect(() => applyFade(new Uint8Array(12), new Uint8Array(2))).toThrow(RangeError);
  });
});

describe('sizesFrom', () => {
  it('makes area, not radius, linear in the value', () => {
    const sizes = sizesFrom(Float32Array.from([0, 0.5, 1, 0.25]), { min: 0, max: 1 }, 2, 10);
    expect(sizes[0]).toBeCloseTo(2, 6);
    expect(sizes[2]).toBeCloseTo(10, 6);
    // Area halfway between 4 and 100 is 52.
    expect((sizes[1] ?? 0) ** 2).toBeCloseTo(52, 3);
    expect((sizes[3] ?? 0) ** 2).toBeCloseTo(28, 3);
  });

  it('gives radius ∝ √value when the smallest size is 0', () => {
    const sizes = sizesFrom(Float32Array.from([1, 4, 9]), { min: 0, max: 9 }, 0, 9);
    expect((sizes[1] ?? 0) / (sizes[0] ?? 1)).toBeCloseTo(2, 5);
    expect((sizes[2] ?? 0) / (sizes[0] ?? 1)).toBeCloseTo(3, 5);
  });

  it('clamps outside the domain, sizes NaN smallest, and fills a given buffer', () => {
    const out = new Float32Array(4);
    const sizes = sizesFrom(Float32Array.from([-5, 50, Number.NaN, Infinity]), { min: 0, max: 1 }, 3, 6, out);
    expect(sizes).toBe(out);
    expect(Array.from(out)).toEqual([3, 6, 3, 6]);
  });

  it('gives a constant domain the middle area', () => {
    const sizes = sizesFrom(Float32Array.from([7, 7]), { min: 7, max: 7 }, 2, 10);
    expect((sizes[0] ?? 0) ** 2).toBeCloseTo(52, 3);
  });
});

describe('robustDomain against sorting (seeded random data)', () => {
  it('matches type-7 percentiles of the sorted values', async () => {
    const { mulberry32 } = await import('@/lib/align/random');
    const random = mulberry32(99);
    for (const n of [1, 2, 3, 10, 51, 1000, 4097]) {
      const values = Float32Array.from({ length: n }, () => Math.round(random() * 50) / 7 - 3);
      const sorted = Float64Array.from(values).sort();
      const at = (p: number): number => {
        const position = (n - 1) * p;
        const below = Math.floor(position);
        const low = sorted[below] ?? 0;
        const high = sorted[Math.min(n - 1, below + 1)] ?? low;
        return low + (high - low) * (position - below);
      };
      const domain = robustDomain(values);
      let min = at(0.02);
      let max = at(0.98);
      if (!(max > min)) [min, max] = [sorted[0] ?? 0, sorted[n - 1] ?? 0];
      if (!(max > min)) [min, max] = [min - 0.5, min + 0.5];
      expect(domain.min).toBeCloseTo(min, 5);
      expect(domain.max).toBeCloseTo(max, 5);
    }
  });
});
