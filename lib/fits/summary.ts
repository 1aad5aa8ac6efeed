/**
 * What a fit stores for its page and API, as plain JSON: typed arrays become arrays and NaN or ±∞
 * becomes null (JSON has neither, and jsonb refuses them). Pure: no database, no server-only
 * import, so the fit page's client components share these types.
 */
import type { FitMetrics, FitResult, Interval } from '@/lib/fit/fit-factorization-machine';

export type Nullable = number | null;

/** A finite number, or null. */
export function finite(value: number | undefined | null): Nullable {
  return value === undefined || value === null || !Number.isFinite(value) ? null : value;
}

export function finiteArray(values: ArrayLike<number>): Nullable[] {
  return Array.from(values, (v) => finite(v));
}

/** rmse (gaussian), logLoss and auc (bernoulli), deviance (poisson); null where the value was not finite. */
export interface WireMetrics {
  rmse?: Nullable;
  logLoss?: Nullable;
  auc?: Nullable;
  deviance?: Nullable;
}

export interface WireModelMetrics {
  inSample: WireMetrics;
  /** Out-of-fold; null when the fit ran without cross-validation (folds 0). */
  heldOut: WireMetrics | null;
}

export interface WireFitMetrics {
  fm: WireModelMetrics;
  mainEffects: WireModelMetrics;
  intercept: WireModelMetrics;
}

export interface WireConvergence {
  iterations: number;
  evaluations: number;
  objective: Nullable;
  gradientNorm: Nullable;
  reason: string;
  converged: boolean;
  /** Objective per iteration of the full-data factorization-machine fit (at most HISTORY_POINTS, evenly thinned). */
  history: Nullable[];
  /** The variational fit's objective (negative ELBO per observation) per iteration, when method is "variational". */
  variational: { iterations: number; history: Nullable[] } | null;
}

export interface WireInterval {
  mean: Nullable;
  /** Posterior sd and the 2.5% / 97.5% points of the variational marginal; null with MAP. */
  sd: Nullable;
  lower: Nullable;
  upper: Nullable;
}

export interface WireMainEffects {
  /** "variational": means and intervals of the variational marginals; "map": posterior-mode point estimates only. */
  source: 'variational' | 'map';
  intercept: WireInterval;
  covariates: (WireInterval & { name: string })[];
  /** The first MAIN_EFFECTS_LISTED entities per side, in the order they first appear in the file. */
  rows: (WireInterval & { id: string })[];
  columns: (WireInterval & { id: string })[];
  rowCount: number;
  columnCount: number;
}

export interface WirePosteriorPredictive {
  replicates: number;
  source: 'plug-in' | 'posterior';
  histogram: {
    lower: Nullable[];
    /** null for the open last bin of a count histogram. */
    upper: Nullable[];
    lastOpen: boolean;
    observed: number[];
    replicatedMean: Nullable[];
    replicatedLow: Nullable[];
    replicatedHigh: Nullable[];
  };
  statistics: { name: string; observed: Nullable; replicated: Nullable[]; pValue: Nullable }[];
}

export interface WireCalibration {
  source: 'held-out' | 'in-sample';
  bins: { lower: number; upper: number; count: number; meanPredicted: Nullable; observedRate: Nullable }[];
  byOutcome: { lower: number[]; upper: number[]; zeros: number[]; ones: number[] };
}

export interface FitSummary {
  covariateNames: string[];
  /** Gaussian noise sd; null otherwise. */
  sigma: Nullable;
  mainEffects: WireMainEffects;
  /** τ_k per latent dimension with `hierarchical`, else null. */
  ardScales: Nullable[] | null;
  coldStart: FitResult['coldStart'];
  ppc: WirePosteriorPredictive;
  calibration: WireCalibration | null;
  /** Number of variational draws stored with the factor sets; 0 with MAP. */
  draws: number;
}

/** Most points of an objective history kept for the plot. */
export const HISTORY_POINTS = 1000;
/** Most entities per side listed in the main-effects table (the full a_i, b_j are stored as factor-set metadata). */
export const MAIN_EFFECTS_LISTED = 2000;

function thin(values: Float64Array, points = HISTORY_POINTS): Nullable[] {
  if (values.length <= points) return finiteArray(values);
  const out: Nullable[] = [];
  const step = (values.length - 1) / (points - 1);
  for (let i = 0; i < points; i++) out.push(finite(values[Math.round(i * step)]));
  return out;
}

