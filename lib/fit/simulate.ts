/** Seeded simulated designs (factorization-machine data with known truth) for the lib/fit tests, the benchmark (scripts/bench-fit.ts) and demo data. */
import { mulberry32, normalGenerator } from '@/lib/align/random';
import type { Design } from '@/lib/fit/observations';
import type { Likelihood } from '@/lib/fit/settings';

export interface Simulation {
  design: Design;
  /** True γ (I × K) and δ (J × K). */
  gamma: Float64Array;
  delta: Float64Array;
  /** True row and column main effects. */
  a: Float64Array;
  b: Float64Array;
  /** True linear predictor per observation. */
  eta: Float64Array;
  /** True interaction γ_i·δ_j per observation. */
  interaction: Float64Array;
}

export interface SimulationOptions {
  rows: number;
  columns: number;
  rank: number;
  likelihood: Likelihood;
  seed: number;
  /** Observations; default every pair once (rows × columns). With fewer, pairs are drawn at random. */
  n?: number;
  /** Gaussian noise sd (default 1). */
  noiseSd?: number;
  /** sd of the true factor elements per dimension (default 1 for every dimension). */
  factorSd?: number[];
  mainSd?: number;
  intercept?: number;
}

export function simulate(options: SimulationOptions): Simulation {
  const { rows: I, columns: J, rank: K, likelihood, seed } = options;
  const uniform = mulberry32(seed);
  const normal = normalGenerator(uniform);
  const factorSd = options.factorSd ?? Array.from({ length: K }, () => 1);
  const mainSd = options.mainSd ?? 0.5;
  const mu = options.intercept ?? 0;
  const gamma = new Float64Array(I * K);
  const delta = new Float64Array(J * K);
  for (let i = 0; i < I; i++) for (let k = 0; k < K; k++) gamma[i * K + k] = (factorSd[k] ?? 1) * normal();
  for (let j = 0; j < J; j++) for (let k = 0; k < K; k++) delta[j * K + k] = normal();
  const a = new Float64Array(I).map(() => mainSd * normal());
  const b = new Float64Array(J).map(() => mainSd * normal());
  const all = options.n === undefined;
  const n = options.n ?? I * J;
  const row = new Int32Array(n);
  const column = new Int32Array(n);
  const y = new Float64Array(n);
  const eta = new Float64Array(n);
  const interaction = new Float64Array(n);
  const noiseSd = options.noiseSd ?? 1;
  for (let t = 0; t < n; t++) {
    const i = all ? Math.floor(t / J) : Math.floor(uniform() * I);
    const j = all ? t % J : Math.floor(uniform() * J);
    row[t] = i;
    column[t] = j;
    let dot = 0;
    for (let k = 0; k < K; k++) dot += (gamma[i * K + k] as number) * (delta[j * K + k] as number);
    interaction[t] = dot;
    const e = mu + (a[i] as number) + (b[j] as number) + dot;
    eta[t] = e;
    if (likelihood === 'gaussian') y[t] = e + noiseSd * normal();
    else if (likelihood === 'bernoulli') y[t] = uniform() < 1 / (1 + Math.exp(-e)) ? 1 : 0;
    else {
      const limit = Math.exp(-Math.exp(e));
      let k = 0;
      let product = uniform();
      while (product > limit) {
        k++;
        product *= uniform();
      }
      y[t] = k;
    }
  }
  const design: Design = {
    likelihood,
    n,
    rowIds: Array.from({ length: I }, (_, i) => `r${i}`),
    columnIds: Array.from({ length: J }, (_, j) => `c${j}`),
    row,
    column,
    y,
    p: 0,
    covariateNames: [],
    x: new Float64Array(0),
    offset: null,
    warnings: [],
  };
  return { design, gamma, delta, a, b, eta, interaction };
}

export function correlation(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const n = a.length;
  let ma = 0;
  let mb = 0;
  for (let t = 0; t < n; t++) {
    ma += a[t] as number;
    mb += b[t] as number;
  }
  ma /= n;
  mb /= n;
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let t = 0; t < n; t++) {
    const da = (a[t] as number) - ma;
    const db = (b[t] as number) - mb;
    sab += da * db;
    saa += da * da;
    sbb += db * db;
  }
  return sab / Math.sqrt(saa * sbb);
}
