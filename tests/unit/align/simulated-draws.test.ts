/**
 * Simulated posterior draws, each under its own random orthogonal transform (reflections
 * included) plus Gaussian noise: generalised Procrustes recovers the truth up to one global
 * rotation, where the naive mean of the draws does not. Disparity is scipy.spatial.procrustes's
 * (our procrustesDisparity, checked against SciPy in procrustes-reference.test.ts).
 */
import { describe, expect, it } from 'vitest';
import { generalisedProcrustes, naiveMean, orthogonalProcrustes, procrustesDisparity } from '@/lib/align';
import { determinant, expectedNoiseNorm, maxAbsDifference, multiply, orthogonalityError, simulateDraws } from './helpers';

const N = 200;
const K = 4;
const D = 100;
const SIGMA = 0.05;
const SEED = 20261201;

const simulation = simulateDraws(SEED, [N], K, D, SIGMA);
const truth = simulation.truths[0] as Float64Array;
const draws = simulation.draws[0] as Float32Array;
const result = generalisedProcrustes(draws, D, N, K);

/*
 * What sd and spread should be. Each aligned draw is truth·G + noise·R̂_d, where the noise is
 * isotropic N(0, σ²) so the rotation does not change its distribution. Two small effects shrink it:
 * fitting a rotation per draw absorbs K(K−1)/2 of the N·K residual degrees of freedom (factor
 * 1 − (K−1)/(2N) on the variance; Gower & Dijksterhuis 2004 discuss this loss — from memory), and
 * deviations are taken from the estimated mean (factor (D−1)/D on E‖·‖²; the sd's D−1 divisor
 * already corrects for it).
 */
const ROTATION_SHRINK = Math.sqrt(1 - (K - 1) / (2 * N));
const EXPECTED_SD = SIGMA * ROTATION_SHRINK;
const EXPECTED_SPREAD = expectedNoiseNorm(SIGMA, K) * ROTATION_SHRINK * Math.sqrt((D - 1) / D);

