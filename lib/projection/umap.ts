/**
 * UMAP (McInnes, Healy & Melville, "UMAP: Uniform Manifold Approximation and Projection for
 * Dimension Reduction", arXiv:1802.03426, 2018) as umap-js 1.4.0 (the reference implementation of
 * issue 4) computes it, with three of its steps replaced by ours:
 *
 *   1. Neighbour graph: ours (knn-graph.ts: exact search up to EXACT_KNN_MAX_WORK, our NN-descent
 *      beyond; shared with the fidelity scores and the map's neighbour queries) instead of
 *      umap-js's NN-descent.
 *      umap-js, like umap-learn and uwot, counts the point itself as its first neighbour (its
 *      smoothKNNDistance skips column 0 and its membership strengths give a self-edge weight 0),
 *      so nNeighbors = 15 means the point plus its 14 nearest others: both engines use the first
 *      nNeighbors − 1 neighbours from our graph (which excludes the point) plus the point itself.
 *   2. Start layout: umap-js starts from a uniform random layout in [−10, 10]². We start from the
 *      first two principal components, scaled as umap-learn scales its PCA start (umap_.py, from
 *      memory of umap-learn 0.5: noisy_scale_coords with max_coord = 10 and noise = 1e-4, then
 *      simplicial_set_embedding rescales each coordinate to [0, 10]). The uniform start is still
 *      drawn first (n·2 draws from the seeded generator) and then overwritten, by both engines, so
 *      the negative samples come from the same place in the stream whichever start is chosen.
 *   3. Fuzzy graph and layout epochs: our typed-array kernel (umap-kernel.ts) instead of umap-js's
 *      Map-backed sparse matrices and number[][] epochs, which missed issue 4's benchmark goal
 *      (10,000 × 32: 141 s and 652 MB against uwot's 24.5 s; 50,000 × 32: 358 s and 2.66 GB
 *      against 73 s). The fuzzy graph is umap-js's, operation for operation. The layout is, by
 *      default (engine 'batch'), a batch descent on worker threads (umap-batch.ts): umap-js's
 *      gradients and sampling schedule, applied once per epoch by Adam, so that it can run on both
 *      cores and still give the same coordinates for the same seed; checked against umap-js on the
 *      same graph and start (tests/unit/projection/umap-batch.test.ts, trustworthiness within
 *      0.005). Engine 'asterism' is the in-place layout, umap-js's epochs on one thread
 *      (bit-identical to umap-js with exact powers, umap-kernel.test.ts). Engine 'umap-js' runs
 *      umap-js itself, kept as the reference: its API takes number[][], so the factor rows and the
 *      kNN graph are converted at that boundary and the layout converted back at the end.
 *
 * Randomness: 'asterism' and 'umap-js' draw the start and the negative samples from
 * mulberry32(seed); 'batch' draws each vertex's negatives from a stream keyed by (seed, epoch,
 * vertex). The same input, settings, seed and engine give bit-identical coordinates. The engine is part of
 * what reproduces a projection: UMAP_ENGINE_VERSIONS gives the string to store with it.
 *
 * Spectral start (umap-learn's default) is not offered: it needs the smallest eigenvectors of the
 * normalised graph Laplacian (a sparse eigensolver, e.g. LOBPCG or shift-invert Lanczos), which
 * neither umap-js nor our dependencies provide; PCA is the start uwot and umap-learn both offer as
 * the cheap alternative.
 */
import { UMAP } from 'umap-js';
import { mulberry32, normalGenerator } from '../align/random';
import { type ProgressReporter, cancellable, throwIfCancelled, yieldToEventLoop } from './job-control';
import type { KnnGraph } from './knn';
import { knnGraph } from './knn-graph';
import type { UmapParams } from './params';
import { pcaScores } from './start-layout';
import { UmapBatchLayout } from './umap-batch';
import { UmapLayout, curveParameters, fuzzySimplicialSet, pruneFuzzyGraph } from './umap-kernel';

