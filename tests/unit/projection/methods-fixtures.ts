/**
 * Seeded test data for the projection-method tests (methods-*.test.ts): a Gaussian mixture drawn
 * with lib/align/random.ts, so every run sees the same points.
 */
import { mulberry32, normalGenerator } from '@/lib/align/random';

/**
 * `clusters` spherical Gaussian clusters of `perCluster` points in `d` dimensions, unit standard
 * deviation, centres drawn N(0, separation²) per coordinate. With separation 6 in 10-D the centres
 * lie ~27 apart against a within-cluster spread of ~4.5: well separated, as a map should show.
 * Rows are in cluster order; `labels` gives each row's cluster.
 */
export function gaussianMixture(seed: number, clusters = 3, perCluster = 100, d = 10, separation = 6): { data: Float32Array; n: number; d: number; labels: Int32Array } {
  const normal = normalGenerator(mulberry32(seed));
  const n = clusters * perCluster;
  const data = new Float32Array(n * d);
  const labels = new Int32Array(n);
  for (let c = 0; c < clusters; c++) {
    const centre = Float64Array.from({ length: d }, () => separation * normal());
    for (let p = 0; p < perCluster; p++) {
      const row = c * perCluster + p;
      labels[row] = c;
      for (let j = 0; j < d; j++) data[row * d + j] = (centre[j] as number) + normal();
    }
  }
  return { data, n, d, labels };
}

/** True when two typed arrays hold the same values bit for bit (NaN-safe, −0 ≠ +0). */
export function bitIdentical(a: Float32Array, b: Float32Array): boolean {
  if (a.length !== b.length) return false;
  const x = new Uint32Array(a.buffer, a.byteOffset, a.length);
  const y = new Uint32Array(b.buffer, b.byteOffset, b.length);
  for (let index = 0; index < x.length; index++) if (x[index] !== y[index]) return false;
  return true;
}
