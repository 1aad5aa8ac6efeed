import type { UniformGenerator } from '@/lib/align/random';
import { distanceFidelity, FIDELITY_KS, PRESERVATION_K, sampledTrustworthiness } from '@/lib/projection/fidelity';
import { exactKnnOfRows, type KnnMetric } from '@/lib/projection/knn';
import type { ProjectionQuality } from './projections';

/**
 * Fidelity scores of a projection too large for the exact ones (O(n²·d)): each of `queries` seeded
 * random entities is ranked exactly against all n, so trustworthiness T(k) and the k-nearest-
 * neighbour preservation are unbiased estimates with a standard error of about sd/√m (m = 500:
 * ~0.005 on typical maps; rule of thumb from the per-point spread). Continuity needs every
 * point's map ranks and is not estimated. Shepard's ρ and the stress use sampled pairs already.
 * Cost O(m·n·(d + k)) per k: about 4·10⁹ operations at 100,000 × 32 with m = 500.
 */
export const SAMPLED_FIDELITY_MAX_ENTITIES = 100_000;
export const SAMPLED_FIDELITY_QUERIES = 500;

/** m distinct indices out of n by a partial Fisher–Yates shuffle. */
export function sampleIndices(n: number, m: number, random: UniformGenerator): Int32Array {
  const pool = new Int32Array(n);
  for (let i = 0; i < n; i += 1) pool[i] = i;
  const take = Math.min(m, n);
  for (let i = 0; i < take; i += 1) {
    const j = i + Math.floor(random() * (n - i));
    const t = pool[i] as number;
    pool[i] = pool[j] as number;
    pool[j] = t;
  }
  return pool.slice(0, take).sort();
}

export function sampledProjectionQuality(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  metric: KnnMetric,
  random: UniformGenerator,
  onProgress: (share: number) => void,
): ProjectionQuality {
  const queries = sampleIndices(n, SAMPLED_FIDELITY_QUERIES, random);
  const trustworthiness: Record<string, number | null> = {};
  const continuity: Record<string, number | null> = {};
  FIDELITY_KS.forEach((k, step) => {
    trustworthiness[String(k)] = k < n / 2 ? sampledTrustworthiness(latent, n, d, map, k, queries, metric) : null;
    continuity[String(k)] = null;
    onProgress((step + 1) / (FIDELITY_KS.length + 1));
  });
  const latentKnn = exactKnnOfRows(latent, n, d, PRESERVATION_K, metric, queries);
  const mapKnn = exactKnnOfRows(map, n, 2, PRESERVATION_K, 'euclidean', queries);
  let kept = 0;
  for (let r = 0; r < queries.length; r += 1) {
    const near = new Set(latentKnn.indices.subarray(r * PRESERVATION_K, (r + 1) * PRESERVATION_K));
    for (let s = 0; s < PRESERVATION_K; s += 1) if (near.has(mapKnn.indices[r * PRESERVATION_K + s] as number)) kept += 1;
  }
  const distances = distanceFidelity(latent, n, d, map, random, { metric });
  onProgress(1);
  return {
    trustworthiness,
    continuity,
    knnPreservation: kept / (queries.length * PRESERVATION_K),
    shepardRho: distances.shepardRho,
    stress: distances.stress,
    sampledQueries: queries.length,
  };
}
