import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { exactKnn } from '@/lib/projection/knn';
import { runProjection } from '@/lib/projection/methods';
import { curveParameters, transformUmap } from '@/lib/projection/umap-kernel';
import { nearestRows } from '@/lib/uncertainty/draw-cloud';

/** Three separated Gaussian blobs in 6-D: rows i % 3. */
function blobs(n: number, seed: number, centres: Float64Array): Float32Array {
  const normal = normalGenerator(mulberry32(seed));
  const out = new Float32Array(n * 6);
  for (let i = 0; i < n; i += 1) for (let c = 0; c < 6; c += 1) out[i * 6 + c] = (centres[(i % 3) * 6 + c] as number) + normal();
  return out;
}

describe('UMAP transform of new points against a fitted layout', () => {
  it('puts new points from a blob among that blob, and is deterministic for a seed', async () => {
    const normal = normalGenerator(mulberry32(1));
    const centres = Float64Array.from({ length: 18 }, () => normal() * 6);
    const n = 300;
    const fitted = blobs(n, 2, centres);
    const result = await runProjection({ data: fitted, n, d: 6, method: 'umap', params: { nNeighbors: 15, nEpochs: 200 }, seed: 7, knn: exactKnn(fitted, n, 6, 14, 'euclidean') });
    const fresh = blobs(60, 3, centres);
    const near = nearestRows(fresh, 60, fitted, n, 6, 14, 'euclidean');
    const { a, b } = curveParameters(0.1, 1);
    const settings = { a, b, nNeighbors: 15, nEpochs: 70 };
    const placed = transformUmap(result.coordinates, { q: 60, ...near }, { ...settings, random: mulberry32(9) });
    const centroid = (blob: number) => {
      let x = 0;
      let y = 0;
      for (let i = blob; i < n; i += 3) {
        x += result.coordinates[2 * i] as number;
        y += result.coordinates[2 * i + 1] as number;
      }
      return [x / (n / 3), y / (n / 3)] as const;
    };
    const centroids = [0, 1, 2].map(centroid);
    for (let r = 0; r < 60; r += 1) {
      const distances = centroids.map(([cx, cy]) => Math.hypot((placed[2 * r] as number) - cx, (placed[2 * r + 1] as number) - cy));
      expect(distances.indexOf(Math.min(...distances)), `new point ${r}`).toBe(r % 3);
    }
    const again = transformUmap(result.coordinates, { q: 60, ...near }, { ...settings, random: mulberry32(9) });
    expect(Array.from(again)).toEqual(Array.from(placed));
  });
});
