/**
 * The batch UMAP layout (lib/projection/umap-batch.ts, engine 'batch', the default) against
 * umap-js 1.4.0 (engine 'umap-js', issue 4's reference implementation) on the same neighbour graph
 * and start: trustworthiness at 15 within 0.005 on the digits data scikit-learn ships and on a
 * seeded mixture, as means over three seeds (one seed's T(15) moves by a few thousandths with the
 * seed for either engine). Plus: the same bits for 1, 2 and 3 threads, determinism, the balanced
 * split, and cancellation with the worker threads stopped.
 */
import { describe, expect, it } from 'vitest';
import { trustworthiness } from '@/lib/projection/fidelity';
import { ProgressReporter } from '@/lib/projection/job-control';
import { exactKnn } from '@/lib/projection/knn';
import type { UmapParams } from '@/lib/projection/params';
import { type UmapEngine, runUmap } from '@/lib/projection/umap';
import { balancedRanges } from '@/lib/projection/umap-batch';
import { bitIdentical, gaussianMixture } from './methods-fixtures';
import { digitsData } from './pca-fixtures';

const PARAMS: UmapParams = { nNeighbors: 15, minDist: 0.1, spread: 1, nEpochs: 500, metric: 'euclidean', init: 'pca' };

async function layout(data: Float32Array, n: number, d: number, engine: UmapEngine, options: { params?: UmapParams; seed?: number; threads?: number; signal?: AbortSignal; progress?: ProgressReporter } = {}): Promise<Float32Array> {
  const params = options.params ?? PARAMS;
  const knn = exactKnn(data, n, d, params.nNeighbors - 1);
  return runUmap({
    data,
    n,
    d,
    params,
    seed: options.seed ?? 42,
    knn,
    engine,
    progress: options.progress ?? new ProgressReporter(undefined),
    ...(options.threads !== undefined ? { threads: options.threads } : {}),
    ...(options.signal ? { signal: options.signal } : {}),
  });
}

async function compare(name: string, data: Float32Array, n: number, d: number): Promise<void> {
  const ours: number[] = [];
  const theirs: number[] = [];
  for (const seed of [1, 2, 3]) {
    ours.push(trustworthiness(data, n, d, await layout(data, n, d, 'batch', { seed }), [15])[0] as number);
    theirs.push(trustworthiness(data, n, d, await layout(data, n, d, 'umap-js', { seed }), [15])[0] as number);
    console.log(`${name} seed ${seed} T(15): batch ${(ours.at(-1) ?? 0).toFixed(4)}, umap-js ${(theirs.at(-1) ?? 0).toFixed(4)}`);
  }
  const mean = (values: number[]): number => values.reduce((sum, value) => sum + value, 0) / values.length;
  console.log(`${name} mean T(15): batch ${mean(ours).toFixed(4)}, umap-js ${mean(theirs).toFixed(4)}`);
  expect(Math.abs(mean(ours) - mean(theirs))).toBeLessThanOrEqual(0.005);
}

describe('batch UMAP layout against umap-js 1.4.0 on the same graph and start', () => {
  it('digits (scikit-learn): trustworthiness at 15 within 0.005', async () => {
    const { data, n, d } = digitsData();
    await compare('digits', data, n, d);
  }, 300_000);

  it('seeded 3-cluster mixture: trustworthiness at 15 within 0.005', async () => {
    const { data, n, d } = gaussianMixture(7, 3, 200, 10);
    await compare('mixture', data, n, d);
  }, 120_000);
});

describe('batch UMAP layout', () => {
  it('gives the same bits on 1, 2 and 3 threads; the same seed repeats, another differs', async () => {
    const { data, n, d } = gaussianMixture(5, 4, 150, 8);
    const params: UmapParams = { ...PARAMS, nEpochs: 120 };
    const one = await layout(data, n, d, 'batch', { params, seed: 3, threads: 1 });
    const two = await layout(data, n, d, 'batch', { params, seed: 3, threads: 2 });
    const three = await layout(data, n, d, 'batch', { params, seed: 3, threads: 3 });
    const other = await layout(data, n, d, 'batch', { params, seed: 4, threads: 1 });
    expect(one.every(Number.isFinite)).toBe(true);
    expect(bitIdentical(one, two)).toBe(true);
    expect(bitIdentical(one, three)).toBe(true);
    expect(bitIdentical(one, other)).toBe(false);
  }, 60_000);

  it('splits vertices into ranges of about equal edge counts', () => {
    // Vertex degrees 10, 0, 5, 5, 10, 10: 40 edges.
    const rowStart = Int32Array.of(0, 10, 10, 15, 20, 30, 40);
    expect(Array.from(balancedRanges(rowStart, 6, 2))).toEqual([0, 4, 6]);
    expect(Array.from(balancedRanges(rowStart, 6, 1))).toEqual([0, 6]);
    const four = balancedRanges(rowStart, 6, 4);
    expect(four[0]).toBe(0);
    expect(four[4]).toBe(6);
    for (let t = 0; t < 4; t++) expect(four[t + 1] as number).toBeGreaterThanOrEqual(four[t] as number);
  });

  it('stops with an AbortError mid-run on worker threads', async () => {
    const { data, n, d } = gaussianMixture(3, 3, 100, 10);
    const controller = new AbortController();
    const progress = new ProgressReporter((fraction) => {
      if (fraction > 0.5) controller.abort(new Error('test'));
    });
    await expect(layout(data, n, d, 'batch', { threads: 2, signal: controller.signal, progress })).rejects.toMatchObject({ name: 'AbortError' });
  }, 60_000);
});
