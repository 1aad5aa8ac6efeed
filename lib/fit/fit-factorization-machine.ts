/**
 * The entry point: fit a factorization machine to a design, judge it out of sample against the
 * main-effects-only and intercept-only models, and summarise it for the fit page.
 *
 * Work, in order (each step reports progress; the callback can stop the run):
 *   1. k-fold cross-validation (folds by observation, stratified for bernoulli): the three models are
 *      fitted on each training part and predict its held-out part; held-out metrics are computed on
 *      the pooled out-of-fold predictions (every observation predicted once, by the fit that did not
 *      see it), which also feeds the calibration table.
 *   2. The three models on all the data: in-sample metrics; the factorization machine's fit is the
 *      result (its factors become the two factor sets).
 *   3. With method "variational": mean-field VI from the MAP fit, giving draws of the factors and
 *      intervals for the main effects.
 *   4. Posterior-predictive replicates, calibration (bernoulli), ARD scales (hierarchical), the
 *      cold-start list.
 */
import { mulberry32, normalGenerator, type UniformGenerator } from '@/lib/align/random';
import { assignFolds, splitFold } from './folds';
import { fitMap, prepareDesign, subsetData, toFittedModel, type FittedModel, type MapFit, type MapOptions, type ModelKind, type ModelSpec } from './map';
import { auc, logLoss, meanPoissonDeviance, rmse } from './metrics';
import { ardScales, inverseLink, linearPredictor, type FitData, type Layout } from './model';
import { checkRank, type Design } from './observations';
import { calibration, posteriorPredictive, type Calibration, type PosteriorPredictive } from './ppc';
import { DEFAULT_DRAWS, DEFAULT_FOLDS, DEFAULT_PRIOR_SCALE, DEFAULT_SEED, MAX_RANK, MIN_RANK, type FitMethod, type Likelihood } from './settings';
import { drawFactors, fitVariational, type VariationalOptions } from './variational';

/** Entities with fewer observations than this are listed in the cold-start warning (common practice: a handful). */
export const COLD_START_THRESHOLD = 3;
/** At most this many cold-start entities are listed by name per side; the rest are counted. */
export const COLD_START_LISTED = 100;

/** The numeric settings of a fit (ResolvedFitSettings satisfies it); defaults as in lib/fit/settings.ts. */
export interface FitOptions {
  rank: number;
  method?: FitMethod;
  hierarchical?: boolean;
  folds?: number;
  seed?: number;
  priorScale?: number;
  draws?: number;
  /** Optimiser settings of every MAP fit. */
  map?: MapOptions;
  variational?: VariationalOptions;
  /** Threads for large designs (≥ 200,000 observations); default the machine's cores. Results do not depend on it. */
  threads?: number;
}

export type FitPhase = 'cross-validation' | 'fit' | 'variational';

export interface FitProgress {
  phase: FitPhase;
  /** 1-based fold during cross-validation, else null. */
  fold: number | null;
  model: ModelKind;
  /** Iteration within the current model fit. */
  iteration: number;
  objective: number;
  /** How many model fits (including the variational one) are done, and how many there are in all, for a progress bar. */
  completedFits: number;
  totalFits: number;
}

/** Return false (or throw) to stop; a throw propagates as is, false becomes FitCancelledError. */
export type ProgressCallback = (progress: FitProgress) => boolean | void | Promise<boolean | void>;

export class FitCancelledError extends Error {
  constructor() {
    super('The fit was cancelled.');
    this.name = 'FitCancelledError';
  }
}

/** rmse for gaussian; logLoss and auc for bernoulli; deviance (mean Poisson deviance) for poisson. */
export interface FitMetrics {
  rmse?: number;
  logLoss?: number;
  auc?: number;
  deviance?: number;
}

export interface ModelMetrics {
  inSample: FitMetrics;
  /** Out-of-fold metrics; null without cross-validation. */
  heldOut: FitMetrics | null;
}

export interface Convergence {
  iterations: number;
  evaluations: number;
  objective: number;
  gradientNorm: number;
  /** Why L-BFGS stopped: "ftol" or "gtol" is convergence. */
  reason: string;
  converged: boolean;
  /** Objective (negative log posterior per observation, constants dropped) per iteration. */
  history: Float64Array;
}

export interface Interval {
  mean: Float64Array;
  sd: Float64Array;
  /** 2.5% and 97.5% points of the (Gaussian) variational marginal. */
  lower: Float64Array;
  upper: Float64Array;
}

export interface MainEffectIntervals {
  mu: Interval;
  a: Interval;
  b: Interval;
  beta: Interval;
}

