/**
 * Exact kNN (lib/projection/knn.ts): equals brute force on random inputs (property tests with
 * fast-check, including ties and cosine), the worker-thread variant equals the single-threaded one,
 * and the Gaussian reference case equals scikit-learn's NearestNeighbors.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { assignBlockRows, exactKnn, exactKnnParallel, type KnnGraph } from '@/lib/projection/knn';
import { SKLEARN, referenceCase } from './fidelity-fixture';

/** Brute force, written independently: all n − 1 distances per point, sorted by (distance, index). */
function bruteForce(data: Float32Array, n: number, d: number, k: number, metric: 'euclidean' | 'cosine'): { indices: Int32Array; distances: Float64Array } {
  const indices = new Int32Array(n * k);
  const distances = new Float64Array(n * k);
  const norms = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let t = 0; t < d; t++) s += (data[i * d + t] as number) ** 2;
    norms[i] = Math.sqrt(s);
  }
  for (let i = 0; i < n; i++) {
    const candidates: Array<{ distance: number; index: number }> = [];
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      let s = 0;
      if (metric === 'euclidean') {
        for (let t = 0; t < d; t++) {
          const diff = (data[i * d + t] as number) - (data[j * d + t] as number);
          s += diff * diff;
        }
        candidates.push({ distance: Math.sqrt(s), index: j });
      } else {
        for (let t = 0; t < d; t++) s += (data[i * d + t] as number) * (data[j * d + t] as number);
        candidates.push({ distance: 1 - s / ((norms[i] as number) * (norms[j] as number)), index: j });
      }
    }
    candidates.sort((a, b) => a.distance - b.distance || a.index - b.index);
    for (let s = 0; s < k; s++) {
      const candidate = candidates[s];
      if (candidate === undefined) throw new Error('too few candidates');
      indices[i * k + s] = candidate.index;
      distances[i * k + s] = candidate.distance;
    }
  }
  return { indices, distances };
}

/** Random problems: n, d, k, block size, and values with many exact ties or few. */
const problem = fc
  .record({
    n: fc.integer({ min: 2, max: 45 }),
    d: fc.integer({ min: 1, max: 6 }),
    blockSize: fc.constantFrom(8, 16, 128),
    ties: fc.boolean(),
    seed: fc.integer(),
    kShare: fc.double({ min: 0, max: 1, noNaN: true }),
  })
  .map(({ n, d, blockSize, ties, seed, kShare }) => {
    const random = mulberry32(seed);
    const data = new Float32Array(n * d);
    // Small integers give many duplicate rows and tied distances; eighths in ±125 few ties.
    for (let index = 0; index < data.length; index++) data[index] = ties ? Math.floor(random() * 5) - 2 : Math.round((random() - 0.5) * 2000) / 8;
    const k = 1 + Math.min(n - 2, Math.floor(kShare * (n - 1)));
    return { n, d, k, blockSize, data };
  });

function checkGraphShape(graph: KnnGraph, n: number, k: number): void {
  expect(graph.indices).toHaveLength(n * k);
  expect(graph.distances).toHaveLength(n * k);
  for (let i = 0; i < n; i++) for (let s = 0; s < k; s++) expect(graph.indices[i * k + s]).not.toBe(i);
}

