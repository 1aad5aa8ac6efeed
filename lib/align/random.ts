/**
 * Seeded randomness for lib/align's tests, demo data and simulations. Nothing here reads
 * Math.random: every caller passes a generator made from a seed, so results are reproducible and
 * the seed can be stored with what it produced.
 */
import { Matrix, QrDecomposition } from 'ml-matrix';
import { mulberry32 as mulberry32Kernel } from '../projection/hash-kernel.mjs';

/** A source of uniform numbers in [0, 1). */
export type UniformGenerator = () => number;

/**
 * mulberry32 (Tommy Ettinger's 32-bit generator, public domain), written once in
 * lib/projection/hash-kernel.mjs so that worker threads draw the same numbers from the same seed.
 */
export const mulberry32: (seed: number) => UniformGenerator = mulberry32Kernel;

/**
 * A standard normal generator by the Box–Muller transform, using two uniforms per pair of
 * normals and keeping the second for the next call.
 */
export function normalGenerator(uniform: UniformGenerator): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const value = spare;
      spare = null;
      return value;
    }
    // 1 − u lies in (0, 1], so the logarithm is finite.
    const radius = Math.sqrt(-2 * Math.log(1 - uniform()));
    const angle = 2 * Math.PI * uniform();
    spare = radius * Math.sin(angle);
    return radius * Math.cos(angle);
  };
}

/**
 * A random k × k orthogonal matrix, row-major, distributed uniformly (Haar) over the orthogonal
 * group O(k), so half of them are reflections (det −1): the QR decomposition of a matrix of
 * standard normals, with Q's columns multiplied by the signs of R's diagonal, which makes the
 * decomposition unique and the distribution uniform (Mezzadri 2007, "How to generate random
 * matrices from the classical compact groups", Notices AMS 54).
 *
 * @param k - size, ≥ 1.
 * @param normal - a standard normal generator, e.g. normalGenerator(mulberry32(seed)).
 */
export function randomOrthogonal(k: number, normal: () => number): Float64Array {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`randomOrthogonal: k must be a positive integer, got ${k}`);
  const gaussian = new Matrix(k, k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) gaussian.set(i, j, normal());
  const qr = new QrDecomposition(gaussian);
  const q = qr.orthogonalMatrix;
  const r = qr.upperTriangularMatrix;
  const out = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    const sign = r.get(j, j) < 0 ? -1 : 1;
    for (let i = 0; i < k; i++) out[i * k + j] = sign * q.get(i, j);
  }
  return out;
}

/** Fills a new Float64Array of the given length with standard normals times `sd`. */
export function normalArray(length: number, normal: () => number, sd = 1): Float64Array {
  const out = new Float64Array(length);
  for (let index = 0; index < length; index++) out[index] = sd * normal();
  return out;
}
