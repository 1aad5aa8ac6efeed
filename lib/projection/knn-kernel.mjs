// @ts-check
/**
 * The arithmetic core of Asterism's exact k-nearest-neighbour search and of the rank computations
 * in fidelity.ts, written once in plain JavaScript so that the main thread (through knn.ts) and the
 * worker threads (knn-worker.mjs) run the very same code.
 *
 * Why JavaScript and not TypeScript: a worker started with node:worker_threads is a fresh Node.js
 * isolate that loads its file with Node's own loader. Under vitest the TypeScript transform lives
 * in vite's module runner of the test process and does not reach a new Worker; Node 20 cannot strip
 * types itself; and tsx's loader reaches workers only in some set-ups. A plain .mjs file loads
 * everywhere (vitest, tsx, node, a bundled server). The types are declared in knn-kernel.d.mts, so
 * TypeScript callers stay strictly typed.
 *
 * Why our own kernel at all: the npm packages for nearest neighbours are approximate (HNSW,
 * NN-descent, Annoy ports) or exact but over arrays of arrays or one point at a time (kd-trees,
 * which degrade to brute force beyond ~10 dimensions anyway). None does a blocked, symmetric, exact
 * scan over one row-major typed array, which is what an exact graph for 10k–50k factor rows needs.
 *
 * Arithmetic: the expansion ‖x − y‖² = ‖x‖² + ‖y‖² − 2 x·y, in Float64.
 * - Why not direct differences Σ (x_t − y_t)²: measured here (V8, one core, 10,000 × 32, half the
 *   pairs, bare loops without the heaps), a 4 × 4 register-blocked dot product takes 1.1 s where the best difference loop (4 × 2
 *   blocked) takes 1.7 s and a plain one 4.4 s: a dot product needs 2 flops per coordinate and lets
 *   16 pairs share 8 loads, a difference needs 3 flops and cannot share the subtraction. Issue 4
 *   asks for exact search at 50,000 × 32 in under 20 s on two cores; with this kernel it measured
 *   11.3 s on 2 worker threads on an otherwise idle machine (26 s on one shared with other work),
 *   with differences it would be ~1.6 times that. WebAssembly SIMD (f64x2) is the next step if
 *   more is needed.
 * - Why it is accurate enough: rows are float32, so every product x_t·y_t is exact in float64
 *   (24 + 24 bits < 53) and the only rounding is in the sums, a relative error of about d·2⁻⁵³ of
 *   ‖x‖² + ‖y‖². Relative to the squared distance that is negligible unless rows sit far from the
 *   origin compared with their spread (offset / spread beyond ~10⁴, where float32 output precision
 *   would be lost anyway; centre such factors first). This is the same trade-off as
 *   sklearn.metrics.pairwise.euclidean_distances, which also uses the expansion.
 * - Guards and exactness: a key below 0 (rounding) is set to 0. The squared norm is summed by the
 *   same loop as the dot product, so a duplicate row gives exactly 0; the key is bit-for-bit
 *   symmetric (IEEE addition and multiplication commute and the sum runs in the same order t = 0 …
 *   d−1 for every pair, whatever the blocking); and equal rows give equal keys, so ties between
 *   duplicates are exact and broken by index. For data whose coordinates are small dyadic numbers
 *   (integers, as the digits pixels) every key is exact.
 * - Cosine: rows are normalised to unit length once and the same key is computed; it equals
 *   2 − 2 cos θ, so the cosine distance 1 − cos θ is key / 2. A zero row has no direction and is
 *   rejected by the caller.
 * - Keys are compared as (key, index) pairs, so neighbours are ordered by distance and then by the
 *   smaller index: the output does not depend on blocking or on the number of threads.
 */

/** Metric codes shared with the worker (strings do not cross the hot loop). */
export const METRIC_EUCLIDEAN = 0;
export const METRIC_COSINE = 1;

/** Index of a heap's empty slot: larger than any real index, so a real candidate always wins a tie with it. */
export const EMPTY_INDEX = 0x7fffffff;

