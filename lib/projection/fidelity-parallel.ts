/**
 * projectionFidelity (fidelity.ts) on worker threads, for the projection job: the same scores bit
 * for bit, about 1/threads of the time, with progress and cancellation while it runs.
 *
 * Why it exists: the exact trustworthiness and continuity rank every point against all others in
 * both spaces, O(n²·d). On one thread that measured 5.5 s at 10,000 × 32 and 33 s at 20,000 × 64
 * (the largest set scored exactly), more than the UMAP layout itself, and as one synchronous call
 * it left the job's progress frozen and deaf to cancellation for that long.
 *
 * The sampled scores of larger sets (sampledRankScoresParallel) likewise: 500 queries against
 * 1,000,000 × 32 took 30 s on one thread.
 *
 * Split: every thread takes one contiguous range of query points for trustworthiness (latent keys,
 * the map's neighbours) and the same range for continuity (map keys, the latent neighbours). The
 * sums are of integers, so adding the threads' partial sums gives the single-thread bits.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { UniformGenerator } from '../align/random';
import {
  type ProjectionFidelity,
  type ProjectionFidelityOptions,
  type RankSums,
  type SampledRankOptions,
  type SampledRankScores,
  checkFidelityGraphs,
  fidelityFromSums,
  fidelityPlan,
  projectionFidelity,
  sampledPlan,
  sampledRankScores,
  sampledScoresFromSums,
} from './fidelity';
import { type KnnGraph, exactKnnParallel, prepareKnnRows } from './knn';
import { type WorkerReply, askWorker, pollProgress } from './worker-request';

/** Below this many points the scores take well under a second on one thread and workers are not started. */
export const PARALLEL_FIDELITY_MIN_POINTS = 2000;
/**
 * Below this many query × point rankings (m · n) the sampled scores stay on the calling thread
 * (500 queries × 20,000 points: ~0.3 s there, about what starting the workers saves).
 */
export const PARALLEL_SAMPLED_MIN_WORK = 10_000_000;

export interface ParallelFidelityOptions extends ProjectionFidelityOptions {
  /**
   * Worker threads, 1–64; default os.availableParallelism(). Even 1 is a worker thread, which
   * keeps the caller's event loop free for progress reports and cancellation; only below
   * PARALLEL_FIDELITY_MIN_POINTS points does projectionFidelity run on the calling thread. More
   * threads than cores only adds contention.
   */
  threads?: number;
  /** Aborting terminates the workers and rejects with the signal's reason (a cancelled job). */
  signal?: AbortSignal;
}

/** The thread count asked for, checked: 1–64, default os.availableParallelism() (at most 64). */
function threadsAsked(threads: number | undefined): number {
  const requested = threads ?? Math.min(64, availableParallelism());
  if (!Number.isInteger(requested) || requested < 1 || requested > 64) throw new RangeError(`fidelity: threads must be an integer from 1 to 64, got ${requested}`);
  return requested;
}

interface RankTask {
  rows: SharedArrayBuffer;
  d: number;
  indices: SharedArrayBuffer;
  stride: number;
}

function sharedRows(data: Float32Array, n: number, d: number, metric: 'euclidean' | 'cosine'): SharedArrayBuffer {
  const buffer = new SharedArrayBuffer(n * d * Float64Array.BYTES_PER_ELEMENT);
  prepareKnnRows(data, n, d, metric, new Float64Array(buffer));
  return buffer;
}

function sharedIndices(graph: KnnGraph): SharedArrayBuffer {
  const buffer = new SharedArrayBuffer(graph.indices.length * Int32Array.BYTES_PER_ELEMENT);
  new Int32Array(buffer).set(graph.indices);
  return buffer;
}

