// @ts-check
/**
 * The arithmetic of Asterism's approximate neighbour search (NN-descent from random-projection
 * trees; the algorithm and its settings are described in knn-approx.ts). Plain JavaScript for the
 * reason given in knn-kernel.mjs: worker threads (knn-descent-worker.mjs) load it with Node's own
 * loader, which runs no TypeScript under vitest. Types: knn-descent-kernel.d.mts.
 *
 * Layout: rows are a row-major Float32Array (n × d). Each point has a max-heap of K candidate
 * neighbours — keys (squared distances, Float32), ids (Int32, −1 for an empty slot) and fresh flags
 * (Uint8, 1 = not yet used in a local join) at [i·K, (i+1)·K), slot 0 the worst kept. Candidate
 * lists for the local join have C slots per point.
 *
 * Distances: Σ(x_t − y_t)² of the Float32 values, summed in Float64, then stored as Float32; the
 * WebAssembly join at the end of this file (WasmJoin) sums in Float32 lanes instead.
 */
import { readFileSync } from 'node:fs';
import { fmix32 } from './hash-kernel.mjs';
import { insertSorted, pairKey } from './knn-kernel.mjs';

// The worker imports the generator from here with the rest of the kernel.
export { mulberry32 } from './hash-kernel.mjs';

/**
 * Squared Euclidean distance of the rows starting at p and q (offsets, not indices).
 * @param {Float32Array} x
 * @param {number} p
 * @param {number} q
 * @param {number} d
 * @returns {number}
 */
export function squaredDistance(x, p, q, d) {
  let a0 = 0;
  let a1 = 0;
  let a2 = 0;
  let a3 = 0;
  let t = 0;
  for (; t + 3 < d; t += 4) {
    const e0 = x[p + t] - x[q + t];
    const e1 = x[p + t + 1] - x[q + t + 1];
    const e2 = x[p + t + 2] - x[q + t + 2];
    const e3 = x[p + t + 3] - x[q + t + 3];
    a0 += e0 * e0;
    a1 += e1 * e1;
    a2 += e2 * e2;
    a3 += e3 * e3;
  }
  for (; t < d; t++) {
    const e = x[p + t] - x[q + t];
    a0 += e * e;
  }
  return a0 + a1 + (a2 + a3);
}

/**
 * squaredDistance, abandoned once a partial sum exceeds `limit` (checked every 8 coordinates):
 * most pairs of a late local join cannot enter either heap. Returns the full distance when it is
 * ≤ limit, else some value > limit.
 * @param {Float32Array} x
 * @param {number} p
 * @param {number} q
 * @param {number} d
 * @param {number} limit
 * @returns {number}
 */
export function boundedSquaredDistance(x, p, q, d, limit) {
  let a0 = 0;
  let a1 = 0;
  let t = 0;
  for (; t + 7 < d; t += 8) {
    const e0 = x[p + t] - x[q + t];
    const e1 = x[p + t + 1] - x[q + t + 1];
    const e2 = x[p + t + 2] - x[q + t + 2];
    const e3 = x[p + t + 3] - x[q + t + 3];
    const e4 = x[p + t + 4] - x[q + t + 4];
    const e5 = x[p + t + 5] - x[q + t + 5];
    const e6 = x[p + t + 6] - x[q + t + 6];
    const e7 = x[p + t + 7] - x[q + t + 7];
    a0 += e0 * e0 + e1 * e1 + e2 * e2 + e3 * e3;
    a1 += e4 * e4 + e5 * e5 + e6 * e6 + e7 * e7;
    if (a0 + a1 > limit) return a0 + a1;
  }
  for (; t < d; t++) {
    const e = x[p + t] - x[q + t];
    a0 += e * e;
  }
  return a0 + a1;
}

