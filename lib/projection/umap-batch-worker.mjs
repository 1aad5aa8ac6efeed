// @ts-check
/**
 * Worker thread of the batch UMAP layout (umap-batch.ts). Plain JavaScript for the reason given in
 * knn-kernel.mjs. It sees the layout state as SharedArrayBuffers and moves only the vertices of
 * its own range, so threads never write the same element:
 *   { type: 'init', from, to, n, rowStart, cols, perSample, nextSample, nextNegative, m1, m2, layouts, a, b, nEpochs, seed } → { ok: true }
 *   { type: 'epoch', epoch, parity } → { ok: true } (reads layout `parity`, writes the other)
 * or { ok: false, message } on failure.
 */
import { parentPort } from 'node:worker_threads';
import { batchEpoch } from './umap-batch-kernel.mjs';

if (parentPort === null) throw new Error('umap-batch-worker.mjs must be started as a worker thread');
const port = parentPort;

/** @type {{ state: import('./umap-batch-kernel.mjs').BatchState, from: number, to: number, layouts: [Float64Array, Float64Array], a: number, b: number, nEpochs: number, seed: number } | undefined} */
let job;

port.on('message', (/** @type {any} */ message) => {
  try {
    if (message.type === 'init') {
      job = {
        state: {
          n: message.n,
          rowStart: new Int32Array(message.rowStart),
          cols: new Int32Array(message.cols),
          perSample: new Float64Array(message.perSample),
          nextSample: new Float64Array(message.nextSample),
          nextNegative: new Float64Array(message.nextNegative),
          m1: new Float64Array(message.m1),
          m2: new Float64Array(message.m2),
        },
        from: message.from,
        to: message.to,
        layouts: [new Float64Array(message.layouts[0]), new Float64Array(message.layouts[1])],
        a: message.a,
        b: message.b,
        nEpochs: message.nEpochs,
        seed: message.seed,
      };
      port.postMessage({ ok: true });
      return;
    }
    if (job === undefined) throw new Error('not initialised');
    if (message.type === 'epoch') {
      const parity = message.parity === 1 ? 1 : 0;
      batchEpoch(job.state, job.from, job.to, job.layouts[parity], job.layouts[1 - parity], message.epoch, job.nEpochs, job.a, job.b, job.seed);
      port.postMessage({ ok: true });
      return;
    }
    throw new Error(`unknown request ${String(message.type)}`);
  } catch (error) {
    port.postMessage({ ok: false, message: error instanceof Error ? error.message : String(error) });
  }
});
