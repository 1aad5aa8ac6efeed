/**
 * The factorization machine's negative log posterior and its analytic gradient, over one flat
 * Float64Array of parameters.
 *
 * Model (Rendle, "Factorization Machines", ICDM 2010, with two one-hot fields i and j and dense
 * covariates x; with one-hot fields the pairwise term Σ_{f<f'} ⟨v_f, v_f'⟩ x_f x_f' reduces to the
 * single product γ_i·δ_j):
 *
 *   η_t = μ + a_i + b_j + x_tᵀβ + γ_i·δ_j + offset_t,   y_t ~ Lik(g⁻¹(η_t))
 *
 *   gaussian  y ~ Normal(η, σ²), σ = exp(s) estimated (flat prior on s = log σ)
 *   bernoulli y ~ Bernoulli(1 / (1 + e^−η))
 *   poisson   y ~ Poisson(e^η)
 *
 * Priors, as penalties (negative log densities up to constants):
 *   μ                 flat (not penalised), so the intercept-only model is the unpenalised mean;
 *   a_i, b_j, β_q     Normal(0, priorScale²);
 *   γ_ik, δ_jk        Normal(0, 1), or with `hierarchical` (automatic relevance determination)
 *                     Normal(0, τ_k²) with τ_k² ~ InverseGamma(α, β) per dimension k, integrated
 *                     out. Dimension k then contributes
 *                       (α + m/2) · log(β + S_k/2),   S_k = Σ_i γ_ik² + Σ_j δ_jk²,
 *                     with m = I + J factor elements per dimension (a multivariate Student-t prior
 *                     on the whole dimension). Its pull on an element is γ_ik · (α + m/2)/(β + S_k/2):
 *                     a dimension whose elements are small gets a large precision and shrinks
 *                     further, the relevance-determination effect. The reported ARD scale of a
 *                     dimension is the root mean square of its elements, √(S_k/m): what the
 *                     dimension ended up with, on the scale of Normal(0, 1) factors. (The mode of
 *                     τ_k² given the factors, (β + S_k/2)/(α + 1 + m/2), is about half of S_k/m with
 *                     α = m/2, an artefact of the hyperprior's weight that would only confuse.)
 *
 *                     When does a dimension survive? For one dimension with data singular value s
 *                     (Gaussian noise σ) the MAP fit is soft-thresholded, and a non-zero fixed point
 *                     exists only when s + β ≳ 2σ√(α + m/2). Pure noise has singular values up to
 *                     about σ(√I + √J) ≤ σ√(2m) (the Marchenko–Pastur edge). With α = m/2 the bar
 *                     is 2σ√m, a factor √2 above the noise edge, so noise dimensions collapse to
 *                     zero decisively while a dimension with real signal (s ≫ σ√m) is shrunk by a
 *                     negligible amount (its soft threshold λσ² ≈ mσ²/s ≪ s). With a weak α (≈ 1)
 *                     the bar sits right at the noise edge and noise dimensions shrink only
 *                     partly and very slowly, which is why α grows with m here.
 *
 * The objective is the negative log posterior divided by the number of observations n (a mean, so
 * tolerances and step sizes do not depend on the size of the data). Constants (log 2π, log y!) are
 * left out.
 */
import { accumulateRange } from './objective-kernel.mjs';
import { kernelSpec, type DataTerm } from './parallel';
import type { Likelihood } from './settings';

/**
 * Shape α of the inverse-gamma hyperprior on τ_k², per factor element of the dimension: α =
 * ARD_SHAPE_PER_ELEMENT · m. 0.5 puts the survival bar a factor √2 above the noise edge (see the
 * header). Smaller values (towards 0) let weaker dimensions survive but leave noise dimensions only
 * partly shrunk; larger values raise the bar further (weak real dimensions are then removed).
 */
export const ARD_SHAPE_PER_ELEMENT = 0.5;
/**
 * Rate β of the inverse-gamma hyperprior on τ_k². It sets the floor of a shrunk dimension's scale
 * (τ̂_k² ≥ β/(α + 1 + m/2)) and adds to a dimension's singular value in the survival condition, so
 * it should be small against σ√m: 0.01 (range 1e-4–1). Larger values keep noise dimensions alive.
 */