/** The umap-js release this module is written against (checked against node_modules in the tests). */
export const UMAP_JS_VERSION = '1.4.0';


/** Epochs between progress reports. */
const REPORT_EVERY = 10;

/** Shares of the progress bar: neighbour graph (when computed here), fuzzy graph + start, epochs. */
const SHARE_KNN = 0.15;
const SHARE_SETUP = 0.1;

export interface UmapRun {
  data: Float32Array;
  n: number;
  d: number;
  params: UmapParams;
  seed: number;
  knn?: KnnGraph;
  progress: ProgressReporter;
  signal?: AbortSignal;
  /** Implementation of the fuzzy graph and layout (internal; default DEFAULT_UMAP_ENGINE). */
  engine?: UmapEngine;
  /** Worker threads of the batch layout (umap-batch.ts; its default when absent). */
  threads?: number;
}

/**
 * Checks a precomputed graph against the data and settings; the graph may hold more neighbours
 * than UMAP needs (one graph at k = 50 serves trustworthiness at 50 and UMAP at 15).
 */
export function checkUmapGraph(knn: KnnGraph, n: number, nNeighbors: number, metric: UmapParams['metric']): void {
  if (knn.n !== n) throw new RangeError(`UMAP: the precomputed neighbour graph has ${knn.n} points, the data ${n}`);
  if (knn.metric !== metric) throw new RangeError(`UMAP: the precomputed neighbour graph uses the ${knn.metric} metric, the settings ask for ${metric}`);
  if (knn.k < nNeighbors - 1) {
    throw new RangeError(`UMAP: the precomputed neighbour graph has k = ${knn.k} neighbours per point; nNeighbors = ${nNeighbors} needs at least ${nNeighbors - 1} (the point itself is the first)`);
  }
  if (knn.indices.length !== n * knn.k || knn.distances.length !== n * knn.k) {
    throw new RangeError(`UMAP: the precomputed neighbour graph should hold n × k = ${n * knn.k} entries`);
  }
}

/**
 * The start layout, n × 2 row-major, as umap-learn scales a PCA start: scores scaled so that the
 * largest |coordinate| is 10, plus N(0, 1e-4²) noise (which separates duplicate rows), then each
 * coordinate mapped onto [0, 10].
 */
export function umapPcaStart(data: Float32Array, n: number, d: number, unitRows: boolean, seed: number): Float64Array {
  const start = pcaScores(data, n, d, unitRows);
  let largest = 0;
  for (let index = 0; index < start.length; index++) largest = Math.max(largest, Math.abs(start[index] as number));
  const expansion = largest > 0 ? 10 / largest : 1;
  // A stream of its own (seed mixed with a constant), so the noise does not shift umap-js's draws.
  const normal = normalGenerator(mulberry32((seed ^ 0x5bd1e995) >>> 0));
  for (let index = 0; index < start.length; index++) start[index] = (start[index] as number) * expansion + 1e-4 * normal();
  for (let c = 0; c < 2; c++) {
    let low = Infinity;
    let high = -Infinity;
    for (let i = 0; i < n; i++) {
      const value = start[i * 2 + c] as number;
      if (value < low) low = value;
      if (value > high) high = value;
    }
    const range = high - low;
    for (let i = 0; i < n; i++) start[i * 2 + c] = range > 0 ? (10 * ((start[i * 2 + c] as number) - low)) / range : 5;
  }
  return start;
}

