/**
 * UMAP (McInnes, Healy & Melville, "UMAP: Uniform Manifold Approximation and Projection for
 * Dimension Reduction", arXiv:1802.03426, 2018) by umap-js 1.4.0, the reference implementation of
 * issue 4, with two of its steps replaced by ours:
 *
 *   1. Neighbour graph: ours (knn-graph.ts: exact search up to EXACT_KNN_MAX_WORK, our NN-descent
 *      beyond; shared with the fidelity scores and the map's neighbour queries) instead of
 *      umap-js's NN-descent, handed over with setPrecomputedKNN.
 *      umap-js, like umap-learn and uwot, counts the point itself as its first neighbour (its
 *      smoothKNNDistance skips column 0 and its membership strengths give a self-edge weight 0),
 *      so nNeighbors = 15 means the point plus its 14 nearest others: we prepend the point at
 *      distance 0 to its first nNeighbors − 1 neighbours from our graph (which excludes the point).
 *   2. Start layout: umap-js starts from a uniform random layout in [−10, 10]². We start from the
 *      first two principal components, scaled as umap-learn scales its PCA start (umap_.py, from
 *      memory of umap-learn 0.5: noisy_scale_coords with max_coord = 10 and noise = 1e-4, then
 *      simplicial_set_embedding rescales each coordinate to [0, 10]). umap-js has no option for a
 *      start; initializeFit builds the random one, and getEmbedding() returns the very arrays the
 *      optimiser then moves (optimizationState.headEmbedding and tailEmbedding are that same
 *      array), so we overwrite them in place before the first step(). The random start still
 *      consumes n·2 draws from the seeded generator; that is deterministic, so harmless.
 *
 * umap-js works on number[][] throughout (its own API): the factor rows and the kNN graph are
 * converted from our typed arrays at this boundary, once, and the layout converted back to a
 * Float32Array at the end. That costs O(n·(d + k)) boxed numbers, small next to umap-js's own
 * sparse matrices; the per-epoch work stays inside umap-js.
 *
 * Randomness: umap-js draws negative samples from the `random` function it is given; we give it
 * mulberry32(seed), so the same input, settings and seed give bit-identical coordinates.
 *
 * Spectral start (umap-learn's default) is not offered: it needs the smallest eigenvectors of the
 * normalised graph Laplacian (a sparse eigensolver, e.g. LOBPCG or shift-invert Lanczos), which
 * neither umap-js nor our dependencies provide; PCA is the start uwot and umap-learn both offer as
 * the cheap alternative.
 *
 * Performance note (issue 4, Benchmark): umap-js's layout step dominates at 10k+ points; issue 4
 * asks for our own typed-array epoch kernel where umap-js misses the goal. This module keeps
 * umap-js's step() (the reference); a faster kernel, checked against it on the same graph, can
 * replace the epoch loop below without changing the interface.
 */
import { UMAP } from 'umap-js';
import { mulberry32, normalGenerator } from '../align/random';
import { type ProgressReporter, cancellable, throwIfCancelled, yieldToEventLoop } from './job-control';
import type { KnnGraph } from './knn';
import { knnGraph } from './knn-graph';
import type { UmapParams } from './params';
import { pcaScores } from './start-layout';

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

/** Runs UMAP; see the module comment. Returns the n × 2 layout. */
export async function runUmap(run: UmapRun): Promise<Float32Array> {
  const { data, n, d, params, seed, progress, signal } = run;
  const { nNeighbors, metric } = params;
  throwIfCancelled(signal);

  let knnShare = 0;
  let graph = run.knn;
  if (graph === undefined) {
    knnShare = SHARE_KNN;
    progress.report(0, 'neighbour graph');
    // Exact or approximate by size (knn-graph.ts); the approximate search draws from a stream of
    // its own (seed mixed with a constant), so it does not shift umap-js's draws.
    const random = mulberry32((seed ^ 0x9e3779b9) >>> 0);
    graph = (await cancellable(signal, () => knnGraph(data, n, d, nNeighbors - 1, metric, random, signal ? { signal } : {}))).graph;
  }
  checkUmapGraph(graph, n, nNeighbors, metric);
  throwIfCancelled(signal);
  progress.report(knnShare, 'fuzzy neighbour graph');
  await yieldToEventLoop();
  throwIfCancelled(signal);

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

  const umap = new UMAP({
    nComponents: 2,
    nNeighbors,
    minDist: params.minDist,
    spread: params.spread,
    nEpochs: params.nEpochs,
    random: mulberry32(seed),
  });
  umap.setPrecomputedKNN(knnIndices, knnDistances);
  const nEpochs = umap.initializeFit(rows);

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

  const setupEnd = knnShare + SHARE_SETUP;
  progress.report(setupEnd, `optimising layout, epoch 0/${nEpochs}`);
  const epochs = progress.span(setupEnd, 1);
  for (let epoch = 1; epoch <= nEpochs; epoch++) {
    umap.step();
    if (epoch % REPORT_EVERY === 0 || epoch === nEpochs) epochs(epoch / nEpochs, `optimising layout, epoch ${epoch}/${nEpochs}`);
    // Every epoch: setImmediate costs microseconds, an epoch of 1,000+ points milliseconds.
    await yieldToEventLoop();
    throwIfCancelled(signal);
  }

  const embedding = umap.getEmbedding();
  const coordinates = new Float32Array(n * 2);
  for (let i = 0; i < n; i++) {
    const point = embedding[i] as number[];
    coordinates[i * 2] = point[0] as number;
    coordinates[i * 2 + 1] = point[1] as number;
  }
  return coordinates;
}
