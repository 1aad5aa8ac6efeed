/**
 * Approximate k-nearest neighbours by NN-descent (Dong, Charikar & Li, "Efficient k-nearest
 * neighbor graph construction for generic similarity measures", WWW 2011), started from a forest
 * of random-projection trees, over one row-major Float32Array. For factor sets too large for the
 * exact O(n²d) search of knn.ts (the chooser in knn-graph.ts decides).
 *
 * The idea: a neighbour of a neighbour is likely a neighbour. Each point keeps a bounded max-heap
 * of its searchK best candidates; each iteration, for every point i, the candidates of i (its heap
 * entries and the points that hold i in their heaps — the reverse neighbours) are compared with one
 * another (the "local join"), and every pair that beats either point's current worst neighbour
 * enters that heap. Only pairs involving at least one candidate that is new since the last
 * iteration are compared (the new/old flags of the paper), so the work shrinks as the graph
 * settles; the search stops when fewer than delta·n·searchK heap entries changed in an iteration.
 *
 * Start: random-projection trees (Dasgupta & Freund 2008; pynndescent starts NN-descent the same
 * way): split the points recursively by the hyperplane halfway between two random points of the
 * node until a leaf holds at most leafSize points, and compare all pairs inside each leaf. Points
 * that are close usually share a leaf in at least one of several trees, so the heaps start mostly
 * right and NN-descent needs a few iterations instead of the ~log₂ n a random start needs.
 *
 * Why our own rather than umap-js's NN-descent: umap-js works on number[][] with a generator per
 * call and returns number[][]; we want typed arrays end to end, the cosine metric on prepared
 * rows, the seeded generator of lib/align/random.ts, worker threads, cancellation, and the same
 * output as the exact search (KnnGraph, with order and distances computed as knn.ts computes them).
 *
 * Threads: the trees are built on worker threads (knn-descent-worker.mjs), which also compute the
 * distances of the pairs inside their leaves; the calling thread offers those pairs to the heaps
 * tree after tree. Each iteration's candidate lists are built by point range on the workers (the
 * sampling priorities are hashes of (iteration seed, point, neighbour), so any thread can compute
 * any of them), and the local join of each block of JOIN_BLOCK points is split across them; the
 * joins only read the heaps and return proposed updates, which the calling thread applies in point
 * order before the next block. So the result is the same for any number of threads, and the heaps
 * need no locks. (pynndescent parallelises its joins the same way.)
 *
 * Arithmetic: the search compares squared Euclidean distances Σ(x_t − y_t)² of the Float32 rows
 * (for cosine, of the rows scaled to unit length: ‖u − v‖²/2 = 1 − cos θ) and keeps them as
 * Float32 in the heaps (half the memory traffic; the search is bound by random access to rows and
 * heaps more than by the multiply-adds). The trees' leaf pairs are summed in Float64; the local
 * join, most of the work, runs in WebAssembly with 128-bit SIMD and sums in Float32 lanes
 * (descent-join.wasm, from assembly/descent-join.ts: V8 gives JavaScript no SIMD, and the join took
 * two thirds of the search; with the kernel a 50,000 × 32 search went from ~2.0 s to ~1.5 s here).
 * The arrays it reads live in one shared WebAssembly memory per search, which the JavaScript steps
 * and the worker threads see through typed-array views; past WebAssembly's 4 GiB (about 7 million
 * rows of 64 dimensions) the JavaScript join (localJoin) serves instead. At the end each kept
 * neighbour's key is recomputed with the exact kernel's expansion in Float64 (pairKey of
 * knn-kernel.mjs) and each list sorted by (key, index), so wherever NN-descent found the true k
 * nearest, the output is bit for bit what exactKnn returns.
 *
 * Determinism: all randomness comes from the generator passed in, in a fixed order; nothing depends
 * on timing or on the thread count: the same rows, settings and seed give the same graph.
 *
 * Accuracy and speed (scripts/bench-projection.ts, k = 15, two threads, warm (worker threads
 * kept from an earlier search, see IDLE_WORKER_MS; pynndescent warmed likewise), on an otherwise
 * idle two-core machine; seeded mixtures of 20 Gaussian clusters, the hardest kind of data for any
 * neighbour search since each cluster fills all 32 dimensions):
 *   10,000 × 32: recall 0.994 in 0.26 s; pynndescent 0.5.8 (n_jobs 2): 0.988 in 0.26 s.
 *   50,000 × 32: recall 0.962 in 1.73 s; pynndescent: 0.939 in 2.17 s; exact search 11.3 s.
 * A cold search (fresh threads) costs ~0.1 s more for the threads plus slower first trees while
 * their code compiles (10,000 × 32: 0.7 s). Real factor sets, whose variance falls off over the
 * dimensions, give higher recall.
 *
 * Cost: the trees O(nTrees · n log(n/leafSize) · d) plus O(nTrees · n · leafSize · d) for the
 * leaves; each NN-descent iteration at most n · 1.5 · maxCandidates² distances of d multiply-adds,
 * falling quickly (six iterations at 50,000 points). Memory: n·searchK·9 bytes of heaps,
 * n·maxCandidates·16 bytes of candidate lists, n·d·(4 + 8) bytes for the reordered rows and the
 * final Float64 re-check.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { UniformGenerator } from '../align/random';
import { HeapMarks, Updates, WasmJoin, applyUpdates, buildCandidates, descentLayout, finishRows, fillRandom, leafPairs, localJoin, markSampled, mulberry32, splitTree, type RpTree } from './knn-descent-kernel.mjs';
import { finishHeaps, rowNorms } from './knn-kernel.mjs';
import { type KnnGraph, type KnnMetric, checkMatrix, metricCode, prepareKnnRows } from './knn';
import { type WorkerReply, askWorker } from './worker-request';

export interface ApproxKnnOptions {
  /**
   * Random-projection trees for the start. Range 0–64; default min(64, 5 + round(n^0.25 / 2))
   * (pynndescent's rule, from memory of pynndescent 0.5; 12 at n = 50,000). More trees give a
   * better start (fewer NN-descent iterations, higher recall) at O(n log n · d) each; 0 starts
   * from random neighbours, which needs more iterations.
   */
  nTrees?: number;
  /**
   * Most points in a tree's leaf. Range 4–256; default max(10, k) (pynndescent's rule, from
   * memory). Larger leaves compare more pairs per tree (O(n · leafSize · d)) and start closer to
   * the truth; smaller ones are cheaper per tree.
   */
  leafSize?: number;
  /**
   * Candidates per point per iteration in the local join, new and old separately. Range 1–200;
   * default min(60, searchK) (pynndescent's rule, from memory). More candidates raise recall per
   * iteration at a cost quadratic in this number.
   */
  maxCandidates?: number;
  /**
   * Iterations at most. Range 1–100; default max(5, round(log₂ n)) (common practice, as
   * pynndescent). Usually the delta rule stops the search earlier.
   */
  maxIterations?: number;
  /**
   * Stop when fewer than delta · n · searchK heap entries changed in an iteration. Range 0–1;
   * default 0.001 (the paper's and pynndescent's). Smaller runs longer for the last fractions of a
   * per cent of recall.
   */
  delta?: number;
  /**
   * Neighbours kept per point during the search, k … n − 1; default k + EXTRA_SEARCH_NEIGHBOURS
   * (k + 3). A larger heap keeps near-misses that lead to true neighbours in later joins: recall
   * rises markedly (measured here at k = 15 on 50,000 × 32 Gaussian clusters: 0.930 with
   * searchK = k, 0.964 with k + 3, 0.975 with k + 5), and the work with it (distances computed:
   * 25 M, 34 M, 40 M; 12 s, 13 s, 16 s on two busy cores). The output holds the k best.
   */
  searchK?: number;
  /**
   * Worker threads for the trees and the local joins. Range 1–64; default
   * os.availableParallelism() from APPROX_PARALLEL_MIN_POINTS rows on, else 1 (starting a worker
   * costs tens of milliseconds). The result does not depend on it: the trees are drawn from seeds
   * taken in order from `random`, the joins only read the heaps, and the proposed updates are
   * applied on the calling thread in point order.
   */
  threads?: number;
  /** Aborting stops the search at the next block of points and rejects with the signal's reason. */
  signal?: AbortSignal;
  /**
   * Called after each tree and after every iteration with the fraction done (an estimate: the
   * iterations count against maxIterations) and a phase in words. Throwing from it rejects the
   * search with that error.
   */
  onProgress?: (fraction: number, phase: string) => void;
}

