/**
 * The k nearest neighbours of every point of a 2-D map, for the per-point fidelity of maps too
 * large for the exact O(n²) search (above lib/projections/sampled-fidelity.ts's FIDELITY_MAX_ENTITIES).
 *
 * Why flatbush: a static packed R-tree over Float64 coordinates whose k-nearest query walks boxes
 * in order of distance (a well-known package; no kd-tree of our own needed). Building is
 * O(n log n), each query about O(log n + k); measured here 1,000,000 points at k = 15 in a few
 * seconds on one core (scripts/bench-projection.ts prints it).
 *
 * Ties: flatbush returns points at equal distance in the order of its queue, which is fixed by
 * the input, so the graph is deterministic; it is not knn.ts's (distance, smaller index) order, so
 * where map distances tie exactly the chosen neighbours can differ from the exact search's.
 */
import Flatbush from 'flatbush';
import type { KnnGraph } from './knn';

/**
 * @param map - n × 2 row-major map coordinates (finite).
 * @param n - points, > k.
 * @param k - neighbours per point, ≥ 1; the point itself is left out.
 */
export function mapKnn2d(map: Float32Array, n: number, k: number): KnnGraph {
  if (!Number.isInteger(k) || k < 1 || k >= n) throw new RangeError(`map neighbours: k must be an integer with 1 ≤ k < n = ${n}, got ${k}`);
  if (map.length !== n * 2) throw new RangeError(`map neighbours: expected n × 2 = ${n * 2} coordinates, got ${map.length}`);
  const index = new Flatbush(n);
  for (let i = 0; i < n; i++) {
    const x = map[2 * i] as number;
    const y = map[2 * i + 1] as number;
    if (!Number.isFinite(x) || !Number.isFinite(y)) throw new RangeError(`map neighbours: point ${i} has a non-finite coordinate`);
    index.add(x, y, x, y);
  }
  index.finish();
  const indices = new Int32Array(n * k);
  const distances = new Float32Array(n * k);
  for (let i = 0; i < n; i++) {
    const x = map[2 * i] as number;
    const y = map[2 * i + 1] as number;
    const found = index.neighbors(x, y, k, Infinity, (j) => j !== i);
    for (let s = 0; s < k; s++) {
      const j = found[s] as number;
      indices[i * k + s] = j;
      distances[i * k + s] = Math.hypot((map[2 * j] as number) - x, (map[2 * j + 1] as number) - y);
    }
  }
  return { n, k, metric: 'euclidean', indices, distances };
}