export const ARD_RATE = 0.01;

/** α + m/2, the weight of log(β + S_k/2) in the ARD penalty. */
export function ardWeight(layout: Layout): number {
  const m = layout.rows + layout.columns;
  return ARD_SHAPE_PER_ELEMENT * m + m / 2;
}

/** Where each block of parameters sits in the flat vector. */
export interface Layout {
  likelihood: Likelihood;
  /** Row entities I. */
  rows: number;
  /** Column entities J. */
  columns: number;
  /** Covariates p. */
  p: number;
  /** Latent dimensions K (0 for the main-effects and intercept-only models). */
  rank: number;
  /** Whether a_i and b_j are in the model (false for the intercept-only model). */
  entities: boolean;
  mu: number;
  a: number;
  b: number;
  beta: number;
  gamma: number;
  delta: number;
  /** Index of s = log σ for gaussian, else −1. */
  logSigma: number;
  size: number;
}

export function makeLayout(likelihood: Likelihood, rows: number, columns: number, p: number, rank: number, entities: boolean): Layout {
  const mu = 0;
  const a = 1;
  const b = a + (entities ? rows : 0);
  const beta = b + (entities ? columns : 0);
  const gamma = beta + p;
  const delta = gamma + rows * rank;
  const end = delta + columns * rank;
  const logSigma = likelihood === 'gaussian' ? end : -1;
  return { likelihood, rows, columns, p, rank, entities, mu, a, b, beta, gamma, delta, logSigma, size: end + (likelihood === 'gaussian' ? 1 : 0) };
}

/** Observations the objective runs over (the whole design, or one fold's training part). */
export interface FitData {
  n: number;
  row: Int32Array;
  column: Int32Array;
  y: Float64Array;
  /** n × p, standardised. */
  x: Float64Array;
  offset: Float64Array | null;
}

export interface Penalty {
  /** σ of a, b, β. */
  priorScale: number;
  hierarchical: boolean;
}

/** log(1 + e^η) without overflow. */
export function softplus(eta: number): number {
  return eta > 0 ? eta + Math.log1p(Math.exp(-eta)) : Math.log1p(Math.exp(eta));
}

export function sigmoid(eta: number): number {
  if (eta >= 0) return 1 / (1 + Math.exp(-eta));
  const e = Math.exp(eta);
  return e / (1 + e);
}

/**
 * The objective at θ; writes its gradient into `grad` (same length). Returns +∞ when the linear
 * predictor overflows (Poisson with e^η = ∞), which the line search treats as "step too long".
 * `dataTerm` runs the pass over the observations (lib/fit/parallel.ts: threads for large designs);
 * without it the pass runs here in one piece.
 */
export function objective(theta: Float64Array, grad: Float64Array, data: FitData, layout: Layout, penalty: Penalty, dataTerm?: DataTerm): number {
  const n = data.n;
  const gaussian = layout.likelihood === 'gaussian';
  const s = gaussian ? (theta[layout.logSigma] as number) : 0;
  const precision = Math.exp(-2 * s);
  let nll: number;
  if (dataTerm) nll = dataTerm.evaluate(theta, grad, precision);
  else {
    grad.fill(0);
    nll = accumulateRange(theta, grad, data.row, data.column, data.y, data.x, data.offset, kernelSpec(layout), precision, 0, n);
  }
  if (gaussian) {
    // the kernel returned Σ r²
    const sumSquares = nll;
    nll = 0.5 * sumSquares * precision + n * s;
    grad[layout.logSigma] = n - sumSquares * precision;
  }
  let f = nll + penaltyTerms(theta, grad, layout, penalty);
  const scale = 1 / n;
  for (let index = 0; index < grad.length; index++) grad[index] = (grad[index] as number) * scale;
  f *= scale;
  return Number.isFinite(f) ? f : Number.POSITIVE_INFINITY;
}

