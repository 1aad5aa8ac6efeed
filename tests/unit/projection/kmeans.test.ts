import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { chooseKMeans, kMeans, silhouetteSamples } from '@/lib/projection/kmeans';

const fixtures = path.resolve(import.meta.dirname, '../../fixtures/projection');
const reference = JSON.parse(readFileSync(path.join(fixtures, 'silhouette-reference.json'), 'utf8')) as {
  source: string;
  labels: number[];
  samples: number[];
  score: number;
  kmeansScores: Record<string, number>;
};
const irisRows = readFileSync(path.join(fixtures, 'pca-iris.csv'), 'utf8').trim().split('\n').slice(1);
const iris = Float32Array.from(irisRows.flatMap((line) => line.split(',').map(Number)));
const n = irisRows.length;

describe('silhouette', () => {
  it('equals sklearn.metrics.silhouette_samples on iris labelled by species to 1e-9 (scikit-learn, scripts/reference/silhouette.py)', () => {
    const values = silhouetteSamples(iris, n, 4, Int32Array.from(reference.labels), 3);
    values.forEach((v, i) => expect(Math.abs(v - (reference.samples[i] ?? Number.NaN))).toBeLessThan(1e-9));
    const mean = values.reduce((a, b) => a + b, 0) / n;
    expect(Math.abs(mean - reference.score)).toBeLessThan(1e-9);
  });
});

describe('k-means chosen by silhouette', () => {
  it('on iris picks k = 2 and reaches sklearn KMeans’ mean silhouette for each k within 0.01 (scikit-learn, scripts/reference/silhouette.py)', () => {
    const chosen = chooseKMeans(iris, n, 4, { kMin: 2, kMax: 6 }, mulberry32(1));
    expect(chosen.k).toBe(2);
    for (const [k, score] of Object.entries(reference.kmeansScores)) expect(Math.abs((chosen.scores[k] ?? 0) - score)).toBeLessThan(0.01);
  });

  it('recovers three separated Gaussian clusters exactly, and is deterministic for a seed', () => {
    const normal = normalGenerator(mulberry32(5));
    const data = new Float32Array(300 * 3);
    for (let i = 0; i < 300; i += 1) for (let j = 0; j < 3; j += 1) data[i * 3 + j] = (i % 3) * 10 * (j === i % 3 ? 1 : 0) + normal() * 0.5;
    const a = chooseKMeans(data, 300, 3, { kMin: 2, kMax: 5 }, mulberry32(9));
    expect(a.k).toBe(3);
    const groups = new Map<number, Set<number>>();
    a.labels.forEach((label, i) => groups.set(i % 3, (groups.get(i % 3) ?? new Set()).add(label)));
    expect([...groups.values()].every((s) => s.size === 1)).toBe(true);
    const b = chooseKMeans(data, 300, 3, { kMin: 2, kMax: 5 }, mulberry32(9));
    expect(Array.from(b.labels)).toEqual(Array.from(a.labels));
  });

  it('refuses impossible k', () => {
    expect(() => kMeans(iris, n, 4, 0, mulberry32(1))).toThrow(RangeError);
    expect(() => chooseKMeans(iris, 3, 4, { kMin: 2, kMax: 6 }, mulberry32(1))).not.toThrow();
  });
});
