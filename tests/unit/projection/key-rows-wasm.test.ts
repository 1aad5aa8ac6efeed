/**
 * The WebAssembly keys (lib/projection/assembly/key-rows.ts, compiled to lib/projection/key-rows.wasm,
 * used through key-rows-kernel.mjs by the fidelity scores) equal the JavaScript kernel's
 * (knn-kernel.mjs keyRowsAt, itself checked against brute force and scikit-learn) bit for bit, on
 * odd and even row counts, any dimension, scattered and repeated queries, duplicate rows and cosine
 * rows; and the committed binary is what the committed source compiles to.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { prepareKnnRows } from '@/lib/projection/knn';
import { WASM_KEY_ROWS_MAX_BYTES, WasmKeyRows } from '@/lib/projection/key-rows-kernel.mjs';
import { keyRowsAt, rowNorms } from '@/lib/projection/knn-kernel.mjs';
import { committedWasmMatchesSource, root } from './wasm-fixtures';

function sameBits(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  const x = new BigUint64Array(a.buffer, a.byteOffset, a.length);
  const y = new BigUint64Array(b.buffer, b.byteOffset, b.length);
  return x.every((value, index) => value === y[index]);
}

describe('WebAssembly keys', () => {
  it('equal keyRowsAt bit for bit', () => {
    const random = mulberry32(8);
    const normal = normalGenerator(random);
    for (const [n, d, metric] of [[1, 1, 'euclidean'], [2, 3, 'euclidean'], [7, 1, 'euclidean'], [33, 5, 'cosine'], [200, 32, 'euclidean'], [201, 17, 'cosine'], [500, 64, 'euclidean']] as const) {
      const data = new Float32Array(n * d);
      for (let t = 0; t < n * d; t++) data[t] = normal() * 3 + (t % 4);
      if (n > 4) data.copyWithin(d, 0, d); // row 1 duplicates row 0: its key is exactly 0
      const rows = prepareKnnRows(data, n, d, metric);
      const norms = new Float64Array(n);
      rowNorms(rows, n, d, norms);
      const wasm = WasmKeyRows.create(rows, norms, n, d, 16);
      if (wasm === null) throw new Error('WebAssembly SIMD is missing');
      for (const count of [1, 2, 3, 4, 5, 16]) {
        const ids = Array.from({ length: count }, () => Math.floor(random() * n));
        if (count > 2) ids[2] = ids[0] as number; // a query repeated
        const expected = new Float64Array(count * n);
        keyRowsAt(rows, norms, n, d, ids, expected);
        expect(sameBits(wasm.keys(ids, count), expected), `n ${n} d ${d} ${metric}, ${count} queries`).toBe(true);
      }
      if (n > 4) expect(wasm.keys([1], 1)[0]).toBe(0);
    }
  });

  it('refuse what they cannot hold, and bad queries', () => {
    const rows = new Float64Array(4 * 2);
    const norms = new Float64Array(4);
    expect(WasmKeyRows.create(rows, norms, 4, 2, Math.ceil(WASM_KEY_ROWS_MAX_BYTES / 32))).toBeNull();
    const wasm = WasmKeyRows.create(rows, norms, 4, 2, 4);
    expect(() => wasm?.keys([0, 1, 2, 3, 0], 5)).toThrow(RangeError);
    expect(() => wasm?.keys([4], 1)).toThrow(RangeError);
  });

  it('no committed WebAssembly module writes into the memory it is given (no static data)', () => {
    // AssemblyScript would place static data (e.g. Math.pow's tables) at the start of the imported
    // memory, where our callers lay out their arrays.
    for (const file of ['key-rows.wasm', 'descent-join.wasm']) {
      const module = new WebAssembly.Module(readFileSync(path.join(root, 'lib/projection', file)));
      const memory = new WebAssembly.Memory({ initial: 2, maximum: 2, shared: true });
      new Uint8Array(memory.buffer).fill(0xa5);
      new WebAssembly.Instance(module, { env: { memory } });
      expect(new Uint8Array(memory.buffer).every((byte) => byte === 0xa5), file).toBe(true);
    }
  });

  it('are committed as the AssemblyScript source compiles (npm run build:wasm)', () => {
    expect(committedWasmMatchesSource('key-rows')).toBe(true);
  }, 60_000);
});