/**
 * Copies row-major float32 data to float64 and, for cosine, normalises each row to unit length.
 * @param {Float32Array} data n × d, row-major
 * @param {number} n
 * @param {number} d
 * @param {number} metric METRIC_EUCLIDEAN or METRIC_COSINE
 * @param {Float64Array} out n × d
 * @returns {number} −1 when every row is usable, else the first row with zero norm (cosine only)
 */
export function prepareRows(data, n, d, metric, out) {
  for (let i = 0; i < n * d; i++) out[i] = data[i];
  if (metric !== METRIC_COSINE) return -1;
  for (let i = 0; i < n; i++) {
    const base = i * d;
    let norm = 0;
    for (let t = 0; t < d; t++) norm += out[base + t] * out[base + t];
    if (!(norm > 0)) return i;
    const inverse = 1 / Math.sqrt(norm);
    for (let t = 0; t < d; t++) out[base + t] *= inverse;
  }
  return -1;
}

/**
 * Fills k-slot heaps with empty slots (key +∞, index EMPTY_INDEX).
 * @param {Float64Array} heapKey n × k
 * @param {Int32Array} heapIndex n × k
 */
export function resetHeaps(heapKey, heapIndex) {
  heapKey.fill(Infinity);
  heapIndex.fill(EMPTY_INDEX);
}

/**
 * Offers candidate (key, index) to the max-heap of one point; the heap keeps the k best
 * (smallest key, then smallest index). Slot 0 is the worst kept candidate.
 * @param {Float64Array} heapKey
 * @param {Int32Array} heapIndex
 * @param {number} base point × k
 * @param {number} k
 * @param {number} key
 * @param {number} index
 */
export function heapOffer(heapKey, heapIndex, base, k, key, index) {
  const rootKey = heapKey[base];
  if (key > rootKey || (key === rootKey && index >= heapIndex[base])) return;
  // Sift the new candidate down from the root.
  let position = 0;
  for (;;) {
    const left = 2 * position + 1;
    if (left >= k) break;
    let child = left;
    const right = left + 1;
    if (right < k) {
      const lk = heapKey[base + left];
      const rk = heapKey[base + right];
      if (rk > lk || (rk === lk && heapIndex[base + right] > heapIndex[base + left])) child = right;
    }
    const ck = heapKey[base + child];
    if (ck < key || (ck === key && heapIndex[base + child] < index)) break;
    heapKey[base + position] = ck;
    heapIndex[base + position] = heapIndex[base + child];
    position = child;
  }
  heapKey[base + position] = key;
  heapIndex[base + position] = index;
}

/**
 * Squared norms ‖x_i‖², summed exactly as the dot products are (so that duplicates give key 0).
 * @param {Float64Array} x prepared rows, n × d
 * @param {number} n
 * @param {number} d
 * @param {Float64Array} out n
 */
export function rowNorms(x, n, d, out) {
  for (let i = 0; i < n; i++) out[i] = dot(x, i * d, i * d, d);
}

/**
 * x_i · x_j summed sequentially over t, the one order every path of this file uses.
 * @param {Float64Array} x
 * @param {number} bi
 * @param {number} bj
 * @param {number} d
 * @returns {number}
 */
function dot(x, bi, bj, d) {
  let a = 0;
  for (let t = 0; t < d; t++) a += x[bi + t] * x[bj + t];
  return a;
}

/**
 * Squared distance from the norms and the dot product, clamped at 0 against rounding.
 * @param {number} ni
 * @param {number} nj
 * @param {number} product
 * @returns {number}
 */
function keyOf(ni, nj, product) {
  const key = ni + nj - 2 * product;
  return key > 0 ? key : 0;
}

/**
 * Key of one pair, the same value scanBlockRows and keyRows compute for it (for single-entity
 * neighbour queries).
 * @param {Float64Array} x
 * @param {Float64Array} norms
 * @param {number} d
 * @param {number} i
 * @param {number} j
 * @returns {number}
 */
export function pairKey(x, norms, d, i, j) {
  return keyOf(norms[i], norms[j], dot(x, i * d, j * d, d));
}