/**
 * Offers j to point i's heap; kept (flagged fresh) when it beats the worst entry and is not
 * already there. Returns 1 when the heap changed, else 0.
 * @param {Float32Array} keys
 * @param {Int32Array} ids
 * @param {Uint8Array} fresh
 * @param {number} K
 * @param {number} i
 * @param {number} key
 * @param {number} j
 * @returns {number}
 */
export function heapPush(keys, ids, fresh, K, i, key, j) {
  const base = i * K;
  if (!(key < keys[base])) return 0;
  for (let s = 0; s < K; s++) if (ids[base + s] === j) return 0;
  let position = 0;
  for (;;) {
    const left = 2 * position + 1;
    if (left >= K) break;
    const right = left + 1;
    const child = right < K && keys[base + right] > keys[base + left] ? right : left;
    if (keys[base + child] <= key) break;
    keys[base + position] = keys[base + child];
    ids[base + position] = ids[base + child];
    fresh[base + position] = fresh[base + child];
    position = child;
  }
  keys[base + position] = key;
  ids[base + position] = j;
  fresh[base + position] = 1;
  return 1;
}

/**
 * One random-projection tree: splits the rows recursively by the hyperplane halfway between two
 * random points of the node (for unit rows it passes near the origin, as angular trees do) until
 * every leaf holds at most leafSize points.
 * @param {Float32Array} x
 * @param {number} n
 * @param {number} d
 * @param {number} leafSize
 * @param {() => number} random
 * @returns {{ order: Int32Array, leafBounds: Int32Array }} the points in leaf order; leaf l holds
 *   order[leafBounds[l]] … order[leafBounds[l + 1] − 1]
 */
export function splitTree(x, n, d, leafSize, random) {
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  const side = new Uint8Array(n);
  const scratch = new Int32Array(n);
  const normal = new Float64Array(d);
  /** @type {number[]} */
  const bounds = [];
  // Segments [start, end) still to split, on an explicit stack (deep trees on duplicate-heavy
  // data would overflow recursion). The right half is pushed first, so leaves come off left to
  // right and their bounds increase.
  const stack = [0, n];
  while (stack.length > 0) {
    const end = /** @type {number} */ (stack.pop());
    const start = /** @type {number} */ (stack.pop());
    const size = end - start;
    if (size <= leafSize) {
      bounds.push(start);
      continue;
    }
    const a = Math.floor(random() * size);
    let b = Math.floor(random() * (size - 1));
    if (b >= a) b++;
    const first = order[start + a] * d;
    const second = order[start + b] * d;
    let offset = 0;
    for (let t = 0; t < d; t++) {
      const u = x[first + t];
      const v = x[second + t];
      normal[t] = u - v;
      offset -= (u - v) * (u + v) * 0.5;
    }
    let left = 0;
    for (let p = start; p < end; p++) {
      const row = order[p] * d;
      let margin = offset;
      let other = 0;
      let t = 0;
      for (; t + 1 < d; t += 2) {
        margin += normal[t] * x[row + t];
        other += normal[t + 1] * x[row + t + 1];
      }
      if (t < d) margin += normal[t] * x[row + t];
      margin += other;
      // Points on the plane (duplicates of both) go to a random side.
      const goesLeft = margin > 0 || (margin === 0 && random() < 0.5);
      side[p - start] = goesLeft ? 1 : 0;
      if (goesLeft) left++;
    }
    if (left === 0 || left === size) {
      // Every point on one side (all duplicates, or a degenerate draw): halve the node in its
      // current order, which guarantees progress.
      left = size >> 1;
      for (let p = 0; p < size; p++) side[p] = p < left ? 1 : 0;
    }
    scratch.set(order.subarray(start, end));
    let l = start;
    let r = start + left;
    for (let p = 0; p < size; p++) {
      if (side[p] === 1) order[l++] = scratch[p];
      else order[r++] = scratch[p];
    }
    stack.push(start + left, end, start, start + left);
  }
  bounds.push(n);
  return { order, leafBounds: Int32Array.from(bounds) };
}

