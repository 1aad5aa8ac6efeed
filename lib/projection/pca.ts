/**
 * Exact principal component analysis (PCA) of a factor set, with a model that keeps the loadings
 * so that other points — posterior draws, partner factors, entities added later — can be projected
 * onto the same axes.
 *
 * Method (the same quantities as scikit-learn's sklearn.decomposition.PCA, checked against it in
 * tests/unit/projection/pca-reference.test.ts):
 *   1. column means μ (float64 sums);
 *   2. optionally column scales s = population standard deviation (divisor n, as scikit-learn's
 *      StandardScaler; a constant column keeps s = 1, as StandardScaler does, so it stays 0);
 *   3. the d × d covariance C = Zᵀ Z / (n − 1) of the centred (and scaled) rows Z, accumulated in
 *      float64 over blocks of rows, so that the n × d input is never copied whole;
 *   4. the symmetric eigendecomposition C = V Λ Vᵀ (ml-matrix's EigenvalueDecomposition with
 *      assumeSymmetric: Householder tridiagonalisation + implicit QL, i.e. EISPACK tred2/tql2);
 *   5. components = the eigenvectors of the largest eigenvalues, in decreasing order, each with a
 *      fixed sign (below); explained variance = the eigenvalue (divisor n − 1, scikit-learn's
 *      explained_variance_); ratio = eigenvalue / trace(C) (scikit-learn's
 *      explained_variance_ratio_, whose denominator is the total variance, all components).
 *
 * Why the covariance and not an SVD of the data: the data has n rows (up to 10⁶) and d columns (a
 * few to a few hundred latent dimensions). Forming C costs n·d²/2 multiply-adds in one streaming
 * pass over typed arrays, and its eigendecomposition O(d³) is negligible; an SVD of the n × d matrix
 * costs several times more arithmetic and, with ml-matrix, a number[][] copy of all the data. The
 * price is accuracy of the *smallest* eigenvalues: forming C squares the condition number, so an
 * eigenvalue λ carries an absolute error of about ε·λ_max (ε = 2.2e-16), i.e. a relative error
 * ε·λ_max/λ. For the leading components that a map uses this is far below float32 resolution,
 * which is what factor sets are stored in; components whose variance is below ~1e-10 of the
 * largest should not be interpreted (their directions are noise, as with any method in float64).
 *
 * Sign convention (deterministic): an eigenvector's sign is arbitrary, so each component is
 * flipped so that its loading of largest absolute value is positive (the first such loading when
 * two are exactly equal). This is scikit-learn's svd_flip with u_based_decision=False, which its
 * PCA uses from version 1.5 on; older versions (Debian's 1.2.1 among them) decide on the scores
 * instead, so their components can differ from ours by a sign per component — the tests compare
 * up to that sign. Deciding on the loadings means the sign does not depend on which rows were
 * fitted beyond their effect on the loadings themselves.
 *
 * Complexity: two passes over the data (means; cross-products), n·d + n·d²/2 multiply-adds, plus
 * O(d³) for the eigendecomposition; memory O(d² + 256·d) float64 besides the input.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';

/** A row-major real matrix: Float32Array is what factor sets are stored in, Float64Array what we compute in. */
export type PcaInput = Float32Array | Float64Array;

export interface PcaOptions {
  /**
   * Number of components to keep; integer in [1, min(n, d)], default 2 (a map). More costs
   * nothing measurable at fit time and d·k per projected row; components beyond rank n − 1 have
   * zero variance and arbitrary (but deterministic) directions.
   */
  components?: number;
  /**
   * Divide each centred column by its population standard deviation before the decomposition
   * (PCA of the correlation structure), default false. Use it when latent dimensions have
   * unrelated scales; leave it off for factors whose scale is meaningful (most fitted factors:
   * the model put the variance where it is), because standardising inflates dimensions that are
   * almost pure noise to the same weight as the dominant ones.
   */
  standardise?: boolean;
}

export const PCA_DEFAULTS = { components: 2, standardise: false } as const satisfies Required<PcaOptions>;

/** A fitted PCA: everything needed to project further points onto the same axes. */
export interface PcaModel {
  /** d: number of input columns. */
  readonly nFeatures: number;
  /** k: number of components kept. */
  readonly nComponents: number;
  /** n: number of rows fitted. */
  readonly nSamples: number;
  /** Whether columns were divided by their standard deviation. */
  readonly standardise: boolean;
  /** d column means subtracted before projecting. */
  readonly mean: Float64Array;
  /** d column divisors after centring: population sd when standardised (1 for constant columns), else all 1. */
  readonly scale: Float64Array;
  /** k × d row-major unit-length loadings, in decreasing order of variance (scikit-learn's components_). */
  readonly components: Float64Array;
  /** k variances of the scores along each component, divisor n − 1 (scikit-learn's explained_variance_). */
  readonly explainedVariance: Float64Array;
  /** k shares of the total variance, each in [0, 1], summing to ≤ 1 (scikit-learn's explained_variance_ratio_; all 0 for constant data). */
  readonly explainedVarianceRatio: Float64Array;
  /** Total variance trace(C) of the (scaled) data, divisor n − 1: the denominator of the ratios. */
  readonly totalVariance: number;
}

