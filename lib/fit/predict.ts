/**
 * Predictions from a fitted model for pairs of entities, including pairs never observed together
 * (the point of a factorization: γ_i·δ_j is defined for every i and j once both were seen with
 * someone) and entities never seen at all (cold start: their a, b, γ, δ are the prior mean 0, so
 * the prediction falls back on the other entity's effects and μ).
 */
import type { FittedModel } from './map';
import { inverseLink } from './model';

export interface PairPrediction {
  /** Linear predictor η per pair. */
  eta: Float64Array;
  /** E[y]: η (gaussian), probability (bernoulli) or expected count (poisson). */
  mean: Float64Array;
  /** The interaction term γ_i·δ_j per pair (0 when either entity is unknown). */
  interaction: Float64Array;
  /** 1 when the row entity was in the fitted data, else 0 (cold start). */
  rowKnown: Uint8Array;
  columnKnown: Uint8Array;
}

export interface PredictOptions {
  /**
   * pairs × p raw covariates, row-major, in the model's covariateNames order. Default: every pair
   * at the covariate means of the fitted data (for an indicator, its share), i.e. an "average" pair.
   */
  covariates?: Float64Array;
  /** Offset per pair on the linear-predictor scale (log exposure); default 0. */
  offset?: Float64Array;
}

export function predictPairs(model: FittedModel, pairs: readonly (readonly [string, string])[], options: PredictOptions = {}): PairPrediction {
  const n = pairs.length;
  const p = model.beta.length;
  const K = model.rank;
  if (options.covariates && options.covariates.length !== n * p) throw new RangeError(`predictPairs: covariates must hold ${n} × ${p} values, got ${options.covariates.length}`);
  if (options.offset && options.offset.length !== n) throw new RangeError(`predictPairs: offset must hold ${n} values, got ${options.offset.length}`);
  const rowIndex = new Map(model.rowIds.map((id, index) => [id, index]));
  const columnIndex = new Map(model.columnIds.map((id, index) => [id, index]));
  let averageCovariates = 0;
  for (let q = 0; q < p; q++) averageCovariates += (model.beta[q] as number) * (model.covariateMeans[q] as number);
  const eta = new Float64Array(n);
  const mean = new Float64Array(n);
  const interaction = new Float64Array(n);
  const rowKnown = new Uint8Array(n);
  const columnKnown = new Uint8Array(n);
  pairs.forEach(([rowId, columnId], t) => {
    const i = rowIndex.get(rowId);
    const j = columnIndex.get(columnId);
    let value = model.mu + (options.offset ? (options.offset[t] as number) : 0);
    if (options.covariates) for (let q = 0; q < p; q++) value += (model.beta[q] as number) * (options.covariates[t * p + q] as number);
    else value += averageCovariates;
    if (i !== undefined) {
      rowKnown[t] = 1;
      value += model.a[i] as number;
    }
    if (j !== undefined) {
      columnKnown[t] = 1;
      value += model.b[j] as number;
    }
    if (i !== undefined && j !== undefined) {
      let dot = 0;
      for (let k = 0; k < K; k++) dot += (model.gamma[i * K + k] as number) * (model.delta[j * K + k] as number);
      interaction[t] = dot;
      value += dot;
    }
    eta[t] = value;
    mean[t] = inverseLink(model.likelihood, value);
  });
  return { eta, mean, interaction, rowKnown, columnKnown };
}

/**
 * Affinity of row entity i for every column entity: γ_i·δ_j for j = 1 … J (the interaction term
 * alone, without main effects), for the map's neighbour panel.
 */
export function rowAffinity(model: FittedModel, rowEntity: number): Float64Array {
  const K = model.rank;
  const J = model.columnIds.length;
  const out = new Float64Array(J);
  for (let j = 0; j < J; j++) {
    let dot = 0;
    for (let k = 0; k < K; k++) dot += (model.gamma[rowEntity * K + k] as number) * (model.delta[j * K + k] as number);
    out[j] = dot;
  }
  return out;
}
