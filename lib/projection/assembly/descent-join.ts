// AssemblyScript, compiled to ../descent-join.wasm by `npm run build:wasm` (the .wasm is committed;
// tests/unit/projection/descent-join-wasm.test.ts checks that it matches this source).
//
// The local join of NN-descent (knn-descent-kernel.mjs localJoin, whose comment explains the
// algorithm) with the distances in 128-bit SIMD. Why WebAssembly: V8 has no SIMD for JavaScript,
// and the join is most of the search's time; measured here on 4 M distances of 32-D Float32 rows,
// a plain JavaScript loop took 89 ms and this kernel's distance 20 ms. The rest of the search stays
// in JavaScript over views of the same shared memory.
//
// Differences from the JavaScript join: squared distances are summed in Float32 lanes (the
// JavaScript one sums in Float64 and rounds to Float32), so keys can differ in the last bits; the
// final neighbour lists are re-keyed in Float64 by finishRows either way.
//
// Memory: imported (shared), laid out by the caller; every pointer below is a byte offset into it.

let proposalCount: i32 = 0;
let evaluationCount: f64 = 0;
let stampValue: i32 = 0;

/** Proposals written by the last join call. */
export function joinCount(): i32 {
  return proposalCount;
}

/** Distances computed by the last join call. */
export function joinEvaluations(): f64 {
  return evaluationCount;
}

@inline
function horizontalSum(v: v128): f32 {
  return f32x4.extract_lane(v, 0) + f32x4.extract_lane(v, 1) + (f32x4.extract_lane(v, 2) + f32x4.extract_lane(v, 3));
}

/**
 * Σ(a_t − b_t)² over d Float32 coordinates, abandoned once a partial sum (checked every 16
 * coordinates) exceeds limit: then some value > limit is returned.
 */
@inline
function boundedSquaredDistance(a: usize, b: usize, d: i32, limit: f32): f32 {
  let acc0 = f32x4.splat(0);
  let acc1 = f32x4.splat(0);
  let t: i32 = 0;
  for (; t + 16 <= d; t += 16) {
    const o = <usize>t << 2;
    const e0 = f32x4.sub(v128.load(a + o), v128.load(b + o));
    const e1 = f32x4.sub(v128.load(a + o, 16), v128.load(b + o, 16));
    const e2 = f32x4.sub(v128.load(a + o, 32), v128.load(b + o, 32));
    const e3 = f32x4.sub(v128.load(a + o, 48), v128.load(b + o, 48));
    acc0 = f32x4.add(acc0, f32x4.add(f32x4.mul(e0, e0), f32x4.mul(e2, e2)));
    acc1 = f32x4.add(acc1, f32x4.add(f32x4.mul(e1, e1), f32x4.mul(e3, e3)));
    if (t + 16 < d) {
      const partial = horizontalSum(f32x4.add(acc0, acc1));
      if (partial > limit) return partial;
    }
  }
  for (; t + 4 <= d; t += 4) {
    const o = <usize>t << 2;
    const e = f32x4.sub(v128.load(a + o), v128.load(b + o));
    acc0 = f32x4.add(acc0, f32x4.mul(e, e));
  }
  let sum = horizontalSum(f32x4.add(acc0, acc1));
  for (; t < d; t++) {
    const o = <usize>t << 2;
    const e = load<f32>(a + o) - load<f32>(b + o);
    sum += e * e;
  }
  return sum;
}

/** Scores the pair (p, q) and writes it out when it beats either point's worst. */
@inline
function propose(
  p: i32, pRow: usize, worstP: f32, q: i32,
  x: usize, rowBytes: usize, d: i32, keys: usize, K: i32,
  outP: usize, outQ: usize, outKey: usize,
): void {
  const worstQ = load<f32>(keys + (<usize>q * <usize>K << 2));
  const key = boundedSquaredDistance(pRow, x + <usize>q * rowBytes, d, worstP > worstQ ? worstP : worstQ);
  evaluationCount++;
  if (key < worstP || key < worstQ) {
    const o = <usize>proposalCount << 2;
    store<i32>(outP + o, p);
    store<i32>(outQ + o, q);
    store<f32>(outKey + o, key);
    proposalCount++;
  }
}

/**
 * The local join of points i0 … i1 − 1 against the heaps as they stand (read only): new × new
 * candidates (each unordered pair once) and new × old, skipping pairs already in the first point's
 * heap, each pair whose key beats either point's worst written to (outP, outQ, outKey) in the same
 * order as the JavaScript join. Stops before a point whose proposals might not fit in the outCap
 * slots and returns the first point not joined (i1 when all were); joinCount() and
 * joinEvaluations() then tell what this call wrote and computed.
 *
 * x: n × d Float32 rows; keys, ids: n × K heaps (Float32 keys, Int32 ids, −1 empty); newIds,
 * oldIds: n × C candidate lists (−1 empty); stamp: n Int32 marks of this thread.
 */
export function join(
  x: usize, d: i32, n: i32,
  keys: usize, ids: usize, K: i32,
  newIds: usize, oldIds: usize, C: i32,
  i0: i32, i1: i32, stamp: usize,
  outP: usize, outQ: usize, outKey: usize, outCap: i32,
): i32 {
  proposalCount = 0;
  evaluationCount = 0;
  const perPoint = (C * (C - 1)) / 2 + C * C;
  const rowBytes = <usize>d << 2;
  for (let i = i0; i < i1; i++) {
    if (outCap - proposalCount < perPoint) return i;
    const cBase = <usize>i * <usize>C << 2;
    for (let a = 0; a < C; a++) {
      const p = load<i32>(newIds + cBase + (<usize>a << 2));
      if (p < 0) continue;
      const pRow = x + <usize>p * rowBytes;
      const pHeap = <usize>p * <usize>K << 2;
      const worstP = load<f32>(keys + pHeap);
      if (stampValue == 0x7fffffff) {
        memory.fill(stamp, 0, <usize>n << 2);
        stampValue = 0;
      }
      const inP = ++stampValue;
      for (let s = 0; s < K; s++) {
        const j = load<i32>(ids + pHeap + (<usize>s << 2));
        if (j >= 0) store<i32>(stamp + (<usize>j << 2), inP);
      }
      for (let b = a + 1; b < C; b++) {
        const q = load<i32>(newIds + cBase + (<usize>b << 2));
        if (q < 0 || load<i32>(stamp + (<usize>q << 2)) == inP) continue;
        propose(p, pRow, worstP, q, x, rowBytes, d, keys, K, outP, outQ, outKey);
      }
      for (let b = 0; b < C; b++) {
        const q = load<i32>(oldIds + cBase + (<usize>b << 2));
        if (q < 0 || q == p || load<i32>(stamp + (<usize>q << 2)) == inP) continue;
        propose(p, pRow, worstP, q, x, rowBytes, d, keys, K, outP, outQ, outKey);
      }
    }
  }
  return i1;
}