/** Rows per block when accumulating Zᵀ Z: a 256 × d float64 block stays in L2 cache for d ≤ 512. */
const BLOCK_ROWS = 256;

/**
 * Fits PCA to the n × d row-major `data`.
 *
 * @param data - n·d values, row i at [i·d, (i+1)·d); all finite.
 * @param n - number of rows, integer ≥ 2 (the variance uses the divisor n − 1).
 * @param d - number of columns, integer ≥ 1.
 * @throws RangeError for a wrong shape, a non-finite value (naming its [row, column]) or a bad option.
 */
export function fitPca(data: PcaInput, n: number, d: number, options: PcaOptions = {}): PcaModel {
  const components = options.components ?? PCA_DEFAULTS.components;
  const standardise = options.standardise ?? PCA_DEFAULTS.standardise;
  checkMatrix('fitPca', data, n, d);
  if (n < 2) throw new RangeError(`fitPca: at least 2 rows are needed for a variance, got ${n}`);
  if (!Number.isInteger(components) || components < 1 || components > Math.min(n, d)) {
    throw new RangeError(`fitPca: components must be an integer in [1, min(n, d)] = [1, ${Math.min(n, d)}], got ${components}`);
  }

  const mean = columnMeans(data, n, d);
  const covariance = centredCrossProduct(data, n, d, mean);
  const scale = new Float64Array(d).fill(1);
  if (standardise) {
    const eps = Number.EPSILON;
    for (let j = 0; j < d; j++) {
      const variance = (covariance[j * d + j] as number) / n;
      const mu = mean[j] as number;
      // scikit-learn's _is_constant_feature: a variance within its own rounding error counts as 0,
      // and such a column keeps scale 1 (StandardScaler's _handle_zeros_in_scale).
      const roundingBound = n * eps * variance + (n * mu * eps) ** 2;
      if (variance > roundingBound) scale[j] = Math.sqrt(variance);
    }
    for (let a = 0; a < d; a++) {
      for (let b = 0; b < d; b++) covariance[a * d + b] = (covariance[a * d + b] as number) / ((scale[a] as number) * (scale[b] as number));
    }
  }
  let totalVariance = 0;
  for (let index = 0; index < d * d; index++) covariance[index] = (covariance[index] as number) / (n - 1);
  for (let j = 0; j < d; j++) totalVariance += covariance[j * d + j] as number;

  const { values, vectors } = symmetricEigen(covariance, d);
  const order = Array.from({ length: d }, (_, index) => index).sort((p, q) => (values[q] as number) - (values[p] as number) || p - q);

  const loadings = new Float64Array(components * d);
  const explainedVariance = new Float64Array(components);
  const explainedVarianceRatio = new Float64Array(components);
  for (let c = 0; c < components; c++) {
    const column = order[c] as number;
    // Rounding can leave the eigenvalue of an exactly singular direction at −1e-17; a variance is ≥ 0.
    const variance = Math.max(0, values[column] as number);
    explainedVariance[c] = variance;
    explainedVarianceRatio[c] = totalVariance > 0 ? variance / totalVariance : 0;
    let largest = 0;
    let sign = 1;
    for (let j = 0; j < d; j++) {
      const loading = vectors[j * d + column] as number;
      if (Math.abs(loading) > largest) {
        largest = Math.abs(loading);
        sign = loading < 0 ? -1 : 1;
      }
    }
    for (let j = 0; j < d; j++) loadings[c * d + j] = sign * (vectors[j * d + column] as number);
  }

  return {
    nFeatures: d,
    nComponents: components,
    nSamples: n,
    standardise,
    mean,
    scale,
    components: loadings,
    explainedVariance,
    explainedVarianceRatio,
    totalVariance,
  };
}

/**
 * Scores of n rows on a fitted model's components: ((x − mean) / scale) · componentsᵀ, computed in
 * float64 and stored as float32 (the storage type of coordinates).
 *
 * @param model - from fitPca.
 * @param data - n × model.nFeatures row-major values (the fitted rows, draws, or other entities in the same latent space).
 * @param n - number of rows, integer ≥ 1.
 * @returns n × model.nComponents row-major scores.
 */
export function transformPca(model: PcaModel, data: PcaInput, n: number): Float32Array {
  const d = model.nFeatures;
  const k = model.nComponents;
  checkMatrix('transformPca', data, n, d);
  const { mean, scale, components } = model;
  const out = new Float32Array(n * k);
  const row = new Float64Array(d);
  for (let i = 0; i < n; i++) {
    // Centre before multiplying: x·w − μ·w would cancel catastrophically for large means.
    for (let j = 0; j < d; j++) row[j] = ((data[i * d + j] as number) - (mean[j] as number)) / (scale[j] as number);
    for (let c = 0; c < k; c++) {
      let total = 0;
      for (let j = 0; j < d; j++) total += (row[j] as number) * (components[c * d + j] as number);
      out[i * k + c] = total;
    }
  }
  return out;
}

