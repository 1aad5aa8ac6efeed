/** The seeded generators in lib/align/random.ts: reproducible, and with the right distributions. */
import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator, randomOrthogonal } from '@/lib/align';
import { determinant, orthogonalityError } from './helpers';

describe('seeded randomness', () => {
  it('mulberry32 is reproducible from its seed and uniform on [0, 1)', () => {
    const first = mulberry32(42);
    const second = mulberry32(42);
    const values = Array.from({ length: 20_000 }, () => first());
    expect(values.slice(0, 5)).toEqual(Array.from({ length: 5 }, () => second()));
    expect(Math.min(...values)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...values)).toBeLessThan(1);
    // Uniform mean 1/2, variance 1/12; standard errors √(1/12/20,000) ≈ 0.002 and ≈ 0.0006.
    const mean = values.reduce((sum, value) => sum + value, 0) / values.length;
    const variance = values.reduce((sum, value) => sum + (value - mean) ** 2, 0) / values.length;
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.01);
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(0.003);
    expect(mulberry32(43)()).not.toBe(mulberry32(42)());
  });

  it('normalGenerator gives mean 0 and variance 1', () => {
    const normal = normalGenerator(mulberry32(7));
    const values = Array.from({ length: 20_000 }, () => normal());
    const mean = values.reduce((sum, value) => sum + value, 0) / values.length;
    const variance = values.reduce((sum, value) => sum + (value - mean) ** 2, 0) / values.length;
    // Standard errors 0.007 (mean) and 0.01 (variance): bounds of about 4 of them.
    expect(Math.abs(mean)).toBeLessThan(0.03);
    expect(Math.abs(variance - 1)).toBeLessThan(0.04);
  });

  it('randomOrthogonal gives orthogonal matrices, about half of them reflections', () => {
    const normal = normalGenerator(mulberry32(11));
    let reflections = 0;
    const count = 400;
    for (let trial = 0; trial < count; trial++) {
      const k = 1 + (trial % 5);
      const q = randomOrthogonal(k, normal);
      expect(orthogonalityError(q, k)).toBeLessThan(1e-12);
      if (determinant(q, k) < 0) reflections++;
    }
    // Haar measure on O(k): P(det = −1) = 1/2; binomial sd 10 on 400, so 200 ± 50 is 5 sd.
    expect(reflections).toBeGreaterThan(150);
    expect(reflections).toBeLessThan(250);
  });

  it('refuses a size that is not a positive integer', () => {
    expect(() => randomOrthogonal(0, () => 0)).toThrow('randomOrthogonal: k must be a positive integer, got 0');
  });
});