/**
 * Which implementation runs the fuzzy graph and the layout:
 *   - 'batch' (default): our fuzzy graph (umap-kernel.ts) and the batch layout on worker threads
 *     (umap-batch.ts, umap-batch-kernel.mjs): every epoch moves all points from the previous
 *     epoch's positions by Adam, so two threads give the same coordinates as one (why: issue 4's
 *     time goal against uwot with two threads, with reproducible coordinates);
 *   - 'asterism': our typed-array kernel (umap-kernel.ts UmapLayout), which computes what umap-js
 *     1.4.0 computes, operation for operation, on flat typed arrays, on one thread (the default
 *     until the batch layout; kept for projections stored with it);
 *   - 'umap-js': umap-js 1.4.0 itself, kept as the reference both kernels are checked against
 *     (tests/unit/projection/umap-kernel.test.ts, umap-batch.test.ts) and for reproducing
 *     projections stored with it.
 * All take the same neighbour graph and start; 'asterism' and 'umap-js' draw their negative
 * samples from one seeded generator, 'batch' from per-vertex streams keyed by the seed.
 */
export type UmapEngine = 'batch' | 'asterism' | 'umap-js';

/** The engine runUmap uses when none is named. */
export const DEFAULT_UMAP_ENGINE: UmapEngine = 'batch';

/**
 * The library string to store with a projection made by each engine (methods.ts stores one per
 * method). The kernel's layouts differ from umap-js's in the last bits (its fast powers, see
 * umap-kernel.ts LayoutSettings.exactPow) and so, after the stochastic descent, in the picture, so
 * it has a string of its own; bump its number when its arithmetic changes.
 */
export const UMAP_ENGINE_VERSIONS: Record<UmapEngine, string> = {
  batch: `asterism umap-batch 2 (Adam, per-vertex streams, polynomial powers; umap-js ${UMAP_JS_VERSION} graph and gradients)`,
  asterism: `asterism umap-kernel 1 (umap-js ${UMAP_JS_VERSION} algorithm)`,
  'umap-js': `umap-js ${UMAP_JS_VERSION}`,
};

/**
 * The uniform start umap-js draws, n × 2 in [−10, 10]: random() · 20 − 10 per point and
 * coordinate, in that order. The 'asterism' engine draws it too, even under a PCA start (where it
 * is overwritten), so that the negative samples come from the same place in the stream as umap-js's.
 */
function uniformStart(n: number, random: () => number): Float64Array {
  const start = new Float64Array(n * 2);
  for (let index = 0; index < n * 2; index++) start[index] = random() * 20 + -10;
  return start;
}

