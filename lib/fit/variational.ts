/**
 * Mean-field variational inference for the factorization machine: q(θ) = Π_l Normal(m_l, e^{2ρ_l})
 * over every parameter (μ, a, b, β, γ, δ and, for gaussian, log σ), fitted by maximising the
 * evidence lower bound with reparameterisation gradients (Kingma & Welling, "Auto-Encoding
 * Variational Bayes", ICLR 2014; Kucukelbir et al., "Automatic Differentiation Variational
 * Inference", JMLR 2017, whose ADVI this is without the transform, every parameter being real):
 *
 *   θ = m + e^ρ ⊙ ε, ε ~ Normal(0, I)
 *   −ELBO/n = E_q[f(θ)] − (1/n) Σ_l ρ_l + const       (f: lib/fit/model.ts's objective)
 *   ∂/∂m = ∇f(θ),  ∂/∂ρ = ∇f(θ) ⊙ ε ⊙ e^ρ − 1/n
 *
 * It is an approximation: mean-field q ignores posterior correlations (for example between γ_i and
 * δ_j, and the rotation of the factors) and is known to understate posterior spread.
 *
 * Start: m at the MAP fit, e^ρ at 1/√(diagonal of the Gauss–Newton curvature) there, which is the
 * exact mean-field answer for a Gaussian posterior; the stochastic optimisation then corrects it
 * for the model's curvature away from the mode.
 */
import { normalGenerator, type UniformGenerator } from '@/lib/align/random';
import { createDataTerm, defaultThreads, type DataTerm } from './parallel';
import { ARD_RATE, ardWeight, dimensionSquares, objective, sigmoid, type FitData, type Layout, type Penalty } from './model';

export interface VariationalOptions {
  /**
   * Stochastic-gradient steps (default 1000), each one pass over the data. More steps reduce the
   * optimisation noise in m and ρ; fewer are faster. 500–5000 is usual.
   */
  iterations?: number;
  /**
   * Adam step size (default 0.01): roughly how far a parameter moves per step. Larger converges
   * faster from a poor start but leaves more noise; from the MAP start 0.005–0.02 works.
   */
  learningRate?: number;
  /** Monte Carlo samples of θ per step (default 1). More samples reduce gradient noise at proportional cost. */
  samples?: number;
  /** Threads for large designs, as MapOptions.threads. */
  threads?: number;
}

export interface VariationalFit {
  mean: Float64Array;
  sd: Float64Array;
  /** Estimate of −ELBO/n per step (noisy: one Monte Carlo sample). */
  history: Float64Array;
  iterations: number;
}

/** Diagonal of the Gauss–Newton (Fisher) curvature of n·f at θ: the second derivative along each parameter, ignoring cross terms. */
export function diagonalCurvature(theta: Float64Array, data: FitData, layout: Layout, penalty: Penalty): Float64Array {
  const h = new Float64Array(layout.size);
  const { n, row, column, x, offset } = data;
  const { p, rank: K, entities, likelihood } = layout;
  const mu = theta[layout.mu] as number;
  const precision = likelihood === 'gaussian' ? Math.exp(-2 * (theta[layout.logSigma] as number)) : 1;
  for (let t = 0; t < n; t++) {
    const i = row[t] as number;
    const j = column[t] as number;
    let eta = mu + (offset === null ? 0 : (offset[t] as number));
    if (entities) eta += (theta[layout.a + i] as number) + (theta[layout.b + j] as number);
    for (let q = 0; q < p; q++) eta += (x[t * p + q] as number) * (theta[layout.beta + q] as number);
    const gi = layout.gamma + i * K;
    const di = layout.delta + j * K;
    for (let k = 0; k < K; k++) eta += (theta[gi + k] as number) * (theta[di + k] as number);
    let w: number;
    if (likelihood === 'gaussian') w = precision;
    else if (likelihood === 'bernoulli') {
      const s = sigmoid(eta);
      w = s * (1 - s);
    } else w = Math.exp(eta);
    h[layout.mu] = (h[layout.mu] as number) + w;
    if (entities) {
      h[layout.a + i] = (h[layout.a + i] as number) + w;
      h[layout.b + j] = (h[layout.b + j] as number) + w;
    }
    for (let q = 0; q < p; q++) {
      const v = x[t * p + q] as number;
      h[layout.beta + q] = (h[layout.beta + q] as number) + w * v * v;
    }
    for (let k = 0; k < K; k++) {
      const g = theta[gi + k] as number;
      const d = theta[di + k] as number;
      h[gi + k] = (h[gi + k] as number) + w * d * d;
      h[di + k] = (h[di + k] as number) + w * g * g;
    }
  }
  if (layout.logSigma >= 0) h[layout.logSigma] = 2 * n;
  const lambda = 1 / (penalty.priorScale * penalty.priorScale);
  for (let index = layout.a; index < layout.gamma; index++) h[index] = (h[index] as number) + lambda;
  if (K > 0) {
    const squares = dimensionSquares(theta, layout);
    const c = ardWeight(layout);
    for (let index = layout.gamma; index < layout.delta + layout.columns * K; index++) {
      const k = (index - layout.gamma) % K;
      const prior = penalty.hierarchical ? c / (ARD_RATE + 0.5 * (squares[k] as number)) : 1;
      h[index] = (h[index] as number) + prior;
    }
  }
  // μ is unpenalised: with no data it would have no curvature; keep the variance finite anyway.
  for (let index = 0; index < h.length; index++) h[index] = Math.max(h[index] as number, 1e-8);
  return h;
}