function wireMetrics(metrics: FitMetrics): WireMetrics {
  const out: WireMetrics = {};
  if (metrics.rmse !== undefined) out.rmse = finite(metrics.rmse);
  if (metrics.logLoss !== undefined) out.logLoss = finite(metrics.logLoss);
  if (metrics.auc !== undefined) out.auc = finite(metrics.auc);
  if (metrics.deviance !== undefined) out.deviance = finite(metrics.deviance);
  return out;
}

export function wireFitMetrics(metrics: FitResult['metrics']): WireFitMetrics {
  const of = (m: FitResult['metrics']['fm']): WireModelMetrics => ({ inSample: wireMetrics(m.inSample), heldOut: m.heldOut === null ? null : wireMetrics(m.heldOut) });
  return { fm: of(metrics.fm), mainEffects: of(metrics.mainEffects), intercept: of(metrics.intercept) };
}

export function wireConvergence(result: FitResult): WireConvergence {
  const c = result.convergence;
  return {
    iterations: c.iterations,
    evaluations: c.evaluations,
    objective: finite(c.objective),
    gradientNorm: finite(c.gradientNorm),
    reason: c.reason,
    converged: c.converged,
    history: thin(c.history),
    variational: result.draws ? { iterations: result.draws.iterations, history: thin(result.draws.history) } : null,
  };
}

function intervalAt(interval: Interval, index: number): WireInterval {
  return { mean: finite(interval.mean[index]), sd: finite(interval.sd[index]), lower: finite(interval.lower[index]), upper: finite(interval.upper[index]) };
}

const point = (value: number | undefined): WireInterval => ({ mean: finite(value), sd: null, lower: null, upper: null });

function mainEffectsOf(result: FitResult): WireMainEffects {
  const model = result.model;
  const intervals = result.mainEffectIntervals;
  const rows = Math.min(model.rowIds.length, MAIN_EFFECTS_LISTED);
  const columns = Math.min(model.columnIds.length, MAIN_EFFECTS_LISTED);
  if (intervals) {
    return {
      source: 'variational',
      intercept: intervalAt(intervals.mu, 0),
      covariates: model.covariateNames.map((name, q) => ({ name, ...intervalAt(intervals.beta, q) })),
      rows: model.rowIds.slice(0, rows).map((id, i) => ({ id, ...intervalAt(intervals.a, i) })),
      columns: model.columnIds.slice(0, columns).map((id, j) => ({ id, ...intervalAt(intervals.b, j) })),
      rowCount: model.rowIds.length,
      columnCount: model.columnIds.length,
    };
  }
  return {
    source: 'map',
    intercept: point(model.mu),
    covariates: model.covariateNames.map((name, q) => ({ name, ...point(model.beta[q]) })),
    rows: model.rowIds.slice(0, rows).map((id, i) => ({ id, ...point(model.a[i]) })),
    columns: model.columnIds.slice(0, columns).map((id, j) => ({ id, ...point(model.b[j]) })),
    rowCount: model.rowIds.length,
    columnCount: model.columnIds.length,
  };
}

export function fitSummary(result: FitResult): FitSummary {
  const h = result.ppc.histogram;
  const c = result.calibration;
  return {
    covariateNames: result.model.covariateNames,
    sigma: finite(result.model.sigma),
    mainEffects: mainEffectsOf(result),
    ardScales: result.ardScales ? finiteArray(result.ardScales) : null,
    coldStart: result.coldStart,
    ppc: {
      replicates: result.ppc.replicates,
      source: result.ppc.source,
      histogram: {
        lower: finiteArray(h.lower),
        upper: finiteArray(h.upper),
        lastOpen: h.lastOpen,
        observed: Array.from(h.observed),
        replicatedMean: finiteArray(h.replicatedMean),
        replicatedLow: finiteArray(h.replicatedLow),
        replicatedHigh: finiteArray(h.replicatedHigh),
      },
      statistics: result.ppc.statistics.map((s) => ({ name: s.name, observed: finite(s.observed), replicated: finiteArray(s.replicated), pValue: finite(s.pValue) })),
    },
    calibration: c
      ? {
          source: c.source,
          bins: c.bins.map((b) => ({ lower: b.lower, upper: b.upper, count: b.count, meanPredicted: finite(b.meanPredicted), observedRate: finite(b.observedRate) })),
          byOutcome: { lower: Array.from(c.byOutcome.lower), upper: Array.from(c.byOutcome.upper), zeros: Array.from(c.byOutcome.zeros), ones: Array.from(c.byOutcome.ones) },
        }
      : null,
    draws: result.draws?.count ?? 0,
  };
}
