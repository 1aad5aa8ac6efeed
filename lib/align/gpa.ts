/**
 * Generalised Procrustes analysis (GPA) of posterior draws of a factor matrix.
 *
 * Each posterior draw of a latent-factor model may sit in its own rotation or reflection of the
 * latent space (the likelihood cannot tell them apart), and different chains often settle in
 * different ones. Averaging such draws produces mush; GPA first rotates every draw onto a common
 * mean (Gower 1975, "Generalized Procrustes analysis", Psychometrika 40; Gower & Dijksterhuis
 * 2004, "Procrustes Problems", ch. 9):
 *
 *   start with M = draw 0;
 *   repeat: R_d = argmin over orthogonal R of ‖X_d R − M‖ (orthogonal Procrustes, reflections allowed);
 *           M   = mean over d of X_d R_d;
 *   until the relative change in ‖M‖² is below `tolerance`, or `maxIterations` passes.
 *
 * Σ_d ‖X_d R_d − M‖² = Σ_d ‖X_d‖² − D·‖M‖² when M is the mean of the rotated draws, so each
 * pass can only increase ‖M‖²; its relative change is therefore the convergence measure.
 *
 * Choices, and why:
 *   - Orthogonal rotations with reflections (O(K), not SO(K)): a sign flip of a dimension is as
 *     unidentified as a rotation.
 *   - No scaling: in a model's product (γ_i·δ_j, ideal-point distances) the factors' length is
 *     meaningful and, for a fixed model, is identified once the rotation is fixed.
 *   - No per-draw translation by default: models usually fix the location of latent factors (a
 *     prior centred at 0, main effects carrying the means), and shifting γ changes γ_i·δ_j. Set
 *     `centre: true` to remove each draw's column means first (for location-free embeddings).
 *   - Start from draw 0: deterministic, and the result is expressed in (approximately) draw 0's
 *     frame. GPA's fixed point does not depend on the start except for that global rotation, but
 *     an unrepresentative first draw (an early, unconverged sample) can cost a few more passes —
 *     drop warm-up draws before aligning.
 *   - Statistics in float64; outputs as Float32Array, the storage type of factor sets.
 *
 * Complexity per pass: O(D·N·K²) for the cross-products Xᵈᵀ M and the products X_d R_d, plus
 * O(D·K³) for the D SVDs of K × K matrices; one more O(D·N·K²) pass computes the aligned draws,
 * sd and spread. Memory: the D × N × K Float32 output plus O(N·K + D·K²) float64 working space
 * (draws are never copied to float64 as a whole).
 */
import { type RealMatrix, addCrossProduct, addProductInto, checkFinite, checkShape, polarOrthogonal, sumOfSquares } from './matrix';

export interface GeneralisedProcrustesOptions {
  /**
   * Most passes (each: fit D rotations, recompute the mean); integer ≥ 1, default 100. Well-behaved
   * draws converge in 2–10 passes; a cap guards against slow creeping when the mean is nearly
   * degenerate (two dimensions with almost equal spread). Higher costs time only.
   */
  maxIterations?: number;
  /**
   * Stop when |‖M‖² − ‖M_prev‖²| ≤ tolerance·‖M_prev‖² between passes; ≥ 0, default 1e-9.
   * Smaller is more exact and may need more passes; values below ~1e-14 cannot be met in float64
   * and then run to `maxIterations` (reported as converged: false). 1e-9 changes the mean far
   * below float32's resolution, which is what it is stored in.
   */
  tolerance?: number;
  /**
   * Remove each draw's column means before aligning (default false; see the module comment).
   * Not allowed together with `partner`, because centring changes the products γ_i·δ_j.
   */
  centre?: boolean;
  /**
   * Joint alignment with a second factor matrix from the same fit (e.g. column factors δ when
   * `draws` are the row factors γ): `draws` is D × n × K draw-major, with the same D and K. Only
   * the product γ_i·δ_j is identified, and it is unchanged by applying one orthogonal R to both
   * (γR·(δR)ᵀ = γδᵀ), so draw d gets one rotation, fitted on the stacked rows [A_d; P_d] against
   * [M_A; M_P]. Each row of either matrix weighs the same; if one matrix has many more rows or
   * much larger values it dominates the fit.
   */
  partner?: { draws: RealMatrix; n: number };
}

/** Aligned draws of one factor matrix and their per-entity summaries. */
export interface AlignedDraws {
  /** N × K aligned posterior mean (the factor set's values). */
  mean: Float32Array;
  /** N × K posterior standard deviation per dimension of the aligned draws (divisor D − 1; 0 when D = 1). */
  sd: Float32Array;
  /** N: mean Euclidean distance of an entity's aligned draws from its aligned mean (one uncertainty figure per point). */
  spread: Float32Array;
  /** D × N × K aligned draws, draw-major. */
  aligned: Float32Array;
}