/** What the last search did, for benchmarks and tests. */
export interface ApproxKnnStats {
  trees: number;
  iterations: number;
  /** Heap entries changed in each iteration. */
  updates: number[];
  /** Distances computed (trees' leaves plus local joins). */
  distanceEvaluations: number;
}

/** Extra heap slots beyond k during the search, see ApproxKnnOptions.searchK. */
export const EXTRA_SEARCH_NEIGHBOURS = 3;

interface Settings {
  nTrees: number;
  leafSize: number;
  maxCandidates: number;
  maxIterations: number;
  delta: number;
  searchK: number;
}

/** From this many rows the search runs on worker threads by default (see ApproxKnnOptions.threads). */
export const APPROX_PARALLEL_MIN_POINTS = 10_000;

/**
 * Points per block of the local join: the heaps are updated after each block, so later blocks join
 * against fresher thresholds (fewer wasted proposals, as in the sequential algorithm) while a block
 * is still large enough to split across threads. Fixed, so the result does not depend on threads.
 */
const JOIN_BLOCK = 4096;

/** Trees requested from the workers ahead of the one being offered to the heaps (bounds memory). */
const TREE_LOOKAHEAD = 3;

function integerIn(name: string, value: number, low: number, high: number): number {
  if (!Number.isInteger(value) || value < low || value > high) throw new RangeError(`approximate neighbour search: ${name} must be an integer from ${low} to ${high}, got ${value}`);
  return value;
}

