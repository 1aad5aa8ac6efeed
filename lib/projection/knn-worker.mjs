// @ts-check
/**
 * Worker thread of exactKnnParallel (knn.ts). Plain JavaScript for the reason given in
 * knn-kernel.mjs: a worker is loaded by Node's own loader, which runs no TypeScript under vitest.
 *
 * It receives the prepared rows and its own n × k slice of the output heaps as SharedArrayBuffers
 * (no copy either way), scans the block rows it was given, adding the tiles of each to a shared
 * counter (the caller's progress), and answers { ok: true } or { ok: false, message }.
 */
import { parentPort } from 'node:worker_threads';
import { resetHeaps, rowNorms, scanBlockRows } from './knn-kernel.mjs';

if (parentPort === null) throw new Error('knn-worker.mjs must be started as a worker thread');
const port = parentPort;

port.on('message', (/** @type {{ rows: SharedArrayBuffer, n: number, d: number, k: number, blockSize: number, blockRows: number[], heapKeys: SharedArrayBuffer, heapIndices: SharedArrayBuffer, slot: number, tilesDone: SharedArrayBuffer }} */ job) => {
  try {
    const { n, d, k, slot } = job;
    const x = new Float64Array(job.rows);
    const heapKey = new Float64Array(job.heapKeys, slot * n * k * 8, n * k);
    const heapIndex = new Int32Array(job.heapIndices, slot * n * k * 4, n * k);
    // O(n·d), negligible next to the scan; computed here by the same code as on the main thread.
    const norms = new Float64Array(n);
    rowNorms(x, n, d, norms);
    resetHeaps(heapKey, heapIndex);
    const tilesDone = new Int32Array(job.tilesDone);
    scanBlockRows(x, norms, n, d, k, job.blockSize, job.blockRows, heapKey, heapIndex, (tiles) => Atomics.add(tilesDone, 0, tiles));
    port.postMessage({ ok: true });
  } catch (error) {
    port.postMessage({ ok: false, message: error instanceof Error ? error.message : String(error) });
  }
});