export interface GeneralisedProcrustesResult extends AlignedDraws {
  /** Passes run (each fits D rotations and recomputes the mean). */
  iterations: number;
  /** Whether the tolerance was met within maxIterations. */
  converged: boolean;
  /** D × K × K: rotations[d] is the orthogonal R_d with aligned_d = draw_d · R_d (after centring, if asked). */
  rotations: Float64Array;
  /** The partner's aligned draws, under the same rotations, when `options.partner` was given. */
  partner?: AlignedDraws;
}

export const GPA_DEFAULTS = { maxIterations: 100, tolerance: 1e-9 } as const;

/** One factor matrix being aligned: its draws, and the running mean and sum in float64. */
interface Block {
  draws: RealMatrix;
  n: number;
  /** D × K column means per draw when centring, else null. */
  drawMeans: Float64Array | null;
  reference: Float64Array;
  /** Column sums of `reference` (1ᵀM), for the centring correction. */
  referenceTotals: Float64Array;
  sum: Float64Array;
}

/**
 * Aligns posterior draws by generalised Procrustes analysis; see the module comment for the
 * algorithm and its choices.
 *
 * @param draws - D × N × K draw-major: draw d, entity i, dimension j at (d·N + i)·K + j.
 * @param d - number of draws D, ≥ 1.
 * @param n - number of entities N, ≥ 1.
 * @param k - number of latent dimensions K, ≥ 1.
 * @param options - see {@link GeneralisedProcrustesOptions}.
 * @throws RangeError on wrong lengths, non-finite values, bad options, or centre with partner.
 */
export function generalisedProcrustes(
  draws: RealMatrix,
  d: number,
  n: number,
  k: number,
  options: GeneralisedProcrustesOptions = {},
): GeneralisedProcrustesResult {
  const maxIterations = options.maxIterations ?? GPA_DEFAULTS.maxIterations;
  const tolerance = options.tolerance ?? GPA_DEFAULTS.tolerance;
  const centre = options.centre ?? false;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    throw new RangeError(`generalisedProcrustes: maxIterations must be an integer ≥ 1, got ${maxIterations}`);
  }
  if (!Number.isFinite(tolerance) || tolerance < 0) throw new RangeError(`generalisedProcrustes: tolerance must be finite and ≥ 0, got ${tolerance}`);
  if (centre && options.partner) {
    throw new RangeError('generalisedProcrustes: centre cannot be combined with partner, because centring changes the products of the two factor matrices');
  }

  const blocks: Block[] = [makeBlock('generalisedProcrustes: draws', draws, d, n, k, centre)];
  if (options.partner) blocks.push(makeBlock('generalisedProcrustes: partner.draws', options.partner.draws, d, options.partner.n, k, false));

  const kk = k * k;
  const rotations = new Float64Array(d * kk);
  const cross = new Float64Array(kk);
  const shift = new Float64Array(k);
  let previous = Number.NaN;
  let iterations = 0;
  let converged = false;

  while (iterations < maxIterations) {
    iterations++;
    for (const block of blocks) block.sum.fill(0);
    for (let draw = 0; draw < d; draw++) {
      cross.fill(0);
      for (const block of blocks) {
        addCrossProduct(cross, block.draws, block.reference, block.n, k, draw * block.n * k, 0);
        if (block.drawMeans !== null) {
          // (X − 1cᵀ)ᵀ M = Xᵀ M − c (1ᵀ M): centre without copying the draw. (M is a mean of
          // centred draws, so 1ᵀM is 0 up to rounding; the term keeps the identity exact.)
          for (let p = 0; p < k; p++) {
            const c = block.drawMeans[draw * k + p] as number;
            for (let q = 0; q < k; q++) cross[p * k + q] = (cross[p * k + q] as number) - c * (block.referenceTotals[q] as number);
          }
        }
      }
      const { rotation } = polarOrthogonal(cross, k);
      rotations.set(rotation, draw * kk);
      for (const block of blocks) {
        const rowShift = rotatedMean(shift, block.drawMeans, rotations, draw, k);
        addProductInto(block.sum, block.draws, rotations, block.n, k, draw * block.n * k, draw * kk, rowShift);
      }
    }
    let total = 0;
    for (const block of blocks) {
      for (let index = 0; index < block.sum.length; index++) block.reference[index] = (block.sum[index] as number) / d;
      columnTotals(block.referenceTotals, block.reference, block.n, k);
      total += sumOfSquares(block.reference);
    }
    // The first pass compares against a single draw, whose ‖·‖² is not comparable with a mean's; test from the second on.
    if (iterations >= 2 && Math.abs(total - previous) <= tolerance * previous) {
      converged = true;
      break;
    }
    previous = total;
  }

  const [main, partner] = blocks.map((block) => summarise(block, rotations, d, k, shift));
  if (main === undefined) throw new Error('generalisedProcrustes: internal error, no block summarised');
  return { ...main, iterations, converged, rotations, ...(partner === undefined ? {} : { partner }) };
}