function settingsFor(n: number, k: number, options: ApproxKnnOptions): Settings {
  if (!Number.isInteger(k) || k < 1 || k > n - 1) throw new RangeError(`approximate neighbour search: k must be an integer from 1 to n − 1 = ${n - 1}, got ${k}`);
  const searchK = integerIn('searchK', options.searchK ?? Math.min(n - 1, k + EXTRA_SEARCH_NEIGHBOURS), k, Math.max(k, n - 1));
  const delta = options.delta ?? 0.001;
  if (!(delta >= 0 && delta <= 1)) throw new RangeError(`approximate neighbour search: delta must be a number from 0 to 1, got ${delta}`);
  return {
    nTrees: integerIn('nTrees', options.nTrees ?? Math.min(64, 5 + Math.round(n ** 0.25 / 2)), 0, 64),
    leafSize: integerIn('leafSize', options.leafSize ?? Math.max(10, k), 4, 256),
    maxCandidates: integerIn('maxCandidates', options.maxCandidates ?? Math.min(60, searchK), 1, 200),
    maxIterations: integerIn('maxIterations', options.maxIterations ?? Math.max(5, Math.round(Math.log2(n))), 1, 100),
    delta,
    searchK,
  };
}

/**
 * The k best of each heap as a KnnGraph in the caller's row order (`original[r]` is the caller's
 * index of search row r): keys recomputed as knn.ts computes them (Float64 expansion on the
 * prepared rows), sorted by (key, index), distances as exactKnn reports them.
 */
function finish(heapIds: Int32Array, original: Int32Array, prepared: Float64Array, n: number, d: number, k: number, searchK: number, metric: KnnMetric): KnnGraph {
  const norms = new Float64Array(n);
  rowNorms(prepared, n, d, norms);
  const heapKey = new Float64Array(n * k);
  const heapIndex = new Int32Array(n * k);
  finishRows(heapIds, searchK, original, prepared, norms, d, k, 0, n, heapKey, heapIndex);
  const indices = new Int32Array(n * k);
  const distances = new Float32Array(n * k);
  finishHeaps(heapKey, heapIndex, n, k, metricCode(metric), indices, distances);
  return { n, k, metric, indices, distances };
}

