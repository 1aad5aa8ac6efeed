/**
 * Posterior-predictive checks and calibration, as small structures a page can plot.
 *
 * Posterior predictive (Gelman, Meng & Stern 1996; Gelman et al., Bayesian Data Analysis, 3rd ed.,
 * ch. 6): replicate the outcomes from the fitted model and compare their distribution and a few
 * statistics with the observed ones. With MAP every replicate uses the fitted values (a plug-in
 * check, which ignores parameter uncertainty); with the variational method each replicate uses
 * its own parameter draw.
 */
import { normalGenerator, type UniformGenerator } from '@/lib/align/random';
import type { Likelihood } from './settings';

/** Replicated data sets (20: enough for a band, cheap at 1,000,000 observations; common practice). */
export const PPC_REPLICATES = 20;
/** Bins of the continuous (gaussian) histogram. */
export const PPC_BINS = 30;
/** Largest count with its own bin in a Poisson histogram; the last bin holds this and everything above. */
export const PPC_MAX_COUNT_BIN = 50;
/** Equal-width bins of predicted probability in the calibration table. */
export const CALIBRATION_BINS = 10;
/** Bins of the predicted-probability histograms split by observed outcome. */
export const SEPARATION_BINS = 20;

export interface OutcomeHistogram {
  /** Bin b covers [lower[b], upper[b]); with `lastOpen` the last bin covers [lower, ∞). */
  lower: Float64Array;
  upper: Float64Array;
  lastOpen: boolean;
  /** Observed count per bin. */
  observed: Float64Array;
  /** replicates × bins counts, row-major. */
  replicated: Float64Array;
  /** Per bin: mean, 5% and 95% of the replicated counts. */
  replicatedMean: Float64Array;
  replicatedLow: Float64Array;
  replicatedHigh: Float64Array;
}

export interface PredictiveStatistic {
  name: 'mean' | 'sd' | 'min' | 'max' | 'zeros';
  observed: number;
  /** One value per replicate. */
  replicated: Float64Array;
  /** Share of replicates with a value ≥ the observed one (ties count half); near 0 or 1 flags misfit. */
  pValue: number;
}

export interface PosteriorPredictive {
  replicates: number;
  /** "plug-in" for MAP (fitted values), "posterior" when each replicate has its own parameter draw. */
  source: 'plug-in' | 'posterior';
  histogram: OutcomeHistogram;
  statistics: PredictiveStatistic[];
}