/**
 * Every pair inside each leaf of a tree with its squared distance, in leaf order: the tree's
 * contribution to the start, computed where the tree is built (a worker thread) and offered to the
 * heaps by applyUpdates on the calling thread, tree after tree. Offering the full list gives the
 * same heaps as comparing against live thresholds would (a pair enters a heap only if its key
 * beats that heap's worst), and the distances run in parallel with the other trees.
 * @param {Float32Array} x
 * @param {number} d
 * @param {Int32Array} order
 * @param {Int32Array} leafBounds
 * @returns {{ count: number, p: Int32Array, q: Int32Array, key: Float32Array }}
 */
export function leafPairs(x, d, order, leafBounds) {
  let count = 0;
  for (let leaf = 0; leaf + 1 < leafBounds.length; leaf++) {
    const size = leafBounds[leaf + 1] - leafBounds[leaf];
    count += (size * (size - 1)) / 2;
  }
  const p = new Int32Array(count);
  const q = new Int32Array(count);
  const key = new Float32Array(count);
  let at = 0;
  for (let leaf = 0; leaf + 1 < leafBounds.length; leaf++) {
    const end = leafBounds[leaf + 1];
    for (let a = leafBounds[leaf]; a < end; a++) {
      const u = order[a];
      for (let b = a + 1; b < end; b++) {
        const v = order[b];
        p[at] = u;
        q[at] = v;
        key[at] = squaredDistance(x, u * d, v * d, d);
        at++;
      }
    }
  }
  return { count, p, q, key };
}

/**
 * Fills heaps that the trees left short with random distinct points.
 * @param {Float32Array} x
 * @param {number} n
 * @param {number} d
 * @param {Float32Array} keys
 * @param {Int32Array} ids
 * @param {Uint8Array} fresh
 * @param {number} K
 * @param {() => number} random
 * @returns {number} distances computed
 */
export function fillRandom(x, n, d, keys, ids, fresh, K, random) {
  let evaluations = 0;
  for (let i = 0; i < n; i++) {
    const base = i * K;
    let filled = 0;
    for (let s = 0; s < K; s++) if (ids[base + s] >= 0) filled++;
    // While a slot is empty the root's key is +∞, so heapPush takes any new index. Bounded random
    // tries, then a scan (K ≤ n − 1, so a free index exists).
    for (let tries = 0; filled < K && tries < 4 * K; tries++) {
      const j = Math.floor(random() * n);
      if (j === i) continue;
      evaluations++;
      filled += heapPush(keys, ids, fresh, K, i, squaredDistance(x, i * d, j * d, d), j);
    }
    for (let j = 0; filled < K && j < n; j++) {
      if (j === i) continue;
      evaluations++;
      filled += heapPush(keys, ids, fresh, K, i, squaredDistance(x, i * d, j * d, d), j);
    }
  }
  return evaluations;
}

/**
 * Offers j to the candidate list of point i: a max-heap on random priorities that keeps the C
 * smallest, i.e. a uniform sample of the candidates (the paper's ρ-sampling), without repeats.
 * @param {Int32Array} cIds
 * @param {Float32Array} cPri
 * @param {number} C
 * @param {number} i
 * @param {number} priority
 * @param {number} j
 */
function candidatePush(cIds, cPri, C, i, priority, j) {
  const base = i * C;
  if (!(priority < cPri[base])) return;
  for (let s = 0; s < C; s++) if (cIds[base + s] === j) return;
  let position = 0;
  for (;;) {
    const left = 2 * position + 1;
    if (left >= C) break;
    const right = left + 1;
    const child = right < C && cPri[base + right] > cPri[base + left] ? right : left;
    if (cPri[base + child] <= priority) break;
    cPri[base + position] = cPri[base + child];
    cIds[base + position] = cIds[base + child];
    position = child;
  }
  cPri[base + position] = priority;
  cIds[base + position] = j;
}

