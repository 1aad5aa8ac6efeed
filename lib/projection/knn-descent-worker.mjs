// @ts-check
/**
 * Worker thread of the approximate neighbour search (knn-approx.ts). Plain JavaScript for the
 * reason given in knn-kernel.mjs. It sees the rows, the heaps' keys and the candidate lists as
 * SharedArrayBuffers (no copies) and only reads them; it answers each request with new arrays,
 * transferred back:
 *   { type: 'init', ... }                 → { ok: true }
 *   { type: 'trees', seeds, leafSize }     → { ok: true, trees: [{ order, leafBounds }] }
 *   { type: 'join', i0, i1 }               → { ok: true, count, p, q, key, evaluations }
 * or { ok: false, message } on failure.
 */
import { parentPort } from 'node:worker_threads';
import { Updates, localJoin, mulberry32, splitTree } from './knn-descent-kernel.mjs';

if (parentPort === null) throw new Error('knn-descent-worker.mjs must be started as a worker thread');
const port = parentPort;

/** @type {{ x: Float32Array, n: number, d: number, keys: Float32Array, ids: Int32Array, K: number, newIds: Int32Array, oldIds: Int32Array, C: number } | undefined} */
let shared;

port.on('message', (/** @type {any} */ message) => {
  try {
    if (message.type === 'init') {
      shared = {
        x: new Float32Array(message.rows),
        n: message.n,
        d: message.d,
        keys: new Float32Array(message.keys),
        ids: new Int32Array(message.ids),
        K: message.K,
        newIds: new Int32Array(message.newIds),
        oldIds: new Int32Array(message.oldIds),
        C: message.C,
      };
      port.postMessage({ ok: true });
      return;
    }
    if (shared === undefined) throw new Error('not initialised');
    if (message.type === 'trees') {
      const trees = [];
      /** @type {ArrayBuffer[]} */
      const transfer = [];
      for (const seed of message.seeds) {
        const tree = splitTree(shared.x, shared.n, shared.d, message.leafSize, mulberry32(seed));
        trees.push(tree);
        transfer.push(/** @type {ArrayBuffer} */ (tree.order.buffer), /** @type {ArrayBuffer} */ (tree.leafBounds.buffer));
      }
      port.postMessage({ ok: true, trees }, transfer);
      return;
    }
    if (message.type === 'join') {
      const out = new Updates();
      const evaluations = localJoin(shared.x, shared.d, shared.keys, shared.ids, shared.K, shared.newIds, shared.oldIds, shared.C, message.i0, message.i1, out);
      const p = out.p.slice(0, out.count);
      const q = out.q.slice(0, out.count);
      const key = out.key.slice(0, out.count);
      port.postMessage({ ok: true, count: out.count, p, q, key, evaluations }, [p.buffer, q.buffer, key.buffer]);
      return;
    }
    throw new Error(`unknown request ${String(message.type)}`);
  } catch (error) {
    port.postMessage({ ok: false, message: error instanceof Error ? error.message : String(error) });
  }
});
