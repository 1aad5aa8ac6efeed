/**
 * MAP (posterior-mode) fits of the factorization machine and of its two baselines: the
 * main-effects-only model (rank 0) and the intercept-only model (no entities, no covariates).
 */
import { Matrix, QrDecomposition, SingularValueDecomposition } from 'ml-matrix';
import { normalGenerator, type UniformGenerator } from '@/lib/align/random';
import { minimizeLbfgs, type LbfgsResult, type StopReason } from './lbfgs';
import { makeLayout, objective, type FitData, type Layout, type Penalty } from './model';
import { createDataTerm, defaultThreads } from './parallel';
import { spectralStart } from './spectral';
import { diagonalCurvature } from './variational';
import type { Design } from './observations';
import type { Likelihood } from './settings';

/**
 * Standard deviation of the random start of γ and δ, used when a start is given without factors'
 * values being meaningful (fitMap replaces them by the spectral start). Zero would sit on the saddle
 * point γ = δ = 0 (the gradient of γ_i·δ_j vanishes there); a small value breaks the symmetry
 * without starting far from the prior's mode. 0.1 is common practice (libFM's default init_stdev,
 * from memory).
 */
export const INIT_SD = 0.1;

/**
 * Iterations between refreshes of the diagonal preconditioner (each refresh also clears L-BFGS's
 * memory). Shorter follows the changing curvature more closely but throws away curvature pairs
 * more often; 50 is a middle ground (measured on the tests' designs and the benchmark).
 */
export const PRECONDITION_REFRESH = 50;

/** Optimiser settings of a MAP fit (see LbfgsOptions for meaning and trade-offs). */
export interface MapOptions {
  /** Iterations per L-BFGS run (default 1000). */
  maxIterations?: number;
  /** Relative decrease per iteration below which a run stops (default 1e-10). */
  ftol?: number;
  /** Largest gradient component below which a run stops (default 1e-9). */
  gtol?: number;
  /** L-BFGS memory (default 10). */
  memory?: number;
  /**
   * Threads for the pass over the observations of designs with ≥ 200,000 observations (default:
   * the machine's cores, at most 8). The result does not depend on it (lib/fit/parallel.ts).
   */
  threads?: number;
}

/** The design with covariates standardised (mean 0, sd 1 per column), which the optimiser works on. */
export interface PreparedDesign {
  design: Design;
  data: FitData;
  /** Per covariate column: its mean and (population) standard deviation in the raw data. */
  xMean: Float64Array;
  xSd: Float64Array;
}

/**
 * Standardises the covariates. Why: L-BFGS converges much faster when the covariates share a scale,
 * and the prior Normal(0, priorScale²) then means "per standard deviation of the covariate", which
 * does not depend on the units the analyst chose. Coefficients are turned back into raw units in
 * toFittedModel.
 */
export function prepareDesign(design: Design): PreparedDesign {
  const { n, p, x } = design;
  const xMean = new Float64Array(p);
  const xSd = new Float64Array(p);
  for (let t = 0; t < n; t++) for (let q = 0; q < p; q++) xMean[q] = (xMean[q] as number) + (x[t * p + q] as number);
  for (let q = 0; q < p; q++) xMean[q] = (xMean[q] as number) / n;
  for (let t = 0; t < n; t++) {
    for (let q = 0; q < p; q++) {
      const d = (x[t * p + q] as number) - (xMean[q] as number);
      xSd[q] = (xSd[q] as number) + d * d;
    }
  }
  for (let q = 0; q < p; q++) xSd[q] = Math.sqrt((xSd[q] as number) / n) || 1;
  const xs = new Float64Array(n * p);
  for (let t = 0; t < n; t++) for (let q = 0; q < p; q++) xs[t * p + q] = ((x[t * p + q] as number) - (xMean[q] as number)) / (xSd[q] as number);
  return { design, data: { n, row: design.row, column: design.column, y: design.y, x: xs, offset: design.offset }, xMean, xSd };
}