/**
 * The random priority of heap entry i → j in one iteration's candidate sampling, in (0, 1): a hash
 * of (seed, i, j) rather than the next draw of a generator, so that any thread can compute any
 * entry's priority and the lists do not depend on how the points are split across threads.
 * @param {number} seed
 * @param {number} i
 * @param {number} j
 */
export function candidatePriority(seed, i, j) {
  return ((fmix32((fmix32(seed ^ i) + j) | 0) >>> 0) + 0.5) / 4294967296;
}

/**
 * The candidate lists of one iteration for the points [from, to): each heap entry i → j is offered
 * in both directions (j is a candidate of i, i of j: the reverse neighbours), fresh entries into
 * new*, the others into old*, each list keeping the C entries of smallest priority (a uniform
 * sample). Every thread scans all heap entries in the same order and fills only its own points'
 * lists, so the lists are the same for any split.
 * @param {Int32Array} ids
 * @param {Uint8Array} fresh
 * @param {number} n
 * @param {number} K
 * @param {number} C
 * @param {number} seed this iteration's (candidatePriority)
 * @param {Int32Array} newIds n × C
 * @param {Float32Array} newPri n × C
 * @param {Int32Array} oldIds n × C
 * @param {Float32Array} oldPri n × C
 * @param {number} from
 * @param {number} to
 */
export function buildCandidates(ids, fresh, n, K, C, seed, newIds, newPri, oldIds, oldPri, from, to) {
  newIds.fill(-1, from * C, to * C);
  oldIds.fill(-1, from * C, to * C);
  newPri.fill(Infinity, from * C, to * C);
  oldPri.fill(Infinity, from * C, to * C);
  for (let i = 0; i < n; i++) {
    const base = i * K;
    const ownI = i >= from && i < to;
    for (let s = 0; s < K; s++) {
      const j = ids[base + s];
      if (j < 0) continue;
      const ownJ = j >= from && j < to;
      if (!ownI && !ownJ) continue;
      const priority = candidatePriority(seed, i, j);
      if (fresh[base + s] === 1) {
        if (ownI) candidatePush(newIds, newPri, C, i, priority, j);
        if (ownJ) candidatePush(newIds, newPri, C, j, priority, i);
      } else {
        if (ownI) candidatePush(oldIds, oldPri, C, i, priority, j);
        if (ownJ) candidatePush(oldIds, oldPri, C, j, priority, i);
      }
    }
  }
}

/**
 * After every point's lists are built (buildCandidates on all ranges): flags the fresh heap
 * entries of points [from, to) that were sampled into their own new list as used (they will have
 * met every candidate of this round).
 * @param {Int32Array} ids
 * @param {Uint8Array} fresh
 * @param {number} K
 * @param {number} C
 * @param {Int32Array} newIds
 * @param {number} from
 * @param {number} to
 * @param {HeapMarks} marks this thread's
 */
export function markSampled(ids, fresh, K, C, newIds, from, to, marks) {
  const stamp = marks.stamp;
  for (let i = from; i < to; i++) {
    const base = i * K;
    const sampled = marks.mark(newIds, i * C, C);
    for (let s = 0; s < K; s++) if (fresh[base + s] === 1 && stamp[ids[base + s]] === sampled) fresh[base + s] = 0;
  }
}

/**
 * Growable list of proposed heap updates (p, q, key): the pair (p, q) at squared distance key
 * beat the worst entry of p's or q's heap when it was computed.
 */
export class Updates {
  constructor(capacity = 1 << 16) {
    this.count = 0;
    this.p = new Int32Array(capacity);
    this.q = new Int32Array(capacity);
    this.key = new Float32Array(capacity);
  }

