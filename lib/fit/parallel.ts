/**
 * The data term of the objective split over worker threads, for large designs.
 *
 * The observations are cut into OBJECTIVE_CHUNKS fixed ranges; each chunk accumulates its loss and
 * gradient into its own buffer, and the chunks are summed in chunk order. The cut depends on n
 * only, never on the number of threads, so the result is bit-for-bit the same on one thread or
 * many — the seed reproduces a fit on any machine. The main thread takes chunks too and blocks in
 * Atomics.wait for the workers (the objective is synchronous for L-BFGS); workers wait the same way
 * for the next evaluation, so an evaluation costs no message passing.
 *
 * Memory: the observations are copied once into SharedArrayBuffers (n·(4 + 4 + 8 + 8p [+ 8])
 * bytes) and there are OBJECTIVE_CHUNKS gradient buffers of the parameter size.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { FitData, Layout } from './model';
import { accumulateRange, KIND_BERNOULLI, KIND_GAUSSIAN, KIND_POISSON, type KernelSpec } from './objective-kernel.mjs';

/** Fixed number of observation ranges (see the header). 8 keeps up to 8 threads busy for ~8 extra gradient-sized additions per evaluation. */
export const OBJECTIVE_CHUNKS = 8;
/**
 * Below this many observations one thread does all the work: starting a worker costs tens of
 * milliseconds and an evaluation of a small design well under one, and the chunked sum would still
 * change rounding for nothing.
 */
export const PARALLEL_MIN_OBSERVATIONS = 200_000;

export function kernelSpec(layout: Layout): KernelSpec {
  return {
    p: layout.p,
    rank: layout.rank,
    entities: layout.entities,
    kind: layout.likelihood === 'gaussian' ? KIND_GAUSSIAN : layout.likelihood === 'bernoulli' ? KIND_BERNOULLI : KIND_POISSON,
    mu: layout.mu,
    a: layout.a,
    b: layout.b,
    beta: layout.beta,
    gamma: layout.gamma,
    delta: layout.delta,
  };
}

/** Threads to use by default: the cores Node reports, at most OBJECTIVE_CHUNKS. */
export function defaultThreads(): number {
  return Math.max(1, Math.min(OBJECTIVE_CHUNKS, availableParallelism()));
}

function sharedCopy<T extends Int32Array | Float64Array>(source: T, make: (buffer: SharedArrayBuffer) => T): T {
  const target = make(new SharedArrayBuffer(Math.max(8, source.byteLength)));
  target.set(source);
  return target;
}

export class ParallelObjective {
  private readonly workers: Worker[] = [];
  private readonly control: Int32Array;
  private readonly precision: Float64Array;
  private readonly theta: Float64Array;
  private readonly chunkGrad: SharedArrayBuffer;
  private readonly chunkLoss: Float64Array;
  private readonly bounds: number[];
  private readonly mainChunks: number[];
  private readonly data: FitData;
  private readonly spec: KernelSpec;
  private readonly size: number;
  private failure: Error | null = null;

  constructor(data: FitData, layout: Layout, threads: number) {
    this.size = layout.size;
    this.spec = kernelSpec(layout);
    const controlBuffer = new SharedArrayBuffer(24);
    this.control = new Int32Array(controlBuffer);
    this.precision = new Float64Array(controlBuffer, 16, 1);
    this.theta = new Float64Array(new SharedArrayBuffer(layout.size * 8));
    this.chunkGrad = new SharedArrayBuffer(OBJECTIVE_CHUNKS * layout.size * 8);
    this.chunkLoss = new Float64Array(new SharedArrayBuffer(OBJECTIVE_CHUNKS * 8));
    this.bounds = Array.from({ length: OBJECTIVE_CHUNKS + 1 }, (_, c) => Math.floor((c * data.n) / OBJECTIVE_CHUNKS));
    const row = sharedCopy(data.row, (b) => new Int32Array(b));
    const column = sharedCopy(data.column, (b) => new Int32Array(b));
    const y = sharedCopy(data.y, (b) => new Float64Array(b));
    const x = sharedCopy(data.x, (b) => new Float64Array(b));
    const offset = data.offset === null ? null : sharedCopy(data.offset, (b) => new Float64Array(b));
    this.data = { n: data.n, row, column, y, x: x.subarray(0, data.x.length), offset };
    const count = Math.max(1, Math.min(threads, OBJECTIVE_CHUNKS));
    const assignment: number[][] = Array.from({ length: count }, () => []);
    for (let c = 0; c < OBJECTIVE_CHUNKS; c++) assignment[c % count]?.push(c);
    this.mainChunks = assignment[0] ?? [];
    const url = new URL('./objective-worker.mjs', import.meta.url);
    for (let w = 1; w < count; w++) {
      const worker = new Worker(url);
      worker.on('error', (error) => (this.failure = error));
      worker.postMessage({
        control: controlBuffer,
        theta: this.theta.buffer,
        chunkGrad: this.chunkGrad,
        chunkLoss: this.chunkLoss.buffer,
        row: row.buffer,
        column: column.buffer,
        y: y.buffer,
        x: x.buffer,
        offset: offset === null ? null : offset.buffer,
        spec: this.spec,
        size: this.size,
        bounds: this.bounds,
        chunks: assignment[w] ?? [],
      });
      this.workers.push(worker);
    }
  }

