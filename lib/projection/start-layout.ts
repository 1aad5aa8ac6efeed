/**
 * Deterministic start layouts for the iterative methods: the first two principal components of the
 * factor rows, rescaled to the convention of the reference implementation each method follows.
 */
import { fitPca, transformPca } from './pca';

/**
 * The n × 2 PCA scores (float64) of the rows, or of the L2-normalised rows when `unitRows` (the
 * geometry cosine distances describe: 1 − cos θ = ‖x/‖x‖ − y/‖y‖‖² / 2). Rows of zero norm stay 0.
 */
export function pcaScores(data: Float32Array, n: number, d: number, unitRows = false): Float64Array {
  let rows: Float32Array | Float64Array = data;
  if (unitRows) {
    const unit = new Float64Array(n * d);
    for (let i = 0; i < n; i++) {
      let squares = 0;
      for (let j = 0; j < d; j++) squares += (data[i * d + j] as number) ** 2;
      const scale = squares > 0 ? 1 / Math.sqrt(squares) : 0;
      for (let j = 0; j < d; j++) unit[i * d + j] = (data[i * d + j] as number) * scale;
    }
    rows = unit;
  }
  // One latent dimension gives one component; the second coordinate is then 0 (noise added by callers).
  const components = Math.min(2, d, n);
  const model = fitPca(rows, n, d, { components });
  const scores = transformPca(model, rows, n);
  const out = new Float64Array(n * 2);
  for (let i = 0; i < n; i++) for (let c = 0; c < components; c++) out[i * 2 + c] = scores[i * components + c] as number;
  return out;
}
