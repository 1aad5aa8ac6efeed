/**
 * projectionFidelityParallel (lib/projection/fidelity-parallel.ts) gives projectionFidelity's
 * scores bit for bit on any number of threads (the single-thread scores are checked against
 * scikit-learn in fidelity-reference.test.ts), the sampled estimates likewise, reports progress while it runs, and stops when
 * cancelled or when its progress callback throws.
 */
import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { type ProjectionFidelity, projectionFidelity, sampledRankScores } from '@/lib/projection/fidelity';
import { PARALLEL_FIDELITY_MIN_POINTS, PARALLEL_SAMPLED_MIN_WORK, projectionFidelityParallel, sampledRankScoresParallel } from '@/lib/projection/fidelity-parallel';
import { gaussianMixture } from './methods-fixtures';

/** A map that keeps the clusters but scrambles a share of the points, so every score is away from 1. */
function noisyMap(labels: Int32Array, seed: number): Float32Array {
  const normal = normalGenerator(mulberry32(seed));
  const map = new Float32Array(labels.length * 2);
  for (let i = 0; i < labels.length; i++) {
    const c = labels[i] as number;
    map[2 * i] = 5 * Math.cos(c) + normal();
    map[2 * i + 1] = 5 * Math.sin(c) + normal();
  }
  return map;
}

function expectSame(a: ProjectionFidelity, b: ProjectionFidelity): void {
  expect(Array.from(b.trustworthiness)).toEqual(Array.from(a.trustworthiness));
  expect(Array.from(b.continuity)).toEqual(Array.from(a.continuity));
  expect(Array.from(b.ks)).toEqual(Array.from(a.ks));
  expect(b.knnPreservation).toBe(a.knnPreservation);
  expect(Array.from(b.perPoint)).toEqual(Array.from(a.perPoint));
  expect([b.shepardRho, b.stress, b.pairs]).toEqual([a.shepardRho, a.stress, a.pairs]);
}

describe('fidelity scores on worker threads', () => {
  // 2,404 points: the threads' ranges (801/802 points on 3 threads) do not start on query-block boundaries.
  const { data, n, d, labels } = gaussianMixture(11, 4, 601, 12);
  const map = noisyMap(labels, 12);

  it('equal the single-thread scores bit for bit on 1 (a worker), 2 and 3 threads (Euclidean and cosine)', async () => {
    expect(n).toBeGreaterThanOrEqual(PARALLEL_FIDELITY_MIN_POINTS);
    for (const metric of ['euclidean', 'cosine'] as const) {
      const one = projectionFidelity(data, n, d, map, mulberry32(5), { metric });
      expect(one.trustworthiness[1]).toBeLessThan(0.99);
      for (const threads of [1, 2, 3]) expectSame(one, await projectionFidelityParallel(data, n, d, map, mulberry32(5), { metric, threads }));
    }
  }, 120_000);

  it('reports rising progress that ends at 1', async () => {
    const seen: number[] = [];
    await projectionFidelityParallel(data, n, d, map, mulberry32(5), { threads: 2, onProgress: (f) => seen.push(f) });
    expect(seen.at(-1)).toBe(1);
    for (let s = 1; s < seen.length; s++) expect(seen[s] as number).toBeGreaterThanOrEqual(seen[s - 1] as number);
  }, 60_000);

  it('rejects with the signal’s reason when cancelled mid-run, and with the error its progress callback throws', async () => {
    // 6,000 × 32: the rank work spans several progress ticks (about a second on two threads).
    const large = gaussianMixture(17, 4, 1500, 32);
    const largeMap = noisyMap(large.labels, 18);
    const controller = new AbortController();
    const fractions: number[] = [];
    const cancelled = projectionFidelityParallel(large.data, large.n, large.d, largeMap, mulberry32(5), {
      threads: 2,
      signal: controller.signal,
      onProgress: (f) => {
        fractions.push(f);
        if (f < 1) controller.abort(new Error('cancelled by the test'));
      },
    });
    await expect(cancelled).rejects.toThrow('cancelled by the test');
    expect(fractions).toHaveLength(1);
    expect(fractions[0]).toBeLessThan(1);
    await expect(
      projectionFidelityParallel(large.data, large.n, large.d, largeMap, mulberry32(5), {
        threads: 2,
        onProgress: () => {
          throw new Error('stop here');
        },
      }),
    ).rejects.toThrow('stop here');
  }, 60_000);

  it('sampled estimates equal the single-thread ones bit for bit on 1, 2 and 3 worker threads, with rising progress', async () => {
    const big = gaussianMixture(13, 5, 2500, 8);
    const bigMap = noisyMap(big.labels, 14);
    const queries = Int32Array.from({ length: 4001 }, (_, r) => (r * 3) % big.n);
    expect(queries.length * big.n).toBeGreaterThanOrEqual(PARALLEL_SAMPLED_MIN_WORK);
    const one = sampledRankScores(big.data, big.n, big.d, bigMap, [5, 15, 50], queries, { metric: 'cosine' });
    for (const threads of [1, 2, 3]) {
      const seen: number[] = [];
      const many = await sampledRankScoresParallel(big.data, big.n, big.d, bigMap, [5, 15, 50], queries, { metric: 'cosine', threads, onProgress: (f) => seen.push(f) });
      expect(Array.from(many.trustworthiness)).toEqual(Array.from(one.trustworthiness));
      expect(Array.from(many.continuity)).toEqual(Array.from(one.continuity));
      expect([many.knnPreservation, many.queries]).toEqual([one.knnPreservation, one.queries]);
      expect(seen.at(-1)).toBe(1);
      for (let s = 1; s < seen.length; s++) expect(seen[s] as number).toBeGreaterThanOrEqual(seen[s - 1] as number);
    }
    const controller = new AbortController();
    const onProgress = (f: number) => {
      if (f < 1) controller.abort(new Error('cancelled by the test'));
    };
    await expect(sampledRankScoresParallel(big.data, big.n, big.d, bigMap, [5, 15, 50], queries, { threads: 2, signal: controller.signal, onProgress })).rejects.toThrow('cancelled by the test');
  }, 120_000);
});
