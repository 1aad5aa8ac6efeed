import type { UniformGenerator } from '@/lib/align/random';
import { distanceFidelity, FIDELITY_KS, neighbourPreservation, PRESERVATION_K } from '@/lib/projection/fidelity';
import { sampledRankScoresParallel } from '@/lib/projection/fidelity-parallel';
import type { KnnGraph, KnnMetric } from '@/lib/projection/knn';
import { firstNeighbours } from '@/lib/projection/knn-graph';
import { mapKnn2d } from '@/lib/projection/map-knn';
import type { ProjectionQuality } from './projections';

/**
 * Above this many entities the exact fidelity scores (O(n²·d)) would take longer than the layout;
 * larger sets get the sampled estimates below and a per-point fidelity from the shared neighbour
 * graph (the projection job, run-job.ts, chooses by it).
 */
export const FIDELITY_MAX_ENTITIES = 20_000;

/**
 * Fidelity scores of a projection too large for the exact ones (O(n²·d), above 20,000 entities):
 * each of SAMPLED_FIDELITY_QUERIES seeded random entities is ranked exactly against all n in both
 * spaces (sampledRankScores, on worker threads: fidelity-parallel.ts), so trustworthiness T(k), continuity C(k) and the k-nearest-neighbour
 * preservation are unbiased estimates with a standard error of about sd/√m (m = 500: ~0.005 on
 * typical maps; rule of thumb from the per-point spread). Shepard's ρ and the stress use sampled
 * pairs already. Cost O(m·n·d): about 10⁹ multiply-adds at 100,000 × 32 and 1.6·10¹⁰ at
 * 1,000,000 × 32 (30 s on one thread, about half that on two).
 *
 * Why 500 queries at every size: the standard error depends on m, not on n, and the cost grows
 * with m·n; 500 keeps a 1,000,000-entity score under a minute while its error (~0.005) stays below
 * the differences between methods that matter when choosing a map.
 */
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

export async function sampledProjectionQuality(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  metric: KnnMetric,
  random: UniformGenerator,
  onProgress: (share: number) => void,
  options: { threads?: number; signal?: AbortSignal } = {},
): Promise<ProjectionQuality> {
  const queries = sampleIndices(n, SAMPLED_FIDELITY_QUERIES, random);
  const ks = FIDELITY_KS.filter((k) => k < n / 2);
  const scores = await sampledRankScoresParallel(latent, n, d, map, ks, queries, { metric, onProgress: (share) => onProgress(0.9 * share), ...options });
  const byK = (values: Float64Array) => Object.fromEntries(FIDELITY_KS.map((k) => [String(k), ks.includes(k) ? (values[ks.indexOf(k)] ?? null) : null]));
  const distances = distanceFidelity(latent, n, d, map, random, { metric });
  onProgress(1);
  return {
    trustworthiness: byK(scores.trustworthiness),
    continuity: byK(scores.continuity),
    knnPreservation: scores.knnPreservation,
    shepardRho: distances.shepardRho,
    stress: distances.stress,
    sampledQueries: queries.length,
  };
}

/**
 * Per-point fidelity of a large map (share of each entity's PRESERVATION_K latent neighbours kept
 * among its PRESERVATION_K map neighbours) from the factor set's shared neighbour graph and the
 * map's own neighbours (flatbush, map-knn.ts). Where the shared graph is approximate (NN-descent,
 * recall ≥ 0.95 at k = 15) a missed latent neighbour lowers a point's share only if the map keeps
 * it, so the shares lean slightly low; the mean over points is not stored from this (the sampled
 * estimate above is exact per query).
 */
export function perPointFidelityFromGraph(latentGraph: KnnGraph, map: Float32Array, n: number): Float32Array {
  const k = Math.min(PRESERVATION_K, n - 1, latentGraph.k);
  const mapGraph = { ...mapKnn2d(map, n, k), metric: latentGraph.metric };
  return neighbourPreservation(firstNeighbours(latentGraph, k), mapGraph, k).perPoint;
}
