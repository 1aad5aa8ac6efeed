/**
 * Properties of the fidelity scores that hold by definition (no outside reference needed):
 * an isometric map keeps every neighbour and every rank, a monotone transform of the distances
 * keeps Spearman's ρ at 1, shares lie in [0, 1], and a fixed seed gives identical results.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { exactKnn } from '@/lib/projection/knn';
import {
  averageRanks,
  continuity,
  kruskalStress,
  neighbourPreservation,
  projectionFidelity,
  samplePairs,
  spearmanRho,
  trustworthiness,
} from '@/lib/projection/fidelity';

function gaussian(seed: number, n: number, d: number, scales?: number[]): Float32Array {
  const normal = normalGenerator(mulberry32(seed));
  const out = new Float32Array(n * d);
  for (let i = 0; i < n; i++) for (let t = 0; t < d; t++) out[i * d + t] = normal() * (scales?.[t] ?? 1);
  return out;
}

/** Rotates 2-D points by an angle and shifts them: an isometry of the plane. */
function rigidMotion(points: Float32Array, angle: number, shift: [number, number]): Float32Array {
  const out = new Float32Array(points.length);
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  for (let i = 0; i < points.length / 2; i++) {
    const x = points[2 * i] as number;
    const y = points[2 * i + 1] as number;
    out[2 * i] = c * x - s * y + shift[0];
    out[2 * i + 1] = s * x + c * y + shift[1];
  }
  return out;
}

describe('neighbour preservation', () => {
  it('is 1 for every point of an isometric map (2-D latent rows, rotated and shifted)', () => {
    const n = 300;
    const latent = gaussian(1, n, 2);
    // Rounding the rotated points to float32 moves distances by ~1e-7 relative; with this fixed
    // seed no two distances around any point's 15th neighbour are that close, so every order holds.
    const map = rigidMotion(latent, 0.7, [3, -2]);
    const preserved = neighbourPreservation(exactKnn(latent, n, 2, 15), exactKnn(map, n, 2, 15));
    expect(preserved.mean).toBe(1);
    expect(preserved.perPoint.every((value) => value === 1)).toBe(true);
    expect(trustworthiness(latent, n, 2, map, [5, 15])).toEqual(Float64Array.from([1, 1]));
    expect(continuity(latent, n, 2, map, [5, 15])).toEqual(Float64Array.from([1, 1]));
  });

  it('lies in [0, 1] per point and on average, in multiples of 1/k (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 8, max: 60 }), fc.integer({ min: 1, max: 6 }), fc.integer(), (n, d, seed) => {
        const latent = gaussian(seed, n, d);
        const map = gaussian(seed + 1, n, 2);
        const k = Math.min(7, n - 1);
        const { mean, perPoint } = neighbourPreservation(exactKnn(latent, n, d, k), exactKnn(map, n, 2, k), k);
        expect(mean).toBeGreaterThanOrEqual(0);
        expect(mean).toBeLessThanOrEqual(1);
        for (const value of perPoint) {
          expect(value).toBeGreaterThanOrEqual(0);
          expect(value).toBeLessThanOrEqual(1);
          expect(Math.abs(value * k - Math.round(value * k))).toBeLessThan(1e-6);
        }
      }),
      { numRuns: 50 },
    );
  });
});

describe('trustworthiness and continuity bounds', () => {
  it('lie in [0, 1] for random maps (property) and reject k ≥ n/2', () => {
    fc.assert(
      fc.property(fc.integer({ min: 12, max: 50 }), fc.integer(), (n, seed) => {
        const latent = gaussian(seed, n, 5);
        const map = gaussian(seed ^ 0x5555, n, 2);
        const ks = [1, Math.floor((n - 1) / 2)];
        for (const value of [...trustworthiness(latent, n, 5, map, ks), ...continuity(latent, n, 5, map, ks)]) {
          expect(value).toBeGreaterThanOrEqual(0);
          expect(value).toBeLessThanOrEqual(1);
        }
      }),
      { numRuns: 40 },
    );
    expect(() => trustworthiness(new Float32Array(20), 10, 2, new Float32Array(20), [5])).toThrow(/1 ≤ k < n\/2 = 5/);
  });
});