function checkMatrix(name: string, data: PcaInput, n: number, d: number): void {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`${name}: the number of rows must be a positive integer, got ${n}`);
  if (!Number.isInteger(d) || d < 1) throw new RangeError(`${name}: the number of columns must be a positive integer, got ${d}`);
  if (data.length !== n * d) throw new RangeError(`${name}: expected ${n * d} values for a ${n} × ${d} matrix, got ${data.length}`);
  for (let index = 0; index < data.length; index++) {
    const value = data[index] as number;
    if (!Number.isFinite(value)) {
      throw new RangeError(`${name}: value at [${Math.floor(index / d)}, ${index % d}] is not finite (${value})`);
    }
  }
}

function columnMeans(data: PcaInput, n: number, d: number): Float64Array {
  const sums = new Float64Array(d);
  for (let i = 0; i < n; i++) {
    const offset = i * d;
    for (let j = 0; j < d; j++) sums[j] = (sums[j] as number) + (data[offset + j] as number);
  }
  for (let j = 0; j < d; j++) sums[j] = (sums[j] as number) / n;
  return sums;
}

/**
 * Zᵀ Z for Z = data − mean, d × d row-major (full, symmetric), in float64.
 *
 * Rows are taken BLOCK_ROWS at a time and stored column-major (one contiguous float64 run per
 * column), so each of the d(d+1)/2 entries is a dot product of two contiguous runs — the access
 * pattern V8 compiles to tight loops — instead of n rank-one updates that touch all of C per row.
 */
function centredCrossProduct(data: PcaInput, n: number, d: number, mean: Float64Array): Float64Array {
  const product = new Float64Array(d * d);
  const block = new Float64Array(BLOCK_ROWS * d);
  for (let start = 0; start < n; start += BLOCK_ROWS) {
    const m = Math.min(BLOCK_ROWS, n - start);
    for (let r = 0; r < m; r++) {
      const offset = (start + r) * d;
      for (let j = 0; j < d; j++) block[j * BLOCK_ROWS + r] = (data[offset + j] as number) - (mean[j] as number);
    }
    for (let a = 0; a < d; a++) {
      const baseA = a * BLOCK_ROWS;
      for (let b = a; b < d; b++) {
        const baseB = b * BLOCK_ROWS;
        // Four partial sums: shorter dependency chains, and slightly better rounding than one.
        let s0 = 0;
        let s1 = 0;
        let s2 = 0;
        let s3 = 0;
        let r = 0;
        for (; r + 3 < m; r += 4) {
          s0 += (block[baseA + r] as number) * (block[baseB + r] as number);
          s1 += (block[baseA + r + 1] as number) * (block[baseB + r + 1] as number);
          s2 += (block[baseA + r + 2] as number) * (block[baseB + r + 2] as number);
          s3 += (block[baseA + r + 3] as number) * (block[baseB + r + 3] as number);
        }
        for (; r < m; r++) s0 += (block[baseA + r] as number) * (block[baseB + r] as number);
        product[a * d + b] = (product[a * d + b] as number) + (s0 + s1 + (s2 + s3));
      }
    }
  }
  for (let a = 0; a < d; a++) {
    for (let b = 0; b < a; b++) product[a * d + b] = product[b * d + a] as number;
  }
  return product;
}

/**
 * Eigenvalues and eigenvectors (column j of the d × d row-major `vectors` belongs to values[j]) of
 * a symmetric d × d matrix. The d × d copy into ml-matrix's Matrix is small (d ≤ a few hundred) and
 * off the per-row path.
 *
 * The matrix is first divided by its largest |entry| and entries below 1e-30 of it are set to 0.
 * ml-matrix's tql2 (from JAMA) tests convergence against a scale of the matrix and can run past
 * the end of its arrays when subnormal entries never meet that test (found by the property test:
 * columns of values ~1e-323). Dropping entries 1e-30 of the largest moves an eigenvalue by at most
 * d·1e-30 of it, far below float64 rounding (2.2e-16 of it).
 */
function symmetricEigen(symmetric: Float64Array, d: number): { values: Float64Array; vectors: Float64Array } {
  let largest = 0;
  for (let index = 0; index < d * d; index++) largest = Math.max(largest, Math.abs(symmetric[index] as number));
  if (largest === 0) {
    // All variances are zero: any orthonormal basis is an eigenbasis; the identity is deterministic.
    const vectors = new Float64Array(d * d);
    for (let j = 0; j < d; j++) vectors[j * d + j] = 1;
    return { values: new Float64Array(d), vectors };
  }
  const scaled = new Float64Array(d * d);
  for (let index = 0; index < d * d; index++) {
    const value = (symmetric[index] as number) / largest;
    scaled[index] = Math.abs(value) < 1e-30 ? 0 : value;
  }
  const decomposition = new EigenvalueDecomposition(Matrix.from1DArray(d, d, scaled), { assumeSymmetric: true });
  const values = Float64Array.from(decomposition.realEigenvalues, (value) => value * largest);
  const vectors = Float64Array.from(decomposition.eigenvectorMatrix.to1DArray());
  return { values, vectors };
}