describe('generalised Procrustes on simulated draws (N = 200, K = 4, D = 100, σ = 0.05)', () => {
  it('uses reflections as well as rotations in the simulation', () => {
    let reflections = 0;
    for (let d = 0; d < D; d++) if (determinant(simulation.rotations, K, d * K * K) < 0) reflections++;
    // Haar over O(4): each draw is a reflection with probability 1/2.
    expect(reflections).toBeGreaterThan(25);
    expect(reflections).toBeLessThan(75);
  });

  it('converges', () => {
    expect(result.converged).toBe(true);
    expect(result.iterations).toBeGreaterThanOrEqual(2);
    expect(result.iterations).toBeLessThan(20);
  });

  it('recovers the truth up to one global rotation (disparity < 1e-3) where the naive mean does not (> 0.1)', () => {
    const aligned = procrustesDisparity(truth, result.mean, N, K).disparity;
    const naive = procrustesDisparity(truth, naiveMean(draws, D, N, K), N, K).disparity;
    // Expected aligned disparity ≈ N·K·σ²/D / ‖truth‖² ≈ 1e-5; the naive mean averages E[R] = 0 away.
    expect(aligned).toBeLessThan(1e-3);
    expect(naive).toBeGreaterThan(0.1);
  });

  it('undoes each draw’s own transform: R_d·R̂_d is the same global rotation G for every draw', () => {
    const global = orthogonalProcrustes(truth, result.mean, N, K).rotation;
    let worst = 0;
    for (let d = 0; d < D; d++) {
      expect(orthogonalityError(result.rotations, K, d * K * K)).toBeLessThan(1e-9);
      const combined = multiply(simulation.rotations.subarray(d * K * K, (d + 1) * K * K), result.rotations, K, K, K, d * K * K);
      worst = Math.max(worst, maxAbsDifference(combined, global));
    }
    // A rotation fitted to N = 200 rows with noise σ = 0.05 is off by about σ/(√N·scale) ≈ 0.003.
    expect(worst).toBeLessThan(0.02);
  });

  it('keeps the draws’ scale (no shrinking or stretching)', () => {
    let truthSquares = 0;
    let meanSquares = 0;
    for (let index = 0; index < N * K; index++) {
      truthSquares += (truth[index] as number) ** 2;
      meanSquares += (result.mean[index] as number) ** 2;
    }
    // ‖mean‖² = ‖truth‖² + N·K·σ²/D up to sampling noise: equal to 0.1 %.
    expect(Math.sqrt(meanSquares / truthSquares)).toBeCloseTo(1, 3);
  });

  it('returns aligned draws equal to draw·R̂_d and a mean equal to their average', () => {
    let worstDraw = 0;
    const average = new Float64Array(N * K);
    for (let d = 0; d < D; d++) {
      const expected = multiply(draws.subarray(d * N * K, (d + 1) * N * K), result.rotations, N, K, K, d * K * K);
      worstDraw = Math.max(worstDraw, maxAbsDifference(result.aligned.subarray(d * N * K, (d + 1) * N * K), expected));
      for (let index = 0; index < N * K; index++) average[index] = (average[index] as number) + (expected[index] as number) / D;
    }
    // Stored as float32: |x| ≲ 10, so rounding is below 1e-6.
    expect(worstDraw).toBeLessThan(1e-5);
    expect(maxAbsDifference(result.mean, average)).toBeLessThan(1e-5);
  });

  it('gives a posterior sd of about σ per dimension', () => {
    // Pooled over all 800 cells (79,200 degrees of freedom) the variance has relative standard
    // error √(2/79,200) ≈ 0.5 %, so the rms sd is within 2 % of the expectation (≥ 8 standard errors).
    let pooled = 0;
    for (const value of result.sd) pooled += value * value;
    expect(Math.abs(Math.sqrt(pooled / (N * K)) / EXPECTED_SD - 1)).toBeLessThan(0.02);
    // Per dimension, 200 cells each: relative standard error ≈ 0.36 % on the sd; allow 3 %.
    for (let j = 0; j < K; j++) {
      let squares = 0;
      for (let i = 0; i < N; i++) squares += (result.sd[i * K + j] as number) ** 2;
      expect(Math.abs(Math.sqrt(squares / N) / EXPECTED_SD - 1)).toBeLessThan(0.03);
    }
    // Per cell, 99 degrees of freedom: relative standard error ≈ 1/√198 ≈ 7 %; ±40 % is > 5.5 of them.
    for (const value of result.sd) {
      expect(value).toBeGreaterThan(0.6 * EXPECTED_SD);
      expect(value).toBeLessThan(1.4 * EXPECTED_SD);
    }
  });

  it('gives a spread of about the mean norm of K-dimensional noise, σ·√2·Γ((K+1)/2)/Γ(K/2)', () => {
    // The helper against closed forms: E|z| = √(2/π), chi(2) mean √(π/2), chi(4) mean 3√(2π)/4 (Γ(5/2) = 3√π/4).
    expect(expectedNoiseNorm(1, 1)).toBeCloseTo(Math.sqrt(2 / Math.PI), 12);
    expect(expectedNoiseNorm(1, 2)).toBeCloseTo(Math.sqrt(Math.PI / 2), 12);
    expect(expectedNoiseNorm(1, 4)).toBeCloseTo((3 * Math.sqrt(2 * Math.PI)) / 4, 12);
    // One draw's distance (a chi(4) variable times σ) has a coefficient of variation of 0.36, so an
    // entity's mean of 100 has 3.6 %, and the mean over 200 entities 0.26 %: allow 2 % and 25 %.
    let total = 0;
    for (const value of result.spread) {
      total += value;
      expect(Math.abs(value / EXPECTED_SPREAD - 1)).toBeLessThan(0.25);
    }
    expect(Math.abs(total / N / EXPECTED_SPREAD - 1)).toBeLessThan(0.02);
  });

  it('is deterministic', () => {
    const again = generalisedProcrustes(draws, D, N, K);
    expect(again.mean).toEqual(result.mean);
    expect(again.rotations).toEqual(result.rotations);
  });
});