function makeBlock(name: string, draws: RealMatrix, d: number, n: number, k: number, centre: boolean): Block {
  checkShape(name, draws, n, k, d);
  checkFinite(name, draws, n, k, d);
  let drawMeans: Float64Array | null = null;
  if (centre) {
    drawMeans = new Float64Array(d * k);
    for (let draw = 0; draw < d; draw++) {
      const offset = draw * n * k;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < k; j++) drawMeans[draw * k + j] = (drawMeans[draw * k + j] as number) + (draws[offset + i * k + j] as number);
      }
      for (let j = 0; j < k; j++) drawMeans[draw * k + j] = (drawMeans[draw * k + j] as number) / n;
    }
  }
  // The starting reference is draw 0 (centred when asked).
  const reference = new Float64Array(n * k);
  for (let index = 0; index < n * k; index++) {
    reference[index] = (draws[index] as number) - (drawMeans === null ? 0 : (drawMeans[index % k] as number));
  }
  const referenceTotals = new Float64Array(k);
  columnTotals(referenceTotals, reference, n, k);
  return { draws, n, drawMeans, reference, referenceTotals, sum: new Float64Array(n * k) };
}

function columnTotals(into: Float64Array, values: Float64Array, n: number, k: number): void {
  into.fill(0);
  for (let i = 0; i < n; i++) for (let j = 0; j < k; j++) into[j] = (into[j] as number) + (values[i * k + j] as number);
}

/** cᵀ R_d for draw d's column means c (what centring subtracts from each rotated row), or null when not centring. */
function rotatedMean(into: Float64Array, drawMeans: Float64Array | null, rotations: Float64Array, draw: number, k: number): Float64Array | null {
  if (drawMeans === null) return null;
  into.fill(0);
  const rOffset = draw * k * k;
  for (let p = 0; p < k; p++) {
    const c = drawMeans[draw * k + p] as number;
    for (let q = 0; q < k; q++) into[q] = (into[q] as number) + c * (rotations[rOffset + p * k + q] as number);
  }
  return into;
}

/**
 * Applies the final rotations and computes mean, sd and spread in float64 against the mean of
 * those same rotated draws (block.reference after the last pass), then stores them as float32.
 */
function summarise(block: Block, rotations: Float64Array, d: number, k: number, shift: Float64Array): AlignedDraws {
  const { n } = block;
  const size = n * k;
  const aligned = new Float32Array(d * size);
  const squares = new Float64Array(size);
  const distances = new Float64Array(n);
  const row = new Float64Array(size);
  for (let draw = 0; draw < d; draw++) {
    row.fill(0);
    const rowShift = rotatedMean(shift, block.drawMeans, rotations, draw, k);
    addProductInto(row, block.draws, rotations, n, k, draw * size, draw * k * k, rowShift);
    aligned.set(row, draw * size);
    for (let i = 0; i < n; i++) {
      let distance = 0;
      for (let j = 0; j < k; j++) {
        const deviation = (row[i * k + j] as number) - (block.reference[i * k + j] as number);
        squares[i * k + j] = (squares[i * k + j] as number) + deviation * deviation;
        distance += deviation * deviation;
      }
      distances[i] = (distances[i] as number) + Math.sqrt(distance);
    }
  }
  const sd = new Float32Array(size);
  if (d > 1) for (let index = 0; index < size; index++) sd[index] = Math.sqrt((squares[index] as number) / (d - 1));
  const spread = new Float32Array(n);
  for (let i = 0; i < n; i++) spread[i] = (distances[i] as number) / d;
  return { mean: Float32Array.from(block.reference), sd, spread, aligned };
}

/**
 * The element-wise mean of the draws without any alignment, D × N × K → N × K. Only for
 * comparison: for draws under different rotations it shrinks towards the origin (mush).
 */
export function naiveMean(draws: RealMatrix, d: number, n: number, k: number): Float32Array {
  checkShape('naiveMean: draws', draws, n, k, d);
  checkFinite('naiveMean: draws', draws, n, k, d);
  const size = n * k;
  const sum = new Float64Array(size);
  for (let draw = 0; draw < d; draw++) {
    const offset = draw * size;
    for (let index = 0; index < size; index++) sum[index] = (sum[index] as number) + (draws[offset + index] as number);
  }
  const out = new Float32Array(size);
  for (let index = 0; index < size; index++) out[index] = (sum[index] as number) / d;
  return out;
}
