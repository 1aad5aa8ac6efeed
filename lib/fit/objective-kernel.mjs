// @ts-check
/**
 * The data term of the factorization machine's objective (lib/fit/model.ts): one pass over a range
 * of observations, accumulating the negative log likelihood and its gradient. Written once in plain
 * JavaScript so that the main thread and the worker threads (objective-worker.mjs) run the very same
 * code: a worker is loaded by Node's own loader, which runs no TypeScript under vitest (the reason
 * lib/projection/knn-kernel.mjs gives). Types are in objective-kernel.d.mts.
 *
 * η_t = μ + offset_t + a_i + b_j + x_tᵀβ + γ_i·δ_j; per observation, with w = ∂nll/∂η:
 *   gaussian (kind 0)  returns Σ r², r = y − η; w = −r·precision (the caller adds n·log σ)
 *   bernoulli (kind 1) nll = log(1 + e^η) − yη;  w = σ(η) − y
 *   poisson (kind 2)   nll = e^η − yη;           w = e^η − y
 */

export const KIND_GAUSSIAN = 0;
export const KIND_BERNOULLI = 1;
export const KIND_POISSON = 2;

/**
 * @param {Float64Array} theta
 * @param {Float64Array} grad  accumulated into (not cleared here)
 * @param {Int32Array} row
 * @param {Int32Array} column
 * @param {Float64Array} y
 * @param {Float64Array} x  n × p
 * @param {Float64Array | null} offset
 * @param {{ p: number, rank: number, entities: boolean, kind: number, mu: number, a: number, b: number, beta: number, gamma: number, delta: number }} spec
 * @param {number} precision  1/σ² for gaussian, else ignored
 * @param {number} start
 * @param {number} end
 * @returns {number} Σ r² (gaussian) or Σ nll (bernoulli, poisson) over [start, end)
 */
export function accumulateRange(theta, grad, row, column, y, x, offset, spec, precision, start, end) {
  const p = spec.p;
  const K = spec.rank;
  const entities = spec.entities;
  const kind = spec.kind;
  const aOff = spec.a;
  const bOff = spec.b;
  const betaOff = spec.beta;
  const gOff = spec.gamma;
  const dOff = spec.delta;
  const muIndex = spec.mu;
  const mu = theta[muIndex];
  let loss = 0;
  let gradMu = 0;
  for (let t = start; t < end; t++) {
    const i = row[t];
    const j = column[t];
    let eta = mu;
    if (offset !== null) eta += offset[t];
    if (entities) eta += theta[aOff + i] + theta[bOff + j];
    const xOff = t * p;
    for (let q = 0; q < p; q++) eta += x[xOff + q] * theta[betaOff + q];
    const gi = gOff + i * K;
    const di = dOff + j * K;
    for (let k = 0; k < K; k++) eta += theta[gi + k] * theta[di + k];
    const yt = y[t];
    let w;
    if (kind === 0) {
      const r = yt - eta;
      loss += r * r;
      w = -r * precision;
    } else if (kind === 1) {
      // log(1 + e^η) and σ(η) without overflow
      if (eta > 0) {
        const e = Math.exp(-eta);
        loss += eta + Math.log1p(e) - yt * eta;
        w = 1 / (1 + e) - yt;
      } else {
        const e = Math.exp(eta);
        loss += Math.log1p(e) - yt * eta;
        w = e / (1 + e) - yt;
      }
    } else {
      const mean = Math.exp(eta);
      loss += mean - yt * eta;
      w = mean - yt;
    }
    gradMu += w;
    if (entities) {
      grad[aOff + i] += w;
      grad[bOff + j] += w;
    }
    for (let q = 0; q < p; q++) grad[betaOff + q] += w * x[xOff + q];
    for (let k = 0; k < K; k++) {
      const g = theta[gi + k];
      const d = theta[di + k];
      grad[gi + k] += w * d;
      grad[di + k] += w * g;
    }
  }
  grad[muIndex] += gradMu;
  return loss;
}
