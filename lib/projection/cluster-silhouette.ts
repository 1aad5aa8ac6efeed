/**
 * Silhouettes of a partition with noise (HDBSCAN's label −1), for cluster proposals.
 *
 * Noise points are left out entirely: they get no silhouette (NaN) and do not count as a cluster
 * or as members of one when the others are scored. Why: the silhouette compares a point's mean
 * distance to its own cluster with that to the nearest other cluster; noise is not a cluster (its
 * points are scattered, so as a "cluster" it would have a huge within-distance and pull every
 * neighbouring cluster's b(i) down), and scoring noise points against the clusters would
 * penalise HDBSCAN for exactly the points it declined to assign. The price: the mean silhouette of
 * an HDBSCAN proposal describes only the clustered share of the entities, so it is reported with
 * that share (noiseShare) and is not comparable one-to-one with a k-means silhouette over all.
 *
 * Otherwise as sklearn.metrics.silhouette_samples (Euclidean; 0 for a point alone in its
 * cluster), via silhouetteSamples in kmeans.ts; above SILHOUETTE_MAX_POINTS clustered points it
 * scores a seeded sample of them (each against all clustered points).
 */
import type { UniformGenerator } from '../align/random';
import { SILHOUETTE_MAX_POINTS, silhouetteSamples } from './kmeans';

export interface NoisySilhouette {
  /** Per entity; NaN for noise, for entities outside the sample, and when fewer than 2 clusters. */
  perPoint: Float32Array;
  /** Mean over the scored clustered entities; null with fewer than 2 clusters. */
  mean: number | null;
  sampled: boolean;
}

/**
 * @param labels - per entity 0 … clusters − 1, or −1 for noise.
 * @param random - seeded generator for the sample (consumed only above SILHOUETTE_MAX_POINTS).
 */
export function silhouetteExcludingNoise(data: Float32Array, n: number, d: number, labels: Int32Array, clusters: number, random: UniformGenerator): NoisySilhouette {
  const perPoint = new Float32Array(n).fill(Number.NaN);
  const members: number[] = [];
  for (let i = 0; i < n; i++) if ((labels[i] as number) >= 0) members.push(i);
  const m = members.length;
  if (clusters < 2 || m < 3) return { perPoint, mean: null, sampled: false };
  const subset = new Float32Array(m * d);
  const subsetLabels = new Int32Array(m);
  members.forEach((i, r) => {
    subset.set(data.subarray(i * d, (i + 1) * d), r * d);
    subsetLabels[r] = labels[i] as number;
  });
  let sample: Int32Array | undefined;
  const sampled = m > SILHOUETTE_MAX_POINTS;
  if (sampled) {
    // Partial Fisher–Yates, as chooseKMeans does.
    const all = Int32Array.from({ length: m }, (_, r) => r);
    for (let r = 0; r < SILHOUETTE_MAX_POINTS; r++) {
      const s = r + Math.floor(random() * (m - r));
      const t = all[r] as number;
      all[r] = all[s] as number;
      all[s] = t;
    }
    sample = all.slice(0, SILHOUETTE_MAX_POINTS).sort();
  }
  const values = silhouetteSamples(subset, m, d, subsetLabels, clusters, sample);
  const scored = sample ?? Int32Array.from({ length: m }, (_, r) => r);
  let sum = 0;
  scored.forEach((r, at) => {
    const value = values[at] as number;
    perPoint[members[r] as number] = value;
    sum += value;
  });
  return { perPoint, mean: sum / scored.length, sampled };
}
