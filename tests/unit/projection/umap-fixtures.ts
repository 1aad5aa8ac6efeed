import { expect } from 'vitest';
import { trustworthiness } from '@/lib/projection/fidelity';
import { ProgressReporter } from '@/lib/projection/job-control';
import { exactKnn } from '@/lib/projection/knn';
import type { UmapParams } from '@/lib/projection/params';
import { type UmapEngine, runUmap } from '@/lib/projection/umap';

export const UMAP_TEST_PARAMS: UmapParams = { nNeighbors: 15, minDist: 0.1, spread: 1, nEpochs: 500, metric: 'euclidean', init: 'pca' };

/** One UMAP layout on the exact neighbour graph, timed. */
export async function umapLayout(
  data: Float32Array,
  n: number,
  d: number,
  engine: UmapEngine,
  options: { params?: UmapParams; seed?: number; threads?: number; signal?: AbortSignal; progress?: ProgressReporter } = {},
): Promise<{ coordinates: Float32Array; seconds: number }> {
  const params = options.params ?? UMAP_TEST_PARAMS;
  const knn = exactKnn(data, n, d, params.nNeighbors - 1);
  const started = performance.now();
  const coordinates = await runUmap({
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
  return { coordinates, seconds: (performance.now() - started) / 1000 };
}

/**
 * Issue 4's check of a kernel against umap-js 1.4.0 on the same graph and start: trustworthiness
 * at 15 within 0.005, as means over seeds. One seed's T(15) moves by a few thousandths with the
 * seed for either engine (the mixture's ranges over ~0.004), so a single-seed difference would
 * test the luck of two streams as much as the kernel; each seed's pair is printed.
 */
export async function expectTrustworthinessLikeUmapJs(name: string, data: Float32Array, n: number, d: number, engine: UmapEngine, seeds: readonly number[] = [1, 2, 3]): Promise<void> {
  const ours: number[] = [];
  const theirs: number[] = [];
  for (const seed of seeds) {
    const a = await umapLayout(data, n, d, engine, { seed });
    const b = await umapLayout(data, n, d, 'umap-js', { seed });
    ours.push(trustworthiness(data, n, d, a.coordinates, [15])[0] as number);
    theirs.push(trustworthiness(data, n, d, b.coordinates, [15])[0] as number);
    console.log(`${name} seed ${seed} T(15): ${engine} ${(ours.at(-1) ?? 0).toFixed(4)} (${a.seconds.toFixed(2)} s), umap-js ${(theirs.at(-1) ?? 0).toFixed(4)} (${b.seconds.toFixed(2)} s)`);
  }
  const mean = (values: number[]): number => values.reduce((sum, value) => sum + value, 0) / values.length;
  console.log(`${name} mean T(15): ${engine} ${mean(ours).toFixed(4)}, umap-js ${mean(theirs).toFixed(4)}`);
  expect(Math.abs(mean(ours) - mean(theirs))).toBeLessThanOrEqual(0.005);
}
