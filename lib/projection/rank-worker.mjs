// @ts-check
/**
 * Worker thread of fidelity-parallel.ts: the rank penalty sums of one range of query points
 * (rank-kernel.mjs rankPenaltyRange). Plain JavaScript for the reason given in knn-kernel.mjs.
 *
 * It receives the prepared rows and the neighbour lists of the other space as SharedArrayBuffers
 * (no copy), writes how many of its queries are done into its slot of a shared progress counter
 * after each block, and answers { ok: true, sums } or { ok: false, message }.
 */
import { parentPort } from 'node:worker_threads';
import { rowNorms } from './knn-kernel.mjs';
import { rankPenaltyRange } from './rank-kernel.mjs';

if (parentPort === null) throw new Error('rank-worker.mjs must be started as a worker thread');
const port = parentPort;

port.on('message', (/** @type {{ rows: SharedArrayBuffer, n: number, d: number, indices: SharedArrayBuffer, stride: number, ks: number[], q0: number, q1: number, progress: SharedArrayBuffer, slot: number }} */ job) => {
  try {
    const { n, d } = job;
    const rows = new Float64Array(job.rows);
    const norms = new Float64Array(n);
    rowNorms(rows, n, d, norms);
    const progress = new Int32Array(job.progress);
    const sums = new Float64Array(job.ks.length);
    rankPenaltyRange(rows, norms, n, d, new Int32Array(job.indices), job.stride, job.ks, job.q0, job.q1, sums, (done) => Atomics.store(progress, job.slot, done));
    port.postMessage({ ok: true, sums: Array.from(sums) });
  } catch (error) {
    port.postMessage({ ok: false, message: error instanceof Error ? error.message : String(error) });
  }
});
