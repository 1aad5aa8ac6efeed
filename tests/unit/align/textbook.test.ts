/**
 * The textbook case (Schönemann 1966; Gower & Dijksterhuis 2004, "Procrustes Problems", ch. 4 —
 * cited from memory): if B = A Q for an orthogonal Q and A has full column rank, the orthogonal
 * Procrustes solution is exactly Q, including when Q is a reflection.
 */
import { describe, expect, it } from 'vitest';
import { alignOnto, orthogonalProcrustes, procrustesDisparity } from '@/lib/align';
import { determinant, fromRows, maxAbsDifference, multiply } from './helpers';

// A small 3-D configuration with distinct spreads along its axes (full column rank).
const A = fromRows([
  [3, 1, 0.5],
  [-1, 2, 0],
  [0.5, -2, 1],
  [-2.5, 0, -1.5],
  [1, 1, 2],
  [-1, -2, -1],
]);
const N = 6;
const K = 3;

// Q = (rotation by 30° about the z axis) · (reflection x → −x): det Q = −1.
const c = Math.cos(Math.PI / 6);
const s = Math.sin(Math.PI / 6);
const Q = multiply(fromRows([[c, -s, 0], [s, c, 0], [0, 0, 1]]), fromRows([[-1, 0, 0], [0, 1, 0], [0, 0, 1]]), 3, 3, 3);

describe('textbook case: a known rotation with a reflection', () => {
  it('has a reflection as the known transform', () => {
    expect(determinant(Q, K)).toBeCloseTo(-1, 12);
  });

  it('recovers Q from A and A·Q to 1e-6', () => {
    const { rotation, scale } = orthogonalProcrustes(A, multiply(A, Q, N, K, K), N, K);
    expect(maxAbsDifference(rotation, Q)).toBeLessThan(1e-6);
    // For B = A Q, AᵀB = AᵀA Q, whose singular values are those of AᵀA: their sum is ‖A‖².
    let norm = 0;
    for (const value of A) norm += value * value;
    expect(scale).toBeCloseTo(norm, 9);
  });

  it('recovers Q from a Float32Array copy to float32 precision', () => {
    const { rotation } = orthogonalProcrustes(Float32Array.from(A), Float32Array.from(multiply(A, Q, N, K, K)), N, K);
    expect(maxAbsDifference(rotation, Q)).toBeLessThan(1e-6);
  });

  it('gives disparity 0 after a rotation, reflection, scaling and shift', () => {
    const moved = multiply(A, Q, N, K, K).map((value, index) => 2.5 * value + ([1, -4, 7][index % K] as number));
    expect(procrustesDisparity(A, moved, N, K).disparity).toBeLessThan(1e-12);
  });

  it('alignOnto undoes the rotation and keeps the target location (centre: true)', () => {
    const shift = [1, -4, 7];
    // target = A Q + shift; aligning A onto it must give back exactly the target.
    const target = multiply(A, Q, N, K, K).map((value, index) => value + (shift[index % K] as number));
    expect(maxAbsDifference(alignOnto(A, target, N, K), target)).toBeLessThan(1e-12);
  });

  it('alignOnto without centring is a pure rotation about the origin', () => {
    const target = multiply(A, Q, N, K, K);
    expect(maxAbsDifference(alignOnto(A, target, N, K, { centre: false }), target)).toBeLessThan(1e-12);
    // A shifted source is not moved back: centre: false does not translate.
    const shifted = A.map((value) => value + 10);
    const aligned = alignOnto(shifted, target, N, K, { centre: false });
    expect(maxAbsDifference(aligned, target)).toBeGreaterThan(1);
  });

  it('alignOnto does not rescale the source', () => {
    const rotated = multiply(A, Q, N, K, K);
    const target = rotated.map((value) => 3 * value);
    // The rotation is still Q but A keeps its size: (A − Ā)Q + mean(3AQ) = AQ + 2·mean(AQ).
    const means = [0, 1, 2].map((j) => {
      let total = 0;
      for (let i = 0; i < N; i++) total += rotated[i * K + j] as number;
      return total / N;
    });
    const expected = rotated.map((value, index) => value + 2 * (means[index % K] as number));
    expect(maxAbsDifference(alignOnto(A, target, N, K), expected)).toBeLessThan(1e-12);
  });
});

describe('bad input', () => {
  it('names the argument and the expected length', () => {
    expect(() => orthogonalProcrustes(new Float64Array(5), new Float64Array(6), 3, 2)).toThrow('orthogonalProcrustes: a: expected 6 values for a 3 × 2 matrix, got 5');
  });

  it('names the index of a non-finite value', () => {
    const b = new Float64Array(6);
    b[3] = Number.NaN;
    expect(() => orthogonalProcrustes(new Float64Array(6), b, 3, 2)).toThrow('orthogonalProcrustes: b: value at index [1, 1] is not finite (NaN)');
  });

  it('refuses a matrix with a single distinct row, as SciPy does', () => {
    expect(() => procrustesDisparity(fromRows([[1, 2], [1, 2]]), fromRows([[0, 1], [1, 0]]), 2, 2)).toThrow('procrustesDisparity: a: all rows are equal');
  });
});