export interface ColdStart {
  threshold: number;
  rows: { id: string; count: number }[];
  columns: { id: string; count: number }[];
  rowCount: number;
  columnCount: number;
}

export interface FitResult {
  likelihood: Likelihood;
  rank: number;
  method: FitMethod;
  hierarchical: boolean;
  seed: number;
  folds: number;
  priorScale: number;
  /** The MAP fit of the factorization machine on all the data. */
  model: FittedModel;
  convergence: Convergence;
  metrics: { fm: ModelMetrics; mainEffects: ModelMetrics; intercept: ModelMetrics };
  /** Variational draws of the factors (D × I × K and D × J × K), or null with method "map". */
  draws: { count: number; gamma: Float32Array; delta: Float32Array; history: Float64Array; iterations: number } | null;
  mainEffectIntervals: MainEffectIntervals | null;
  /** τ_k per dimension with `hierarchical` (see lib/fit/model.ts), else null. */
  ardScales: Float64Array | null;
  coldStart: ColdStart;
  ppc: PosteriorPredictive;
  calibration: Calibration | null;
  warnings: string[];
}

export function metricsFor(likelihood: Likelihood, y: Float64Array, eta: Float64Array): FitMetrics {
  const mean = new Float64Array(eta.length);
  for (let t = 0; t < eta.length; t++) mean[t] = inverseLink(likelihood, eta[t] as number);
  if (likelihood === 'gaussian') return { rmse: rmse(y, mean) };
  if (likelihood === 'bernoulli') return { logLoss: logLoss(y, mean), auc: auc(y, eta) };
  return { deviance: meanPoissonDeviance(y, mean) };
}

function childGenerator(uniform: UniformGenerator): UniformGenerator {
  return mulberry32(Math.floor(uniform() * 4294967296));
}

function coldStartOf(index: Int32Array, ids: readonly string[]): { list: { id: string; count: number }[]; total: number } {
  const counts = new Int32Array(ids.length);
  for (let t = 0; t < index.length; t++) counts[index[t] as number] = (counts[index[t] as number] as number) + 1;
  const list: { id: string; count: number }[] = [];
  let total = 0;
  for (let e = 0; e < ids.length; e++) {
    if ((counts[e] as number) < COLD_START_THRESHOLD) {
      total += 1;
      if (list.length < COLD_START_LISTED) list.push({ id: ids[e] ?? '', count: counts[e] as number });
    }
  }
  return { list, total };
}

