/**
 * Reproducibility of runProjection (issue 4, "Methods": same input, settings and seed → identical
 * coordinates), and the progress and cancellation contract the job worker relies on.
 * Data: a seeded Gaussian mixture (methods-fixtures.ts). Runs are kept short (few epochs or
 * iterations, ~150–300 points) so that the file takes seconds on 2 cores.
 */
import { describe, expect, it } from 'vitest';
import { type ProjectionMethod, runProjection } from '@/lib/projection/methods';
import { bitIdentical, gaussianMixture } from './methods-fixtures';

const mixture = gaussianMixture(11, 3, 60, 10);
const { data, n, d } = mixture;

/** Short settings per method, so each run takes well under a second. */
const quick: Record<ProjectionMethod, Record<string, unknown>> = {
  pca: {},
  umap: { nEpochs: 60 },
  sammon: { maxIterations: 30 },
  tsne: { iterations: 250, perplexity: 20 },
};

const methods: ProjectionMethod[] = ['pca', 'umap', 'sammon', 'tsne'];

/** Runs with the quick settings, each (method, seed) once per file: the tests below share them. */
const runs = new Map<string, ReturnType<typeof runProjection>>();
function quickRun(method: ProjectionMethod, seed: number): ReturnType<typeof runProjection> {
  const key = `${method}/${seed}`;
  let run = runs.get(key);
  if (run === undefined) {
    run = runProjection({ data, n, d, method, params: quick[method], seed });
    runs.set(key, run);
  }
  return run;
}

describe('runProjection: determinism', () => {
  it.each(methods)('%s: same input, settings and seed give bit-identical coordinates', async (method) => {
    const first = await quickRun(method, 7);
    // A fresh run, not the memoised one.
    const second = await runProjection({ data, n, d, method, params: quick[method], seed: 7 });
    expect(first.coordinates).toHaveLength(n * 2);
    expect(first.coordinates.every(Number.isFinite)).toBe(true);
    expect(bitIdentical(first.coordinates, second.coordinates)).toBe(true);
    expect(second.params).toEqual(first.params);
  });

  it.each(['umap', 'tsne'] as const)('%s: a different seed gives a different layout', async (method) => {
    const first = await quickRun(method, 7);
    const other = await quickRun(method, 8);
    expect(bitIdentical(first.coordinates, other.coordinates)).toBe(false);
  });

  it('PCA and Sammon use no randomness: the seed does not matter; they report their scores', async () => {
    const pcaA = await runProjection({ data, n, d, method: 'pca', params: {}, seed: 1 });
    const pcaB = await runProjection({ data, n, d, method: 'pca', params: {}, seed: 2 });
    expect(bitIdentical(pcaA.coordinates, pcaB.coordinates)).toBe(true);
    expect(pcaA.explainedVarianceRatio).toHaveLength(2);
    const [first = 0, second = 0] = pcaA.explainedVarianceRatio ?? [];
    expect(first).toBeGreaterThanOrEqual(second);
    expect(first + second).toBeLessThanOrEqual(1);
    expect(pcaA.libraryVersion).toBe('asterism pca');
    const sammon = await runProjection({ data, n, d, method: 'sammon', params: quick.sammon, seed: 3 });
    expect(sammon.stress).toBeGreaterThan(0);
    expect(sammon.stress).toBeLessThan(0.1);
    expect(sammon.params).toEqual({ maxIterations: 30, tolerance: 1e-4, metric: 'euclidean' });
  });

  it('UMAP: the PCA start (default) is what the optimiser starts from, unlike umap-js\'s random start', async () => {
    const fromPca = await runProjection({ data, n, d, method: 'umap', params: { nEpochs: 10 }, seed: 5 });
    const fromRandom = await runProjection({ data, n, d, method: 'umap', params: { nEpochs: 10, init: 'random' }, seed: 5 });
    expect(bitIdentical(fromPca.coordinates, fromRandom.coordinates)).toBe(false);
    // After 10 epochs from a start scaled to [0, 10]², the layout is still near that box; umap-js's
    // random start spans [−10, 10]².
    const low = (c: Float32Array) => Math.min(...c);
    expect(low(fromPca.coordinates)).toBeGreaterThan(-3);
    expect(low(fromRandom.coordinates)).toBeLessThan(-3);
  });
});

describe('runProjection: progress and cancellation', () => {
  it.each(methods)('%s: progress never decreases, names its phase and ends at exactly 1', async (method) => {
    const seen: Array<[number, string]> = [];
    await runProjection({ data, n, d, method, params: quick[method], seed: 7, onProgress: (progress, phase) => seen.push([progress, phase]) });
    expect(seen.length).toBeGreaterThanOrEqual(2);
    for (let i = 1; i < seen.length; i++) expect(seen[i]?.[0]).toBeGreaterThanOrEqual(seen[i - 1]?.[0] ?? 0);
    expect(seen[0]?.[0]).toBeGreaterThanOrEqual(0);
    expect(seen.at(-1)?.[0]).toBe(1);
    for (const [, phase] of seen) expect(phase.length).toBeGreaterThan(0);
  });

  it('UMAP reports the epoch in its phase every 10 epochs', async () => {
    const phases: string[] = [];
    await runProjection({ data, n, d, method: 'umap', params: { nEpochs: 30 }, seed: 7, onProgress: (_, phase) => phases.push(phase) });
    expect(phases).toContain('neighbour graph');
    expect(phases).toContain('optimising layout, epoch 10/30');
    expect(phases).toContain('optimising layout, epoch 30/30');
    expect(phases.filter((phase) => phase.startsWith('optimising layout, epoch'))).toHaveLength(4);
  });

  it.each(methods)('%s: aborting after the first progress report rejects with an AbortError', async (method) => {
    const controller = new AbortController();
    let reports = 0;
    const run = runProjection({
      data,
      n,
      d,
      method,
      // Long runs: cancellation must arrive long before the end.
      params: { ...quick[method], ...(method === 'umap' ? { nEpochs: 2000 } : method === 'tsne' ? { iterations: 5000 } : method === 'sammon' ? { maxIterations: 5000, tolerance: 0 } : {}) },
      seed: 7,
      signal: controller.signal,
      onProgress: () => {
        reports++;
        if (reports === 1) controller.abort();
      },
    });
    await expect(run).rejects.toMatchObject({ name: 'AbortError' });
    expect(reports).toBeLessThanOrEqual(2);
  });

  it('a signal aborted by a timer mid-run stops UMAP within an epoch', async () => {
    const controller = new AbortController();
    let lastPhase = '';
    const started = performance.now();
    setTimeout(() => controller.abort(new Error('job time limit')), 100);
    const error: unknown = await runProjection({
      data,
      n,
      d,
      method: 'umap',
      params: { nEpochs: 2000 },
      seed: 7,
      signal: controller.signal,
      onProgress: (_, phase) => {
        lastPhase = phase;
      },
    }).catch((caught: unknown) => caught);
    expect(error).toBeInstanceOf(Error);
    expect((error as Error).name).toBe('AbortError');
    expect(((error as Error).cause as Error).message).toBe('job time limit');
    expect(lastPhase).not.toBe('optimising layout, epoch 2000/2000');
    expect(performance.now() - started).toBeLessThan(5000);
  });

  it('an already aborted signal rejects before any work', async () => {
    const controller = new AbortController();
    controller.abort();
    let reports = 0;
    await expect(runProjection({ data, n, d, method: 'tsne', params: quick.tsne, seed: 1, signal: controller.signal, onProgress: () => reports++ })).rejects.toMatchObject({ name: 'AbortError' });
    expect(reports).toBe(0);
  });
});