/** The pairs inside one tree's leaves with their squared distances (leafPairs). */
interface LeafPairs {
  count: number;
  p: Int32Array;
  q: Int32Array;
  key: Float32Array;
}

interface DescentReply extends WorkerReply {
  pairs?: LeafPairs[];
  count?: number;
  p?: Int32Array;
  q?: Int32Array;
  key?: Float32Array;
  evaluations?: number;
}

/**
 * Worker threads kept between searches. Starting a worker and compiling the kernel in it cost
 * ~0.1 s per search and slowed its first tree several-fold (measured here: 10,000 × 32 on two
 * threads took 0.7 s cold, longer than on one), which the job worker, running search after search,
 * need not pay each time. A worker is kept only after a search that ended normally (every request
 * answered); it holds no data while idle ('release'), does not keep the process alive (unref), and
 * is stopped after IDLE_WORKER_MS unused.
 */
const idleDescentWorkers: Worker[] = [];
const idleTimers = new Map<Worker, NodeJS.Timeout>();
const idleExits = new Map<Worker, () => void>();
export const IDLE_WORKER_MS = 60_000;

/** Idle NN-descent workers (tests and benchmarks). */
export function idleDescentWorkerCount(): number {
  return idleDescentWorkers.length;
}

function takeIdleWorker(): Worker | undefined {
  const worker = idleDescentWorkers.pop();
  if (worker === undefined) return undefined;
  clearTimeout(idleTimers.get(worker));
  idleTimers.delete(worker);
  const onExit = idleExits.get(worker);
  if (onExit) {
    worker.off('exit', onExit);
    worker.off('error', onExit);
  }
  idleExits.delete(worker);
  worker.ref();
  return worker;
}

function forgetIdle(worker: Worker): void {
  const at = idleDescentWorkers.indexOf(worker);
  if (at >= 0) idleDescentWorkers.splice(at, 1);
  clearTimeout(idleTimers.get(worker));
  idleTimers.delete(worker);
  idleExits.delete(worker);
}

function keepIdle(worker: Worker): void {
  worker.unref();
  idleDescentWorkers.push(worker);
  const timer = setTimeout(() => {
    forgetIdle(worker);
    worker.terminate().catch((error: unknown) => console.error('approximate neighbour search: an idle worker did not stop', error));
  }, IDLE_WORKER_MS);
  timer.unref();
  idleTimers.set(worker, timer);
  // A worker that fails or dies while idle must not be handed to the next search (it would never
  // answer); an 'error' without a listener would also be thrown in this process.
  const onExit = () => forgetIdle(worker);
  worker.once('exit', onExit);
  worker.once('error', onExit);
  idleExits.set(worker, onExit);
}

/** Worker threads running knn-descent-worker.mjs, one request at a time each. */
class DescentPool {
  private constructor(private readonly workers: Worker[]) {}

  static async start(threads: number, init: Record<string, unknown>): Promise<DescentPool> {
    const url = new URL('./knn-descent-worker.mjs', import.meta.url);
    const pool = new DescentPool(Array.from({ length: threads }, () => takeIdleWorker() ?? new Worker(url)));
    try {
      await Promise.all(pool.workers.map((_, slot) => pool.request(slot, { type: 'init', slot, ...init })));
    } catch (error) {
      await pool.close(false);
      throw error;
    }
    return pool;
  }

  get size(): number {
    return this.workers.length;
  }

  request(slot: number, message: Record<string, unknown>): Promise<DescentReply> {
    const worker = this.workers[slot];
    if (worker === undefined) return Promise.reject(new Error(`approximate neighbour search: no worker ${slot}`));
    return askWorker<DescentReply>(worker, 'approximate neighbour search', slot, message);
  }

  /**
   * @param reuse - true only when every request was answered: the workers drop the search's data
   *   and wait for the next search; otherwise (a failure, an abort between requests) they stop.
   */
  async close(reuse: boolean): Promise<void> {
    const workers = this.workers.splice(0);
    if (reuse) {
      try {
        await Promise.all(workers.map((worker, slot) => askWorker(worker, 'approximate neighbour search', slot, { type: 'release' })));
        for (const worker of workers) keepIdle(worker);
        return;
      } catch (error) {
        console.error('approximate neighbour search: a worker could not be kept for the next search', error);
      }
    }
    await Promise.all(workers.map((worker) => worker.terminate()));
  }
}

