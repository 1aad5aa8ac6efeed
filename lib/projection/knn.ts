/**
 * Exact k-nearest neighbours of every row of a factor set, over one row-major Float32Array.
 *
 * Why our own: the well-known npm packages are either approximate (HNSW, NN-descent, Annoy ports)
 * or exact over arrays of arrays, one query at a time (kd-trees, which fall back to brute force in
 * more than ~10 dimensions anyway). None scans a typed array in cache-sized tiles, uses the
 * symmetry of the distance to halve the work, and spreads the work over worker threads — which is
 * what the exact neighbour graph of 10k–50k factor rows needs. The arithmetic lives in
 * knn-kernel.mjs (plain JavaScript so that worker threads can load it under vitest, tsx and node
 * alike; the reasons, and why the ‖x‖² + ‖y‖² − 2x·y expansion in Float64 rather than direct
 * differences, are written there).
 *
 * Complexity: n(n−1)/2 pair distances of d multiply-adds each, O(n²d) time, O(nk) memory
 * (plus the n × d Float64 copy of the rows). Exact search is the tool up to ~50k rows; beyond,
 * an approximate graph (issue 4, "Neighbours") should take over.
 *
 * Output order: each point's neighbours by increasing distance, equal distances by increasing
 * index, itself excluded. Distances are compared in Float64 before rounding to the Float32 output,
 * so two neighbours may show the same Float32 distance and still be in Float64 order.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { isWorkerReply, pollProgress } from './worker-request';
import {
  EMPTY_INDEX,
  METRIC_COSINE,
  METRIC_EUCLIDEAN,
  type MetricCode,
  finishHeaps,
  heapOffer,
  pairKey,
  prepareRows,
  resetHeaps,
  rowNorms,
  scanBlockRows,
} from './knn-kernel.mjs';

/**
 * Distance between latent rows.
 * - `euclidean`: ‖x − y‖₂; the scale of the factors matters.
 * - `cosine`: 1 − cos θ ∈ [0, 2], as sklearn.metrics.pairwise.cosine_distances; only the
 *   direction of a row matters (useful for embeddings whose norms mean frequency, not kind).
 *   Rows of zero norm have no direction and are rejected.
 */
export type KnnMetric = 'euclidean' | 'cosine';

/** The k nearest neighbours of each of n points. */
export interface KnnGraph {
  n: number;
  k: number;
  metric: KnnMetric;
  /** n × k, row-major: indices[i·k + s] is the (s+1)-th nearest neighbour of point i. */
  indices: Int32Array;
  /** n × k, the matching distances in the metric's units (Euclidean length or 1 − cos θ). */
  distances: Float32Array;
}

export interface ExactKnnOptions {
  /**
   * Rows per side of a tile. Range 8–2048, default 128. A tile's two blocks of rows (2 × 128 rows ×
   * d × 8 bytes = 64 KB at d = 32) should fit the L2 cache; smaller tiles cost loop overhead,
   * larger ones spill the cache. In the parallel variant the block row is also the unit of work,
   * so it bounds how evenly the threads are loaded.
   */
  blockSize?: number;
}

export interface ExactKnnParallelOptions extends ExactKnnOptions {
  /**
   * Worker threads. Range 1–64; default os.availableParallelism(). 1 runs on the calling thread
   * (no worker start-up, ~30 ms each). More threads than cores only adds contention; fewer leaves
   * cores for the web server. Capped at the number of block rows.
   */
  threads?: number;
  /** Aborting terminates the workers and rejects with the signal's reason (a cancelled job). */
  signal?: AbortSignal;
  /**
   * Called about every PROGRESS_INTERVAL_MS (worker-request.ts) while the workers scan, with the share of tiles done
   * (0–1). Throwing from it rejects the search with that error.
   */
  onProgress?: (fraction: number) => void;
}

export const KNN_DEFAULT_BLOCK_SIZE = 128;

/** Maps the metric name to the kernel's code; throws on anything else (input from an API). */
export function metricCode(metric: KnnMetric): MetricCode {
  if (metric === 'euclidean') return METRIC_EUCLIDEAN;
  if (metric === 'cosine') return METRIC_COSINE;
  throw new RangeError(`unknown metric ${JSON.stringify(metric)}; expected "euclidean" or "cosine"`);
}

/**
 * Checks shape and values of a row-major n × d matrix; names the row and column of the first
 * value that is not finite.
 */
export function checkMatrix(what: string, data: Float32Array, n: number, d: number): void {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`${what}: n must be a positive integer, got ${n}`);
  if (!Number.isInteger(d) || d < 1) throw new RangeError(`${what}: d must be a positive integer, got ${d}`);
  if (data.length !== n * d) throw new RangeError(`${what}: expected n × d = ${n * d} values, got ${data.length}`);
  for (let index = 0; index < data.length; index++) {
    const value = data[index] as number;
    if (!Number.isFinite(value)) {
      throw new RangeError(`${what}: value at row ${Math.floor(index / d)}, column ${index % d} is ${value}, not a finite number`);
    }
  }
}