  /**
   * @param {number} p
   * @param {number} q
   * @param {number} key
   */
  add(p, q, key) {
    if (this.count === this.p.length) {
      const capacity = this.p.length * 2;
      const grownP = new Int32Array(capacity);
      grownP.set(this.p);
      const grownQ = new Int32Array(capacity);
      grownQ.set(this.q);
      const grownKey = new Float32Array(capacity);
      grownKey.set(this.key);
      this.p = grownP;
      this.q = grownQ;
      this.key = grownKey;
    }
    this.p[this.count] = p;
    this.q[this.count] = q;
    this.key[this.count] = key;
    this.count++;
  }

  /**
   * Appends `count` updates copied from the arrays given.
   * @param {Int32Array} p
   * @param {Int32Array} q
   * @param {Float32Array} key
   * @param {number} count
   */
  append(p, q, key, count) {
    const needed = this.count + count;
    if (needed > this.p.length) {
      let capacity = this.p.length * 2;
      while (capacity < needed) capacity *= 2;
      const grownP = new Int32Array(capacity);
      grownP.set(this.p.subarray(0, this.count));
      const grownQ = new Int32Array(capacity);
      grownQ.set(this.q.subarray(0, this.count));
      const grownKey = new Float32Array(capacity);
      grownKey.set(this.key.subarray(0, this.count));
      this.p = grownP;
      this.q = grownQ;
      this.key = grownKey;
    }
    this.p.set(p.subarray(0, count), this.count);
    this.q.set(q.subarray(0, count), this.count);
    this.key.set(key.subarray(0, count), this.count);
    this.count = needed;
  }
}

/**
 * Marks of heap membership for the local join: stamp[q] === value means q is in the heap of the
 * point being joined. A pair already in p's heap needs no distance: it was offered to both heaps
 * when it entered p's (every push but fillRandom's offers both ways), and since a heap's worst key
 * only falls, q's heap would refuse p again; on 32-D data that skips a third or more of the pairs
 * (measured here). Marking p's K entries once and testing each candidate in O(1) replaced a scan
 * of p's heap per candidate pair (K compares each), which cost more than the distances it saved
 * (10,000 × 32: the join's own time fell from ~0.24 s to ~0.1 s; scripts/bench-projection.ts).
 * One per thread; `value` only grows, and the stamps are cleared when it would overflow.
 */
export class HeapMarks {
  /** @param {number} n */
  constructor(n) {
    this.stamp = new Int32Array(n);
    this.value = 0;
  }

  /**
   * Marks the K indices at ids[base …] (−1 skipped) and returns the mark.
   * @param {Int32Array} ids
   * @param {number} base
   * @param {number} K
   */
  mark(ids, base, K) {
    if (this.value === 0x7fffffff) {
      this.stamp.fill(0);
      this.value = 0;
    }
    const value = ++this.value;
    const stamp = this.stamp;
    for (let s = 0; s < K; s++) {
      const j = ids[base + s];
      if (j >= 0) stamp[j] = value;
    }
    return value;
  }
}

/**
 * The local join of points i0 … i1 − 1: new × new (each unordered pair once) and new × old
 * candidates, against the heaps' worst keys as they stand (the heaps are not changed here, so
 * threads can join disjoint point ranges at once and the result does not depend on how the range
 * is split). Proposed updates are appended to `out` in a fixed order.
 * @param {Float32Array} x
 * @param {number} d
 * @param {Float32Array} keys
 * @param {Int32Array} ids
 * @param {number} K
 * @param {Int32Array} newIds
 * @param {Int32Array} oldIds
 * @param {number} C
 * @param {number} i0
 * @param {number} i1
 * @param {Updates} out
 * @param {HeapMarks} marks this thread's
 * @returns {number} distances computed
 */
