/**
 * Approximate kNN (lib/projection/knn-approx.ts, NN-descent) and the exact/approximate chooser
 * (knn-graph.ts): recall at k = 15 on a 50,000 × 32 seeded Gaussian mixture against the exact
 * search (on a sample of 500 query points, exactKnnOfRows, checked here to equal exactKnn, which
 * knn.test.ts checks against brute force and scikit-learn), determinism for a seed and across thread counts, output
 * identical to exactKnn wherever the true neighbours were found, and clear errors.
 */
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '@/lib/align/random';
import { exactKnn, exactKnnOfRows } from '@/lib/projection/knn';
import { type ApproxKnnStats, approxKnn, idleDescentWorkerCount, knnRecall } from '@/lib/projection/knn-approx';
import { EXACT_KNN_MAX_WORK, exactIsAffordable, firstNeighbours, knnGraph } from '@/lib/projection/knn-graph';
import { gaussianMixture } from './methods-fixtures';

/** Every row's neighbours are distinct, not the row itself, and in non-decreasing distance order. */
function checkWellFormed(graph: { n: number; k: number; indices: Int32Array; distances: Float32Array }): void {
  const { n, k } = graph;
  for (let i = 0; i < n; i++) {
    const seen = new Set<number>();
    for (let s = 0; s < k; s++) {
      const j = graph.indices[i * k + s] as number;
      expect(j === i || j < 0 || j >= n || seen.has(j)).toBe(false);
      seen.add(j);
      if (s > 0) expect(graph.distances[i * k + s] as number).toBeGreaterThanOrEqual(graph.distances[i * k + s - 1] as number);
    }
  }
}

describe('approxKnn recall', () => {
  it('≥ 0.95 at k = 15 on a 50,000 × 32 mixture of 20 Gaussian clusters (500 sampled queries)', async () => {
    const { data, n, d } = gaussianMixture(20261201, 20, 2500, 32, 6);
    const stats: ApproxKnnStats = { trees: 0, iterations: 0, updates: [], distanceEvaluations: 0 };
    const graph = await approxKnn(data, n, d, 15, 'euclidean', mulberry32(1), {}, stats);
    const queries = Int32Array.from({ length: 500 }, (_, r) => Math.floor((r * n) / 500) + (r % 7));
    const exact = exactKnnOfRows(data, n, d, 15, 'euclidean', queries);
    const recall = knnRecall(graph, exact, queries);
    expect(recall).toBeGreaterThanOrEqual(0.95);
    expect(stats.iterations).toBeLessThan(12);
  }, 120_000);

  it('cosine: ≥ 0.95 at k = 15 on 8,000 × 16 (rows of very different norms)', async () => {
    const { data, n, d } = gaussianMixture(7, 8, 1000, 16, 2);
    // Scale rows by 1 … 100: only their direction may matter.
    const random = mulberry32(3);
    for (let i = 0; i < n; i++) {
      const scale = 1 + 99 * random();
      for (let t = 0; t < d; t++) data[i * d + t] = (data[i * d + t] as number) * scale;
    }
    const graph = await approxKnn(data, n, d, 15, 'cosine', mulberry32(2), { threads: 1 });
    const queries = Int32Array.from({ length: 500 }, (_, r) => r * 16);
    expect(knnRecall(graph, exactKnnOfRows(data, n, d, 15, 'cosine', queries), queries)).toBeGreaterThanOrEqual(0.95);
    checkWellFormed(graph);
  }, 60_000);
});