/**
 * Scans the upper-triangle tiles of the given block rows: for block row I, tiles (I, J) with
 * J ≥ I, each pair computed once and offered to both points' heaps. Work per block row I is
 * proportional to the number of blocks from I to the end, which the caller balances across threads.
 * @param {Float64Array} x prepared rows, n × d
 * @param {Float64Array} norms squared norms from rowNorms
 * @param {number} n
 * @param {number} d
 * @param {number} k
 * @param {number} blockSize rows per tile side
 * @param {ArrayLike<number>} blockRows indices of the block rows to scan
 * @param {Float64Array} heapKey n × k
 * @param {Int32Array} heapIndex n × k
 * @param {(tiles: number) => void} [onBlockRow] after each block row, with the tiles it scanned
 */
export function scanBlockRows(x, norms, n, d, k, blockSize, blockRows, heapKey, heapIndex, onBlockRow) {
  const blocks = Math.ceil(n / blockSize);
  for (let r = 0; r < blockRows.length; r++) {
    const I = blockRows[r];
    const i0 = I * blockSize;
    const i1 = Math.min(n, i0 + blockSize);
    diagonalTile(x, norms, d, k, i0, i1, heapKey, heapIndex);
    for (let J = I + 1; J < blocks; J++) {
      const j0 = J * blockSize;
      offDiagonalTile(x, norms, d, k, i0, i1, j0, Math.min(n, j0 + blockSize), heapKey, heapIndex);
    }
    onBlockRow?.(blocks - I);
  }
}

/**
 * The pairs i < j inside one block, plainly (1/blocks of the work).
 * @param {Float64Array} x
 * @param {Float64Array} norms
 * @param {number} d
 * @param {number} k
 * @param {number} i0
 * @param {number} i1
 * @param {Float64Array} heapKey
 * @param {Int32Array} heapIndex
 */
function diagonalTile(x, norms, d, k, i0, i1, heapKey, heapIndex) {
  for (let i = i0; i < i1; i++) {
    for (let j = i + 1; j < i1; j++) offerPair(heapKey, heapIndex, k, i, j, keyOf(norms[i], norms[j], dot(x, i * d, j * d, d)));
  }
}

/**
 * Queries [i0, i1) against points [j0, j1) of another block: 4 × 4 pairs at a time share 8 loads
 * per coordinate (register blocking); each of the 16 dot products is still summed sequentially
 * over t, so its value equals dot() bit for bit. Remainders go through dot().
 * @param {Float64Array} x
 * @param {Float64Array} norms
 * @param {number} d
 * @param {number} k
 * @param {number} i0
 * @param {number} i1
 * @param {number} j0
 * @param {number} j1
 * @param {Float64Array} heapKey
 * @param {Int32Array} heapIndex
 */