export function localJoin(x, d, keys, ids, K, newIds, oldIds, C, i0, i1, out, marks) {
  let evaluations = 0;
  const stamp = marks.stamp;
  for (let i = i0; i < i1; i++) {
    const cBase = i * C;
    for (let a = 0; a < C; a++) {
      const p = newIds[cBase + a];
      if (p < 0) continue;
      const pRow = p * d;
      const pBase = p * K;
      const worstP = keys[pBase];
      const inP = marks.mark(ids, pBase, K);
      for (let b = a + 1; b < C; b++) {
        const q = newIds[cBase + b];
        if (q < 0 || stamp[q] === inP) continue;
        const worstQ = keys[q * K];
        const key = boundedSquaredDistance(x, pRow, q * d, d, worstP > worstQ ? worstP : worstQ);
        evaluations++;
        if (key < worstP || key < worstQ) out.add(p, q, key);
      }
      for (let b = 0; b < C; b++) {
        const q = oldIds[cBase + b];
        if (q < 0 || q === p || stamp[q] === inP) continue;
        const worstQ = keys[q * K];
        const key = boundedSquaredDistance(x, pRow, q * d, d, worstP > worstQ ? worstP : worstQ);
        evaluations++;
        if (key < worstP || key < worstQ) out.add(p, q, key);
      }
    }
  }
  return evaluations;
}

/**
 * Applies proposed updates in order to both heaps of each pair.
 * @param {Float32Array} keys
 * @param {Int32Array} ids
 * @param {Uint8Array} fresh
 * @param {number} K
 * @param {Int32Array} p
 * @param {Int32Array} q
 * @param {Float32Array} key
 * @param {number} count
 * @returns {number} heap entries changed
 */
export function applyUpdates(keys, ids, fresh, K, p, q, key, count) {
  let changed = 0;
  for (let u = 0; u < count; u++) {
    const a = p[u];
    const b = q[u];
    const value = key[u];
    changed += heapPush(keys, ids, fresh, K, a, value, b);
    changed += heapPush(keys, ids, fresh, K, b, value, a);
  }
  return changed;
}

/**
 * The end of the search for search rows [from, to): each row's searchK kept neighbours re-keyed
 * with the exact kernel's Float64 expansion (pairKey on the prepared rows), sorted by (key, index),
 * and the first k written in the caller's order (row r is the caller's original[r]) to heapKey /
 * heapIndex (n × k). On the calling thread: measured here, splitting it across the workers saved
 * no time at 50,000 × 32 (the rows would first be copied into shared memory).
 * @param {Int32Array} heapIds n × searchK, search-row indices (−1 empty)
 * @param {number} searchK
 * @param {Int32Array} original search row → caller's index
 * @param {Float64Array} prepared caller-order prepared rows (knn.ts prepareKnnRows)
 * @param {Float64Array} norms their squared norms (rowNorms)
 * @param {number} d
 * @param {number} k
 * @param {number} from
 * @param {number} to
 * @param {Float64Array} heapKey n × k output
 * @param {Int32Array} heapIndex n × k output
 */
export function finishRows(heapIds, searchK, original, prepared, norms, d, k, from, to, heapKey, heapIndex) {
  const keys = new Float64Array(searchK);
  const ids = new Int32Array(searchK);
  for (let r = from; r < to; r++) {
    const i = original[r];
    const base = r * searchK;
    for (let s = 0; s < searchK; s++) {
      const slot = heapIds[base + s];
      const id = slot < 0 ? -1 : original[slot];
      insertSorted(keys, ids, s, id < 0 ? Infinity : pairKey(prepared, norms, d, i, id), id);
    }
    heapKey.set(keys.subarray(0, k), i * k);
    heapIndex.set(ids.subarray(0, k), i * k);
  }
}

// ---- The local join in WebAssembly ---------------------------------------------------------------

/** @type {WebAssembly.Module | undefined} */
let joinModule;

/** descent-join.wasm (source: assembly/descent-join.ts), compiled once per thread. */
function descentJoinModule() {
  joinModule ??= new WebAssembly.Module(readFileSync(new URL('./descent-join.wasm', import.meta.url)));
  return joinModule;
}

