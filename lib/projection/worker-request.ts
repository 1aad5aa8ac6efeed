/**
 * One request to a worker thread of the projection kernels (knn.ts, knn-approx.ts, umap-batch.ts,
 * fidelity-parallel.ts) and its answer, and the polling of a pool's shared progress counters.
 * Every worker answers each message with { ok: true, … } or { ok: false, message }.
 */
import type { Worker } from 'node:worker_threads';

export interface WorkerReply {
  ok: boolean;
  message?: string;
}

export function isWorkerReply(value: unknown): value is WorkerReply {
  return typeof value === 'object' && value !== null && typeof (value as { ok?: unknown }).ok === 'boolean';
}

/**
 * Posts `message` to `worker` and resolves with its reply; rejects when the reply says it failed,
 * or when the worker fails or exits first. Leaves no listener behind either way.
 *
 * @param what - the computation, for error messages ("UMAP batch layout").
 * @param slot - the worker's number in its pool, for error messages.
 * @typeParam Reply - the fields this kind of worker adds to its replies (not checked here).
 */
export function askWorker<Reply extends WorkerReply = WorkerReply>(worker: Worker, what: string, slot: number, message: object): Promise<Reply> {
  return new Promise<Reply>((resolve, reject) => {
    const done = () => {
      worker.off('message', onMessage);
      worker.off('error', onError);
      worker.off('exit', onExit);
    };
    const onError = (error: Error) => {
      done();
      reject(error);
    };
    const onExit = (code: number) => {
      done();
      reject(new Error(`${what}: worker ${slot} exited with code ${code}`));
    };
    const onMessage = (reply: unknown) => {
      done();
      if (!isWorkerReply(reply) || !reply.ok) reject(new Error(`${what}: worker ${slot} failed: ${isWorkerReply(reply) ? reply.message : 'bad reply'}`));
      else resolve(reply as Reply);
    };
    worker.on('message', onMessage);
    worker.once('error', onError);
    worker.once('exit', onExit);
    worker.postMessage(message);
  });
}

/** How often a worker pool's shared progress counters are read, in milliseconds. */
export const PROGRESS_INTERVAL_MS = 200;

/**
 * While worker threads count their progress into shared memory: calls onProgress(read()) every
 * PROGRESS_INTERVAL_MS (read() clamped to 1) and hands a throw from it to `fail`. Returns the stop
 * function (nothing is polled without onProgress).
 */
export function pollProgress(onProgress: ((fraction: number) => void) | undefined, read: () => number, fail: (error: unknown) => void): () => void {
  if (!onProgress) return () => undefined;
  const timer = setInterval(() => {
    try {
      onProgress(Math.min(1, read()));
    } catch (error) {
      fail(error);
    }
  }, PROGRESS_INTERVAL_MS);
  return () => clearInterval(timer);
}
