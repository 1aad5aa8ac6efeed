/** Shared helpers for the lib/align tests: conversions, comparisons and seeded simulated draws. */
import { type RealMatrix, normalGenerator, mulberry32, randomOrthogonal } from '@/lib/align';

/** Row-major Float64Array from an array of rows (fixtures only; the library never takes number[][]). */
export function fromRows(rows: readonly (readonly number[])[]): Float64Array {
  const k = rows[0]?.length ?? 0;
  const out = new Float64Array(rows.length * k);
  rows.forEach((row, i) => {
    if (row.length !== k) throw new Error(`ragged fixture row ${i}`);
    out.set(row, i * k);
  });
  return out;
}

export function maxAbsDifference(a: ArrayLike<number>, b: ArrayLike<number>): number {
  if (a.length !== b.length) throw new Error(`length ${a.length} ≠ ${b.length}`);
  let worst = 0;
  for (let index = 0; index < a.length; index++) worst = Math.max(worst, Math.abs((a[index] as number) - (b[index] as number)));
  return worst;
}

/** max |RᵀR − I| for a k × k row-major R. */
export function orthogonalityError(r: ArrayLike<number>, k: number, offset = 0): number {
  let worst = 0;
  for (let p = 0; p < k; p++) {
    for (let q = 0; q < k; q++) {
      let total = 0;
      for (let s = 0; s < k; s++) total += (r[offset + s * k + p] as number) * (r[offset + s * k + q] as number);
      worst = Math.max(worst, Math.abs(total - (p === q ? 1 : 0)));
    }
  }
  return worst;
}

/** A B for A n × m and B m × k, row-major. */
export function multiply(a: ArrayLike<number>, b: ArrayLike<number>, n: number, m: number, k: number, bOffset = 0): Float64Array {
  const out = new Float64Array(n * k);
  for (let i = 0; i < n; i++) {
    for (let p = 0; p < m; p++) {
      const x = a[i * m + p] as number;
      for (let q = 0; q < k; q++) out[i * k + q] = (out[i * k + q] as number) + x * (b[bOffset + p * k + q] as number);
    }
  }
  return out;
}

/** A Bᵀ for A n × k and B m × k: the n × m matrix of products γ_i·δ_j. */
export function products(a: ArrayLike<number>, b: ArrayLike<number>, n: number, m: number, k: number, aOffset = 0, bOffset = 0): Float64Array {
  const out = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < m; j++) {
      let total = 0;
      for (let s = 0; s < k; s++) total += (a[aOffset + i * k + s] as number) * (b[bOffset + j * k + s] as number);
      out[i * m + j] = total;
    }
  }
  return out;
}

export function determinant(r: ArrayLike<number>, k: number, offset = 0): number {
  // Gaussian elimination with partial pivoting on a copy; k is small.
  const m = Array.from({ length: k * k }, (_, index) => r[offset + index] as number);
  let det = 1;
  for (let c = 0; c < k; c++) {
    let pivot = c;
    for (let row = c + 1; row < k; row++) if (Math.abs(m[row * k + c] as number) > Math.abs(m[pivot * k + c] as number)) pivot = row;
    const value = m[pivot * k + c] as number;
    if (value === 0) return 0;
    if (pivot !== c) {
      for (let j = 0; j < k; j++) {
        const t = m[c * k + j] as number;
        m[c * k + j] = m[pivot * k + j] as number;
        m[pivot * k + j] = t;
      }
      det = -det;
    }
    det *= value;
    for (let row = c + 1; row < k; row++) {
      const factor = (m[row * k + c] as number) / value;
      for (let j = c; j < k; j++) m[row * k + j] = (m[row * k + j] as number) - factor * (m[c * k + j] as number);
    }
  }
  return det;
}

/**
 * E‖ε‖ for ε ~ N(0, σ² I_k): σ·√2·Γ((k+1)/2)/Γ(k/2), the mean of a chi distribution with k degrees
 * of freedom (standard result, e.g. Johnson, Kotz & Balakrishnan, "Continuous Univariate
 * Distributions", vol. 1, ch. 18). The ratio r(k) = Γ((k+1)/2)/Γ(k/2) follows from r(1) = 1/√π and
 * r(k)·r(k+1) = Γ(k/2 + 1)/Γ(k/2) = k/2.
 */
export function expectedNoiseNorm(sigma: number, k: number): number {
  let ratio = 1 / Math.sqrt(Math.PI);
  for (let j = 1; j < k; j++) ratio = j / (2 * ratio);
  return sigma * Math.SQRT2 * ratio;
}

export interface SimulatedDraws {
  /** Each truth, N_t × K. */
  truths: Float64Array[];
  /** Draws per truth, D × N_t × K float32: truth · R_d + N(0, σ²) noise. */
  draws: Float32Array[];
  /** D × K × K: the rotation R_d applied to draw d (shared by all truths, as in one fit). */
  rotations: Float64Array;
}

/**
 * Seeded posterior draws of factor matrices under per-draw random orthogonal transforms (Haar over
 * O(K), so about half are reflections) plus Gaussian noise. Truth columns get unequal scales, as
 * fitted factors do; all matrices share the draw's rotation, as row and column factors of one fit.
 */
export function simulateDraws(seed: number, rows: readonly number[], k: number, d: number, sigma: number): SimulatedDraws {
  const normal = normalGenerator(mulberry32(seed));
  const truths = rows.map((n) => {
    const truth = new Float64Array(n * k);
    for (let i = 0; i < n; i++) for (let j = 0; j < k; j++) truth[i * k + j] = (2 - (1.2 * j) / Math.max(1, k - 1)) * normal();
    return truth;
  });
  const rotations = new Float64Array(d * k * k);
  for (let draw = 0; draw < d; draw++) rotations.set(randomOrthogonal(k, normal), draw * k * k);
  const draws = truths.map((truth, t) => {
    const n = rows[t] as number;
    const out = new Float32Array(d * n * k);
    for (let draw = 0; draw < d; draw++) {
      const rotated = multiply(truth, rotations, n, k, k, draw * k * k);
      for (let index = 0; index < n * k; index++) out[draw * n * k + index] = (rotated[index] as number) + sigma * normal();
    }
    return out;
  });
  return { truths, draws, rotations };
}

export function asFloat64(values: RealMatrix): Float64Array {
  return Float64Array.from(values);
}