/** The observations `index` of `data` (a fold's training or held-out part); `withCovariates` false drops x. */
export function subsetData(data: FitData, p: number, index: Int32Array | null, withCovariates = true): FitData {
  if (index === null) return withCovariates ? data : { ...data, x: new Float64Array(0) };
  const n = index.length;
  const row = new Int32Array(n);
  const column = new Int32Array(n);
  const y = new Float64Array(n);
  const x = new Float64Array(withCovariates ? n * p : 0);
  const offset = data.offset === null ? null : new Float64Array(n);
  for (let s = 0; s < n; s++) {
    const t = index[s] as number;
    row[s] = data.row[t] as number;
    column[s] = data.column[t] as number;
    y[s] = data.y[t] as number;
    if (offset !== null && data.offset !== null) offset[s] = data.offset[t] as number;
    if (withCovariates) for (let q = 0; q < p; q++) x[s * p + q] = data.x[t * p + q] as number;
  }
  return { n, row, column, y, x, offset };
}

/**
 * The observations reordered by row entity (a stable counting sort, O(n + I)). Why: the objective
 * visits every observation once per evaluation and touches γ_i, a_i and their gradients; with the
 * rows grouped those stay in cache between consecutive observations instead of being fetched from
 * memory at random (measured about 2× faster at 1,000,000 observations over 10,000 rows). The sum
 * it computes is the same up to rounding; the order is fixed, so results stay deterministic.
 */
export function sortByRow(data: FitData, p: number, rows: number): FitData {
  const starts = new Int32Array(rows + 1);
  for (let t = 0; t < data.n; t++) starts[(data.row[t] as number) + 1] = (starts[(data.row[t] as number) + 1] as number) + 1;
  for (let i = 0; i < rows; i++) starts[i + 1] = (starts[i + 1] as number) + (starts[i] as number);
  const index = new Int32Array(data.n);
  for (let t = 0; t < data.n; t++) {
    const i = data.row[t] as number;
    const at = starts[i] as number;
    index[at] = t;
    starts[i] = at + 1;
  }
  const px = data.x.length === 0 ? 0 : p;
  return subsetData(data, px, index, px > 0);
}

/** Which of the three models, as the metrics name them. */
export type ModelKind = 'fm' | 'mainEffects' | 'intercept';

export interface ModelSpec {
  kind: ModelKind;
  likelihood: Likelihood;
  rows: number;
  columns: number;
  /** Covariates in the model (0 for the intercept-only model). */
  p: number;
  rank: number;
  penalty: Penalty;
}

export function layoutFor(spec: ModelSpec): Layout {
  return makeLayout(spec.likelihood, spec.rows, spec.columns, spec.kind === 'intercept' ? 0 : spec.p, spec.kind === 'fm' ? spec.rank : 0, spec.kind !== 'intercept');
}

/**
 * The start: μ at the link of the mean outcome (so the intercept-only model starts at its answer
 * when there is no offset), log σ at the log sd of y, every other effect 0, factors N(0, INIT_SD²).
 */
export function initialTheta(data: FitData, layout: Layout, uniform: UniformGenerator): Float64Array {
  const theta = new Float64Array(layout.size);
  let sum = 0;
  let sumSquares = 0;
  let offsetMean = 0;
  let exposure = 0;
  for (let t = 0; t < data.n; t++) {
    const y = data.y[t] as number;
    sum += y;
    sumSquares += y * y;
    const o = data.offset === null ? 0 : (data.offset[t] as number);
    offsetMean += o;
    exposure += Math.exp(o);
  }
  const mean = sum / data.n;
  offsetMean /= data.n;
  if (layout.likelihood === 'gaussian') {
    theta[layout.mu] = mean - offsetMean;
    theta[layout.logSigma] = 0.5 * Math.log(Math.max(sumSquares / data.n - mean * mean, 1e-12));
  } else if (layout.likelihood === 'bernoulli') {
    const clipped = Math.min(1 - 1e-6, Math.max(1e-6, mean));
    theta[layout.mu] = Math.log(clipped / (1 - clipped)) - offsetMean;
  } else {
    theta[layout.mu] = Math.log(Math.max(sum, 0.5) / exposure);
  }
  const normal = normalGenerator(uniform);
  for (let index = layout.gamma; index < layout.delta + layout.columns * layout.rank; index++) theta[index] = INIT_SD * normal();
  return theta;
}

