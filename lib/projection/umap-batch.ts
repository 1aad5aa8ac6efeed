/**
 * The batch UMAP layout on worker threads: the default layout of runUmap (engine 'batch', see
 * umap.ts). The arithmetic and why it exists are in umap-batch-kernel.mjs; this module owns the
 * state (in SharedArrayBuffers when threads run), splits the vertices into contiguous ranges of
 * about equal edge counts, and runs one epoch at a time: every thread moves its range from layout
 * `parity` into the other, then the two swap.
 *
 * Coordinates do not depend on the number of threads: each vertex is moved by one thread, from
 * the previous epoch's positions and a random stream of its own (tests/unit/projection/umap-batch.test.ts
 * checks 1 against 2 and 3 threads bit for bit).
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { type BatchState, batchEpoch } from './umap-batch-kernel.mjs';
import type { FuzzyGraph } from './umap-kernel';
import { askWorker } from './worker-request';

/**
 * From this many points the epochs run on worker threads. Below, an epoch takes well under a
 * millisecond and the two messages per thread and epoch (~0.1 ms) would be a large share of it.
 */
export const BATCH_PARALLEL_MIN_POINTS = 4000;

export interface BatchLayoutSettings {
  /** Curve parameters (umap-kernel.ts curveParameters). */
  a: number;
  b: number;
  /** Epochs, ≥ 1; cost is linear. */
  nEpochs: number;
  /** Seed of the per-vertex negative-sample streams (its low 32 bits). */
  seed: number;
  /**
   * Worker threads, 1–64; default os.availableParallelism() from BATCH_PARALLEL_MIN_POINTS points,
   * else 1 (the calling thread). The result is the same for any count.
   */
  threads?: number;
}

/** Float64 view of a fresh buffer, shared when threads will read it. */
function float64(length: number, shared: boolean): Float64Array {
  return new Float64Array(shared ? new SharedArrayBuffer(length * 8) : new ArrayBuffer(length * 8));
}

function int32(length: number, shared: boolean): Int32Array {
  return new Int32Array(shared ? new SharedArrayBuffer(length * 4) : new ArrayBuffer(length * 4));
}

/** Vertex ranges [bounds[t], bounds[t + 1]) holding about equal numbers of edges. */
export function balancedRanges(rowStart: Int32Array, n: number, parts: number): Int32Array {
  const bounds = new Int32Array(parts + 1);
  const edges = rowStart[n] as number;
  let vertex = 0;
  for (let part = 1; part < parts; part++) {
    const target = (edges * part) / parts;
    while (vertex < n && (rowStart[vertex] as number) < target) vertex++;
    bounds[part] = vertex;
  }
  bounds[parts] = n;
  return bounds;
}

export class UmapBatchLayout {
  readonly nEpochs: number;
  private epoch = 0;
  private parity: 0 | 1 = 0;
  private readonly state: BatchState;
  private readonly layouts: [Float64Array, Float64Array];
  private readonly workers: Worker[] = [];
  private readonly bounds: Int32Array;
  private ready: Promise<void> = Promise.resolve();
  private failure: Error | undefined;

