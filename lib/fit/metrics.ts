/**
 * Fit metrics, defined as scikit-learn defines them (checked against Debian's python3-sklearn 1.2
 * in tests/unit/fit/metrics-reference.test.ts):
 *   rmse                   √(mean (y − ŷ)²)            (sklearn mean_squared_error, squared=False)
 *   logLoss                −mean(y log p + (1−y) log(1−p)), p clipped to [ε, 1−ε], ε = 2⁻⁵²
 *                                                       (sklearn log_loss, eps="auto" = float64 machine epsilon)
 *   auc                    area under the ROC curve, ties in the scores counted half
 *                                                       (sklearn roc_auc_score; Mann–Whitney U / n₀n₁)
 *   deviance               mean Poisson deviance 2·mean(y log(y/μ) − y + μ), y log y = 0 at y = 0
 *                                                       (sklearn mean_poisson_deviance)
 */

export function rmse(y: Float64Array, predicted: Float64Array): number {
  let total = 0;
  for (let t = 0; t < y.length; t++) {
    const r = (y[t] as number) - (predicted[t] as number);
    total += r * r;
  }
  return Math.sqrt(total / y.length);
}

/** Clip of the probabilities, as sklearn 1.2's eps="auto" for float64, so a confident wrong prediction costs ≈36, not ∞. */
export const LOG_LOSS_EPSILON = Number.EPSILON;

export function logLoss(y: Float64Array, probability: Float64Array): number {
  let total = 0;
  for (let t = 0; t < y.length; t++) {
    const p = Math.min(1 - LOG_LOSS_EPSILON, Math.max(LOG_LOSS_EPSILON, probability[t] as number));
    total -= (y[t] as number) === 1 ? Math.log(p) : Math.log(1 - p);
  }
  return total / y.length;
}

/**
 * ROC AUC by ranks: sort the scores, give tied scores their average rank, then
 * AUC = (Σ ranks of positives − n₁(n₁+1)/2) / (n₀ n₁). NaN when one class is absent (sklearn raises).
 */
export function auc(y: Float64Array, score: Float64Array): number {
  const n = y.length;
  const order = new Int32Array(n);
  for (let t = 0; t < n; t++) order[t] = t;
  order.sort((p, q) => (score[p] as number) - (score[q] as number));
  let positives = 0;
  let rankSum = 0;
  let start = 0;
  while (start < n) {
    let end = start + 1;
    const value = score[order[start] as number] as number;
    while (end < n && (score[order[end] as number] as number) === value) end++;
    // ranks start+1 … end share their mean
    const meanRank = (start + 1 + end) / 2;
    for (let r = start; r < end; r++) {
      if ((y[order[r] as number] as number) === 1) {
        positives += 1;
        rankSum += meanRank;
      }
    }
    start = end;
  }
  const negatives = n - positives;
  if (positives === 0 || negatives === 0) return Number.NaN;
  return (rankSum - (positives * (positives + 1)) / 2) / (positives * negatives);
}

export function meanPoissonDeviance(y: Float64Array, mean: Float64Array): number {
  let total = 0;
  for (let t = 0; t < y.length; t++) {
    const yt = y[t] as number;
    const mu = mean[t] as number;
    total += 2 * ((yt > 0 ? yt * Math.log(yt / mu) : 0) - yt + mu);
  }
  return total / y.length;
}