function offDiagonalTile(x, norms, d, k, i0, i1, j0, j1, heapKey, heapIndex) {
  let i = i0;
  for (; i + 3 < i1; i += 4) {
    const b0 = i * d;
    const b1 = b0 + d;
    const b2 = b1 + d;
    const b3 = b2 + d;
    const n0 = norms[i];
    const n1 = norms[i + 1];
    const n2 = norms[i + 2];
    const n3 = norms[i + 3];
    let j = j0;
    for (; j + 3 < j1; j += 4) {
      const e0 = j * d;
      const e1 = e0 + d;
      const e2 = e1 + d;
      const e3 = e2 + d;
      let a00 = 0, a01 = 0, a02 = 0, a03 = 0;
      let a10 = 0, a11 = 0, a12 = 0, a13 = 0;
      let a20 = 0, a21 = 0, a22 = 0, a23 = 0;
      let a30 = 0, a31 = 0, a32 = 0, a33 = 0;
      for (let t = 0; t < d; t++) {
        const u0 = x[b0 + t];
        const u1 = x[b1 + t];
        const u2 = x[b2 + t];
        const u3 = x[b3 + t];
        const v0 = x[e0 + t];
        const v1 = x[e1 + t];
        const v2 = x[e2 + t];
        const v3 = x[e3 + t];
        a00 += u0 * v0; a01 += u0 * v1; a02 += u0 * v2; a03 += u0 * v3;
        a10 += u1 * v0; a11 += u1 * v1; a12 += u1 * v2; a13 += u1 * v3;
        a20 += u2 * v0; a21 += u2 * v1; a22 += u2 * v2; a23 += u2 * v3;
        a30 += u3 * v0; a31 += u3 * v1; a32 += u3 * v2; a33 += u3 * v3;
      }
      // Hand the 16 dot products to a separate small function: with the offers inlined here the
      // loop nest grew too large for V8 to keep the accumulators in registers (measured ~25% slower).
      const c = blockDots;
      c[0] = a00; c[1] = a01; c[2] = a02; c[3] = a03;
      c[4] = a10; c[5] = a11; c[6] = a12; c[7] = a13;
      c[8] = a20; c[9] = a21; c[10] = a22; c[11] = a23;
      c[12] = a30; c[13] = a31; c[14] = a32; c[15] = a33;
      offerBlock(c, norms, heapKey, heapIndex, k, i, j);
    }
    for (; j < j1; j++) {
      const bj = j * d;
      const m = norms[j];
      offerPair(heapKey, heapIndex, k, i, j, keyOf(n0, m, dot(x, b0, bj, d)));
      offerPair(heapKey, heapIndex, k, i + 1, j, keyOf(n1, m, dot(x, b1, bj, d)));
      offerPair(heapKey, heapIndex, k, i + 2, j, keyOf(n2, m, dot(x, b2, bj, d)));
      offerPair(heapKey, heapIndex, k, i + 3, j, keyOf(n3, m, dot(x, b3, bj, d)));
    }
  }
  for (; i < i1; i++) {
    for (let j = j0; j < j1; j++) offerPair(heapKey, heapIndex, k, i, j, keyOf(norms[i], norms[j], dot(x, i * d, j * d, d)));
  }
}

/** The 4 × 4 dot products of the current register block (one per thread: each worker is its own isolate). */
const blockDots = new Float64Array(16);

/**
 * Offers the 16 pairs (i + p, j + q) of a register block, keys from their dot products c[4p + q].
 * @param {Float64Array} c
 * @param {Float64Array} norms
 * @param {Float64Array} heapKey
 * @param {Int32Array} heapIndex
 * @param {number} k
 * @param {number} i
 * @param {number} j
 */
function offerBlock(c, norms, heapKey, heapIndex, k, i, j) {
  for (let p = 0; p < 4; p++) {
    const np = norms[i + p];
    for (let q = 0; q < 4; q++) offerPair(heapKey, heapIndex, k, i + p, j + q, keyOf(np, norms[j + q], c[4 * p + q]));
  }
}

/**
 * Offers the pair (i, j) with its key to both heaps; the cheap root comparison rejects most pairs
 * before any function call.
 * @param {Float64Array} heapKey
 * @param {Int32Array} heapIndex
 * @param {number} k
 * @param {number} i
 * @param {number} j
 * @param {number} key
 */
function offerPair(heapKey, heapIndex, k, i, j, key) {
  const bi = i * k;
  if (key <= heapKey[bi]) heapOffer(heapKey, heapIndex, bi, k, key, j);
  const bj = j * k;
  if (key <= heapKey[bj]) heapOffer(heapKey, heapIndex, bj, k, key, i);
}

/**
 * Inserts (key, id) into keys/ids[0 … count − 1], kept sorted by (key, index): one step of an
 * insertion sort, for the short neighbour lists (k ≤ a few hundred, often partly ordered).
 * @param {Float64Array} keys
 * @param {Int32Array} ids
 * @param {number} count entries already sorted
 * @param {number} key
 * @param {number} id
 */
export function insertSorted(keys, ids, count, key, id) {
  let p = count - 1;
  while (p >= 0 && (keys[p] > key || (keys[p] === key && ids[p] > id))) {
    keys[p + 1] = keys[p];
    ids[p + 1] = ids[p];
    p--;
  }
  keys[p + 1] = key;
  ids[p + 1] = id;
}