function threadCount(requested: number | undefined, n: number): number {
  const threads = requested ?? (n >= APPROX_PARALLEL_MIN_POINTS ? availableParallelism() : 1);
  if (!Number.isInteger(threads) || threads < 1 || threads > 64) throw new RangeError(`approximate neighbour search: threads must be an integer from 1 to 64, got ${threads}`);
  return threads;
}

/**
 * Approximate k nearest neighbours of every row (see the module comment).
 *
 * @param data - n × d row-major factor rows (Float32, finite; for cosine no all-zero row).
 * @param n - rows, ≥ 2.
 * @param d - dimensions, ≥ 1.
 * @param k - neighbours per row, 1 … n − 1.
 * @param metric - as knn.ts's KnnMetric.
 * @param random - seeded uniform generator (e.g. mulberry32(seed)), the only source of randomness.
 * @param options - see ApproxKnnOptions; every setting has a default.
 * @param stats - filled with what the search did, if given.
 * @returns the same KnnGraph as exactKnn would, up to the neighbours the search missed (recall).
 */
export async function approxKnn(
  data: Float32Array,
  n: number,
  d: number,
  k: number,
  metric: KnnMetric,
  random: UniformGenerator,
  options: ApproxKnnOptions = {},
  stats?: ApproxKnnStats,
): Promise<KnnGraph> {
  const { signal } = options;
  signal?.throwIfAborted();
  checkMatrix('approximate neighbour search', data, n, d);
  const settings = settingsFor(n, k, options);
  const { nTrees, leafSize, searchK: K, maxCandidates: C } = settings;
  const threads = threadCount(options.threads, n);
  const report = options.onProgress;
  const prepared = prepareKnnRows(data, n, d, metric);
  // Cosine: unit rows (prepareKnnRows normalised in Float64), rounded once to Float32.
  const rows = metric === 'euclidean' ? data : Float32Array.from(prepared);
  // Seeds first, in order, so that every tree is the same whichever thread builds it.
  const treeSeeds = Array.from({ length: nTrees }, () => Math.floor(random() * 4294967296));
  const parallel = threads > 1;
  const buffer = (bytes: number): ArrayBufferLike => (parallel ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));

  // Locality: rows copied in the leaf order of the first tree, so that points near each other in
  // space are near each other in memory and the joins read rows and heaps mostly from cache; the
  // permutation is undone in finish(). In the new order the first tree's leaves are the same
  // bounds over the identity order.
  // The arrays the local join reads live in one shared WebAssembly memory, where the join's SIMD
  // kernel (descent-join.wasm) sees them; past WebAssembly's 4 GiB the JavaScript join serves.
  const layout = descentLayout(n, d, K, C, parallel ? threads : 1);
  const memory = layout ? new WebAssembly.Memory({ initial: layout.pages, maximum: layout.pages, shared: true }) : undefined;
  const int32At = (offset: number | undefined, length: number) => (memory && offset !== undefined ? new Int32Array(memory.buffer, offset, length) : new Int32Array(buffer(length * 4)));
  const x = memory && layout ? new Float32Array(memory.buffer, layout.x, n * d) : new Float32Array(buffer(n * d * 4));
  let original: Int32Array = new Int32Array(n);
  const identity = new Int32Array(n);
  for (let i = 0; i < n; i++) identity[i] = i;
  let firstTree: RpTree | undefined;
  if (nTrees > 0) {
    const first = splitTree(rows, n, d, leafSize, mulberry32(treeSeeds[0] as number));
    original = first.order;
    for (let r = 0; r < n; r++) x.set(rows.subarray((original[r] as number) * d, ((original[r] as number) + 1) * d), r * d);
    firstTree = { order: identity, leafBounds: first.leafBounds };
  } else {
    original = identity;
    x.set(rows);
  }
  const keys = (memory && layout ? new Float32Array(memory.buffer, layout.keys, n * K) : new Float32Array(buffer(n * K * 4))).fill(Infinity);
  const ids = int32At(layout?.ids, n * K).fill(-1);
  const fresh = new Uint8Array(buffer(n * K));
  const newIds = int32At(layout?.newIds, n * C);
  const oldIds = int32At(layout?.oldIds, n * C);
  const newPri = new Float32Array(buffer(n * C * 4));
  const oldPri = new Float32Array(buffer(n * C * 4));
  const record: ApproxKnnStats = { trees: 0, iterations: 0, updates: [], distanceEvaluations: 0 };

  const init = memory && layout ? { memory, layout } : { rows: x.buffer, keys: keys.buffer, ids: ids.buffer, newIds: newIds.buffer, oldIds: oldIds.buffer };
  const pool = parallel ? await DescentPool.start(threads, { ...init, n, d, K, fresh: fresh.buffer, newPri: newPri.buffer, oldPri: oldPri.buffer, C }) : undefined;
  const wasmJoin = !pool && memory && layout ? new WasmJoin(memory, layout, 0) : undefined;
  const pause = async () => {
    await new Promise<void>((resolve) => setImmediate(resolve));
    signal?.throwIfAborted();
  };
  try {
    // Trees: built, and their leaves' pair distances computed, on the workers when there are any
    // (the first tree's here meanwhile); the pairs are offered to the heaps here in tree order.
    // One tree per request, each worker's in a chain, and a tree is requested only once the tree
    // TREE_LOOKAHEAD places before it has been offered: at most TREE_LOOKAHEAD + 1 pair lists
    // (12 bytes per pair, ~n · leafSize / 2 pairs per tree: ~84 MB at 1,000,000 points) exist at
    // once, however many threads there are.
    const fromWorkers: (Promise<LeafPairs> | undefined)[] = [];
    const offered: { done: Promise<void>; resolve: () => void }[] = Array.from({ length: nTrees }, () => {
      let resolve = () => {};
      const done = new Promise<void>((settle) => {
        resolve = settle;
      });
      return { done, resolve };
    });
    if (pool) {
      const lookahead = Math.min(pool.size, TREE_LOOKAHEAD);
      const chains = Array.from({ length: pool.size }, () => Promise.resolve());
      for (let t = 1; t < nTrees; t++) {
        const slot = (t - 1) % pool.size;
        const before = t - lookahead - 1 >= 0 ? offered[t - lookahead - 1]?.done : undefined;
        const pairs = (chains[slot] as Promise<unknown>)
          .then(() => before)
          .then(() => pool.request(slot, { type: 'trees', seeds: [treeSeeds[t]], leafSize }))
          .then((reply) => {
            const list = reply.pairs?.[0];
            if (list === undefined) throw new Error('approximate neighbour search: a worker returned no tree');
            return list;
          });
        // Handled here too: a later tree's failure after an earlier one's must not go unhandled.
        pairs.catch(() => undefined);
        chains[slot] = pairs.then(() => undefined, () => undefined);
        fromWorkers[t] = pairs;
      }
    }
    const offer = async (pairs: LeafPairs, t: number) => {
      record.distanceEvaluations += pairs.count;
      applyUpdates(keys, ids, fresh, K, pairs.p, pairs.q, pairs.key, pairs.count);
      offered[t]?.resolve();
      record.trees++;
      report?.((0.2 * (t + 1)) / nTrees, `neighbour graph: tree ${t + 1}/${nTrees}`);
      await pause();
    };
    if (firstTree) await offer(leafPairs(x, d, firstTree.order, firstTree.leafBounds), 0);
    for (let t = 1; t < nTrees; t++) {
      const built = fromWorkers[t];
      if (built) {
        await offer(await built, t);
      } else {
        const tree = splitTree(x, n, d, leafSize, mulberry32(treeSeeds[t] as number));
        await offer(leafPairs(x, d, tree.order, tree.leafBounds), t);
      }
    }
    record.distanceEvaluations += fillRandom(x, n, d, keys, ids, fresh, K, random);

    const local = new Updates();
    const marks = pool ? undefined : new HeapMarks(n);
    // The candidate lists by point range: every list is built before any fresh flag is cleared.
    const ranges = pool ? Array.from({ length: pool.size }, (_, slot) => [Math.floor((slot * n) / pool.size), Math.floor(((slot + 1) * n) / pool.size)] as const) : [];
    for (let iteration = 1; iteration <= settings.maxIterations; iteration++) {
      const seed = Math.floor(random() * 4294967296) | 0;
      if (pool) {
        await Promise.all(ranges.map(([from, to], slot) => pool.request(slot, { type: 'candidates', from, to, seed })));
        await Promise.all(ranges.map(([from, to], slot) => pool.request(slot, { type: 'sample', from, to })));
      } else {
        if (!marks) throw new Error('approximate neighbour search: no heap marks on the calling thread');
        buildCandidates(ids, fresh, n, K, C, seed, newIds, newPri, oldIds, oldPri, 0, n);
        markSampled(ids, fresh, K, C, newIds, 0, n, marks);
      }
      let changed = 0;
      for (let b0 = 0; b0 < n; b0 += JOIN_BLOCK) {
        const b1 = Math.min(n, b0 + JOIN_BLOCK);
        if (pool) {
          const step = Math.ceil((b1 - b0) / pool.size);
          const parts = Array.from({ length: pool.size }, (_, slot) => [Math.min(b1, b0 + slot * step), Math.min(b1, b0 + (slot + 1) * step)] as const);
          const replies = await Promise.all(parts.map(([i0, i1], slot) => pool.request(slot, { type: 'join', i0, i1 })));
          for (const reply of replies) {
            const { p, q, key, count } = reply;
            if (p === undefined || q === undefined || key === undefined || count === undefined) throw new Error('approximate neighbour search: a worker returned no updates');
            record.distanceEvaluations += reply.evaluations ?? 0;
            changed += applyUpdates(keys, ids, fresh, K, p, q, key, count);
          }
        } else {
          local.count = 0;
          if (!marks) throw new Error('approximate neighbour search: no heap marks on the calling thread');
          record.distanceEvaluations += wasmJoin ? wasmJoin.join(b0, b1, local) : localJoin(x, d, keys, ids, K, newIds, oldIds, C, b0, b1, local, marks);
          changed += applyUpdates(keys, ids, fresh, K, local.p, local.q, local.key, local.count);
        }
        signal?.throwIfAborted();
      }
      record.iterations++;
      record.updates.push(changed);
      report?.(0.2 + (0.8 * iteration) / settings.maxIterations, `neighbour graph: NN-descent iteration ${iteration}`);
      await pause();
      if (changed <= settings.delta * n * K) break;
    }
    await pool?.close(true);
    const graph = finish(ids, original, prepared, n, d, k, K, metric);
    if (stats) Object.assign(stats, record);
    return graph;
  } catch (error) {
    await pool?.close(false);
    throw error;
  }
}