describe('approxKnn output', () => {
  const { data, n, d } = gaussianMixture(42, 5, 400, 12, 4);

  it('exactKnnOfRows equals the rows of exactKnn (Euclidean and cosine)', () => {
    const queries = Int32Array.from([0, 7, 399, 400, 1999]);
    for (const metric of ['euclidean', 'cosine'] as const) {
      const all = exactKnn(data, n, d, 10, metric);
      const some = exactKnnOfRows(data, n, d, 10, metric, queries);
      queries.forEach((i, r) => {
        expect(some.indices.subarray(r * 10, r * 10 + 10)).toEqual(all.indices.subarray(i * 10, i * 10 + 10));
        expect(some.distances.subarray(r * 10, r * 10 + 10)).toEqual(all.distances.subarray(i * 10, i * 10 + 10));
      });
    }
  });

  it('is the same for the same seed, whatever the thread count', async () => {
    const one = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(9), { threads: 1 });
    const again = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(9), { threads: 1 });
    const two = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(9), { threads: 2 });
    expect(again.indices).toEqual(one.indices);
    expect(again.distances).toEqual(one.distances);
    expect(two.indices).toEqual(one.indices);
    expect(two.distances).toEqual(one.distances);
  }, 60_000);

  it('keeps its worker threads for the next search, and stops them when a search is aborted mid-way', async () => {
    const before = idleDescentWorkerCount();
    const first = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(9), { threads: 2 });
    expect(idleDescentWorkerCount()).toBe(Math.max(before, 2));
    // The kept workers serve the next search: the same graph, and they are back afterwards.
    const second = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(9), { threads: 2 });
    expect(second.indices).toEqual(first.indices);
    expect(idleDescentWorkerCount()).toBe(Math.max(before, 2));
    // Aborted between two steps: the workers it took are stopped, not kept.
    const controller = new AbortController();
    const aborted = approxKnn(data, n, d, 10, 'euclidean', mulberry32(9), {
      threads: 2,
      signal: controller.signal,
      onProgress: (fraction) => {
        if (fraction > 0.3) controller.abort(new Error('stop'));
      },
    });
    await expect(aborted).rejects.toThrow(/stop/);
    expect(idleDescentWorkerCount()).toBe(Math.max(before, 2) - 2);
  }, 60_000);

  it('equals exactKnn bit for bit on every row whose true neighbours it found (small set: nearly all)', async () => {
    const graph = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(5), { threads: 1 });
    const exact = exactKnn(data, n, d, 10, 'euclidean');
    checkWellFormed(graph);
    let identical = 0;
    for (let i = 0; i < n; i++) {
      const a = graph.indices.subarray(i * 10, i * 10 + 10);
      const b = exact.indices.subarray(i * 10, i * 10 + 10);
      if (a.every((v, s) => v === b[s])) {
        identical++;
        expect(graph.distances.subarray(i * 10, i * 10 + 10)).toEqual(exact.distances.subarray(i * 10, i * 10 + 10));
      }
    }
    expect(identical / n).toBeGreaterThan(0.97);
    expect(knnRecall(graph, exact)).toBeGreaterThan(0.99);
  });

  it('copes with many duplicate rows (integer values) and with no trees (random start)', async () => {
    const random = mulberry32(11);
    const m = 1500;
    const dupes = Float32Array.from({ length: m * 3 }, () => Math.floor(random() * 4));
    const graph = await approxKnn(dupes, m, 3, 8, 'euclidean', mulberry32(1), { threads: 1 });
    checkWellFormed(graph);
    // With ≤ 64 distinct rows, each of ~23 copies, every neighbour is a duplicate at distance 0.
    expect(graph.distances.every((v) => v === 0)).toBe(true);
    const noTrees = await approxKnn(data, n, d, 10, 'euclidean', mulberry32(1), { threads: 1, nTrees: 0 });
    checkWellFormed(noTrees);
    expect(knnRecall(noTrees, exactKnn(data, n, d, 10))).toBeGreaterThan(0.95);
  });

  it('rejects bad input and settings with clear messages, and stops when aborted', async () => {
    await expect(approxKnn(new Float32Array(6), 3, 2, 3, 'euclidean', mulberry32(1))).rejects.toThrow(/k must be an integer from 1 to n − 1 = 2/);
    await expect(approxKnn(Float32Array.from([0, 1, Number.NaN, 2]), 2, 2, 1, 'euclidean', mulberry32(1))).rejects.toThrow(/row 1, column 0 is NaN/);
    await expect(approxKnn(Float32Array.from([1, 1, 0, 0, 2, 1]), 3, 2, 1, 'cosine', mulberry32(1))).rejects.toThrow(/row 1 is all zeros/);
    await expect(approxKnn(data, n, d, 10, 'euclidean', mulberry32(1), { leafSize: 2 })).rejects.toThrow(/leafSize must be an integer from 4 to 256/);
    await expect(approxKnn(data, n, d, 10, 'euclidean', mulberry32(1), { threads: 0 })).rejects.toThrow(/threads must be an integer/);
    const controller = new AbortController();
    controller.abort(new Error('cancelled by the user'));
    await expect(approxKnn(data, n, d, 10, 'euclidean', mulberry32(1), { signal: controller.signal })).rejects.toThrow(/cancelled by the user/);
  });
});

describe('knnGraph chooses exact search while n²·d is small', () => {
  it('documents its threshold: 20,000 rows of 32 dimensions', () => {
    expect(EXACT_KNN_MAX_WORK).toBe(20_000 * 20_000 * 32);
    expect(exactIsAffordable(20_000, 32)).toBe(true);
    expect(exactIsAffordable(20_001, 32)).toBe(false);
    expect(exactIsAffordable(10_000, 128)).toBe(true);
  });

  it('auto below the threshold is exactKnn; forced approximate is approxKnn; firstNeighbours slices', async () => {
    const { data, n, d } = gaussianMixture(1, 3, 100, 6, 3);
    const auto = await knnGraph(data, n, d, 12, 'euclidean', mulberry32(1));
    expect(auto.exact).toBe(true);
    expect(auto.graph.indices).toEqual(exactKnn(data, n, d, 12).indices);
    const approximate = await knnGraph(data, n, d, 12, 'euclidean', mulberry32(1), { strategy: 'approximate', threads: 1 });
    expect(approximate.exact).toBe(false);
    expect(approximate.graph.indices).toEqual((await approxKnn(data, n, d, 12, 'euclidean', mulberry32(1), { threads: 1 })).indices);
    const five = firstNeighbours(auto.graph, 5);
    expect(five.k).toBe(5);
    expect(five.indices).toEqual(exactKnn(data, n, d, 5).indices);
    expect(() => firstNeighbours(auto.graph, 13)).toThrow(/cannot take 13/);
  });
});