describe('exactKnn equals brute force', () => {
  it('Euclidean: the same indices in the same order (ties by index) and the same distances', () => {
    fc.assert(
      fc.property(problem, ({ n, d, k, blockSize, data }) => {
        const graph = exactKnn(data, n, d, k, 'euclidean', { blockSize });
        const expected = bruteForce(data, n, d, k, 'euclidean');
        checkGraphShape(graph, n, k);
        // The values are small dyadic numbers, so both the kernel's ‖x‖² + ‖y‖² − 2x·y and the
        // differences here are exact: ties are real on both sides and must break alike (by index).
        expect(Array.from(graph.indices)).toEqual(Array.from(expected.indices));
        expect(Array.from(graph.distances)).toEqual(Array.from(expected.distances, (v) => Math.fround(v)));
      }),
      { numRuns: 200 },
    );
  });

  it('cosine: distances equal 1 − cos θ to 1e-6 and every neighbour is among the true k nearest', () => {
    fc.assert(
      fc.property(problem, ({ n, d, k, blockSize, data }) => {
        // A zero row has no direction (rejected, tested below): give it one.
        for (let i = 0; i < n; i++) if (data.subarray(i * d, i * d + d).every((v) => v === 0)) data[i * d] = 1;
        const graph = exactKnn(data, n, d, k, 'cosine', { blockSize });
        const expected = bruteForce(data, n, d, k, 'cosine');
        checkGraphShape(graph, n, k);
        // 1 − u·v and ‖u − v‖²/2 round differently, so exact ties (parallel rows) may order
        // differently: compare distances, and check membership up to that rounding.
        for (let i = 0; i < n; i++) {
          const kth = expected.distances[i * k + k - 1] as number;
          for (let s = 0; s < k; s++) {
            expect(Math.abs((graph.distances[i * k + s] as number) - (expected.distances[i * k + s] as number))).toBeLessThan(1e-6);
            const j = graph.indices[i * k + s] as number;
            let dot = 0;
            let ni = 0;
            let nj = 0;
            for (let t = 0; t < d; t++) {
              dot += (data[i * d + t] as number) * (data[j * d + t] as number);
              ni += (data[i * d + t] as number) ** 2;
              nj += (data[j * d + t] as number) ** 2;
            }
            expect(1 - dot / Math.sqrt(ni * nj)).toBeLessThanOrEqual(kth + 1e-9);
          }
        }
      }),
      { numRuns: 200 },
    );
  });

  it('Euclidean on Gaussian values: distances to 1e-6 relative, every neighbour among the true k nearest', () => {
    fc.assert(
      fc.property(fc.integer({ min: 2, max: 60 }), fc.integer({ min: 1, max: 9 }), fc.integer(), fc.constantFrom(8, 128), (n, d, seed, blockSize) => {
        const normal = normalGenerator(mulberry32(seed));
        // Offset rows: the expansion's cancellation grows with ‖x‖² / ‖x − y‖², here ~100.
        const data = Float32Array.from({ length: n * d }, () => 10 + normal());
        const k = Math.max(1, Math.min(n - 1, 7));
        const graph = exactKnn(data, n, d, k, 'euclidean', { blockSize });
        const expected = bruteForce(data, n, d, k, 'euclidean');
        for (let i = 0; i < n; i++) {
          const kth = expected.distances[i * k + k - 1] as number;
          for (let s = 0; s < k; s++) {
            const want = expected.distances[i * k + s] as number;
            expect(Math.abs((graph.distances[i * k + s] as number) - want)).toBeLessThanOrEqual(1e-6 * Math.max(1, want));
            const j = graph.indices[i * k + s] as number;
            let sum = 0;
            for (let t = 0; t < d; t++) sum += ((data[i * d + t] as number) - (data[j * d + t] as number)) ** 2;
            expect(Math.sqrt(sum)).toBeLessThanOrEqual(kth * (1 + 1e-12));
          }
        }
      }),
      { numRuns: 100 },
    );
  });

  it('orders exact ties by index: four duplicates of a point, then the rest', () => {
    const data = Float32Array.from([0, 0, 5, 5, 0, 0, 1, 0, 0, 0, 0, 0, 9, 9]);
    const graph = exactKnn(data, 7, 2, 4);
    // Point 0's duplicates are 2, 4, 5 (distance 0), then 3 (distance 1).
    expect(Array.from(graph.indices.subarray(0, 4))).toEqual([2, 4, 5, 3]);
    expect(Array.from(graph.distances.subarray(0, 4))).toEqual([0, 0, 0, 1]);
  });

  it('rejects bad input with a clear message', () => {
    expect(() => exactKnn(new Float32Array(6), 3, 2, 3)).toThrow(/k must be an integer from 1 to n − 1 = 2/);
    expect(() => exactKnn(new Float32Array(5), 3, 2, 1)).toThrow(/expected n × d = 6 values, got 5/);
    expect(() => exactKnn(Float32Array.from([0, 1, Number.NaN, 2]), 2, 2, 1)).toThrow(/row 1, column 0 is NaN/);
    expect(() => exactKnn(Float32Array.from([1, 1, 0, 0, 2, 1]), 3, 2, 1, 'cosine')).toThrow(/row 1 is all zeros/);
    expect(() => exactKnn(new Float32Array(6), 3, 2, 1, 'euclidean', { blockSize: 3 })).toThrow(/blockSize/);
  });
});