/**
 * The n × d Float64 copy of the rows the kernel works on (normalised for cosine), validated.
 * Exposed so that fidelity.ts ranks with exactly the distances the neighbour graph used.
 */
export function prepareKnnRows(data: Float32Array, n: number, d: number, metric: KnnMetric, into?: Float64Array): Float64Array {
  checkMatrix('neighbour search', data, n, d);
  const out = into ?? new Float64Array(n * d);
  const zeroRow = prepareRows(data, n, d, metricCode(metric), out);
  if (zeroRow >= 0) throw new RangeError(`neighbour search: row ${zeroRow} is all zeros, so its cosine distance is undefined; use the Euclidean metric or drop the row`);
  return out;
}

function checkK(k: number, n: number): void {
  if (!Number.isInteger(k) || k < 1 || k > n - 1) {
    throw new RangeError(`neighbour search: k must be an integer from 1 to n − 1 = ${n - 1}, got ${k}`);
  }
}

function checkBlockSize(blockSize: number): void {
  if (!Number.isInteger(blockSize) || blockSize < 8 || blockSize > 2048) {
    throw new RangeError(`neighbour search: blockSize must be an integer from 8 to 2048, got ${blockSize}`);
  }
}

/**
 * Exact k nearest neighbours of every row, on the calling thread.
 *
 * @param data - n × d row-major factor rows (Float32, finite).
 * @param n - number of rows, ≥ 2.
 * @param d - dimensions per row, ≥ 1.
 * @param k - neighbours per row, 1 … n − 1 (15 for UMAP and the fidelity scores, 50 for
 *   trustworthiness at 50). Time barely depends on k; memory is n·k·12 bytes.
 * @param metric - see KnnMetric.
 */
export function exactKnn(data: Float32Array, n: number, d: number, k: number, metric: KnnMetric = 'euclidean', options: ExactKnnOptions = {}): KnnGraph {
  const blockSize = options.blockSize ?? KNN_DEFAULT_BLOCK_SIZE;
  checkBlockSize(blockSize);
  const rows = prepareKnnRows(data, n, d, metric);
  checkK(k, n);
  const heapKey = new Float64Array(n * k);
  const heapIndex = new Int32Array(n * k);
  resetHeaps(heapKey, heapIndex);
  const blocks = Math.ceil(n / blockSize);
  const all = new Int32Array(blocks);
  for (let block = 0; block < blocks; block++) all[block] = block;
  const norms = new Float64Array(n);
  rowNorms(rows, n, d, norms);
  scanBlockRows(rows, norms, n, d, k, blockSize, all, heapKey, heapIndex);
  const indices = new Int32Array(n * k);
  const distances = new Float32Array(n * k);
  finishHeaps(heapKey, heapIndex, n, k, metricCode(metric), indices, distances);
  return { n, k, metric, indices, distances };
}

/**
 * Deals block rows to threads, largest first to the least-loaded thread (LPT). Block row I costs
 * (blocks − I) tiles, so the loads differ by at most one row's work; the assignment depends only
 * on the sizes, not on timing, and the result does not depend on it at all.
 */
export function assignBlockRows(blocks: number, threads: number): number[][] {
  const loads = new Float64Array(threads);
  const assignment: number[][] = Array.from({ length: threads }, () => []);
  for (let block = 0; block < blocks; block++) {
    let lightest = 0;
    for (let thread = 1; thread < threads; thread++) if ((loads[thread] as number) < (loads[lightest] as number)) lightest = thread;
    (assignment[lightest] as number[]).push(block);
    loads[lightest] = (loads[lightest] as number) + (blocks - block);
  }
  return assignment;
}

/**
 * Exact k nearest neighbours with the block rows split across worker threads. The prepared rows
 * and one n × k heap per thread live in SharedArrayBuffers (no copies); each thread scans its
 * upper-triangle tiles into its own heaps, and the calling thread merges the heaps (n · threads · k
 * offers, negligible). Same result as exactKnn, bit for bit.
 *
 * Parameters as exactKnn; see ExactKnnParallelOptions for threads and cancellation.
 */