/**
 * Recall of `approx` against exact neighbours: the share of true neighbours found,
 * Σ_r |approx_{points[r]} ∩ exact_r| / (m·k) over the m points listed in `points` (default all
 * n), where row r of `exact` holds the exact neighbours of points[r] (exactKnnOfRows' output, or
 * a whole exact graph when `points` is omitted). A neighbour tied with the k-th true distance
 * counts as found.
 */
export function knnRecall(approx: KnnGraph, exact: { indices: Int32Array; distances: Float32Array; k: number }, points?: ArrayLike<number>): number {
  const k = approx.k;
  if (exact.k < k) throw new RangeError(`recall: the exact graph has k = ${exact.k} < ${k}`);
  const list = points ?? Int32Array.from({ length: approx.n }, (_, i) => i);
  let found = 0;
  for (let r = 0; r < list.length; r++) {
    const i = list[r] as number;
    const kth = exact.distances[r * exact.k + k - 1] as number;
    for (let s = 0; s < k; s++) {
      const j = approx.indices[i * k + s] as number;
      let hit = (approx.distances[i * k + s] as number) <= kth;
      if (!hit) for (let t = 0; t < k; t++) if (exact.indices[r * exact.k + t] === j) hit = true;
      if (hit) found++;
    }
  }
  return found / (list.length * k);
}
