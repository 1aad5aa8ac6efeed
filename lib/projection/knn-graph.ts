/**
 * The one way the projection and clustering jobs get a factor set's neighbour graph: exact search
 * (knn.ts) while it is affordable, NN-descent (knn-approx.ts) beyond.
 *
 * The threshold is on the work of the exact search, n² · d multiply-adds (n rows of d dimensions):
 * exact while n² · d ≤ EXACT_KNN_MAX_WORK = 20,000² · 32 ≈ 1.3 · 10¹⁰, i.e. up to 20,000 rows of
 * 32 dimensions, 10,000 rows of 128, 40,000 rows of 8. Why there:
 * - the exact search at that size takes 2–3 s on two threads on an idle machine (50,000 × 32:
 *   11.3 s idle, up to 56 s on a busy machine; the work grows with n²), about the approximate
 *   search's time (20,000 × 32 NN-descent: ~1 s), so below it exact is affordable and free of
 *   error;
 * - the exact fidelity scores (trustworthiness, continuity) rank every pair up to 20,000 entities
 *   (FIDELITY_MAX_ENTITIES in lib/projections/sampled-fidelity.ts; sampled beyond), so every exactly
 *   scored projection of up to 32 dimensions ranks against the exact graph;
 * - beyond, the exact search grows quadratically (50,000 × 32: 11–56 s; 200,000 × 32: ~3–15 min)
 *   while NN-descent grows roughly as n log n (50,000 × 32: 2.6 s idle, recall 0.96 at k = 15 on
 *   hard synthetic data; scripts/bench-projection.ts).
 */
import type { UniformGenerator } from '../align/random';
import { type KnnGraph, type KnnMetric, exactKnnParallel } from './knn';
import { type ApproxKnnOptions, approxKnn } from './knn-approx';

/** Exact search while n² · d is at most this (see the module comment). */
export const EXACT_KNN_MAX_WORK = 20_000 * 20_000 * 32;

/** From this many rows the exact search runs on worker threads (starting one costs tens of ms). */
export const PARALLEL_EXACT_MIN_POINTS = 4000;

export type KnnStrategy = 'auto' | 'exact' | 'approximate';

export interface KnnGraphOptions {
  /**
   * 'auto' (default) chooses by EXACT_KNN_MAX_WORK; 'exact' and 'approximate' force one (tests,
   * benchmarks, or a user who wants the exact graph of a large set and can wait).
   */
  strategy?: KnnStrategy;
  /** Worker threads at most, 1–64; default os.availableParallelism(); one below each search's size threshold. */
  threads?: number;
  /** Aborting rejects with the signal's reason. */
  signal?: AbortSignal;
  /** Settings of the approximate search (defaults documented in knn-approx.ts). */
  approximate?: Omit<ApproxKnnOptions, 'threads' | 'signal' | 'onProgress'>;
  /**
   * Progress of either search: the fraction done (0–1) and a phase in words. The exact search
   * reports only on worker threads (below PARALLEL_EXACT_MIN_POINTS it takes well under a second).
   * Throwing from it rejects the search with that error.
   */
  onProgress?: (fraction: number, phase: string) => void;
}

/** A neighbour graph and how it was made (stored with a cached graph, shown with a projection). */
export interface ChosenKnnGraph {
  graph: KnnGraph;
  exact: boolean;
}

/** Whether 'auto' searches exactly for n rows of d dimensions. */
export function exactIsAffordable(n: number, d: number): boolean {
  return n * n * d <= EXACT_KNN_MAX_WORK;
}

/**
 * The k nearest neighbours of every row, exactly or approximately (see the module comment).
 *
 * @param data - n × d row-major factor rows (Float32, finite).
 * @param n - rows, ≥ 2.
 * @param d - dimensions.
 * @param k - neighbours per row, 1 … n − 1.
 * @param metric - 'euclidean' or 'cosine' (knn.ts).
 * @param random - seeded generator; used only by the approximate search (its trees and samples).
 */
export async function knnGraph(data: Float32Array, n: number, d: number, k: number, metric: KnnMetric, random: UniformGenerator, options: KnnGraphOptions = {}): Promise<ChosenKnnGraph> {
  const strategy = options.strategy ?? 'auto';
  if (strategy !== 'auto' && strategy !== 'exact' && strategy !== 'approximate') throw new RangeError(`neighbour graph: unknown strategy ${JSON.stringify(strategy)}`);
  const exact = strategy === 'exact' || (strategy === 'auto' && exactIsAffordable(n, d));
  const { signal, onProgress } = options;
  if (exact) {
    // Below PARALLEL_EXACT_MIN_POINTS one thread is faster, even where more are offered.
    const threads = n >= PARALLEL_EXACT_MIN_POINTS ? options.threads : 1;
    const graph = await exactKnnParallel(data, n, d, k, metric, {
      ...(threads !== undefined ? { threads } : {}),
      ...(signal ? { signal } : {}),
      ...(onProgress ? { onProgress: (fraction: number) => onProgress(fraction, 'neighbour graph: exact search') } : {}),
    });
    return { graph, exact: true };
  }
  const graph = await approxKnn(data, n, d, k, metric, random, {
    ...options.approximate,
    ...(options.threads !== undefined ? { threads: options.threads } : {}),
    ...(signal ? { signal } : {}),
    ...(onProgress ? { onProgress } : {}),
  });
  return { graph, exact: false };
}

/** The first `k` neighbours of a larger graph (one search at the largest k serves every use). */
export function firstNeighbours(graph: KnnGraph, k: number): KnnGraph {
  if (!Number.isInteger(k) || k < 1 || k > graph.k) throw new RangeError(`neighbour graph: cannot take ${k} neighbours from a graph of ${graph.k}`);
  if (k === graph.k) return graph;
  const indices = new Int32Array(graph.n * k);
  const distances = new Float32Array(graph.n * k);
  for (let i = 0; i < graph.n; i++) {
    indices.set(graph.indices.subarray(i * graph.k, i * graph.k + k), i * k);
    distances.set(graph.distances.subarray(i * graph.k, i * graph.k + k), i * k);
  }
  return { ...graph, k, indices, distances };
}
