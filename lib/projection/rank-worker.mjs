// @ts-check
/**
 * Worker thread of fidelity-parallel.ts: the rank penalty sums of one range of query points
 * (rank-kernel.mjs rankPenaltyRange for the exact scores, sampledRankRange for the sampled ones).
 * Plain JavaScript for the reason given in knn-kernel.mjs.
 *
 * It receives the prepared rows (and the neighbour lists of the other space, or the map and the
 * queries) as SharedArrayBuffers (no copy), writes how many of its queries are done into its slot
 * of a shared progress counter as it goes, and answers { ok: true, sums, … } or
 * { ok: false, message }.
 */
import { parentPort } from 'node:worker_threads';
import { rowNorms } from './knn-kernel.mjs';
import { rankPenaltyRange, sampledRankRange } from './rank-kernel.mjs';

if (parentPort === null) throw new Error('rank-worker.mjs must be started as a worker thread');
const port = parentPort;

/**
 * @typedef {{ kind: 'exact', rows: SharedArrayBuffer, n: number, d: number, indices: SharedArrayBuffer, stride: number, ks: number[], q0: number, q1: number, progress: SharedArrayBuffer, slot: number }} ExactJob
 * @typedef {{ kind: 'sampled', rows: SharedArrayBuffer, n: number, d: number, map: SharedArrayBuffer, mapDims: number, queries: SharedArrayBuffer, ks: number[], kMax: number, preservationK: number, q0: number, q1: number, progress: SharedArrayBuffer, slot: number }} SampledJob
 */

port.on('message', (/** @type {ExactJob | SampledJob} */ job) => {
  try {
    const { n, d } = job;
    const rows = new Float64Array(job.rows);
    const norms = new Float64Array(n);
    rowNorms(rows, n, d, norms);
    const progress = new Int32Array(job.progress);
    const report = (/** @type {number} */ done) => Atomics.store(progress, job.slot, done);
    if (job.kind === 'exact') {
      const sums = new Float64Array(job.ks.length);
      rankPenaltyRange(rows, norms, n, d, new Int32Array(job.indices), job.stride, job.ks, job.q0, job.q1, sums, report);
      port.postMessage({ ok: true, sums: Array.from(sums) });
    } else {
      const trust = new Float64Array(job.ks.length);
      const continuity = new Float64Array(job.ks.length);
      const kept = sampledRankRange(rows, norms, n, d, new Float32Array(job.map), job.mapDims, job.ks, job.kMax, job.preservationK, new Int32Array(job.queries), job.q0, job.q1, trust, continuity, report);
      port.postMessage({ ok: true, sums: Array.from(trust), continuitySums: Array.from(continuity), kept });
    }
  } catch (error) {
    port.postMessage({ ok: false, message: error instanceof Error ? error.message : String(error) });
  }
});