/** Adds the priors' gradient into `grad` and returns their value (un-normalised by n). */
function penaltyTerms(theta: Float64Array, grad: Float64Array, layout: Layout, penalty: Penalty): number {
  const lambda = 1 / (penalty.priorScale * penalty.priorScale);
  let f = 0;
  // a, b and β are contiguous from layout.a to layout.gamma.
  for (let index = layout.a; index < layout.gamma; index++) {
    const v = theta[index] as number;
    f += 0.5 * lambda * v * v;
    grad[index] = (grad[index] as number) + lambda * v;
  }
  const K = layout.rank;
  if (K === 0) return f;
  if (!penalty.hierarchical) {
    for (let index = layout.gamma; index < layout.delta + layout.columns * K; index++) {
      const v = theta[index] as number;
      f += 0.5 * v * v;
      grad[index] = (grad[index] as number) + v;
    }
    return f;
  }
  const squares = dimensionSquares(theta, layout);
  const c = ardWeight(layout);
  for (let k = 0; k < K; k++) {
    const denominator = ARD_RATE + 0.5 * (squares[k] as number);
    f += c * Math.log(denominator);
    const weight = c / denominator;
    for (let i = 0; i < layout.rows; i++) {
      const index = layout.gamma + i * K + k;
      grad[index] = (grad[index] as number) + weight * (theta[index] as number);
    }
    for (let j = 0; j < layout.columns; j++) {
      const index = layout.delta + j * K + k;
      grad[index] = (grad[index] as number) + weight * (theta[index] as number);
    }
  }
  return f;
}

/** S_k = Σ_i γ_ik² + Σ_j δ_jk² per dimension. */
export function dimensionSquares(theta: Float64Array, layout: Layout): Float64Array {
  const K = layout.rank;
  const squares = new Float64Array(K);
  for (let i = 0; i < layout.rows; i++) {
    for (let k = 0; k < K; k++) {
      const v = theta[layout.gamma + i * K + k] as number;
      squares[k] = (squares[k] as number) + v * v;
    }
  }
  for (let j = 0; j < layout.columns; j++) {
    for (let k = 0; k < K; k++) {
      const v = theta[layout.delta + j * K + k] as number;
      squares[k] = (squares[k] as number) + v * v;
    }
  }
  return squares;
}

/** √(S_k/m) per dimension (see the header): the ARD scales shown to the analyst; near 0 for a dimension the data does not support. */
export function ardScales(theta: Float64Array, layout: Layout): Float64Array {
  const squares = dimensionSquares(theta, layout);
  const out = new Float64Array(layout.rank);
  const m = layout.rows + layout.columns;
  for (let k = 0; k < layout.rank; k++) out[k] = Math.sqrt((squares[k] as number) / m);
  return out;
}

/** Linear predictors η for the given observations (no gradient). */
export function linearPredictor(theta: Float64Array, data: FitData, layout: Layout, out = new Float64Array(data.n)): Float64Array {
  const { n, row, column, x, offset } = data;
  const { p, rank: K, entities } = layout;
  const mu = theta[layout.mu] as number;
  for (let t = 0; t < n; t++) {
    const i = row[t] as number;
    const j = column[t] as number;
    let eta = mu;
    if (offset !== null) eta += offset[t] as number;
    if (entities) eta += (theta[layout.a + i] as number) + (theta[layout.b + j] as number);
    for (let q = 0; q < p; q++) eta += (x[t * p + q] as number) * (theta[layout.beta + q] as number);
    const gi = layout.gamma + i * K;
    const di = layout.delta + j * K;
    for (let k = 0; k < K; k++) eta += (theta[gi + k] as number) * (theta[di + k] as number);
    out[t] = eta;
  }
  return out;
}

/** The mean of y given η: η, 1/(1 + e^−η) or e^η. */
export function inverseLink(likelihood: Likelihood, eta: number): number {
  if (likelihood === 'gaussian') return eta;
  if (likelihood === 'bernoulli') return sigmoid(eta);
  return Math.exp(eta);
}