  /**
   * @param graph - the pruned fuzzy graph (umap-kernel.ts pruneFuzzyGraph), sorted by row.
   * @param start - n × 2 row-major start layout (copied).
   */
  constructor(
    graph: FuzzyGraph,
    start: Float64Array,
    private readonly settings: BatchLayoutSettings,
  ) {
    const { n } = graph;
    if (start.length !== n * 2) throw new RangeError(`UMAP batch layout: the start should hold n × 2 = ${n * 2} values, got ${start.length}`);
    if (!Number.isInteger(settings.nEpochs) || settings.nEpochs < 1) throw new RangeError(`UMAP batch layout: nEpochs must be a positive integer, got ${settings.nEpochs}`);
    const requested = settings.threads ?? (n >= BATCH_PARALLEL_MIN_POINTS ? availableParallelism() : 1);
    if (!Number.isInteger(requested) || requested < 1 || requested > 64) throw new RangeError(`UMAP batch layout: threads must be an integer from 1 to 64, got ${requested}`);
    const threads = Math.min(requested, n);
    const shared = threads > 1;
    this.nEpochs = settings.nEpochs;

    const count = graph.weights.length;
    const rowStart = int32(n + 1, shared);
    for (let e = 0; e < count; e++) {
      const row = graph.rows[e] as number;
      if (e > 0 && row < (graph.rows[e - 1] as number)) throw new RangeError('UMAP batch layout: the graph must be sorted by row');
      rowStart[row + 1] = (rowStart[row + 1] as number) + 1;
    }
    for (let i = 0; i < n; i++) rowStart[i + 1] = (rowStart[i + 1] as number) + (rowStart[i] as number);
    const cols = int32(count, shared);
    cols.set(graph.cols);
    let max = 0;
    for (let e = 0; e < count; e++) if ((graph.weights[e] as number) > max) max = graph.weights[e] as number;
    // The in-place layout's bookkeeping (umap-kernel.ts UmapLayout): an edge of weight w is sampled
    // every max / w epochs, its negatives five times as often.
    const perSample = float64(count, shared);
    const nextSample = float64(count, shared);
    const nextNegative = float64(count, shared);
    for (let e = 0; e < count; e++) {
      const w = graph.weights[e] as number;
      if (!(w > 0)) throw new RangeError(`UMAP batch layout: edge ${e} has weight ${w}; the fuzzy graph holds positive weights only`);
      const every = max / w;
      perSample[e] = every;
      nextSample[e] = every;
      nextNegative[e] = every / 5;
    }
    this.state = { n, rowStart, cols, perSample, nextSample, nextNegative, m1: float64(2 * n, shared), m2: float64(2 * n, shared) };
    this.layouts = [float64(2 * n, shared), float64(2 * n, shared)];
    this.layouts[0].set(start);
    this.bounds = balancedRanges(rowStart, n, threads);
    if (shared) {
      this.ready = this.startWorkers(threads);
      // Awaited by the first step; handled here too, so that a layout abandoned before its first
      // step (a job cancelled meanwhile) leaves no unhandled rejection behind.
      this.ready.catch(() => undefined);
    }
  }

  private startWorkers(threads: number): Promise<void> {
    const url = new URL('./umap-batch-worker.mjs', import.meta.url);
    const { a, b, nEpochs, seed } = this.settings;
    const buffer = (array: Int32Array | Float64Array) => array.buffer;
    const replies: Promise<void>[] = [];
    for (let t = 0; t < threads; t++) {
      const worker = new Worker(url);
      this.workers.push(worker);
      worker.on('error', (error) => {
        this.failure ??= error;
      });
      worker.on('exit', (code) => {
        if (code !== 0 && this.epoch < this.nEpochs) this.failure ??= new Error(`UMAP batch layout: worker ${t} exited with code ${code}`);
      });
      replies.push(this.request(worker, t, {
        type: 'init',
        from: this.bounds[t],
        to: this.bounds[t + 1],
        n: this.state.n,
        rowStart: buffer(this.state.rowStart),
        cols: buffer(this.state.cols),
        perSample: buffer(this.state.perSample),
        nextSample: buffer(this.state.nextSample),
        nextNegative: buffer(this.state.nextNegative),
        m1: buffer(this.state.m1),
        m2: buffer(this.state.m2),
        layouts: [buffer(this.layouts[0]), buffer(this.layouts[1])],
        a,
        b,
        nEpochs,
        seed: seed | 0,
      }));
    }
    return Promise.all(replies).then(() => undefined);
  }

  private async request(worker: Worker, slot: number, message: object): Promise<void> {
    await askWorker(worker, 'UMAP batch layout', slot, message);
  }

  /** Epochs run so far. */
  get currentEpoch(): number {
    return this.epoch;
  }

  /** The current n × 2 layout (a view; it changes with the next step). */
  get embedding(): Float64Array {
    return this.layouts[this.parity];
  }

  /** Runs one epoch (no-op after the last); returns the epochs run so far. */
  async step(): Promise<number> {
    if (this.epoch >= this.nEpochs) return this.epoch;
    await this.ready;
    if (this.failure) throw this.failure;
    const { a, b, nEpochs, seed } = this.settings;
    const read = this.layouts[this.parity];
    const write = this.layouts[1 - this.parity] as Float64Array;
    if (this.workers.length === 0) {
      batchEpoch(this.state, 0, this.state.n, read, write, this.epoch, nEpochs, a, b, seed | 0);
    } else {
      await Promise.all(this.workers.map((worker, slot) => this.request(worker, slot, { type: 'epoch', epoch: this.epoch, parity: this.parity })));
    }
    this.parity = this.parity === 0 ? 1 : 0;
    this.epoch++;
    return this.epoch;
  }

  /** Stops the worker threads (call when done or abandoning the layout; safe to call twice). */
  async close(): Promise<void> {
    const workers = this.workers.splice(0);
    await Promise.all(workers.map((worker) => worker.terminate()));
  }
}
