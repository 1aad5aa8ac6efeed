/**
 * Orthogonal Procrustes for two factor matrices of the same shape (n entities × k dimensions,
 * rows matched by entity). Latent factors are identified only up to rotation and reflection (and
 * scale), so two fits are compared after rotating one onto the other.
 *
 * The maths follows SciPy exactly, and the tests check it against SciPy's output
 * (scipy.linalg.orthogonal_procrustes, scipy.spatial.procrustes; see scripts/reference/procrustes.py):
 *   - the orthogonal R minimising ‖A R − B‖_F is R = U Vᵀ for the SVD Aᵀ B = U S Vᵀ
 *     (Schönemann 1966); reflections are allowed (det R may be −1).
 *   - the minimum is ‖A‖² + ‖B‖² − 2·trace(S); trace(S), the sum of singular values, is `scale`.
 * Cost: O(n·k²) for Aᵀ B plus O(k³) for the k × k SVD.
 */
import {
  type RealMatrix,
  addCentredCrossProduct,
  addCrossProduct,
  checkFinite,
  checkShape,
  columnMeans,
  multiplyInto,
  polarOrthogonal,
  powerOfTwoScale,
  shiftedCopy,
  sumOfSquares,
} from './matrix';

export interface OrthogonalProcrustesResult {
  /** k × k orthogonal matrix, row-major; A·rotation is the best orthogonal fit to B. */
  rotation: Float64Array;
  /** Sum of the singular values of Aᵀ B, as SciPy returns it; the optimal scale for A R ≈ s·B is scale / ‖A‖². */
  scale: number;
}

/**
 * The orthogonal R (reflections allowed) minimising ‖A R − B‖_F, as
 * `scipy.linalg.orthogonal_procrustes(A, B)`. No centring and no scaling: do those first if wanted.
 *
 * @param a - A, n × k row-major: the matrix to be rotated.
 * @param b - B, n × k row-major: the target, rows matched to A's.
 * @param n - rows (entities), ≥ 1.
 * @param k - columns (latent dimensions), ≥ 1.
 * @throws RangeError on a wrong length or a non-finite value.
 */
export function orthogonalProcrustes(a: RealMatrix, b: RealMatrix, n: number, k: number): OrthogonalProcrustesResult {
  checkShape('orthogonalProcrustes: a', a, n, k);
  checkShape('orthogonalProcrustes: b', b, n, k);
  checkFinite('orthogonalProcrustes: a', a, n, k);
  checkFinite('orthogonalProcrustes: b', b, n, k);
  // Exact power-of-two rescaling of A and B before forming AᵀB, so that tiny or huge factor values
  // neither underflow nor overflow in the products; R does not depend on it, scale is restored.
  const aFactor = powerOfTwoScale(a);
  const bFactor = powerOfTwoScale(b);
  const cross = new Float64Array(k * k);
  addCentredCrossProduct(cross, a, b, n, k, null, null, aFactor, bFactor);
  const { rotation, scale } = polarOrthogonal(cross, k);
  return { rotation, scale: scale * aFactor * bFactor };
}

export interface ProcrustesDisparityResult {
  /**
   * Sum of squared differences between the standardised reference and the aligned matrix, in
   * [0, 1]: 0 when one is a rotated, reflected, scaled and shifted copy of the other, near 1 when
   * they are unrelated. Symmetric in its arguments. Equals 1 − (sum of singular values)².
   */
  disparity: number;
  /**
   * k × k orthogonal matrix, row-major, that rotates the standardised `b` onto the standardised
   * `a`: aligned = standardised(b) · rotation · scale. (SciPy's R from orthogonal_procrustes(mtx1,
   * mtx2), transposed, because SciPy applies it as mtx2 @ R.T.)
   */
  rotation: Float64Array;
  /** Scale applied to the rotated standardised `b` (SciPy's s); in [0, 1]. */
  scale: number;
  /** n × k: `b` centred, scaled to unit Frobenius norm, rotated and scaled onto `reference` (SciPy's mtx2). */
  aligned: Float64Array;
  /** n × k: `a` centred and scaled to unit Frobenius norm (SciPy's mtx1). */
  reference: Float64Array;
}

/**
 * Procrustes disparity between two factor sets, as `scipy.spatial.procrustes(a, b)`:
 * both are centred (column means removed) and scaled to unit Frobenius norm, then `b` is rotated
 * (reflections allowed) and scaled onto `a`. Argument order is SciPy's: `a` is data1, the
 * reference; `b` is data2, the one moved. The disparity itself does not depend on the order.
 *
 * Used for "align to another factor set" to report how different two fits are after removing
 * what the model cannot identify (rotation, reflection, scale) and the location.
 *
 * @param a - reference, n × k row-major (SciPy's data1).
 * @param b - matrix to align onto `a`, n × k row-major, rows matched to `a`'s (SciPy's data2).
 * @param n - rows (entities), ≥ 1.
 * @param k - columns (latent dimensions), ≥ 1.
 * @throws RangeError on a wrong length, a non-finite value, or a matrix whose rows are all equal
 *   (zero norm after centring; SciPy raises "Input matrices must contain >1 unique points").
 */
