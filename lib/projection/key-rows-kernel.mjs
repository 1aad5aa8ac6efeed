// @ts-check
/**
 * The WebAssembly keys of key-rows.wasm (source: assembly/key-rows.ts, which says why it exists),
 * behind the same contract as knn-kernel.mjs keyRowsAt: the squared distances from some query rows
 * to every row, bit for bit the JavaScript kernel's. Plain JavaScript so that worker threads load
 * it (see knn-kernel.mjs). Types in key-rows-kernel.d.mts.
 *
 * Each instance owns a memory holding a coordinate-interleaved copy of the rows (n · d · 8 bytes,
 * the same again as the rows themselves) and room for maxQueries key rows. Above
 * WASM_KEY_ROWS_MAX_BYTES, or where WebAssembly SIMD is missing, create() returns null;
 * keyReader at the end serves either way.
 */
import { readFileSync } from 'node:fs';
import { keyRowsAt } from './knn-kernel.mjs';

/** Largest memory one instance takes (2 GiB; WebAssembly's 32-bit addresses stop at 4 GiB). */
export const WASM_KEY_ROWS_MAX_BYTES = 2 ** 31;

/** @type {WebAssembly.Module | null | undefined} */
let keyRowsModule;

/** The compiled module, or null where this runtime cannot compile it (no SIMD). */
function compiledModule() {
  if (keyRowsModule === undefined) {
    try {
      keyRowsModule = new WebAssembly.Module(readFileSync(new URL('./key-rows.wasm', import.meta.url)));
    } catch (error) {
      console.error('key-rows.wasm could not be compiled; keys are computed in JavaScript', error);
      keyRowsModule = null;
    }
  }
  return keyRowsModule;
}

/** @param {number} bytes */
const align16 = (bytes) => Math.ceil(bytes / 16) * 16;

export class WasmKeyRows {
  /**
   * @param {Float64Array} rows prepared rows, n × d (knn.ts prepareKnnRows)
   * @param {Float64Array} norms their squared norms (knn-kernel.mjs rowNorms)
   * @param {number} n
   * @param {number} d
   * @param {number} maxQueries most query rows asked for at once
   * @returns {WasmKeyRows | null}
   */
  static create(rows, norms, n, d, maxQueries) {
    const pairs = (n + 1) >> 1;
    const pairedBytes = pairs * 2 * d * 8;
    const normBytes = pairs * 2 * 8;
    const idBytes = align16(maxQueries * 4);
    const outBytes = maxQueries * n * 8;
    const total = pairedBytes + normBytes + idBytes + outBytes;
    if (n < 1 || d < 1 || total > WASM_KEY_ROWS_MAX_BYTES) return null;
    const module = compiledModule();
    if (module === null) return null;
    const pages = Math.max(1, Math.ceil(total / 65536));
    const memory = new WebAssembly.Memory({ initial: pages, maximum: pages, shared: true });
    const instance = new WebAssembly.Instance(module, { env: { memory } });
    return new WasmKeyRows(memory, instance, rows, norms, n, d, maxQueries, { paired: 0, norms: pairedBytes, ids: pairedBytes + normBytes, out: pairedBytes + normBytes + idBytes });
  }

  /**
   * @param {WebAssembly.Memory} memory
   * @param {WebAssembly.Instance} instance
   * @param {Float64Array} rows
   * @param {Float64Array} norms
   * @param {number} n
   * @param {number} d
   * @param {number} maxQueries
   * @param {{ paired: number, norms: number, ids: number, out: number }} layout byte offsets
   */
  constructor(memory, instance, rows, norms, n, d, maxQueries, layout) {
    this.n = n;
    this.d = d;
    this.maxQueries = maxQueries;
    this.layout = layout;
    this.run = /** @type {(paired: number, norms: number, n: number, d: number, ids: number, count: number, out: number) => void} */ (instance.exports.keyRows);
    const paired = new Float64Array(memory.buffer, layout.paired, ((n + 1) >> 1) * 2 * d);
    for (let l = 0; l < n; l++) {
      const base = (l >> 1) * 2 * d + (l & 1);
      for (let t = 0; t < d; t++) paired[base + 2 * t] = rows[l * d + t];
    }
    new Float64Array(memory.buffer, layout.norms, n).set(norms.subarray(0, n));
    this.ids = new Int32Array(memory.buffer, layout.ids, maxQueries);
    this.out = new Float64Array(memory.buffer, layout.out, maxQueries * n);
  }

  /**
   * Keys from the query rows ids[0 … count − 1] (count ≤ maxQueries) to every row: a view of this
   * instance's memory, row r for ids[r], valid until the next call.
   * @param {ArrayLike<number>} ids
   * @param {number} count
   * @returns {Float64Array}
   */
  keys(ids, count) {
    if (count > this.maxQueries) throw new RangeError(`keys: ${count} queries, room for ${this.maxQueries}`);
    for (let r = 0; r < count; r++) {
      const id = ids[r];
      if (!Number.isInteger(id) || id < 0 || id >= this.n) throw new RangeError(`keys: query ${id} is not a row`);
      this.ids[r] = id;
    }
    const { paired, norms, ids: idsAt, out } = this.layout;
    for (let r = 0; r < count; r += 4) this.run(paired, norms, this.n, this.d, idsAt + r * 4, Math.min(4, count - r), out + r * this.n * 8);
    return this.out.subarray(0, count * this.n);
  }
}

/**
 * Keys from up to maxQueries query rows at a time to every row, as reader(ids, count) → a
 * count × n view valid until the next call: WebAssembly where WasmKeyRows.create can hold the
 * rows, else knn-kernel.mjs keyRowsAt into scratch of this reader's own. The same bits either way.
 * @param {Float64Array} rows prepared rows, n × d
 * @param {Float64Array} norms their squared norms
 * @param {number} n
 * @param {number} d
 * @param {number} maxQueries
 * @returns {(ids: ArrayLike<number>, count: number) => Float64Array}
 */
export function keyReader(rows, norms, n, d, maxQueries) {
  const wasm = WasmKeyRows.create(rows, norms, n, d, maxQueries);
  if (wasm) return (ids, count) => wasm.keys(ids, count);
  const out = new Float64Array(maxQueries * n);
  return (ids, count) => {
    keyRowsAt(rows, norms, n, d, Array.prototype.slice.call(ids, 0, count), out);
    return out.subarray(0, count * n);
  };
}