/** log Γ(x) for x > 0 (Lanczos approximation, g = 7, 9 terms; Numerical Recipes 3rd ed. §6.1 form), for the Poisson sampler. */
export function logGamma(x: number): number {
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  const z = x - 1;
  let a = c[0] as number;
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += (c[i] as number) / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * A Poisson(λ) draw: multiplication of uniforms for λ < 10, else Hörmann's transformed rejection
 * PTRS ("The transformed rejection method for generating Poisson random variables", Insurance:
 * Mathematics and Economics 12, 1993), the algorithm NumPy uses for λ ≥ 10.
 */
export function poissonSample(lambda: number, uniform: UniformGenerator): number {
  if (!(lambda > 0)) return 0;
  if (lambda < 10) {
    const limit = Math.exp(-lambda);
    let k = 0;
    let product = uniform();
    while (product > limit) {
      k += 1;
      product *= uniform();
    }
    return k;
  }
  const slam = Math.sqrt(lambda);
  const loglam = Math.log(lambda);
  const b = 0.931 + 2.53 * slam;
  const a = -0.059 + 0.02483 * b;
  const invalpha = 1.1239 + 1.1328 / (b - 3.4);
  const vr = 0.9277 - 3.6224 / (b - 2);
  for (;;) {
    const u = uniform() - 0.5;
    const v = uniform();
    const us = 0.5 - Math.abs(u);
    const k = Math.floor(((2 * a) / us + b) * u + lambda + 0.43);
    if (us >= 0.07 && v <= vr) return k;
    if (k < 0 || (us < 0.013 && v > us)) continue;
    if (Math.log(v) + Math.log(invalpha) - Math.log(a / (us * us) + b) <= -lambda + k * loglam - logGamma(k + 1)) return k;
  }
}

function quantile(sorted: Float64Array, q: number): number {
  if (sorted.length === 0) return Number.NaN;
  const position = q * (sorted.length - 1);
  const lo = Math.floor(position);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return (sorted[lo] as number) + (position - lo) * ((sorted[hi] as number) - (sorted[lo] as number));
}

interface Bins {
  lower: Float64Array;
  upper: Float64Array;
  lastOpen: boolean;
  binOf: (value: number) => number;
}

function binsFor(likelihood: Likelihood, y: Float64Array): Bins {
  let min = Infinity;
  let max = -Infinity;
  for (let t = 0; t < y.length; t++) {
    min = Math.min(min, y[t] as number);
    max = Math.max(max, y[t] as number);
  }
  if (likelihood === 'bernoulli') {
    return { lower: Float64Array.of(0, 1), upper: Float64Array.of(1, 2), lastOpen: false, binOf: (v) => (v >= 1 ? 1 : 0) };
  }
  if (likelihood === 'poisson') {
    const top = Math.min(Math.max(1, max), PPC_MAX_COUNT_BIN);
    const lower = new Float64Array(top + 1);
    const upper = new Float64Array(top + 1);
    for (let k = 0; k <= top; k++) {
      lower[k] = k;
      upper[k] = k + 1;
    }
    return { lower, upper, lastOpen: true, binOf: (v) => Math.min(top, Math.max(0, Math.floor(v))) };
  }
  // Gaussian: equal-width bins over the observed range widened by 10% each side; replicated values
  // beyond it are counted in the end bins, so every replicate's counts sum to n.
  const pad = 0.1 * (max - min || 1);
  const from = min - pad;
  const width = (max - min + 2 * pad) / PPC_BINS;
  const lower = new Float64Array(PPC_BINS);
  const upper = new Float64Array(PPC_BINS);
  for (let b = 0; b < PPC_BINS; b++) {
    lower[b] = from + b * width;
    upper[b] = from + (b + 1) * width;
  }
  return { lower, upper, lastOpen: false, binOf: (v) => Math.min(PPC_BINS - 1, Math.max(0, Math.floor((v - from) / width))) };
}

function statisticsOf(values: Float64Array): Record<PredictiveStatistic['name'], number> {
  let sum = 0;
  let min = Infinity;
  let max = -Infinity;
  let zeros = 0;
  for (let t = 0; t < values.length; t++) {
    const v = values[t] as number;
    sum += v;
    if (v < min) min = v;
    if (v > max) max = v;
    if (v === 0) zeros++;
  }
  const mean = sum / values.length;
  let squares = 0;
  for (let t = 0; t < values.length; t++) squares += ((values[t] as number) - mean) ** 2;
  return { mean, sd: Math.sqrt(squares / values.length), min, max, zeros: zeros / values.length };
}

/**
 * Replicates outcomes. `meanFor(r)` gives replicate r's fitted means (η for gaussian, probabilities
 * for bernoulli, expected counts for poisson) and, for gaussian, its noise sd.
 */
export function posteriorPredictive(
  likelihood: Likelihood,
  y: Float64Array,
  meanFor: (replicate: number) => { mean: Float64Array; sigma: number },
  source: PosteriorPredictive['source'],
  uniform: UniformGenerator,
  replicates = PPC_REPLICATES,
): PosteriorPredictive {
  const n = y.length;
  const bins = binsFor(likelihood, y);
  const B = bins.lower.length;
  const observed = new Float64Array(B);
  for (let t = 0; t < n; t++) {
    const b = bins.binOf(y[t] as number);
    observed[b] = (observed[b] as number) + 1;
  }
  const replicated = new Float64Array(replicates * B);
  const names: PredictiveStatistic['name'][] = likelihood === 'bernoulli' ? ['mean'] : likelihood === 'poisson' ? ['mean', 'sd', 'zeros', 'max'] : ['mean', 'sd', 'min', 'max'];
  const replicatedStats = names.map(() => new Float64Array(replicates));
  const normal = normalGenerator(uniform);
  const values = new Float64Array(n);
  for (let r = 0; r < replicates; r++) {
    const { mean, sigma } = meanFor(r);
    for (let t = 0; t < n; t++) {
      const m = mean[t] as number;
      const v = likelihood === 'gaussian' ? m + sigma * normal() : likelihood === 'bernoulli' ? (uniform() < m ? 1 : 0) : poissonSample(m, uniform);
      values[t] = v;
      const b = r * B + bins.binOf(v);
      replicated[b] = (replicated[b] as number) + 1;
    }
    const stats = statisticsOf(values);
    names.forEach((name, s) => {
      const target = replicatedStats[s];
      if (target) target[r] = stats[name];
    });
  }
  const replicatedMean = new Float64Array(B);
  const replicatedLow = new Float64Array(B);
  const replicatedHigh = new Float64Array(B);
  const column = new Float64Array(replicates);
  for (let b = 0; b < B; b++) {
    let total = 0;
    for (let r = 0; r < replicates; r++) {
      column[r] = replicated[r * B + b] as number;
      total += column[r] as number;
    }
    column.sort();
    replicatedMean[b] = total / replicates;
    replicatedLow[b] = quantile(column, 0.05);
    replicatedHigh[b] = quantile(column, 0.95);
  }
  const observedStats = statisticsOf(y);
  const statistics = names.map((name, s): PredictiveStatistic => {
    const rep = replicatedStats[s] ?? new Float64Array(0);
    const value = observedStats[name];
    let above = 0;
    for (let r = 0; r < rep.length; r++) above += (rep[r] as number) > value ? 1 : (rep[r] as number) === value ? 0.5 : 0;
    return { name, observed: value, replicated: rep, pValue: above / replicates };
  });
  return { replicates, source, histogram: { ...bins, observed, replicated, replicatedMean, replicatedLow, replicatedHigh }, statistics };
}

export interface CalibrationBin {
  lower: number;
  upper: number;
  count: number;
  /** Mean predicted probability in the bin (NaN when empty). */
  meanPredicted: number;
  /** Share of 1s among the bin's observations (NaN when empty). */
  observedRate: number;
}

export interface Calibration {
  /** "held-out" (out-of-fold predictions from cross-validation) or "in-sample" (no cross-validation). */
  source: 'held-out' | 'in-sample';
  bins: CalibrationBin[];
  /** Histograms of the predicted probability for observed 0s and observed 1s, SEPARATION_BINS equal-width bins over [0, 1]. */
  byOutcome: { lower: Float64Array; upper: Float64Array; zeros: Float64Array; ones: Float64Array };
}

/** Reliability table (equal-width bins, the layout of sklearn.calibration.calibration_curve with strategy="uniform") and the split histograms. */
export function calibration(y: Float64Array, probability: Float64Array, source: Calibration['source']): Calibration {
  const counts = new Float64Array(CALIBRATION_BINS);
  const predicted = new Float64Array(CALIBRATION_BINS);
  const ones = new Float64Array(CALIBRATION_BINS);
  const lower = new Float64Array(SEPARATION_BINS);
  const upper = new Float64Array(SEPARATION_BINS);
  for (let b = 0; b < SEPARATION_BINS; b++) {
    lower[b] = b / SEPARATION_BINS;
    upper[b] = (b + 1) / SEPARATION_BINS;
  }
  const zerosHistogram = new Float64Array(SEPARATION_BINS);
  const onesHistogram = new Float64Array(SEPARATION_BINS);
  for (let t = 0; t < y.length; t++) {
    const p = probability[t] as number;
    const b = Math.min(CALIBRATION_BINS - 1, Math.floor(p * CALIBRATION_BINS));
    counts[b] = (counts[b] as number) + 1;
    predicted[b] = (predicted[b] as number) + p;
    const s = Math.min(SEPARATION_BINS - 1, Math.floor(p * SEPARATION_BINS));
    if (y[t] === 1) {
      ones[b] = (ones[b] as number) + 1;
      onesHistogram[s] = (onesHistogram[s] as number) + 1;
    } else zerosHistogram[s] = (zerosHistogram[s] as number) + 1;
  }
  const bins: CalibrationBin[] = [];
  for (let b = 0; b < CALIBRATION_BINS; b++) {
    const count = counts[b] as number;
    bins.push({
      lower: b / CALIBRATION_BINS,
      upper: (b + 1) / CALIBRATION_BINS,
      count,
      meanPredicted: count > 0 ? (predicted[b] as number) / count : Number.NaN,
      observedRate: count > 0 ? (ones[b] as number) / count : Number.NaN,
    });
  }
  return { source, bins, byOutcome: { lower, upper, zeros: zerosHistogram, ones: onesHistogram } };
}
