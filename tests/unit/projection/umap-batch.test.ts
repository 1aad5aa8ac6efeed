/**
 * The batch UMAP layout (lib/projection/umap-batch.ts, engine 'batch', the default) against
 * umap-js 1.4.0 (engine 'umap-js', issue 4's reference implementation) on the same neighbour graph
 * and start: trustworthiness at 15 within 0.005 on the digits data scikit-learn ships and on a
 * seeded mixture, as means over three seeds (one seed's T(15) moves by a few thousandths with the
 * seed for either engine). Plus: the power approximation of the kernel, the same bits for 1, 2 and 3 threads, determinism, the balanced
 * split, and cancellation with the worker threads stopped.
 */
import { describe, expect, it } from 'vitest';
import { ProgressReporter } from '@/lib/projection/job-control';
import type { UmapParams } from '@/lib/projection/params';
import type { UmapEngine } from '@/lib/projection/umap';
import { balancedRanges } from '@/lib/projection/umap-batch';
import { fastPower } from '@/lib/projection/umap-batch-kernel.mjs';
import { bitIdentical, gaussianMixture } from './methods-fixtures';
import { digitsData } from './pca-fixtures';
import { UMAP_TEST_PARAMS as PARAMS, expectTrustworthinessLikeUmapJs as compare, umapLayout } from './umap-fixtures';

const layout = async (data: Float32Array, n: number, d: number, engine: UmapEngine, options: Parameters<typeof umapLayout>[4] = {}): Promise<Float32Array> =>
  (await umapLayout(data, n, d, engine, options)).coordinates;

describe('batch UMAP layout against umap-js 1.4.0 on the same graph and start', () => {
  it('digits (scikit-learn): trustworthiness at 15 within 0.005', async () => {
    const { data, n, d } = digitsData();
    await compare('digits', data, n, d, 'batch');
  }, 300_000);

  it('seeded 3-cluster mixture: trustworthiness at 15 within 0.005', async () => {
    const { data, n, d } = gaussianMixture(7, 3, 200, 10);
    await compare('mixture', data, n, d, 'batch');
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

  it('fastPower matches Math.pow within 1e-6 (relative) over the distances and curve shapes a layout meets', () => {
    let worst = 0;
    for (const b of [0.5, 0.79, 0.9, 1, 1.3, 1.93, 2]) {
      for (let e = -12; e <= 12; e += 0.01) {
        const x = 10 ** e;
        const exact = Math.pow(x, b);
        worst = Math.max(worst, Math.abs(fastPower(x, b) / exact - 1));
      }
      // Mantissa 1 exactly, where the polynomial's ends meet.
      for (const x of [0.5, 1, 2, 1024]) worst = Math.max(worst, Math.abs(fastPower(x, b) / Math.pow(x, b) - 1));
    }
    expect(worst).toBeLessThan(1e-6);
    expect(fastPower(1e300, 4)).toBe(Infinity);
    expect(fastPower(1e-300, 4)).toBe(0);
  });

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