export interface MapFit {
  spec: ModelSpec;
  layout: Layout;
  theta: Float64Array;
  objective: number;
  iterations: number;
  evaluations: number;
  gradientNorm: number;
  reason: StopReason;
  /** Objective per iteration, every stage in order, each stage starting with its start value. */
  history: Float64Array;
}

export type IterationHook = (iteration: number, objective: number) => boolean | void | Promise<boolean | void>;

/**
 * One MAP fit, in stages (their iterations and objective histories are reported as one run):
 *   1. for the factorization machine without a given start: the main-effects model, whose effects
 *      start stage 2, with the factors from the spectral start (lib/fit/spectral.ts);
 *   2. with `hierarchical`: the fit with Normal(0, 1) factor priors, then rotated to principal axes.
 *      Why: the ARD prior's large precision for small dimensions could switch dimensions off before
 *      the data had a chance to grow them; from the Normal(0, 1) fit every dimension starts at the
 *      size the data gives it, and only those with little support shrink;
 *   3. the fit with the model's own priors.
 */
export async function fitMap(data: FitData, spec: ModelSpec, uniform: UniformGenerator, options: MapOptions = {}, onIteration?: IterationHook, start?: Float64Array): Promise<MapFit> {
  const layout = layoutFor(spec);
  data = sortByRow(data, layout.p, spec.rows);
  const lbfgsOptions = { maxIterations: options.maxIterations ?? 1000, ftol: options.ftol ?? 1e-10, gtol: options.gtol ?? 1e-9, memory: options.memory ?? 10 };
  const threads = options.threads ?? defaultThreads();
  const stages: LbfgsResult[] = [];
  let iterationsBefore = 0;
  const hook: IterationHook | undefined = onIteration === undefined ? undefined : (iteration, f) => onIteration(iterationsBefore + iteration, f);
  /**
   * One L-BFGS run on `stageLayout` with its own data term (threads are started and stopped per
   * run), diagonally preconditioned: it minimises over z = θ ⊙ √d, d the diagonal Gauss–Newton
   * curvature of the objective, taken afresh every PRECONDITION_REFRESH iterations. Why: the curvatures differ by orders of
   * magnitude (μ sees every observation, an entity only its own, a factor element also scales with
   * the other side's factors), and L-BFGS with its scalar initial Hessian then crawls along the
   * flat directions (measured at 1,000,000 observations: the main-effects stage alone took ~100
   * iterations unpreconditioned). The objective's values are unchanged, so ftol means the same;
   * gtol applies to the gradient in z.
   */
  const run = async (stageLayout: Layout, penalty: Penalty, from: Float64Array): Promise<LbfgsResult> => {
    const dataTerm = createDataTerm(data, stageLayout, threads);
    try {
      const size = stageLayout.size;
      const scale = new Float64Array(size);
      const theta = new Float64Array(size);
      const toTheta = (z: Float64Array, out: Float64Array) => {
        for (let l = 0; l < size; l++) out[l] = (z[l] as number) * (scale[l] as number);
        return out;
      };
      let current = from;
      let iterations = 0;
      let evaluations = 0;
      const history: number[] = [];
      let result: LbfgsResult | null = null;
      // Segments of PRECONDITION_REFRESH iterations, each with the curvature at its start: the
      // factors' curvature changes as they grow, and a stale preconditioner slows L-BFGS down.
      while (iterations < lbfgsOptions.maxIterations) {
        const curvature = diagonalCurvature(current, data, stageLayout, penalty);
        for (let l = 0; l < size; l++) scale[l] = 1 / Math.sqrt((curvature[l] as number) / data.n);
        const z0 = new Float64Array(size);
        for (let l = 0; l < size; l++) z0[l] = (current[l] as number) / (scale[l] as number);
        const before = iterations;
        const segment = await minimizeLbfgs(
          (z, gz) => {
            const f = objective(toTheta(z, theta), gz, data, stageLayout, penalty, dataTerm);
            for (let l = 0; l < size; l++) gz[l] = (gz[l] as number) * (scale[l] as number);
            return f;
          },
          z0,
          { ...lbfgsOptions, maxIterations: Math.min(PRECONDITION_REFRESH, lbfgsOptions.maxIterations - iterations), onIteration: hook === undefined ? undefined : (iteration, f) => hook(before + iteration, f) },
        );
        iterations += segment.iterations;
        evaluations += segment.evaluations;
        const values = history.length === 0 ? segment.history : segment.history.subarray(1);
        for (const value of values) history.push(value);
        current = toTheta(segment.theta, new Float64Array(size));
        result = segment;
        if (segment.reason !== 'max-iterations' || segment.iterations === 0) break;
      }
      if (result === null) throw new Error('fitMap: no iteration ran');
      // the gradient norm in θ, as reported to the analyst
      const gradient = new Float64Array(size);
      objective(current, gradient, data, stageLayout, penalty, dataTerm);
      let squares = 0;
      for (let l = 0; l < size; l++) squares += (gradient[l] as number) ** 2;
      const stage: LbfgsResult = { ...result, theta: current, iterations, evaluations, history: Float64Array.from(history), gradientNorm: Math.sqrt(squares), reason: iterations >= lbfgsOptions.maxIterations && result.reason === 'max-iterations' ? 'max-iterations' : result.reason };
      stages.push(stage);
      iterationsBefore += iterations;
      return stage;
    } finally {
      await dataTerm.close();
    }
  };

  let theta0 = start;
  if (theta0 === undefined) {
    theta0 = initialTheta(data, layout, uniform);
    if (layout.rank > 0) {
      // Warm start: the main-effects model, then the spectral start for the factors (lib/fit/spectral.ts).
      const mainLayout = layoutFor({ ...spec, kind: 'mainEffects' });
      const main = await run(mainLayout, spec.penalty, initialTheta(data, mainLayout, uniform));
      if (main.reason === 'stopped') return toMapFit(spec, layout, stages);
      theta0.set(main.theta.subarray(0, mainLayout.gamma), 0);
      if (layout.logSigma >= 0) theta0[layout.logSigma] = main.theta[mainLayout.logSigma] as number;
      const startTerm = createDataTerm(data, layout, threads);
      const scratch = new Float64Array(layout.size);
      try {
        spectralStart(theta0, data, layout, uniform, (theta) => objective(theta, scratch, data, layout, spec.penalty, startTerm));
      } finally {
        await startTerm.close();
      }
    }
  }
  if (spec.penalty.hierarchical && layout.rank > 0) {
    const first = await run(layout, { ...spec.penalty, hierarchical: false }, theta0);
    if (first.reason === 'stopped') return toMapFit(spec, layout, stages);
    theta0 = principalAxes(first.theta, layout);
  }
  await run(layout, spec.penalty, theta0);
  return toMapFit(spec, layout, stages);
}