  /** Σ over observations (loss as accumulateRange returns it); writes the data term's gradient into grad. */
  evaluate(theta: Float64Array, grad: Float64Array, precision: number): number {
    if (this.failure) throw this.failure;
    this.theta.set(theta);
    this.precision[0] = precision;
    Atomics.store(this.control, 1, 0);
    Atomics.add(this.control, 0, 1);
    Atomics.notify(this.control, 0);
    const { row, column, y, x, offset } = this.data;
    for (const chunk of this.mainChunks) {
      const target = new Float64Array(this.chunkGrad, chunk * this.size * 8, this.size);
      target.fill(0);
      this.chunkLoss[chunk] = accumulateRange(this.theta, target, row, column, y, x, offset, this.spec, precision, this.bounds[chunk] ?? 0, this.bounds[chunk + 1] ?? 0);
    }
    const workers = this.workers.length;
    for (;;) {
      const done = Atomics.load(this.control, 1);
      if (done >= workers) break;
      // A worker that died never counts itself done (its error event needs the event loop, which is
      // blocked here), so a long silence is taken as a failure rather than waiting for ever.
      if (Atomics.wait(this.control, 1, done, 60_000) === 'timed-out') throw new Error('A fitting worker thread stopped answering.');
    }
    grad.fill(0);
    let loss = 0;
    for (let c = 0; c < OBJECTIVE_CHUNKS; c++) {
      const part = new Float64Array(this.chunkGrad, c * this.size * 8, this.size);
      for (let l = 0; l < this.size; l++) grad[l] = (grad[l] as number) + (part[l] as number);
      loss += this.chunkLoss[c] as number;
    }
    return loss;
  }

  async close(): Promise<void> {
    Atomics.store(this.control, 2, 1);
    Atomics.add(this.control, 0, 1);
    Atomics.notify(this.control, 0);
    await Promise.all(this.workers.map((worker) => worker.terminate()));
  }
}

/** The data term of the objective: Σ over observations, its gradient written into grad. */
export interface DataTerm {
  evaluate(theta: Float64Array, grad: Float64Array, precision: number): number;
  close(): Promise<void>;
}

/**
 * The data term for a fit: one plain pass for small designs; for designs of at least
 * PARALLEL_MIN_OBSERVATIONS the chunked sum, on `threads` threads (1: the calling thread only).
 */
export function createDataTerm(data: FitData, layout: Layout, threads: number): DataTerm {
  const spec = kernelSpec(layout);
  if (data.n < PARALLEL_MIN_OBSERVATIONS) {
    return {
      evaluate: (theta, grad, precision) => {
        grad.fill(0);
        return accumulateRange(theta, grad, data.row, data.column, data.y, data.x, data.offset, spec, precision, 0, data.n);
      },
      close: async () => {},
    };
  }
  if (threads <= 1) {
    const scratch = new Float64Array(layout.size);
    return { evaluate: (theta, grad, precision) => chunkedEvaluate(data, spec, layout.size, theta, grad, precision, scratch), close: async () => {} };
  }
  const pool = new ParallelObjective(data, layout, threads);
  return { evaluate: (theta, grad, precision) => pool.evaluate(theta, grad, precision), close: () => pool.close() };
}

/**
 * The same chunked sum on the calling thread alone: what ParallelObjective computes, bit for bit,
 * for designs large enough to be chunked when no worker is wanted.
 */
export function chunkedEvaluate(data: FitData, spec: KernelSpec, size: number, theta: Float64Array, grad: Float64Array, precision: number, scratch: Float64Array): number {
  grad.fill(0);
  let loss = 0;
  for (let c = 0; c < OBJECTIVE_CHUNKS; c++) {
    scratch.fill(0);
    const start = Math.floor((c * data.n) / OBJECTIVE_CHUNKS);
    const end = Math.floor(((c + 1) * data.n) / OBJECTIVE_CHUNKS);
    loss += accumulateRange(theta, scratch, data.row, data.column, data.y, data.x, data.offset, spec, precision, start, end);
    for (let l = 0; l < size; l++) grad[l] = (grad[l] as number) + (scratch[l] as number);
  }
  return loss;
}
