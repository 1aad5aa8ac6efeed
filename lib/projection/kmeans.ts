import type { UniformGenerator } from '../align/random';

/**
 * k-means with k-means++ seeding (Arthur & Vassilvitskii, 2007) and Lloyd iterations, in the full
 * latent space, with k chosen by mean silhouette (Rousseeuw, 1987). Our own kernel: the npm
 * k-means packages take number[][] and an unseeded Math.random, which breaks reproducibility.
 *
 * Cost: O(n·k·d) per Lloyd iteration; the exact silhouette is O(n²·d), so above
 * SILHOUETTE_MAX_POINTS it is computed on a seeded sample of points (each against all points).
 */
export const SILHOUETTE_MAX_POINTS = 5000;

export interface KMeansOptions {
  /** Lloyd iterations at most, 1–1000 (default 100); more rarely changes a converged partition. */
  maxIterations?: number;
  /** Stop when no centre moves more than this relative to the data's spread (default 1e-6). */
  tolerance?: number;
  /**
   * Seeded restarts per k, keeping the lowest inertia, 1–100 (default 10, scikit-learn's n_init):
   * one k-means++ start can settle in a poor local optimum; each restart costs a full run.
   */
  restarts?: number;
}

export interface KMeansResult {
  k: number;
  labels: Int32Array;
  centres: Float64Array;
  inertia: number;
  iterations: number;
}

function squaredDistance(data: Float32Array, i: number, centres: Float64Array, c: number, d: number): number {
  let s = 0;
  for (let j = 0; j < d; j += 1) {
    const diff = (data[i * d + j] ?? 0) - (centres[c * d + j] ?? 0);
    s += diff * diff;
  }
  return s;
}

export function kMeans(data: Float32Array, n: number, d: number, k: number, random: UniformGenerator, options: KMeansOptions = {}): KMeansResult {
  if (!Number.isInteger(k) || k < 1 || k > n) throw new RangeError(`kMeans: k must be an integer from 1 to n = ${n}, got ${k}`);
  const maxIterations = options.maxIterations ?? 100;
  const tolerance = options.tolerance ?? 1e-6;
  const centres = new Float64Array(k * d);
  // k-means++: the first centre uniformly, then each next with probability ∝ squared distance.
  const first = Math.min(n - 1, Math.floor(random() * n));
  for (let j = 0; j < d; j += 1) centres[j] = data[first * d + j] ?? 0;
  const nearest = new Float64Array(n).fill(Number.POSITIVE_INFINITY);
  for (let c = 1; c < k; c += 1) {
    let total = 0;
    for (let i = 0; i < n; i += 1) {
      const dist = squaredDistance(data, i, centres, c - 1, d);
      if (dist < (nearest[i] ?? 0)) nearest[i] = dist;
      total += nearest[i] ?? 0;
    }
    let target = random() * total;
    let pick = n - 1;
    for (let i = 0; i < n; i += 1) {
      target -= nearest[i] ?? 0;
      if (target <= 0) {
        pick = i;
        break;
      }
    }
    for (let j = 0; j < d; j += 1) centres[c * d + j] = data[pick * d + j] ?? 0;
  }
  let spread = 0;
  for (let i = 0; i < n * d; i += 1) spread = Math.max(spread, Math.abs(data[i] ?? 0));
  const labels = new Int32Array(n);
  const sums = new Float64Array(k * d);
  const counts = new Float64Array(k);
  let iterations = 0;
  let inertia = 0;
  for (; iterations < maxIterations; ) {
    iterations += 1;
    inertia = 0;
    sums.fill(0);
    counts.fill(0);
    for (let i = 0; i < n; i += 1) {
      let best = 0;
      let bestDist = Number.POSITIVE_INFINITY;
      for (let c = 0; c < k; c += 1) {
        const dist = squaredDistance(data, i, centres, c, d);
        if (dist < bestDist) {
          bestDist = dist;
          best = c;
        }
      }
      labels[i] = best;
      inertia += bestDist;
      counts[best] = (counts[best] ?? 0) + 1;
      for (let j = 0; j < d; j += 1) sums[best * d + j] = (sums[best * d + j] ?? 0) + (data[i * d + j] ?? 0);
    }
    let moved = 0;
    for (let c = 0; c < k; c += 1) {
      // An emptied cluster keeps its centre; k-means++ makes that rare.
      if ((counts[c] ?? 0) === 0) continue;
      for (let j = 0; j < d; j += 1) {
        const next = (sums[c * d + j] ?? 0) / (counts[c] ?? 1);
        moved = Math.max(moved, Math.abs(next - (centres[c * d + j] ?? 0)));
        centres[c * d + j] = next;
      }
    }
    if (moved <= tolerance * (spread || 1)) break;
  }
  return { k, labels, centres, inertia, iterations };
}