describe('Shepard correlation and stress', () => {
  it('ρ is exactly 1 for a strictly monotone transform of the latent distances; stress 0 for a scaled copy', () => {
    const n = 120;
    const latent = gaussian(7, n, 2);
    // Map = latent scaled by 3: map distances = 3·δ, a monotone (linear) transform.
    const map = latent.map((value) => 3 * value);
    const result = projectionFidelity(latent, n, 2, map, mulberry32(3), { maxPairs: 4000 });
    expect(result.shepardRho).toBeCloseTo(1, 12);
    expect(result.stress).toBeLessThan(1e-6);
    // A non-linear monotone transform of distances: Spearman sees only the order.
    const delta = Float64Array.from({ length: 500 }, (_, index) => Math.sin(index * 12.9898) * 43758.5453 - Math.floor(Math.sin(index * 12.9898) * 43758.5453));
    expect(spearmanRho(delta, delta.map((value) => Math.exp(5 * value) + value ** 3))).toBe(1);
    expect(spearmanRho(delta, delta.map((value) => -Math.log(value + 1)))).toBe(-1);
  });

  it('average ranks for ties, as scipy.stats.rankdata(method="average") defines them', () => {
    // Worked by hand from the definition: 10 → 1; the two 20s share ranks 2, 3 → 2.5; 30 → 4; the
    // three 40s share 5, 6, 7 → 6.
    expect(Array.from(averageRanks(Float64Array.from([40, 20, 10, 40, 30, 20, 40])))).toEqual([6, 2.5, 1, 6, 4, 2.5, 6]);
  });

  it('stress is scale-invariant, in [0, 1], and equals sin θ between the distance vectors', () => {
    const delta = Float64Array.from([1, 2, 3, 4, 5]);
    const dist = Float64Array.from([1.2, 1.9, 3.3, 3.8, 5.4]);
    const s = kruskalStress(delta, dist);
    expect(kruskalStress(delta.map((v) => v * 10), dist.map((v) => v / 7))).toBeCloseTo(s, 14);
    let dot = 0;
    let dd = 0;
    let ll = 0;
    for (let p = 0; p < 5; p++) {
      dot += (delta[p] as number) * (dist[p] as number);
      dd += (dist[p] as number) ** 2;
      ll += (delta[p] as number) ** 2;
    }
    expect(s).toBeCloseTo(Math.sqrt(1 - (dot * dot) / (dd * ll)), 12);
    expect(s).toBeGreaterThan(0);
    expect(s).toBeLessThan(1);
  });
});

describe('pair sample and determinism', () => {
  it('draws distinct pairs i < j, all pairs when they fit, and the same pairs for the same seed', () => {
    const all = samplePairs(6, 100, mulberry32(1));
    expect(all.i).toHaveLength(15);
    const a = samplePairs(1000, 5000, mulberry32(42));
    const b = samplePairs(1000, 5000, mulberry32(42));
    const c = samplePairs(1000, 5000, mulberry32(43));
    expect(a.i).toEqual(b.i);
    expect(a.j).toEqual(b.j);
    expect(a.i).not.toEqual(c.i);
    const keys = new Set<number>();
    for (let p = 0; p < a.i.length; p++) {
      expect(a.i[p] as number).toBeLessThan(a.j[p] as number);
      keys.add((a.i[p] as number) * 1000 + (a.j[p] as number));
    }
    expect(keys.size).toBe(5000);
  });

  it('projectionFidelity gives identical scores for the same seed; ks ≥ n/2 come back NaN', () => {
    const n = 400;
    const latent = gaussian(11, n, 6, [3, 2, 1, 1, 0.5, 0.5]);
    const map = new Float32Array(n * 2);
    for (let i = 0; i < n; i++) {
      map[2 * i] = latent[6 * i] as number;
      map[2 * i + 1] = latent[6 * i + 1] as number;
    }
    const first = projectionFidelity(latent, n, 6, map, mulberry32(2026), { maxPairs: 3000 });
    const second = projectionFidelity(latent, n, 6, map, mulberry32(2026), { maxPairs: 3000 });
    expect(second).toEqual(first);
    expect(first.perPoint).toHaveLength(n);
    expect(first.pairs).toBe(3000);
    // A different seed draws other pairs: ρ moves, the rank scores do not.
    const other = projectionFidelity(latent, n, 6, map, mulberry32(2027), { maxPairs: 3000 });
    expect(other.shepardRho).not.toBe(first.shepardRho);
    expect(other.trustworthiness).toEqual(first.trustworthiness);

    const small = projectionFidelity(latent.subarray(0, 40 * 6), 40, 6, map.subarray(0, 80), mulberry32(1));
    expect(Array.from(small.ks)).toEqual([5, 15, 50]);
    expect(Number.isNaN(small.trustworthiness[2])).toBe(true);
    expect(Number.isNaN(small.continuity[2])).toBe(true);
    expect(small.trustworthiness[0]).toBeGreaterThan(0);
    expect(small.pairs).toBe(780);
  });
});