export async function exactKnnParallel(
  data: Float32Array,
  n: number,
  d: number,
  k: number,
  metric: KnnMetric = 'euclidean',
  options: ExactKnnParallelOptions = {},
): Promise<KnnGraph> {
  const blockSize = options.blockSize ?? KNN_DEFAULT_BLOCK_SIZE;
  checkBlockSize(blockSize);
  const requested = options.threads ?? availableParallelism();
  if (!Number.isInteger(requested) || requested < 1 || requested > 64) {
    throw new RangeError(`neighbour search: threads must be an integer from 1 to 64, got ${requested}`);
  }
  const blocks = Math.ceil(n / blockSize);
  const threads = Math.min(requested, blocks);
  options.signal?.throwIfAborted();
  if (threads <= 1) return exactKnn(data, n, d, k, metric, { blockSize });

  const shared = new SharedArrayBuffer(n * d * Float64Array.BYTES_PER_ELEMENT);
  prepareKnnRows(data, n, d, metric, new Float64Array(shared));
  checkK(k, n);
  const heapKeys = new SharedArrayBuffer(threads * n * k * Float64Array.BYTES_PER_ELEMENT);
  const heapIndices = new SharedArrayBuffer(threads * n * k * Int32Array.BYTES_PER_ELEMENT);
  const assignment = assignBlockRows(blocks, threads);
  const workers: Worker[] = [];
  const url = new URL('./knn-worker.mjs', import.meta.url);
  const tilesDone = new Int32Array(new SharedArrayBuffer(Int32Array.BYTES_PER_ELEMENT));
  const tiles = (blocks * (blocks + 1)) / 2;
  let onAbort: (() => void) | undefined;
  let stopProgress = (): void => undefined;
  try {
    await new Promise<void>((resolve, reject) => {
      let pending = threads;
      const fail = (error: unknown) => reject(error instanceof Error ? error : new Error(String(error)));
      onAbort = () => fail(options.signal?.reason ?? new Error('neighbour search cancelled'));
      options.signal?.addEventListener('abort', onAbort, { once: true });
      stopProgress = pollProgress(options.onProgress, () => Atomics.load(tilesDone, 0) / tiles, fail);
      for (let slot = 0; slot < threads; slot++) {
        const worker = new Worker(url);
        workers.push(worker);
        worker.once('error', fail);
        worker.once('exit', (code) => {
          if (code !== 0) fail(new Error(`neighbour search: worker ${slot} exited with code ${code}`));
        });
        worker.once('message', (reply: unknown) => {
          if (!isWorkerReply(reply) || !reply.ok) {
            fail(new Error(`neighbour search: worker ${slot} failed: ${isWorkerReply(reply) ? reply.message : 'bad reply'}`));
            return;
          }
          pending--;
          if (pending === 0) resolve();
        });
        worker.postMessage({ rows: shared, n, d, k, blockSize, blockRows: assignment[slot], heapKeys, heapIndices, slot, tilesDone: tilesDone.buffer });
      }
    });
  } finally {
    stopProgress();
    if (onAbort !== undefined) options.signal?.removeEventListener('abort', onAbort);
    // A finished worker waits for the next message; terminate it (exit code 1, ignored above
    // because the promise has settled by then).
    await Promise.all(workers.map((worker) => worker.terminate()));
  }

  // Merge: every pair was computed by exactly one thread, so no candidate appears twice.
  const heapKey = new Float64Array(n * k);
  const heapIndex = new Int32Array(n * k);
  resetHeaps(heapKey, heapIndex);
  for (let slot = 0; slot < threads; slot++) {
    const keys = new Float64Array(heapKeys, slot * n * k * 8, n * k);
    const ids = new Int32Array(heapIndices, slot * n * k * 4, n * k);
    for (let entry = 0; entry < n * k; entry++) {
      const id = ids[entry] as number;
      if (id === EMPTY_INDEX) continue;
      const base = entry - (entry % k);
      heapOffer(heapKey, heapIndex, base, k, keys[entry] as number, id);
    }
  }
  const indices = new Int32Array(n * k);
  const distances = new Float32Array(n * k);
  finishHeaps(heapKey, heapIndex, n, k, metricCode(metric), indices, distances);
  return { n, k, metric, indices, distances };
}

/**
 * Exact k nearest neighbours of some query rows only (each against all n rows, itself excluded),
 * row r of the output for queries[r]: O(|queries| · n · d). Same keys, order and distances as
 * exactKnn gives those rows; used to measure the recall of the approximate graph on a sample.
 */
export function exactKnnOfRows(data: Float32Array, n: number, d: number, k: number, metric: KnnMetric, queries: ArrayLike<number>): { k: number; indices: Int32Array; distances: Float32Array } {
  const rows = prepareKnnRows(data, n, d, metric);
  checkK(k, n);
  const norms = new Float64Array(n);
  rowNorms(rows, n, d, norms);
  const m = queries.length;
  const heapKey = new Float64Array(m * k);
  const heapIndex = new Int32Array(m * k);
  resetHeaps(heapKey, heapIndex);
  for (let r = 0; r < m; r++) {
    const i = queries[r] as number;
    if (!Number.isInteger(i) || i < 0 || i >= n) throw new RangeError(`neighbour search: query row ${i} is not a row of the ${n}`);
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const key = pairKey(rows, norms, d, i, j);
      if (key <= (heapKey[r * k] as number)) heapOffer(heapKey, heapIndex, r * k, k, key, j);
    }
  }
  const indices = new Int32Array(m * k);
  const distances = new Float32Array(m * k);
  finishHeaps(heapKey, heapIndex, m, k, metricCode(metric), indices, distances);
  return { k, indices, distances };
}