export async function projectionFidelityParallel(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  random: UniformGenerator,
  options: ParallelFidelityOptions = {},
): Promise<ProjectionFidelity> {
  const requested = threadsAsked(options.threads);
  const { signal, onProgress } = options;
  signal?.throwIfAborted();
  if (n < PARALLEL_FIDELITY_MIN_POINTS) return projectionFidelity(latent, n, d, map, random, options);

  const plan = fidelityPlan(n, map, options);
  // Without a latent graph its exact search (O(n²·d), like the ranks' latent half) takes the
  // first third of the progress; the map's (2-D) is quick and reports nothing.
  const searchShare = options.latentKnn ? 0 : 1 / 3;
  const search = { threads: requested, ...(signal ? { signal } : {}) };
  const latentKnn =
    options.latentKnn ?? (await exactKnnParallel(latent, n, d, plan.graphK, plan.metric, { ...search, ...(onProgress ? { onProgress: (f: number) => onProgress(searchShare * f) } : {}) }));
  const mapKnn = options.mapKnn ?? (await exactKnnParallel(map, n, plan.mapDims, plan.graphK, 'euclidean', search));
  checkFidelityGraphs(plan, n, latentKnn, mapKnn);
  let sums: RankSums | undefined;
  if (plan.validKs.length > 0) {
    const tasks: [RankTask, RankTask] = [
      { rows: sharedRows(latent, n, d, plan.metric), d, indices: sharedIndices(mapKnn), stride: mapKnn.k },
      { rows: sharedRows(map, n, plan.mapDims, 'euclidean'), d: plan.mapDims, indices: sharedIndices(latentKnn), stride: latentKnn.k },
    ];
    // Rough cost of one query in each task (its key row, then the rank pass), for the progress bar.
    const weights = [d + 2, plan.mapDims + 2] as const;
    const rankProgress = onProgress && ((f: number) => onProgress(searchShare + (1 - searchShare) * f));
    const [trust, continuity] = await rankSumsOnWorkers(tasks, weights, n, plan.validKs, requested, signal, rankProgress);
    sums = { trust, continuity };
  }
  onProgress?.(1);
  return fidelityFromSums(latent, n, d, map, random, plan, { latentKnn, mapKnn }, sums, options.maxPairs);
}

async function rankSumsOnWorkers(
  tasks: readonly [RankTask, RankTask],
  weights: readonly [number, number],
  n: number,
  ks: readonly number[],
  threads: number,
  signal: AbortSignal | undefined,
  onProgress: ((fraction: number) => void) | undefined,
): Promise<[Float64Array, Float64Array]> {
  const totals: [Float64Array, Float64Array] = [new Float64Array(ks.length), new Float64Array(ks.length)];
  // Slot task · threads + thread holds the queries that thread has finished in that task.
  const whole = n * (weights[0] + weights[1]);
  const fraction = (progress: Int32Array) => {
    let done = 0;
    for (let slot = 0; slot < 2 * threads; slot++) done += Atomics.load(progress, slot) * weights[slot < threads ? 0 : 1];
    return done / whole;
  };
  await onRankWorkers(threads, 2 * threads, fraction, signal, onProgress, async (worker, thread, progress) => {
    const q0 = Math.floor((n * thread) / threads);
    const q1 = Math.floor((n * (thread + 1)) / threads);
    for (let task = 0; task < 2; task++) {
      const { rows, d, indices, stride } = tasks[task as 0 | 1];
      const reply = await askWorker<WorkerReply & { sums: number[] }>(worker, 'fidelity scores', thread, { kind: 'exact', rows, n, d, indices, stride, ks: [...ks], q0, q1, progress, slot: task * threads + thread });
      addInto(totals[task as 0 | 1], reply.sums);
    }
  });
  return totals;
}

function addInto(total: Float64Array, values: readonly number[]): void {
  values.forEach((value, index) => (total[index] = (total[index] as number) + value));
}

/**
 * sampledRankScores (fidelity.ts) on worker threads, each taking a contiguous share of the queries:
 * the same estimates bit for bit (integer sums and counts), with progress and cancellation.
 * Threads as projectionFidelityParallel (1 is one worker); below PARALLEL_SAMPLED_MIN_WORK it runs
 * on this thread.
 */