/**
 * Rotates the factors to their principal axes without changing any γ_i·δ_j: with γ = Q_γ R_γ and
 * δ = Q_δ R_δ (thin QR) and R_γ R_δᵀ = U S Vᵀ (SVD), γ' = Q_γ U S^½ and δ' = Q_δ V S^½, so
 * γ'δ'ᵀ = γδᵀ, the columns are orthogonal, ordered by singular value and balanced between the two
 * sides (which is also where the Normal(0, 1) prior puts the mode). Why before the ARD stage: the
 * Normal(0, 1) fit is invariant to rotations of the factors, so its solution spreads the signal over
 * every dimension; the ARD prior is not, but moving along rotations takes L-BFGS many iterations.
 * From principal axes, dimensions with small singular values are the unneeded ones and shrink fast.
 */
export function principalAxes(theta: Float64Array, layout: Layout): Float64Array {
  const K = layout.rank;
  const I = layout.rows;
  const J = layout.columns;
  const out = Float64Array.from(theta);
  if (K === 0) return out;
  const gamma = new Matrix(I, K);
  const delta = new Matrix(J, K);
  for (let i = 0; i < I; i++) for (let k = 0; k < K; k++) gamma.set(i, k, theta[layout.gamma + i * K + k] as number);
  for (let j = 0; j < J; j++) for (let k = 0; k < K; k++) delta.set(j, k, theta[layout.delta + j * K + k] as number);
  const qrGamma = new QrDecomposition(gamma);
  const qrDelta = new QrDecomposition(delta);
  const core = qrGamma.upperTriangularMatrix.mmul(qrDelta.upperTriangularMatrix.transpose());
  const svd = new SingularValueDecomposition(core);
  const root = Matrix.diag(svd.diagonal.map((value) => Math.sqrt(Math.max(value, 0))));
  const newGamma = qrGamma.orthogonalMatrix.mmul(svd.leftSingularVectors).mmul(root);
  const newDelta = qrDelta.orthogonalMatrix.mmul(svd.rightSingularVectors).mmul(root);
  for (let i = 0; i < I; i++) for (let k = 0; k < K; k++) out[layout.gamma + i * K + k] = newGamma.get(i, k);
  for (let j = 0; j < J; j++) for (let k = 0; k < K; k++) out[layout.delta + j * K + k] = newDelta.get(j, k);
  return out;
}

