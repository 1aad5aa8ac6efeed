import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { projectionFidelity } from '@/lib/projection/fidelity';
import { fitPca, transformPca } from '@/lib/projection/pca';
import { exactKnn } from '@/lib/projection/knn';
import { perPointFidelityFromGraph, sampledProjectionQuality, sampleIndices } from '@/lib/projections/sampled-fidelity';

describe('sampled fidelity scores for large factor sets', () => {
  it('sampleIndices draws distinct, sorted indices, reproducibly for a seed', () => {
    const a = sampleIndices(1000, 200, mulberry32(4));
    expect(new Set(a).size).toBe(200);
    expect(Array.from(a)).toEqual(Array.from(a).sort((x, y) => x - y));
    expect(Array.from(sampleIndices(1000, 200, mulberry32(4)))).toEqual(Array.from(a));
    expect(sampleIndices(10, 50, mulberry32(1)).length).toBe(10);
  });

  it('estimates the exact trustworthiness and neighbour preservation of a PCA map (3,000 × 6 mixture)', async () => {
    const n = 3000;
    const d = 6;
    const normal = normalGenerator(mulberry32(21));
    const latent = new Float32Array(n * d);
    for (let i = 0; i < n; i += 1) for (let c = 0; c < d; c += 1) latent[i * d + c] = (i % 5) * (c === i % 5 ? 4 : 0) + normal();
    const map = transformPca(fitPca(latent, n, d, { components: 2 }), latent, n);
    const exact = projectionFidelity(latent, n, d, map, mulberry32(1));
    const sampled = await sampledProjectionQuality(latent, n, d, map, 'euclidean', mulberry32(1), () => {});
    // 500 queries: standard error about 0.005 here; 0.02 leaves room (rule of thumb, 4 SE).
    expect(Math.abs((sampled.trustworthiness['15'] ?? 0) - (exact.trustworthiness[1] ?? 0))).toBeLessThan(0.02);
    expect(Math.abs((sampled.trustworthiness['50'] ?? 0) - (exact.trustworthiness[2] ?? 0))).toBeLessThan(0.02);
    expect(Math.abs(sampled.knnPreservation - exact.knnPreservation)).toBeLessThan(0.03);
    expect(Math.abs((sampled.continuity['15'] ?? 0) - (exact.continuity[1] ?? 0))).toBeLessThan(0.02);
    expect(Math.abs((sampled.continuity['50'] ?? 0) - (exact.continuity[2] ?? 0))).toBeLessThan(0.02);
    expect(sampled.sampledQueries).toBe(500);
  });

  it('per-point fidelity from the latent graph and the map’s flatbush neighbours equals the exact one (no ties)', () => {
    const n = 1500;
    const d = 5;
    const normal = normalGenerator(mulberry32(8));
    const latent = Float32Array.from({ length: n * d }, () => normal());
    const map = new Float32Array(n * 2);
    for (let i = 0; i < n; i += 1) {
      map[2 * i] = (latent[i * d] as number) + 0.3 * normal();
      map[2 * i + 1] = (latent[i * d + 1] as number) + 0.3 * normal();
    }
    const exact = projectionFidelity(latent, n, d, map, mulberry32(1));
    const fromGraph = perPointFidelityFromGraph(exactKnn(latent, n, d, 15), map, n);
    expect(Array.from(fromGraph)).toEqual(Array.from(exact.perPoint));
  });
});