/**
 * Silhouette per point (sklearn.metrics.silhouette_samples with Euclidean distances): for points in
 * singleton clusters it is 0. With `sample`, only those points are scored (each against all points).
 */
export function silhouetteSamples(data: Float32Array, n: number, d: number, labels: Int32Array, k: number, sample?: Int32Array): Float64Array {
  const points = sample ?? Int32Array.from({ length: n }, (_, i) => i);
  const sizes = new Float64Array(k);
  for (let i = 0; i < n; i += 1) sizes[labels[i] ?? 0] = (sizes[labels[i] ?? 0] ?? 0) + 1;
  const out = new Float64Array(points.length);
  const sumsTo = new Float64Array(k);
  points.forEach((p, at) => {
    sumsTo.fill(0);
    for (let i = 0; i < n; i += 1) {
      if (i === p) continue;
      let s = 0;
      for (let j = 0; j < d; j += 1) {
        const diff = (data[p * d + j] ?? 0) - (data[i * d + j] ?? 0);
        s += diff * diff;
      }
      const c = labels[i] ?? 0;
      sumsTo[c] = (sumsTo[c] ?? 0) + Math.sqrt(s);
    }
    const own = labels[p] ?? 0;
    const ownSize = sizes[own] ?? 1;
    if (ownSize <= 1) {
      out[at] = 0;
      return;
    }
    const a = (sumsTo[own] ?? 0) / (ownSize - 1);
    let b = Number.POSITIVE_INFINITY;
    for (let c = 0; c < k; c += 1) {
      if (c === own || (sizes[c] ?? 0) === 0) continue;
      b = Math.min(b, (sumsTo[c] ?? 0) / (sizes[c] ?? 1));
    }
    out[at] = Number.isFinite(b) ? (b - a) / Math.max(a, b) : 0;
  });
  return out;
}

export interface ChosenClustering extends KMeansResult {
  /** Mean silhouette per k tried. */
  scores: Record<string, number>;
  /** Silhouette per point for the chosen k (0 for points outside the sample, with `sampled` true). */
  silhouette: Float32Array;
  sampled: boolean;
}

/** Tries k = kMin..kMax and keeps the partition with the highest mean silhouette. */
export function chooseKMeans(
  data: Float32Array,
  n: number,
  d: number,
  range: { kMin: number; kMax: number },
  random: UniformGenerator,
  options: KMeansOptions & { onProgress?: (share: number, phase: string) => void } = {},
): ChosenClustering {
  const kMax = Math.min(range.kMax, n - 1);
  if (range.kMin < 2 || kMax < range.kMin) throw new RangeError(`chooseKMeans: need 2 ≤ kMin ≤ kMax < n, got ${range.kMin}..${range.kMax} for n = ${n}`);
  const sampled = n > SILHOUETTE_MAX_POINTS;
  let sample: Int32Array | undefined;
  if (sampled) {
    // Partial Fisher–Yates with the seeded generator: SILHOUETTE_MAX_POINTS distinct points.
    const all = Int32Array.from({ length: n }, (_, i) => i);
    for (let i = 0; i < SILHOUETTE_MAX_POINTS; i += 1) {
      const j = i + Math.floor(random() * (n - i));
      const t = all[i] ?? 0;
      all[i] = all[j] ?? 0;
      all[j] = t;
    }
    sample = all.slice(0, SILHOUETTE_MAX_POINTS).sort();
  }
  const scores: Record<string, number> = {};
  let best: { result: KMeansResult; mean: number; values: Float64Array } | undefined;
  for (let k = range.kMin; k <= kMax; k += 1) {
    options.onProgress?.((k - range.kMin) / (kMax - range.kMin + 1), `k-means, k = ${k} of ${range.kMin}–${kMax}`);
    let result = kMeans(data, n, d, k, random, options);
    for (let r = 1; r < (options.restarts ?? 10); r += 1) {
      const again = kMeans(data, n, d, k, random, options);
      if (again.inertia < result.inertia) result = again;
    }
    const values = silhouetteSamples(data, n, d, result.labels, k, sample);
    let sum = 0;
    for (const v of values) sum += v;
    const mean = sum / values.length;
    scores[String(k)] = mean;
    if (!best || mean > best.mean) best = { result, mean, values };
  }
  if (!best) throw new Error('chooseKMeans: no k tried');
  const silhouette = new Float32Array(n);
  const points = sample ?? Int32Array.from({ length: n }, (_, i) => i);
  points.forEach((p, at) => {
    silhouette[p] = best.values[at] ?? 0;
  });
  return { ...best.result, scores, silhouette, sampled };
}
