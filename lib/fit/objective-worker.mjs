// @ts-check
/**
 * Worker thread of ParallelObjective (lib/fit/parallel.ts). Plain JavaScript for the reason given in
 * objective-kernel.mjs. It gets the observations, θ and the per-chunk gradient and loss buffers as
 * SharedArrayBuffers once, then loops: wait for the generation counter to move (Atomics.wait), run
 * its chunks through the kernel, count itself done (Atomics.add + notify). A stop flag ends the loop.
 */
import { parentPort } from 'node:worker_threads';
import { accumulateRange } from './objective-kernel.mjs';

if (parentPort === null) throw new Error('objective-worker.mjs must be started as a worker thread');
const port = parentPort;

port.once('message', (/** @type {{ control: SharedArrayBuffer, theta: SharedArrayBuffer, chunkGrad: SharedArrayBuffer, chunkLoss: SharedArrayBuffer, row: SharedArrayBuffer, column: SharedArrayBuffer, y: SharedArrayBuffer, x: SharedArrayBuffer, offset: SharedArrayBuffer | null, spec: import('./objective-kernel.mjs').KernelSpec, size: number, bounds: number[], chunks: number[] }} */ job) => {
  const control = new Int32Array(job.control);
  const theta = new Float64Array(job.theta);
  const chunkLoss = new Float64Array(job.chunkLoss);
  const row = new Int32Array(job.row);
  const column = new Int32Array(job.column);
  const y = new Float64Array(job.y);
  const x = new Float64Array(job.x);
  const offset = job.offset === null ? null : new Float64Array(job.offset);
  const precision = new Float64Array(job.control, 16, 1);
  let generation = 0;
  for (;;) {
    Atomics.wait(control, 0, generation);
    generation = Atomics.load(control, 0);
    if (Atomics.load(control, 2) === 1) break;
    for (const chunk of job.chunks) {
      const grad = new Float64Array(job.chunkGrad, chunk * job.size * 8, job.size);
      grad.fill(0);
      chunkLoss[chunk] = accumulateRange(theta, grad, row, column, y, x, offset, job.spec, precision[0] ?? 1, job.bounds[chunk] ?? 0, job.bounds[chunk + 1] ?? 0);
    }
    Atomics.add(control, 1, 1);
    Atomics.notify(control, 1);
  }
  port.close();
});