function toMapFit(spec: ModelSpec, layout: Layout, stages: LbfgsResult[]): MapFit {
  const last = stages[stages.length - 1];
  if (last === undefined) throw new Error('fitMap: no stage ran');
  let length = 0;
  for (const stage of stages) length += stage.history.length;
  const history = new Float64Array(length);
  let at = 0;
  for (const stage of stages) {
    history.set(stage.history, at);
    at += stage.history.length;
  }
  return {
    spec,
    layout,
    theta: last.theta,
    objective: last.f,
    iterations: stages.reduce((total, stage) => total + stage.iterations, 0),
    evaluations: stages.reduce((total, stage) => total + stage.evaluations, 0),
    gradientNorm: last.gradientNorm,
    reason: last.reason,
    history,
  };
}

/** A fitted model in the analyst's units: raw covariate coefficients, entity ids, factor matrices. */
export interface FittedModel {
  likelihood: Likelihood;
  rank: number;
  rowIds: string[];
  columnIds: string[];
  covariateNames: string[];
  /** Intercept for raw covariates (μ − Σ β_q · mean_q / sd_q of the standardised fit). */
  mu: number;
  /** I row main effects (zeros for the intercept-only model). */
  a: Float64Array;
  /** J column main effects. */
  b: Float64Array;
  /** p covariate coefficients per raw unit. */
  beta: Float64Array;
  /** I × K row factors γ, row-major. */
  gamma: Float64Array;
  /** J × K column factors δ, row-major. */
  delta: Float64Array;
  /** Gaussian noise sd σ (maximum a posteriori with a flat prior on log σ, i.e. √(RSS/n) at the fit); null otherwise. */
  sigma: number | null;
  /** Raw covariate means, used for predictions that give no covariates. */
  covariateMeans: Float64Array;
}

export function toFittedModel(prepared: PreparedDesign, fit: MapFit, theta: Float64Array = fit.theta): FittedModel {
  const { design, xMean, xSd } = prepared;
  const layout = fit.layout;
  const p = layout.p;
  const beta = new Float64Array(design.p);
  let mu = theta[layout.mu] as number;
  for (let q = 0; q < p; q++) {
    const raw = (theta[layout.beta + q] as number) / (xSd[q] as number);
    beta[q] = raw;
    mu -= raw * (xMean[q] as number);
  }
  const I = design.rowIds.length;
  const J = design.columnIds.length;
  const K = layout.rank;
  return {
    likelihood: design.likelihood,
    rank: K,
    rowIds: design.rowIds,
    columnIds: design.columnIds,
    covariateNames: design.covariateNames,
    mu,
    a: layout.entities ? theta.slice(layout.a, layout.a + I) : new Float64Array(I),
    b: layout.entities ? theta.slice(layout.b, layout.b + J) : new Float64Array(J),
    beta,
    gamma: theta.slice(layout.gamma, layout.gamma + I * K),
    delta: theta.slice(layout.delta, layout.delta + J * K),
    sigma: layout.logSigma >= 0 ? Math.exp(theta[layout.logSigma] as number) : null,
    covariateMeans: Float64Array.from(xMean),
  };
}
