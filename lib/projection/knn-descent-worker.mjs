// @ts-check
/**
 * Worker thread of the approximate neighbour search (knn-approx.ts). Plain JavaScript for the
 * reason given in knn-kernel.mjs. It sees the rows, the heaps' keys and the candidate lists in the
 * search's shared WebAssembly memory (or, past 4 GiB, as SharedArrayBuffers; no copies either way)
 * and joins with the SIMD kernel there (WasmJoin); it writes only the candidate lists and fresh flags of the points
 * it is given, and otherwise only reads; it answers each request with new arrays,
 * transferred back:
 *   { type: 'init', slot, memory, layout, ... } → { ok: true }
 *   { type: 'release' }                    → { ok: true } (drops the search's buffers; idle until the next init)
 *   { type: 'trees', seeds, leafSize }     → { ok: true, pairs: [{ count, p, q, key }] } (leafPairs per tree)
 *   { type: 'candidates', from, to, seed } → { ok: true } (fills the candidate lists of its points)
 *   { type: 'sample', from, to }           → { ok: true } (flags its points' sampled entries used)
 *   { type: 'join', i0, i1 }               → { ok: true, count, p, q, key, evaluations }
 * or { ok: false, message } on failure.
 */
import { parentPort } from 'node:worker_threads';
import { HeapMarks, Updates, WasmJoin, buildCandidates, leafPairs, localJoin, markSampled, mulberry32, splitTree } from './knn-descent-kernel.mjs';

if (parentPort === null) throw new Error('knn-descent-worker.mjs must be started as a worker thread');
const port = parentPort;

/** @type {{ x: Float32Array, n: number, d: number, keys: Float32Array, ids: Int32Array, K: number, fresh: Uint8Array, newIds: Int32Array, oldIds: Int32Array, newPri: Float32Array, oldPri: Float32Array, C: number, marks: HeapMarks, wasm: WasmJoin | undefined } | undefined} */
let shared;

port.on('message', (/** @type {any} */ message) => {
  try {
    if (message.type === 'init') {
      const { n, d, K, C } = message;
      // The rows, heaps and candidate lists: in the search's WebAssembly memory, or (past its 4 GiB) as buffers.
      /** @type {WebAssembly.Memory | undefined} */
      const memory = message.memory;
      /** @type {import('./knn-descent-kernel.d.mts').DescentLayout | undefined} */
      const layout = message.layout;
      const inMemory = memory !== undefined && layout !== undefined;
      shared = {
        x: inMemory ? new Float32Array(memory.buffer, layout.x, n * d) : new Float32Array(message.rows),
        n,
        d,
        keys: inMemory ? new Float32Array(memory.buffer, layout.keys, n * K) : new Float32Array(message.keys),
        ids: inMemory ? new Int32Array(memory.buffer, layout.ids, n * K) : new Int32Array(message.ids),
        K,
        fresh: new Uint8Array(message.fresh),
        newIds: inMemory ? new Int32Array(memory.buffer, layout.newIds, n * C) : new Int32Array(message.newIds),
        oldIds: inMemory ? new Int32Array(memory.buffer, layout.oldIds, n * C) : new Int32Array(message.oldIds),
        newPri: new Float32Array(message.newPri),
        oldPri: new Float32Array(message.oldPri),
        C,
        marks: new HeapMarks(n),
        wasm: inMemory ? new WasmJoin(memory, layout, message.slot) : undefined,
      };
      port.postMessage({ ok: true });
      return;
    }
    if (message.type === 'release') {
      // Kept for the next search: let this one's buffers go.
      shared = undefined;
      port.postMessage({ ok: true });
      return;
    }
    if (shared === undefined) throw new Error('not initialised');
    if (message.type === 'trees') {
      const pairs = [];
      /** @type {ArrayBuffer[]} */
      const transfer = [];
      for (const seed of message.seeds) {
        const tree = splitTree(shared.x, shared.n, shared.d, message.leafSize, mulberry32(seed));
        const list = leafPairs(shared.x, shared.d, tree.order, tree.leafBounds);
        pairs.push(list);
        transfer.push(/** @type {ArrayBuffer} */ (list.p.buffer), /** @type {ArrayBuffer} */ (list.q.buffer), /** @type {ArrayBuffer} */ (list.key.buffer));
      }
      port.postMessage({ ok: true, pairs }, transfer);
      return;
    }
    if (message.type === 'candidates') {
      const { ids, fresh, n, K, C, newIds, newPri, oldIds, oldPri } = shared;
      buildCandidates(ids, fresh, n, K, C, message.seed, newIds, newPri, oldIds, oldPri, message.from, message.to);
      port.postMessage({ ok: true });
      return;
    }
    if (message.type === 'sample') {
      markSampled(shared.ids, shared.fresh, shared.K, shared.C, shared.newIds, message.from, message.to, shared.marks);
      port.postMessage({ ok: true });
      return;
    }
    if (message.type === 'join') {
      const out = new Updates();
      const evaluations = shared.wasm
        ? shared.wasm.join(message.i0, message.i1, out)
        : localJoin(shared.x, shared.d, shared.keys, shared.ids, shared.K, shared.newIds, shared.oldIds, shared.C, message.i0, message.i1, out, shared.marks);
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