export async function sampledRankScoresParallel(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  ks: readonly number[],
  queries: ArrayLike<number>,
  options: SampledRankOptions & { threads?: number; signal?: AbortSignal } = {},
): Promise<SampledRankScores> {
  const requested = threadsAsked(options.threads);
  const { signal, onProgress } = options;
  signal?.throwIfAborted();
  const m = queries.length;
  const threads = Math.min(requested, m);
  if (m === 0 || m * n < PARALLEL_SAMPLED_MIN_WORK) return sampledRankScores(latent, n, d, map, ks, queries, options);

  const { metric, mapDims, preservationK, kMax } = sampledPlan(n, map, ks, queries, options);
  const rows = sharedRows(latent, n, d, metric);
  const sharedMap = new SharedArrayBuffer(map.length * Float32Array.BYTES_PER_ELEMENT);
  new Float32Array(sharedMap).set(map);
  const sharedQueries = new SharedArrayBuffer(m * Int32Array.BYTES_PER_ELEMENT);
  new Int32Array(sharedQueries).set(Array.from(queries));
  const sums: RankSums = { trust: new Float64Array(ks.length), continuity: new Float64Array(ks.length) };
  let kept = 0;
  const fraction = (progress: Int32Array) => {
    let done = 0;
    for (let slot = 0; slot < threads; slot++) done += Atomics.load(progress, slot);
    return done / m;
  };
  await onRankWorkers(threads, threads, fraction, signal, onProgress, async (worker, thread, progress) => {
    const q0 = Math.floor((m * thread) / threads);
    const q1 = Math.floor((m * (thread + 1)) / threads);
    const message = { kind: 'sampled', rows, n, d, map: sharedMap, mapDims, queries: sharedQueries, ks: [...ks], kMax, preservationK, q0, q1, progress, slot: thread };
    const reply = await askWorker<WorkerReply & { sums: number[]; continuitySums: number[]; kept: number }>(worker, 'sampled fidelity scores', thread, message);
    addInto(sums.trust, reply.sums);
    addInto(sums.continuity, reply.continuitySums);
    kept += reply.kept;
  });
  onProgress?.(1);
  return sampledScoresFromSums(ks, n, m, kMax, preservationK, sums, kept);
}

/**
 * Starts `threads` rank workers, runs `work` on each (its thread number and the shared progress
 * counters, `slots` Int32 entries), and resolves when all have finished. Meanwhile calls
 * onProgress(fraction(counters)) every PROGRESS_INTERVAL_MS (worker-request.ts); a throw from it, a failed worker or
 * the signal's abort rejects at once. The workers are terminated either way.
 */
async function onRankWorkers(
  threads: number,
  slots: number,
  fraction: (progress: Int32Array) => number,
  signal: AbortSignal | undefined,
  onProgress: ((fraction: number) => void) | undefined,
  work: (worker: Worker, thread: number, progress: SharedArrayBuffer) => Promise<void>,
): Promise<void> {
  const buffer = new SharedArrayBuffer(slots * Int32Array.BYTES_PER_ELEMENT);
  const progress = new Int32Array(buffer);
  const url = new URL('./rank-worker.mjs', import.meta.url);
  const workers: Worker[] = [];
  let stopProgress = (): void => undefined;
  let onAbort: (() => void) | undefined;
  try {
    await new Promise<void>((resolve, reject) => {
      const fail = (error: unknown) => reject(error instanceof Error ? error : new Error(String(error)));
      onAbort = () => fail(signal?.reason ?? new Error('fidelity scores cancelled'));
      // Aborted already (during the graph searches before): an 'abort' listener would never fire.
      if (signal?.aborted) {
        onAbort();
        return;
      }
      signal?.addEventListener('abort', onAbort, { once: true });
      stopProgress = pollProgress(onProgress, () => fraction(progress), fail);
      let pending = threads;
      for (let thread = 0; thread < threads; thread++) {
        const worker = new Worker(url);
        workers.push(worker);
        // For the pool's whole life, also between requests (askWorker listens only during one).
        worker.on('error', fail);
        worker.once('exit', (code) => fail(new Error(`fidelity scores: worker ${thread} exited with code ${code}`)));
        work(worker, thread, buffer).then(() => {
          pending--;
          if (pending === 0) resolve();
        }, fail);
      }
    });
  } finally {
    stopProgress();
    if (onAbort !== undefined) signal?.removeEventListener('abort', onAbort);
    await Promise.all(workers.map((worker) => worker.terminate()));
  }
}