/** Runs UMAP; see the module comment. Returns the n × 2 layout. */
export async function runUmap(run: UmapRun): Promise<Float32Array> {
  const { data, n, d, params, seed, progress, signal } = run;
  const { nNeighbors, metric } = params;
  const engine = run.engine ?? DEFAULT_UMAP_ENGINE;
  if (engine !== 'batch' && engine !== 'asterism' && engine !== 'umap-js') throw new RangeError(`UMAP: unknown engine ${JSON.stringify(engine)}`);
  throwIfCancelled(signal);

  let knnShare = 0;
  let graph = run.knn;
  if (graph === undefined) {
    knnShare = SHARE_KNN;
    progress.report(0, 'neighbour graph');
    // Exact or approximate by size (knn-graph.ts); the approximate search draws from a stream of
    // its own (seed mixed with a constant), so it does not shift the layout's draws.
    const random = mulberry32((seed ^ 0x9e3779b9) >>> 0);
    graph = (await cancellable(signal, () => knnGraph(data, n, d, nNeighbors - 1, metric, random, signal ? { signal } : {}))).graph;
  }
  checkUmapGraph(graph, n, nNeighbors, metric);
  // umap-js refuses n ≤ nNeighbors; the same rule for both engines (params.ts enforces it too).
  if (n <= nNeighbors) throw new RangeError(`UMAP: ${n} points are too few for nNeighbors = ${nNeighbors}`);
  throwIfCancelled(signal);
  progress.report(knnShare, 'fuzzy neighbour graph');
  await yieldToEventLoop();
  throwIfCancelled(signal);

  const setupEnd = knnShare + SHARE_SETUP;
  const nEpochs = params.nEpochs;
  const random = mulberry32(seed);
  let step: () => void | Promise<unknown>;
  let result: () => Float32Array;
  let close = async (): Promise<void> => {};
  if (engine === 'batch' || engine === 'asterism') {
    const fuzzy = pruneFuzzyGraph(fuzzySimplicialSet(graph, nNeighbors), nEpochs);
    const embedding = uniformStart(n, random);
    if (params.init === 'pca') embedding.set(umapPcaStart(data, n, d, metric === 'cosine', seed));
    const { a, b } = curveParameters(params.minDist, params.spread);
    if (engine === 'batch') {
      const layout = new UmapBatchLayout(fuzzy, embedding, { a, b, nEpochs, seed, ...(run.threads !== undefined ? { threads: run.threads } : {}) });
      step = () => layout.step();
      result = () => Float32Array.from(layout.embedding);
      close = () => layout.close();
    } else {
      const layout = new UmapLayout(fuzzy, embedding, { a, b, nEpochs, random });
      step = () => {
        layout.step();
      };
      result = () => Float32Array.from(layout.embedding);
    }
  } else {
    const umap = umapJsFit(run, graph, random);
    step = () => {
      umap.step();
    };
    result = () => {
      const embedding = umap.getEmbedding();
      const coordinates = new Float32Array(n * 2);
      for (let i = 0; i < n; i++) {
        const point = embedding[i] as number[];
        coordinates[i * 2] = point[0] as number;
        coordinates[i * 2 + 1] = point[1] as number;
      }
      return coordinates;
    };
  }

  try {
    progress.report(setupEnd, `optimising layout, epoch 0/${nEpochs}`);
    const epochs = progress.span(setupEnd, 1);
    for (let epoch = 1; epoch <= nEpochs; epoch++) {
      await step();
      if (epoch % REPORT_EVERY === 0 || epoch === nEpochs) epochs(epoch / nEpochs, `optimising layout, epoch ${epoch}/${nEpochs}`);
      // Every epoch: setImmediate costs microseconds, an epoch of 1,000+ points milliseconds.
      await yieldToEventLoop();
      throwIfCancelled(signal);
    }
    return result();
  } finally {
    await close();
  }
}

/** umap-js set up on our graph and start, ready for its step() (the reference engine). */
function umapJsFit(run: UmapRun, graph: KnnGraph, random: () => number): UMAP {
  const { data, n, d, params, seed } = run;
  const { nNeighbors, metric } = params;
  // umap-js's API boundary: arrays of arrays (see the module comment).
  const k = graph.k;
  const knnIndices: number[][] = new Array<number[]>(n);
  const knnDistances: number[][] = new Array<number[]>(n);
  for (let i = 0; i < n; i++) {
    const indices = new Array<number>(nNeighbors);
    const distances = new Array<number>(nNeighbors);
    indices[0] = i;
    distances[0] = 0;
    for (let s = 1; s < nNeighbors; s++) {
      indices[s] = graph.indices[i * k + s - 1] as number;
      distances[s] = graph.distances[i * k + s - 1] as number;
    }
    knnIndices[i] = indices;
    knnDistances[i] = distances;
  }
  const rows: number[][] = new Array<number[]>(n);
  for (let i = 0; i < n; i++) rows[i] = Array.from(data.subarray(i * d, (i + 1) * d));

  const umap = new UMAP({ nComponents: 2, nNeighbors, minDist: params.minDist, spread: params.spread, nEpochs: params.nEpochs, random });
  umap.setPrecomputedKNN(knnIndices, knnDistances);
  umap.initializeFit(rows);

  if (params.init === 'pca') {
    const start = umapPcaStart(data, n, d, metric === 'cosine', seed);
    const embedding = umap.getEmbedding();
    if (embedding.length !== n) throw new Error(`UMAP: umap-js made a start of ${embedding.length} points for ${n}`);
    for (let i = 0; i < n; i++) {
      const point = embedding[i] as number[];
      point[0] = start[i * 2] as number;
      point[1] = start[i * 2 + 1] as number;
    }
  }
  return umap;
}