export async function fitFactorizationMachine(design: Design, options: FitOptions, rng?: UniformGenerator, onProgress?: ProgressCallback): Promise<FitResult> {
  const likelihood = design.likelihood;
  const rank = options.rank;
  if (!Number.isInteger(rank) || rank < MIN_RANK || rank > MAX_RANK) throw new RangeError(`The rank must be a whole number from ${MIN_RANK} to ${MAX_RANK}, got ${rank}.`);
  const method = options.method ?? 'map';
  const hierarchical = options.hierarchical ?? false;
  const folds = options.folds ?? DEFAULT_FOLDS;
  const seed = options.seed ?? DEFAULT_SEED;
  const priorScale = options.priorScale ?? DEFAULT_PRIOR_SCALE;
  const drawCount = options.draws ?? DEFAULT_DRAWS;
  const rows = design.rowIds.length;
  const columns = design.columnIds.length;
  checkRank('observations', rows, columns, design.p, design.n, rank);
  if (folds !== 0 && (folds < 2 || folds > design.n)) throw new RangeError(`folds must be 0 or from 2 to the number of observations, got ${folds}.`);

  const uniform = rng ?? mulberry32(seed);
  const foldGenerator = childGenerator(uniform);
  const fitGenerator = childGenerator(uniform);
  const variationalGenerator = childGenerator(uniform);
  const ppcGenerator = childGenerator(uniform);

  const prepared = prepareDesign(design);
  const penalty = { priorScale, hierarchical };
  const specOf = (kind: ModelKind): ModelSpec => ({ kind, likelihood, rows, columns, p: design.p, rank, penalty });
  const kinds: ModelKind[] = ['intercept', 'mainEffects', 'fm'];
  const totalFits = (folds >= 2 ? folds * 3 : 0) + 3 + (method === 'variational' ? 1 : 0);
  let completedFits = 0;

  const report = async (phase: FitPhase, fold: number | null, model: ModelKind, iteration: number, objective: number): Promise<void> => {
    if (!onProgress) return;
    const answer = await onProgress({ phase, fold, model, iteration, objective, completedFits, totalFits });
    if (answer === false) throw new FitCancelledError();
  };
  const runFit = async (data: FitData, kind: ModelKind, phase: FitPhase, fold: number | null): Promise<MapFit> => {
    const spec = specOf(kind);
    const fit = await fitMap(kind === 'intercept' ? { ...data, x: new Float64Array(0) } : data, spec, childGenerator(fitGenerator), { threads: options.threads, ...options.map }, (iteration, objective) => report(phase, fold, kind, iteration, objective));
    completedFits += 1;
    return fit;
  };

  // 1. Cross-validation.
  const heldOutEta: Record<ModelKind, Float64Array> | null = folds >= 2 ? { intercept: new Float64Array(design.n), mainEffects: new Float64Array(design.n), fm: new Float64Array(design.n) } : null;
  if (heldOutEta !== null) {
    const fold = assignFolds(design.y, folds, likelihood === 'bernoulli', foldGenerator);
    for (let f = 0; f < folds; f++) {
      const { train, test } = splitFold(fold, f);
      const trainData = subsetData(prepared.data, design.p, train);
      const testData = subsetData(prepared.data, design.p, test);
      for (const kind of kinds) {
        const fit = await runFit(trainData, kind, 'cross-validation', f + 1);
        const eta = linearPredictor(fit.theta, kind === 'intercept' ? { ...testData, x: new Float64Array(0) } : testData, fit.layout);
        const target = heldOutEta[kind];
        for (let s = 0; s < test.length; s++) target[test[s] as number] = eta[s] as number;
      }
    }
  }

  // 2. All the data.
  const full: Partial<Record<ModelKind, MapFit>> = {};
  const inSampleEta: Partial<Record<ModelKind, Float64Array>> = {};
  for (const kind of kinds) {
    const fit = await runFit(prepared.data, kind, 'fit', null);
    full[kind] = fit;
    inSampleEta[kind] = linearPredictor(fit.theta, kind === 'intercept' ? { ...prepared.data, x: new Float64Array(0) } : prepared.data, fit.layout);
  }
  const fmFit = full.fm;
  const fmEta = inSampleEta.fm;
  if (fmFit === undefined || fmEta === undefined) throw new Error('fitFactorizationMachine: the full fit did not run');
  const metricsOf = (kind: ModelKind): ModelMetrics => ({
    inSample: metricsFor(likelihood, design.y, inSampleEta[kind] ?? new Float64Array(design.n)),
    heldOut: heldOutEta === null ? null : metricsFor(likelihood, design.y, heldOutEta[kind]),
  });
  const metrics = { fm: metricsOf('fm'), mainEffects: metricsOf('mainEffects'), intercept: metricsOf('intercept') };
  const model = toFittedModel(prepared, fmFit);
  const convergence: Convergence = {
    iterations: fmFit.iterations,
    evaluations: fmFit.evaluations,
    objective: fmFit.objective,
    gradientNorm: fmFit.gradientNorm,
    reason: fmFit.reason,
    converged: fmFit.reason === 'ftol' || fmFit.reason === 'gtol',
    history: fmFit.history,
  };

  const warnings = [...design.warnings];
  for (const kind of kinds) {
    const fit = full[kind];
    if (fit && fit.reason !== 'ftol' && fit.reason !== 'gtol') {
      warnings.push(`The ${kind === 'fm' ? 'factorization machine' : kind === 'mainEffects' ? 'main-effects' : 'intercept-only'} fit stopped before converging (${fit.reason === 'max-iterations' ? `iteration limit of ${fit.iterations} reached` : 'no step lowered the objective'}); its results may be off.`);
    }
  }

  // 3. Variational inference.
  let draws: FitResult['draws'] = null;
  let mainEffectIntervals: MainEffectIntervals | null = null;
  let ppcTheta: ((replicate: number) => Float64Array) | null = null;
  if (method === 'variational') {
    const vi = await fitVariational(prepared.data, fmFit.layout, penalty, fmFit.theta, childGenerator(variationalGenerator), { threads: options.threads, ...options.variational }, (iteration, objective) => report('variational', null, 'fm', iteration, objective));
    if (vi.stopped) throw new FitCancelledError();
    completedFits += 1;
    const factorDraws = drawFactors(vi, fmFit.layout, drawCount, childGenerator(variationalGenerator));
    draws = { count: drawCount, gamma: factorDraws.gamma, delta: factorDraws.delta, history: vi.history, iterations: vi.iterations };
    mainEffectIntervals = intervalsFrom(vi.mean, vi.sd, fmFit.layout, prepared.xMean, prepared.xSd);
    const thetaGenerator = childGenerator(variationalGenerator);
    const normal = normalGenerator(thetaGenerator);
    ppcTheta = () => {
      const theta = new Float64Array(vi.mean.length);
      for (let l = 0; l < theta.length; l++) theta[l] = (vi.mean[l] as number) + (vi.sd[l] as number) * normal();
      return theta;
    };
  }

  // 4. Checks and summaries.
  const layout = fmFit.layout;
  const fittedMean = new Float64Array(design.n);
  for (let t = 0; t < design.n; t++) fittedMean[t] = inverseLink(likelihood, fmEta[t] as number);
  const plugInSigma = model.sigma ?? 0;
  const ppc = posteriorPredictive(
    likelihood,
    design.y,
    (replicate) => {
      if (ppcTheta === null) return { mean: fittedMean, sigma: plugInSigma };
      const theta = ppcTheta(replicate);
      const eta = linearPredictor(theta, prepared.data, layout);
      for (let t = 0; t < eta.length; t++) eta[t] = inverseLink(likelihood, eta[t] as number);
      return { mean: eta, sigma: layout.logSigma >= 0 ? Math.exp(theta[layout.logSigma] as number) : 0 };
    },
    ppcTheta === null ? 'plug-in' : 'posterior',
    ppcGenerator,
  );
  let calibrationResult: Calibration | null = null;
  if (likelihood === 'bernoulli') {
    const eta = heldOutEta === null ? fmEta : heldOutEta.fm;
    const probability = new Float64Array(eta.length);
    for (let t = 0; t < eta.length; t++) probability[t] = inverseLink('bernoulli', eta[t] as number);
    calibrationResult = calibration(design.y, probability, heldOutEta === null ? 'in-sample' : 'held-out');
  }
  const coldRows = coldStartOf(design.row, design.rowIds);
  const coldColumns = coldStartOf(design.column, design.columnIds);
  if (coldRows.total + coldColumns.total > 0) {
    warnings.push(
      `Cold start: ${coldRows.total} row and ${coldColumns.total} column entities have fewer than ${COLD_START_THRESHOLD} observations; their factors are mostly the prior (near 0), so do not read their position on a map as a finding.`,
    );
  }
  return {
    likelihood,
    rank,
    method,
    hierarchical,
    seed,
    folds,
    priorScale,
    model,
    convergence,
    metrics,
    draws,
    mainEffectIntervals,
    ardScales: hierarchical ? ardScales(fmFit.theta, layout) : null,
    coldStart: { threshold: COLD_START_THRESHOLD, rows: coldRows.list, columns: coldColumns.list, rowCount: coldRows.total, columnCount: coldColumns.total },
    ppc,
    calibration: calibrationResult,
    warnings,
  };
}