describe('generalised Procrustes options and edge cases', () => {
  const small = simulateDraws(7, [30], 3, 12, 0.05);
  const smallDraws = small.draws[0] as Float32Array;
  const smallTruth = small.truths[0] as Float64Array;

  it('reports converged: false when maxIterations is too small', () => {
    const capped = generalisedProcrustes(smallDraws, 12, 30, 3, { maxIterations: 1 });
    expect(capped.iterations).toBe(1);
    expect(capped.converged).toBe(false);
  });

  it('with tolerance 0 runs until the mean stops changing in float64 or the cap', () => {
    const strict = generalisedProcrustes(smallDraws, 12, 30, 3, { tolerance: 0, maxIterations: 200 });
    expect(strict.iterations).toBeLessThanOrEqual(200);
    expect(procrustesDisparity(smallTruth, strict.mean, 30, 3).disparity).toBeLessThan(1e-3);
  });

  it('centre: true removes a different shift in every draw', () => {
    const shifted = Float32Array.from(smallDraws);
    for (let d = 0; d < 12; d++) for (let index = 0; index < 90; index++) shifted[d * 90 + index] = (shifted[d * 90 + index] as number) + 5 * Math.sin(d + (index % 3));
    const centred = generalisedProcrustes(shifted, 12, 30, 3, { centre: true });
    expect(centred.converged).toBe(true);
    expect(procrustesDisparity(smallTruth, centred.mean, 30, 3).disparity).toBeLessThan(1e-3);
    // The aligned draws are centred: each draw's column means are 0.
    for (let d = 0; d < 12; d++) {
      for (let j = 0; j < 3; j++) {
        let total = 0;
        for (let i = 0; i < 30; i++) total += centred.aligned[d * 90 + i * 3 + j] as number;
        expect(Math.abs(total / 30)).toBeLessThan(1e-5);
      }
    }
    // Without centring, the shifts stay in and spread the draws out.
    const uncentred = generalisedProcrustes(shifted, 12, 30, 3);
    const meanSpread = (values: Float32Array) => values.reduce((sum, value) => sum + value, 0) / values.length;
    expect(meanSpread(uncentred.spread)).toBeGreaterThan(10 * meanSpread(centred.spread));
  });

  it('handles a single draw: the mean is the draw, sd and spread are 0', () => {
    const one = generalisedProcrustes(smallDraws.subarray(0, 90), 1, 30, 3);
    expect(one.converged).toBe(true);
    expect(maxAbsDifference(one.mean, smallDraws.subarray(0, 90))).toBeLessThan(1e-6);
    expect(Math.max(...one.sd)).toBe(0);
    expect(Math.max(...one.spread)).toBeLessThan(1e-6);
  });

  it('handles all-zero draws without dividing by zero', () => {
    const zeros = generalisedProcrustes(new Float32Array(5 * 4 * 2), 5, 4, 2);
    expect(zeros.converged).toBe(true);
    expect(Math.max(...zeros.mean.map(Math.abs))).toBe(0);
  });

  it('refuses bad options and shapes with clear messages', () => {
    expect(() => generalisedProcrustes(smallDraws, 12, 30, 3, { maxIterations: 0 })).toThrow('maxIterations must be an integer ≥ 1');
    expect(() => generalisedProcrustes(smallDraws, 12, 30, 3, { tolerance: -1 })).toThrow('tolerance must be finite and ≥ 0');
    expect(() => generalisedProcrustes(smallDraws, 11, 30, 3)).toThrow('generalisedProcrustes: draws: expected 990 values for a 11 × 30 × 3 matrix, got 1080');
    expect(() => generalisedProcrustes(smallDraws, 12, 30, 3, { centre: true, partner: { draws: smallDraws, n: 30 } })).toThrow('centre cannot be combined with partner');
    const bad = Float32Array.from(smallDraws);
    bad[2 * 90 + 5 * 3 + 1] = Number.POSITIVE_INFINITY;
    expect(() => generalisedProcrustes(bad, 12, 30, 3)).toThrow('value at index [2, 5, 1] is not finite (Infinity)');
  });
});
