/**
 * Does each nonlinear map keep the neighbourhoods of a simple, well-separated mixture? And does
 * UMAP use the neighbour graph it is given the way umap-js counts neighbours?
 *
 * Threshold: trustworthiness at 15 ≥ 0.9 (Venna & Kaski 2001; lib/projection/fidelity.ts, checked
 * against sklearn.manifold.trustworthiness in fidelity-reference.test.ts) is a rule of thumb
 * (common practice: maps above 0.9 are usually read as locally faithful), not a reference value.
 * The reference comparison against R's uwot on digits belongs to the benchmark and the reference
 * tests of issue 4, not here.
 */
import { describe, expect, it } from 'vitest';
import { trustworthiness } from '@/lib/projection/fidelity';
import { exactKnn } from '@/lib/projection/knn';
import { runProjection } from '@/lib/projection/methods';
import { checkUmapGraph, umapPcaStart } from '@/lib/projection/umap';
import { bitIdentical, gaussianMixture } from './methods-fixtures';

// 3 clusters × 100 points in 10-D (the task's test mixture).
const { data, n, d, labels } = gaussianMixture(2024, 3, 100, 10);

/** Share of points whose nearest map neighbour is in the same cluster. */
function sameClusterNeighbourShare(coordinates: Float32Array): number {
  const graph = exactKnn(coordinates, n, 2, 1);
  let same = 0;
  for (let i = 0; i < n; i++) if (labels[graph.indices[i] as number] === labels[i]) same++;
  return same / n;
}

describe('UMAP on a seeded Gaussian mixture (3 × 100 points, 10-D)', () => {
  it('keeps trustworthiness at 15 ≥ 0.9 (rule of thumb) and the clusters apart', async () => {
    const started = performance.now();
    const result = await runProjection({ data, n, d, method: 'umap', params: {}, seed: 42 });
    const seconds = (performance.now() - started) / 1000;
    const t15 = trustworthiness(data, n, d, result.coordinates, [15])[0] ?? 0;
    console.info(`UMAP 300 × 10, 500 epochs: ${seconds.toFixed(2)} s, trustworthiness(15) = ${t15.toFixed(4)}`);
    expect(t15).toBeGreaterThanOrEqual(0.9);
    expect(sameClusterNeighbourShare(result.coordinates)).toBe(1);
    expect(result.params).toEqual({ nNeighbors: 15, minDist: 0.1, spread: 1, nEpochs: 500, metric: 'euclidean', init: 'pca' });
    expect(result.libraryVersion).toBe('asterism umap-batch 2 (Adam, per-vertex streams, polynomial powers; umap-js 1.4.0 graph and gradients)');
  });

  it('a shared graph with more neighbours (k = 50) gives the same layout as one computed for it', async () => {
    const shared = exactKnn(data, n, d, 50, 'euclidean');
    const params = { nEpochs: 50 };
    const own = await runProjection({ data, n, d, method: 'umap', params, seed: 3 });
    const given = await runProjection({ data, n, d, method: 'umap', params, seed: 3, knn: shared });
    expect(bitIdentical(own.coordinates, given.coordinates)).toBe(true);
  });

  it('cosine: runs on the cosine graph, and refuses a graph of the other metric or too few neighbours', async () => {
    const cosineGraph = exactKnn(data, n, d, 14, 'cosine');
    const result = await runProjection({ data, n, d, method: 'umap', params: { metric: 'cosine', nEpochs: 50 }, seed: 3, knn: cosineGraph });
    expect(result.coordinates.every(Number.isFinite)).toBe(true);
    expect(result.params['metric']).toBe('cosine');
    await expect(runProjection({ data, n, d, method: 'umap', params: { metric: 'cosine' }, seed: 3, knn: exactKnn(data, n, d, 14, 'euclidean') })).rejects.toThrow(
      /uses the euclidean metric, the settings ask for cosine/,
    );
    expect(() => checkUmapGraph(exactKnn(data, n, d, 10), n, 15, 'euclidean')).toThrow(/k = 10 .* needs at least 14 \(the point itself is the first\)/);
  });

  it('the PCA start is scaled as umap-learn scales it: each coordinate spans [0, 10]', () => {
    const start = umapPcaStart(data, n, d, false, 1);
    for (let c = 0; c < 2; c++) {
      const column = Array.from({ length: n }, (_, i) => start[i * 2 + c] as number);
      expect(Math.min(...column)).toBe(0);
      expect(Math.max(...column)).toBeCloseTo(10, 12);
    }
  });
});

describe('t-SNE on the same mixture', () => {
  it('keeps trustworthiness at 15 ≥ 0.9 (rule of thumb) and the clusters apart', async () => {
    const result = await runProjection({ data, n, d, method: 'tsne', params: { iterations: 500 }, seed: 42 });
    const t15 = trustworthiness(data, n, d, result.coordinates, [15])[0] ?? 0;
    expect(t15).toBeGreaterThanOrEqual(0.9);
    expect(sameClusterNeighbourShare(result.coordinates)).toBe(1);
    expect(result.libraryVersion).toBe('@saehrimnir/druidjs 0.9.0');
  });

  it('init "pca" starts from the principal components, so the seed has no effect', async () => {
    const params = { iterations: 250, init: 'pca' };
    const a = await runProjection({ data, n, d, method: 'tsne', params, seed: 1 });
    const b = await runProjection({ data, n, d, method: 'tsne', params, seed: 2 });
    expect(bitIdentical(a.coordinates, b.coordinates)).toBe(true);
  });
});