describe('exactKnnParallel (worker threads over SharedArrayBuffers)', () => {
  const n = 2500;
  const d = 12;
  const normal = normalGenerator(mulberry32(20261204));
  const data = new Float32Array(n * d);
  for (let index = 0; index < data.length; index++) data[index] = normal();
  // Some exact duplicates, so that the merge across threads must keep the index tie-break.
  data.copyWithin(0, 100 * d, 130 * d);

  it.each([
    ['euclidean', 2],
    ['cosine', 3],
  ] as const)('equals exactKnn bit for bit (%s, %i threads)', async (metric, threads) => {
    const single = exactKnn(data, n, d, 15, metric, { blockSize: 64 });
    const parallel = await exactKnnParallel(data, n, d, 15, metric, { threads, blockSize: 64 });
    expect(parallel.indices).toEqual(single.indices);
    expect(parallel.distances).toEqual(single.distances);
  });

  it('runs on the calling thread for threads = 1 and stops when aborted', async () => {
    const single = exactKnn(data, n, d, 5);
    expect((await exactKnnParallel(data, n, d, 5, 'euclidean', { threads: 1 })).indices).toEqual(single.indices);
    const controller = new AbortController();
    controller.abort(new Error('cancelled by the user'));
    await expect(exactKnnParallel(data, n, d, 5, 'euclidean', { threads: 2, signal: controller.signal })).rejects.toThrow(/cancelled by the user/);
    await expect(exactKnnParallel(data, n, d, 5, 'euclidean', { threads: 0 })).rejects.toThrow(/threads must be an integer/);
  });

  it('reports the share of tiles done while it runs, and stops when its progress callback throws', async () => {
    // 16,000 × 32: over a second on two threads, so several progress ticks.
    const big = new Float32Array(16_000 * 32);
    for (let index = 0; index < big.length; index++) big[index] = normal();
    const seen: number[] = [];
    await exactKnnParallel(big, 16_000, 32, 15, 'euclidean', { threads: 2, onProgress: (f) => seen.push(f) });
    expect(seen.length).toBeGreaterThan(0);
    for (let s = 0; s < seen.length; s++) {
      expect(seen[s] as number).toBeGreaterThanOrEqual(s > 0 ? (seen[s - 1] as number) : 0);
      expect(seen[s] as number).toBeLessThanOrEqual(1);
    }
    const stop = () => {
      throw new Error('stop here');
    };
    await expect(exactKnnParallel(big, 16_000, 32, 15, 'euclidean', { threads: 2, onProgress: stop })).rejects.toThrow('stop here');
  }, 60_000);

  it('balances block rows: every row once, loads within one row of work', () => {
    const blocks = 40;
    const assignment = assignBlockRows(blocks, 3);
    expect(assignment.flat().sort((a, b) => a - b)).toEqual(Array.from({ length: blocks }, (_, index) => index));
    const loads = assignment.map((rows) => rows.reduce((sum, row) => sum + blocks - row, 0));
    expect(Math.max(...loads) - Math.min(...loads)).toBeLessThanOrEqual(blocks);
  });
});

describe(`exactKnn against ${SKLEARN} sklearn.neighbors.NearestNeighbors, generated by scripts/reference/fidelity.py`, () => {
  const reference = referenceCase('gaussian-200x8');
  const knn = reference.knn;
  if (knn === undefined) throw new Error('fixture lacks the kNN reference');

  it.each(['euclidean', 'cosine'] as const)('%s, k = 15, no ties: same indices in the same order, distances to 1e-6', (metric) => {
    const graph = exactKnn(reference.latent, reference.n, reference.d, knn.k, metric);
    const expected = knn[metric];
    // Source: scikit-learn NearestNeighbors(n_neighbors=15[, metric="cosine", algorithm="brute"]).kneighbors().
    expect(Array.from(graph.indices)).toEqual(expected.indices);
    // Float32 output (relative rounding 6e-8) of distances of order 1.
    for (let index = 0; index < expected.distances.length; index++) {
      expect(Math.abs((graph.distances[index] as number) - (expected.distances[index] as number))).toBeLessThan(1e-6);
    }
  });
});