/**
 * Sorts each point's k kept candidates by (key, index) and writes indices and distances
 * (Euclidean: √key; cosine: key / 2 = 1 − cos θ).
 * @param {Float64Array} heapKey n × k
 * @param {Int32Array} heapIndex n × k
 * @param {number} n
 * @param {number} k
 * @param {number} metric
 * @param {Int32Array} indices n × k output
 * @param {Float32Array} distances n × k output
 */
export function finishHeaps(heapKey, heapIndex, n, k, metric, indices, distances) {
  const keys = new Float64Array(k);
  const ids = new Int32Array(k);
  for (let i = 0; i < n; i++) {
    const base = i * k;
    // Insertion sort: k is small (≤ a few hundred) and the heap is already partly ordered.
    for (let s = 0; s < k; s++) insertSorted(keys, ids, s, heapKey[base + s], heapIndex[base + s]);
    for (let s = 0; s < k; s++) {
      indices[base + s] = ids[s];
      distances[base + s] = metric === METRIC_COSINE ? keys[s] / 2 : Math.sqrt(keys[s]);
    }
  }
}

/**
 * Keys from queries [q0, q1) to every point, into out[(q − q0) × n + l] (0 for a query with
 * itself). Bit-identical to the keys scanBlockRows computes for the same pairs.
 * @param {Float64Array} x prepared rows, n × d
 * @param {Float64Array} norms squared norms from rowNorms
 * @param {number} n
 * @param {number} d
 * @param {number} q0
 * @param {number} q1
 * @param {Float64Array} out (q1 − q0) × n
 */
export function keyRows(x, norms, n, d, q0, q1, out) {
  const ids = new Int32Array(q1 - q0);
  for (let r = 0; r < ids.length; r++) ids[r] = q0 + r;
  keyRowsAt(x, norms, n, d, ids, out);
}

/**
 * Keys from the query rows `ids` (any point indices) to every point, into out[r × n + l] (0 for a
 * query with itself: its squared norm is summed in the same order as the dot product); the same
 * keys as scanBlockRows computes for the same pairs, four queries per pass over the points so that
 * each point's row is loaded once for four dot products. For sampled fidelity scores, whose
 * queries are scattered.
 * @param {Float64Array} x prepared rows, n × d
 * @param {Float64Array} norms squared norms from rowNorms
 * @param {number} n
 * @param {number} d
 * @param {ArrayLike<number>} ids query point indices
 * @param {Float64Array} out ids.length × n
 */
export function keyRowsAt(x, norms, n, d, ids, out) {
  const count = ids.length;
  let r = 0;
  for (; r + 3 < count; r += 4) {
    const q0 = ids[r], q1 = ids[r + 1], q2 = ids[r + 2], q3 = ids[r + 3];
    const b0 = q0 * d, b1 = q1 * d, b2 = q2 * d, b3 = q3 * d;
    const o0 = r * n, o1 = o0 + n, o2 = o1 + n, o3 = o2 + n;
    const n0 = norms[q0], n1 = norms[q1], n2 = norms[q2], n3 = norms[q3];
    for (let l = 0; l < n; l++) {
      const lb = l * d;
      let a0 = 0;
      let a1 = 0;
      let a2 = 0;
      let a3 = 0;
      for (let t = 0; t < d; t++) {
        const y = x[lb + t];
        a0 += x[b0 + t] * y;
        a1 += x[b1 + t] * y;
        a2 += x[b2 + t] * y;
        a3 += x[b3 + t] * y;
      }
      const m = norms[l];
      out[o0 + l] = keyOf(n0, m, a0);
      out[o1 + l] = keyOf(n1, m, a1);
      out[o2 + l] = keyOf(n2, m, a2);
      out[o3 + l] = keyOf(n3, m, a3);
    }
  }
  for (; r < count; r++) {
    const q = ids[r];
    const o0 = r * n;
    for (let l = 0; l < n; l++) out[o0 + l] = keyOf(norms[q], norms[l], dot(x, q * d, l * d, d));
  }
}
