/**
 * t-SNE (van der Maaten & Hinton, "Visualizing Data using t-SNE", JMLR 9, 2008) by druid.js 0.9
 * (@saehrimnir/druidjs), exact (no Barnes–Hut): Gaussian affinities on squared Euclidean
 * distances, calibrated per point to the perplexity by bisection on the precision, symmetrised
 * P = (P_{j|i} + P_{i|j}) / 2n; gradient descent with early exaggeration ×4 for the first 100
 * iterations, momentum 0.5 then 0.8 from iteration 250, adaptive per-coordinate gains
 * (the scheme of Karpathy's tsnejs, which druid.js follows).
 *
 * Randomness: druid.js draws its start from its own seeded generator (sfc32 seeded through
 * splitmix32 from `seed`); nothing else in exact t-SNE is random. Same input, settings and seed →
 * bit-identical coordinates on one engine and druid.js build. druid.js runs the iteration in WASM
 * from 16 points on and in JavaScript below; its documentation says the two agree bit for bit for
 * t-SNE "in practice", and the choice depends only on n, so a given input always takes the same path.
 *
 * With init = "pca" the start is the first two principal components scaled to a standard deviation
 * of 1e-4 along the first (scikit-learn's init="pca", sklearn/manifold/_t_sne.py, from memory of
 * version 1.2+); the seed then has no effect.
 *
 * Input handover: druid.js's Matrix holds one row-major Float64Array; we build it from our
 * Float32Array (no arrays of arrays) and read the layout from Y.values.
 */
import { Matrix, TSNE, version as druidVersion } from '@saehrimnir/druidjs';
import { type ProgressReporter, throwIfCancelled, yieldToEventLoop } from './job-control';
import type { TsneParams } from './params';
import { pcaScores } from './start-layout';

/** The druid.js release this module is written against (checked against node_modules in the tests). */
export const DRUID_VERSION = '0.9.0';
/** What druid.js says its version is (its exported `version`). */
export const DRUID_REPORTED_VERSION: string = druidVersion;

/** Iterations between progress reports. */
const REPORT_EVERY = 10;
/** Share of the bar for the distances and the perplexity calibration (O(n²·d), before iteration 1). */
const SHARE_CALIBRATION = 0.1;

export interface TsneRun {
  data: Float32Array;
  n: number;
  d: number;
  params: TsneParams;
  seed: number;
  progress: ProgressReporter;
  signal?: AbortSignal;
}

/** Runs t-SNE; see the module comment. Returns the n × 2 layout. */
export async function runTsne(run: TsneRun): Promise<Float32Array> {
  const { data, n, d, params, seed, progress, signal } = run;
  throwIfCancelled(signal);
  const rows = new Matrix(n, d, (i: number, j: number) => data[i * d + j] as number);
  // druid.js's splitmix32 takes the seed's low 32 bits (seed | 0), as mulberry32 does.
  const tsne = new TSNE(rows, { perplexity: params.perplexity, epsilon: params.learningRate, d: 2, seed });
  if (params.init === 'pca') {
    const start = pcaScores(data, n, d);
    let squares = 0;
    for (let i = 0; i < n; i++) squares += (start[i * 2] as number) ** 2;
    const sd = Math.sqrt(squares / Math.max(1, n - 1));
    const scale = sd > 0 ? 1e-4 / sd : 0;
    const y = tsne.Y.values;
    for (let index = 0; index < n * 2; index++) y[index] = (start[index] as number) * scale;
  }

  progress.report(0, 'affinities (perplexity calibration)');
  await yieldToEventLoop();
  throwIfCancelled(signal);
  // The affinities: the first step of the generator would compute them; done here to report them as
  // a phase. This is one synchronous O(n²·d + 50·n²) block inside druid.js (the pairwise distances and
  // up to 50 bisection steps per point), which a cancel cannot interrupt: seconds at a few thousand
  // points; the signal is checked right after.
  tsne.check_init();
  throwIfCancelled(signal);

  const iterations = params.iterations;
  const steps = tsne.generator(iterations);
  const bar = progress.span(SHARE_CALIBRATION, 1);
  bar(0, `optimising layout, iteration 0/${iterations}`);
  try {
    for (let iteration = 1; iteration <= iterations; iteration++) {
      steps.next();
      if (iteration % REPORT_EVERY === 0 || iteration === iterations) bar(iteration / iterations, `optimising layout, iteration ${iteration}/${iterations}`);
      // Every iteration: one costs O(n²) (~50 ms at 1,797 points), the turn microseconds.
      await yieldToEventLoop();
      throwIfCancelled(signal);
    }
  } finally {
    // Runs the generator's own finally, which frees druid.js's WASM buffers (also when cancelled).
    steps.return(tsne.Y);
  }
  const y = tsne.Y.values;
  const coordinates = new Float32Array(n * 2);
  for (let index = 0; index < n * 2; index++) coordinates[index] = y[index] as number;
  for (const value of coordinates) if (!Number.isFinite(value)) throw new Error('t-SNE: the layout diverged (non-finite coordinates); lower the learning rate');
  return coordinates;
}
