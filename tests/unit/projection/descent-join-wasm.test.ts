/**
 * The WebAssembly local join of NN-descent (lib/projection/assembly/descent-join.ts, compiled to
 * lib/projection/descent-join.wasm) against the JavaScript join it replaces (localJoin in
 * knn-descent-kernel.mjs): the same pairs compared, the same proposals in the same order, and keys
 * equal bit for bit where both arithmetics are exact (small integers), within Float32 rounding
 * otherwise. And the committed binary is what the committed source compiles to.
 */
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '@/lib/align/random';
import { HeapMarks, Updates, WasmJoin, buildCandidates, descentLayout, heapPush, localJoin, squaredDistance } from '@/lib/projection/knn-descent-kernel.mjs';
import { committedWasmMatchesSource } from './wasm-fixtures';

/** Heaps of K random neighbours per point and one iteration's candidate lists, in a fresh memory. */
function joinFixture(n: number, d: number, K: number, C: number, seed: number, integers: boolean, outCap?: number) {
  const layout = descentLayout(n, d, K, C, 1, outCap);
  if (!layout) throw new Error('layout does not fit');
  const memory = new WebAssembly.Memory({ initial: layout.pages, maximum: layout.pages, shared: true });
  const random = mulberry32(seed);
  const x = new Float32Array(memory.buffer, layout.x, n * d);
  for (let t = 0; t < n * d; t++) x[t] = integers ? Math.floor(random() * 7) - 3 : random() * 4 - 2 + (t % d === 0 ? Math.floor(random() * 5) * 3 : 0);
  const keys = new Float32Array(memory.buffer, layout.keys, n * K).fill(Infinity);
  const ids = new Int32Array(memory.buffer, layout.ids, n * K).fill(-1);
  const fresh = new Uint8Array(n * K);
  for (let i = 0; i < n; i++) {
    for (let tries = 0; tries < 2 * K; tries++) {
      const j = Math.floor(random() * n);
      if (j !== i) heapPush(keys, ids, fresh, K, i, Math.fround(squaredDistance(x, i * d, j * d, d)), j);
    }
  }
  // Some entries already used, as after a first iteration: both new and old lists are filled.
  for (let e = 0; e < n * K; e++) if (random() < 0.4) fresh[e] = 0;
  const newIds = new Int32Array(memory.buffer, layout.newIds, n * C);
  const oldIds = new Int32Array(memory.buffer, layout.oldIds, n * C);
  buildCandidates(ids, fresh, n, K, C, seed, newIds, new Float32Array(n * C), oldIds, new Float32Array(n * C), 0, n);
  return { layout, memory, x, keys, ids, newIds, oldIds };
}

function bothJoins(fixture: ReturnType<typeof joinFixture>, i0: number, i1: number) {
  const { layout, memory, x, keys, ids, newIds, oldIds } = fixture;
  const { d, K, C, n } = layout;
  const js = new Updates();
  const jsEvaluations = localJoin(x, d, keys, ids, K, newIds, oldIds, C, i0, i1, js, new HeapMarks(n));
  const wasm = new Updates();
  const wasmEvaluations = new WasmJoin(memory, layout, 0).join(i0, i1, wasm);
  return { js, jsEvaluations, wasm, wasmEvaluations };
}

describe('the WebAssembly local join', () => {
  it('equals the JavaScript join bit for bit on small-integer rows, also when it resumes after a full output (one point per call)', () => {
    for (const d of [3, 13, 16, 32, 37]) {
      const fixture = joinFixture(500, d, 8, 8, d, true, 1);
      expect(fixture.layout.outCap).toBe(8 * 7 / 2 + 64);
      const { js, jsEvaluations, wasm, wasmEvaluations } = bothJoins(fixture, 17, 480);
      expect(js.count).toBeGreaterThan(100);
      expect(wasmEvaluations).toBe(jsEvaluations);
      expect(wasm.count).toBe(js.count);
      expect(wasm.p.subarray(0, wasm.count)).toEqual(js.p.subarray(0, js.count));
      expect(wasm.q.subarray(0, wasm.count)).toEqual(js.q.subarray(0, js.count));
      expect(wasm.key.subarray(0, wasm.count)).toEqual(js.key.subarray(0, js.count));
    }
  });

  it('proposes the same pairs in the same order on real-valued rows, but for keys within rounding of a threshold; keys within Float32 rounding', () => {
    for (const d of [5, 32, 64]) {
      const fixture = joinFixture(800, d, 12, 12, 100 + d, false);
      const { js, jsEvaluations, wasm, wasmEvaluations } = bothJoins(fixture, 0, 800);
      expect(wasmEvaluations).toBe(jsEvaluations);
      // The lists are walked in the same loop order, so they can be merged: a pair proposed by one
      // join only must have its key within rounding of a threshold (typically the pair itself is
      // the worst entry of q's heap, keyed there by the Float64 sum).
      const { keys } = fixture;
      const K = fixture.layout.K;
      const nearThreshold = (list: Updates, u: number) => {
        const key = list.key[u] as number;
        const worst = [keys[(list.p[u] as number) * K] as number, keys[(list.q[u] as number) * K] as number];
        return worst.some((w) => Math.abs(key - w) <= 1e-5 * w);
      };
      let a = 0;
      let b = 0;
      let common = 0;
      let alone = 0;
      while (a < js.count || b < wasm.count) {
        if (a < js.count && b < wasm.count && js.p[a] === wasm.p[b] && js.q[a] === wasm.q[b]) {
          const key = js.key[a] as number;
          expect(Math.abs((wasm.key[b] as number) - key)).toBeLessThanOrEqual(1e-5 * key + 1e-30);
          common++;
          a++;
          b++;
        } else if (b < wasm.count && nearThreshold(wasm, b)) {
          alone++;
          b++;
        } else {
          expect(a < js.count && nearThreshold(js, a)).toBe(true);
          alone++;
          a++;
        }
      }
      expect(common).toBeGreaterThan(10_000);
      expect(alone).toBeLessThan(common / 1000);
    }
  });

  it('leaves the search to the JavaScript join where its arrays would not fit in 4 GiB', () => {
    expect(descentLayout(1_000_000, 64, 18, 18, 2)).not.toBeNull();
    expect(descentLayout(20_000_000, 64, 18, 18, 2)).toBeNull();
  });

  it('is committed as the AssemblyScript source compiles (npm run build:wasm)', () => {
    expect(committedWasmMatchesSource('descent-join')).toBe(true);
  }, 60_000);
});