export function procrustesDisparity(a: RealMatrix, b: RealMatrix, n: number, k: number): ProcrustesDisparityResult {
  checkShape('procrustesDisparity: a', a, n, k);
  checkShape('procrustesDisparity: b', b, n, k);
  checkFinite('procrustesDisparity: a', a, n, k);
  checkFinite('procrustesDisparity: b', b, n, k);
  const reference = standardise('procrustesDisparity: a', a, n, k);
  // Standardised b, rotated in place below: two n × k float64 arrays in all, both returned.
  const aligned = standardise('procrustesDisparity: b', b, n, k);
  // Rotating b onto a: minimise ‖B R − A‖, i.e. the polar factor of Bᵀ A (= SciPy's R transposed).
  const cross = new Float64Array(k * k);
  addCrossProduct(cross, aligned, reference, n, k);
  const { rotation, scale } = polarOrthogonal(cross, k);
  multiplyInto(aligned, aligned, rotation, n, k);
  let disparity = 0;
  for (let index = 0; index < aligned.length; index++) {
    aligned[index] = (aligned[index] as number) * scale;
    const difference = (reference[index] as number) - (aligned[index] as number);
    disparity += difference * difference;
  }
  return { disparity, rotation, scale, aligned, reference };
}

/** Centred copy scaled to unit Frobenius norm, as scipy.spatial.procrustes does. */
function standardise(name: string, values: RealMatrix, n: number, k: number): Float64Array {
  const centred = shiftedCopy(values, n, k, columnMeans(values, n, k));
  const norm = Math.sqrt(sumOfSquares(centred));
  if (norm === 0) throw new RangeError(`${name}: all rows are equal, so there is nothing to align (need more than one distinct row)`);
  for (let index = 0; index < centred.length; index++) centred[index] = (centred[index] as number) / norm;
  return centred;
}

export interface AlignOntoOptions {
  /**
   * Whether to remove each matrix's column means before fitting the rotation (default true).
   * true: the rotation is fitted to the centred matrices and the result is
   *   (source − mean(source))·R + mean(target), i.e. rotated about the source's centroid and placed
   *   at the target's centroid — the usual choice when comparing two fits, whose locations may
   *   differ by what the model's main effects absorbed.
   * false: a pure rotation about the origin, source·R, for factors whose origin is meaningful
   *   (e.g. ideal points anchored at 0).
   */
  centre?: boolean;
}

/**
 * Rotates (and possibly reflects) `source` onto `target` without scaling, so that the result is
 * in the target's coordinate frame and can be drawn on the same map; scale is kept because in a
 * model's product the factors' length is meaningful. See {@link AlignOntoOptions.centre} for
 * the location.
 *
 * @param source - n × k row-major, the factor set to move.
 * @param target - n × k row-major, rows matched to `source`'s by entity id.
 * @param n - rows (entities), ≥ 1.
 * @param k - columns (latent dimensions), ≥ 1.
 * @returns the aligned source, n × k row-major float64.
 */
export function alignOnto(source: RealMatrix, target: RealMatrix, n: number, k: number, options: AlignOntoOptions = {}): Float64Array {
  checkShape('alignOnto: source', source, n, k);
  checkShape('alignOnto: target', target, n, k);
  checkFinite('alignOnto: source', source, n, k);
  checkFinite('alignOnto: target', target, n, k);
  const centre = options.centre ?? true;
  const targetMeans = centre ? columnMeans(target, n, k) : null;
  const sourceMeans = centre ? columnMeans(source, n, k) : null;
  // Centred and rescaled on the fly (no n × k copies); powers of two keep the rescaling exact.
  const cross = new Float64Array(k * k);
  addCentredCrossProduct(cross, source, target, n, k, sourceMeans, targetMeans, powerOfTwoScale(source), powerOfTwoScale(target));
  const { rotation } = polarOrthogonal(cross, k);
  const out = shiftedCopy(source, n, k, sourceMeans);
  multiplyInto(out, out, rotation, n, k);
  if (targetMeans !== null) {
    for (let i = 0; i < n; i++) for (let j = 0; j < k; j++) out[i * k + j] = (out[i * k + j] as number) + (targetMeans[j] as number);
  }
  return out;
}