export async function fitVariational(
  data: FitData,
  layout: Layout,
  penalty: Penalty,
  start: Float64Array,
  uniform: UniformGenerator,
  options: VariationalOptions = {},
  onIteration?: (iteration: number, objective: number) => boolean | void | Promise<boolean | void>,
): Promise<VariationalFit & { stopped: boolean }> {
  const iterations = options.iterations ?? 1000;
  const learningRate = options.learningRate ?? 0.01;
  const samples = options.samples ?? 1;
  const dataTerm = createDataTerm(data, layout, options.threads ?? defaultThreads());
  try {
    return await optimise(data, layout, penalty, start, uniform, iterations, learningRate, samples, dataTerm, onIteration);
  } finally {
    await dataTerm.close();
  }
}

async function optimise(
  data: FitData,
  layout: Layout,
  penalty: Penalty,
  start: Float64Array,
  uniform: UniformGenerator,
  iterations: number,
  learningRate: number,
  samples: number,
  dataTerm: DataTerm,
  onIteration: ((iteration: number, objective: number) => boolean | void | Promise<boolean | void>) | undefined,
): Promise<VariationalFit & { stopped: boolean }> {
  const size = layout.size;
  const n = data.n;
  const normal = normalGenerator(uniform);
  const m = Float64Array.from(start);
  const rho = new Float64Array(size);
  const curvature = diagonalCurvature(start, data, layout, penalty);
  for (let l = 0; l < size; l++) rho[l] = -0.5 * Math.log(curvature[l] as number);

  // Adam moments (Kingma & Ba 2015, β₁ = 0.9, β₂ = 0.999, the paper's defaults).
  const beta1 = 0.9;
  const beta2 = 0.999;
  const mM = new Float64Array(size);
  const vM = new Float64Array(size);
  const mR = new Float64Array(size);
  const vR = new Float64Array(size);
  const gradM = new Float64Array(size);
  const gradR = new Float64Array(size);
  const theta = new Float64Array(size);
  const grad = new Float64Array(size);
  const epsilon = new Float64Array(size);
  // Polyak averages of m and ρ over the second half of the steps, where the step size decays
  // linearly to zero: this removes most of the noise one-sample gradients leave in the iterates.
  const averageFrom = Math.floor(iterations / 2);
  const mAverage = new Float64Array(size);
  const rhoAverage = new Float64Array(size);
  let averaged = 0;
  const history = new Float64Array(iterations);
  let stopped = false;
  let done = 0;

  for (let step = 0; step < iterations; step++) {
    gradM.fill(0);
    gradR.fill(0);
    let value = 0;
    for (let sample = 0; sample < samples; sample++) {
      for (let l = 0; l < size; l++) {
        const e = normal();
        epsilon[l] = e;
        theta[l] = (m[l] as number) + Math.exp(rho[l] as number) * e;
      }
      let f = objective(theta, grad, data, layout, penalty, dataTerm);
      if (!Number.isFinite(f)) {
        // A draw far in the tail overflowed (Poisson e^η): skip it rather than poison the moments.
        f = Number.NaN;
        continue;
      }
      value += f / samples;
      for (let l = 0; l < size; l++) {
        const g = grad[l] as number;
        gradM[l] = (gradM[l] as number) + g / samples;
        gradR[l] = (gradR[l] as number) + (g * (epsilon[l] as number) * Math.exp(rho[l] as number)) / samples;
      }
    }
    let entropy = 0;
    for (let l = 0; l < size; l++) {
      gradR[l] = (gradR[l] as number) - 1 / n;
      entropy += rho[l] as number;
    }
    history[step] = value - entropy / n;
    const rate = step < averageFrom ? learningRate : learningRate * (1 - (step - averageFrom) / (iterations - averageFrom));
    const correction1 = 1 - beta1 ** (step + 1);
    const correction2 = 1 - beta2 ** (step + 1);
    for (let l = 0; l < size; l++) {
      const gm = gradM[l] as number;
      const gr = gradR[l] as number;
      mM[l] = beta1 * (mM[l] as number) + (1 - beta1) * gm;
      vM[l] = beta2 * (vM[l] as number) + (1 - beta2) * gm * gm;
      mR[l] = beta1 * (mR[l] as number) + (1 - beta1) * gr;
      vR[l] = beta2 * (vR[l] as number) + (1 - beta2) * gr * gr;
      m[l] = (m[l] as number) - (rate * ((mM[l] as number) / correction1)) / (Math.sqrt((vM[l] as number) / correction2) + 1e-12);
      rho[l] = (rho[l] as number) - (rate * ((mR[l] as number) / correction1)) / (Math.sqrt((vR[l] as number) / correction2) + 1e-12);
    }
    if (step >= averageFrom) {
      averaged += 1;
      for (let l = 0; l < size; l++) {
        mAverage[l] = (mAverage[l] as number) + ((m[l] as number) - (mAverage[l] as number)) / averaged;
        rhoAverage[l] = (rhoAverage[l] as number) + ((rho[l] as number) - (rhoAverage[l] as number)) / averaged;
      }
    }
    done = step + 1;
    if (onIteration && (await onIteration(step + 1, history[step] as number)) === false) {
      stopped = true;
      break;
    }
  }
  const useAverage = averaged > 0;
  const mean = useAverage ? mAverage : m;
  const sd = new Float64Array(size);
  for (let l = 0; l < size; l++) sd[l] = Math.exp((useAverage ? rhoAverage : rho)[l] as number);
  return { mean, sd, history: history.slice(0, done), iterations: done, stopped };
}

/**
 * D draws of the factors from q: γ as D × I × K and δ as D × J × K, float32 (the layout imported
 * draws have, lib/import/types.ts), ready for the Procrustes alignment in lib/align.
 */
export function drawFactors(fit: VariationalFit, layout: Layout, count: number, uniform: UniformGenerator): { gamma: Float32Array; delta: Float32Array } {
  const normal = normalGenerator(uniform);
  const gammaSize = layout.rows * layout.rank;
  const deltaSize = layout.columns * layout.rank;
  const gamma = new Float32Array(count * gammaSize);
  const delta = new Float32Array(count * deltaSize);
  for (let d = 0; d < count; d++) {
    for (let e = 0; e < gammaSize; e++) gamma[d * gammaSize + e] = (fit.mean[layout.gamma + e] as number) + (fit.sd[layout.gamma + e] as number) * normal();
    for (let e = 0; e < deltaSize; e++) delta[d * deltaSize + e] = (fit.mean[layout.delta + e] as number) + (fit.sd[layout.delta + e] as number) * normal();
  }
  return { gamma, delta };
}