describe('sampledTrustworthiness', () => {
  it('equals trustworthiness when every point is a query, and is close on a sample', async () => {
    const { mulberry32: generator, normalGenerator: normals } = await import('@/lib/align/random');
    const { sampledTrustworthiness, trustworthiness: exactT } = await import('@/lib/projection/fidelity');
    const normal = normals(generator(4));
    const n = 400;
    const d = 6;
    const latent = Float32Array.from({ length: n * d }, () => normal());
    // A noisy linear map of the first two coordinates.
    const map = new Float32Array(n * 2);
    for (let i = 0; i < n; i++) {
      map[i * 2] = (latent[i * d] as number) + 0.5 * normal();
      map[i * 2 + 1] = (latent[i * d + 1] as number) + 0.5 * normal();
    }
    const all = Int32Array.from({ length: n }, (_, i) => i);
    const exact = exactT(latent, n, d, map, [15])[0] as number;
    expect(Math.abs(sampledTrustworthiness(latent, n, d, map, 15, all) - exact)).toBeLessThan(1e-12);
    const half = Int32Array.from({ length: 200 }, (_, i) => 2 * i);
    expect(Math.abs(sampledTrustworthiness(latent, n, d, map, 15, half) - exact)).toBeLessThan(0.02);
  });

  it('sampledRankScores equals the exact T, C and kNN preservation when every point is a query', async () => {
    const { mulberry32: generator, normalGenerator: normals } = await import('@/lib/align/random');
    const { sampledRankScores, projectionFidelity: exactAll } = await import('@/lib/projection/fidelity');
    const normal = normals(generator(9));
    const n = 300;
    const d = 4;
    const latent = Float32Array.from({ length: n * d }, () => normal());
    const map = new Float32Array(n * 2);
    for (let i = 0; i < n; i++) {
      map[i * 2] = (latent[i * d] as number) + 0.7 * normal();
      map[i * 2 + 1] = (latent[i * d + 2] as number) + 0.7 * normal();
    }
    const all = Int32Array.from({ length: n }, (_, i) => i);
    const exact = exactAll(latent, n, d, map, generator(1), { metric: 'cosine' });
    const sampled = sampledRankScores(latent, n, d, map, [5, 15, 50], all, { metric: 'cosine' });
    for (let index = 0; index < 3; index++) {
      expect(Math.abs((sampled.trustworthiness[index] as number) - (exact.trustworthiness[index] as number))).toBeLessThan(1e-12);
      expect(Math.abs((sampled.continuity[index] as number) - (exact.continuity[index] as number))).toBeLessThan(1e-12);
    }
    expect(Math.abs(sampled.knnPreservation - exact.knnPreservation)).toBeLessThan(1e-12);
  });
});

describe('mapKnn2d', () => {
  it('equals the exact search on a map without tied distances', async () => {
    const { mulberry32: generator } = await import('@/lib/align/random');
    const { mapKnn2d } = await import('@/lib/projection/map-knn');
    const random = generator(3);
    const n = 2000;
    const map = Float32Array.from({ length: n * 2 }, () => random() * 10);
    const flat = mapKnn2d(map, n, 12);
    const exact = exactKnn(map, n, 2, 12, 'euclidean');
    expect(Array.from(flat.indices)).toEqual(Array.from(exact.indices));
    expect(() => mapKnn2d(map, n, 0)).toThrow(RangeError);
    expect(() => mapKnn2d(Float32Array.of(0, Number.NaN, 1, 1), 2, 1)).toThrow(/non-finite/);
  });
});