/** Bytes below this offset are left to the module (it keeps no data there today). */
const LAYOUT_START = 65536;
const WASM_PAGE = 65536;
const WASM_MAX_PAGES = 65536;

/**
 * Where one search's arrays lie in its shared WebAssembly memory, in bytes: the rows, the heaps'
 * keys and ids and the candidate lists, which the join reads, and per joining thread ("slot") a
 * stamp array (HeapMarks' role) and room for outCap proposals. Null when they would not fit in
 * WebAssembly's 4 GiB: the search then runs the JavaScript join.
 * @param {number} n
 * @param {number} d
 * @param {number} K
 * @param {number} C
 * @param {number} slots
 * @param {number} [outCap] proposals per call of the kernel (default 2¹⁷, 1.5 MB per thread; at
 *   least one point's most, C(C − 1)/2 + C², which tests use to make the join resume often)
 * @returns {import('./knn-descent-kernel.d.mts').DescentLayout | null}
 */
export function descentLayout(n, d, K, C, slots, outCap = 1 << 17) {
  outCap = Math.max(outCap, (C * (C - 1)) / 2 + C * C);
  let at = LAYOUT_START;
  /** @param {number} bytes */
  const take = (bytes) => {
    const offset = at;
    at += Math.ceil(bytes / 16) * 16;
    return offset;
  };
  const x = take(n * d * 4);
  const keys = take(n * K * 4);
  const ids = take(n * K * 4);
  const newIds = take(n * C * 4);
  const oldIds = take(n * C * 4);
  const perSlot = Array.from({ length: slots }, () => ({ stamp: take(n * 4), outP: take(outCap * 4), outQ: take(outCap * 4), outKey: take(outCap * 4) }));
  const pages = Math.ceil(at / WASM_PAGE);
  if (pages > WASM_MAX_PAGES) return null;
  return { pages, n, d, K, C, x, keys, ids, newIds, oldIds, slots: perSlot, outCap };
}

/**
 * One thread's instance of the WebAssembly join over a search's shared memory.
 */
export class WasmJoin {
  /**
   * @param {WebAssembly.Memory} memory
   * @param {import('./knn-descent-kernel.d.mts').DescentLayout} layout
   * @param {number} slot this thread's stamp and output region
   */
  constructor(memory, layout, slot) {
    const region = layout.slots[slot];
    if (region === undefined) throw new Error(`approximate neighbour search: no memory region for slot ${slot}`);
    const instance = new WebAssembly.Instance(descentJoinModule(), { env: { memory } });
    this.exports = /** @type {{ join: (...args: number[]) => number, joinCount: () => number, joinEvaluations: () => number }} */ (/** @type {unknown} */ (instance.exports));
    this.layout = layout;
    this.region = region;
    this.outP = new Int32Array(memory.buffer, region.outP, layout.outCap);
    this.outQ = new Int32Array(memory.buffer, region.outQ, layout.outCap);
    this.outKey = new Float32Array(memory.buffer, region.outKey, layout.outCap);
  }

  /**
   * localJoin of points i0 … i1 − 1 (same pairs, same order; keys summed in Float32, see
   * assembly/descent-join.ts), appended to `out`.
   * @param {number} i0
   * @param {number} i1
   * @param {Updates} out
   * @returns {number} distances computed
   */
  join(i0, i1, out) {
    const { x, d, n, keys, ids, K, newIds, oldIds, C, outCap } = this.layout;
    const { stamp, outP, outQ, outKey } = this.region;
    let evaluations = 0;
    for (let i = i0; i < i1; ) {
      i = this.exports.join(x, d, n, keys, ids, K, newIds, oldIds, C, i, i1, stamp, outP, outQ, outKey, outCap);
      evaluations += this.exports.joinEvaluations();
      out.append(this.outP, this.outQ, this.outKey, this.exports.joinCount());
    }
    return evaluations;
  }
}