/** 95% intervals of the main effects from the variational marginals, in raw covariate units. */
function intervalsFrom(mean: Float64Array, sd: Float64Array, layout: Layout, xMean: Float64Array, xSd: Float64Array): MainEffectIntervals {
  const z = 1.959963984540054;
  const make = (m: Float64Array, s: Float64Array): Interval => {
    const lower = new Float64Array(m.length);
    const upper = new Float64Array(m.length);
    for (let e = 0; e < m.length; e++) {
      lower[e] = (m[e] as number) - z * (s[e] as number);
      upper[e] = (m[e] as number) + z * (s[e] as number);
    }
    return { mean: m, sd: s, lower, upper };
  };
  const p = layout.p;
  const betaMean = new Float64Array(p);
  const betaSd = new Float64Array(p);
  // μ_raw = μ − Σ β_q mean_q / sd_q: under the mean-field q its variance is the sum of the parts'.
  let muMean = mean[layout.mu] as number;
  let muVariance = (sd[layout.mu] as number) ** 2;
  for (let q = 0; q < p; q++) {
    const scale = 1 / (xSd[q] as number);
    betaMean[q] = (mean[layout.beta + q] as number) * scale;
    betaSd[q] = (sd[layout.beta + q] as number) * scale;
    muMean -= (betaMean[q] as number) * (xMean[q] as number);
    muVariance += ((betaSd[q] as number) * (xMean[q] as number)) ** 2;
  }
  return {
    mu: make(Float64Array.of(muMean), Float64Array.of(Math.sqrt(muVariance))),
    a: make(mean.slice(layout.a, layout.a + layout.rows), sd.slice(layout.a, layout.a + layout.rows)),
    b: make(mean.slice(layout.b, layout.b + layout.columns), sd.slice(layout.b, layout.b + layout.columns)),
    beta: make(betaMean, betaSd),
  };
}
