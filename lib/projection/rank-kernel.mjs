// @ts-check
/**
 * The rank counting behind trustworthiness and continuity (fidelity.ts, whose module comment
 * defines them), in plain JavaScript so that the main thread and the worker threads of
 * fidelity-parallel.ts (rank-worker.mjs) run the very same code (why .mjs: see knn-kernel.mjs).
 * Types in rank-kernel.d.mts.
 *
 * The sums are of integers (rank − k), exact in Float64 far beyond any factor set's size (2⁵³),
 * so partial sums over query ranges add up to the same bits in any order and on any number of
 * threads.
 */
import { keyReader } from './key-rows-kernel.mjs';

/** Query rows whose distance rows are computed together: QUERY_BLOCK × n × 8 bytes of scratch. */
export const QUERY_BLOCK = 16;

/**
 * @typedef {object} RankScratch One point's neighbours sorted by (key, index): keys, indices, list
 *   positions; and counts[p], the points that precede sorted neighbour p but not p − 1.
 * @property {Float64Array} sortedKey
 * @property {Int32Array} sortedId
 * @property {Int32Array} sortedPos
 * @property {Int32Array} counts
 */

/**
 * @param {number} kMax
 * @returns {RankScratch}
 */
export function rankScratch(kMax) {
  return { sortedKey: new Float64Array(kMax), sortedId: new Int32Array(kMax), sortedPos: new Int32Array(kMax), counts: new Int32Array(kMax + 1) };
}

/**
 * Adds to sums[index] Σ_{s < ks[index]} max(0, r(neighbours[s]) − ks[index]) for one query point i,
 * where r ranks by `keys` (another space than the one the neighbours come from):
 * r(j) = 1 + #{l ≠ i : (key_l, l) < (key_j, j)}, counted in one pass with a binary search among
 * the neighbours sorted by key.
 * @param {Float64Array} keys n keys from point i
 * @param {number} n
 * @param {number} i
 * @param {Int32Array} neighbours i's first kMax neighbours in the other space
 * @param {ArrayLike<number>} ks
 * @param {number} kMax the largest of ks
 * @param {RankScratch} scratch
 * @param {Float64Array} sums aligned with ks
 */
export function addRankPenalties(keys, n, i, neighbours, ks, kMax, scratch, sums) {
  const { sortedKey, sortedId, sortedPos, counts } = scratch;
  for (let s = 0; s < kMax; s++) {
    const id = neighbours[s];
    const key = keys[id];
    let p = s - 1;
    while (p >= 0 && (sortedKey[p] > key || (sortedKey[p] === key && sortedId[p] > id))) {
      sortedKey[p + 1] = sortedKey[p];
      sortedId[p + 1] = sortedId[p];
      sortedPos[p + 1] = sortedPos[p];
      p--;
    }
    sortedKey[p + 1] = key;
    sortedId[p + 1] = id;
    sortedPos[p + 1] = s;
  }
  counts.fill(0);
  const lastKey = sortedKey[kMax - 1];
  const lastId = sortedId[kMax - 1];
  for (let l = 0; l < n; l++) {
    if (l === i) continue;
    const key = keys[l];
    if (key > lastKey || (key === lastKey && l >= lastId)) continue;
    let lo = 0;
    let hi = kMax - 1;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      const mk = sortedKey[mid];
      if (key < mk || (key === mk && l < sortedId[mid])) hi = mid;
      else lo = mid + 1;
    }
    counts[lo]++;
  }
  let preceding = 0;
  for (let p = 0; p < kMax; p++) {
    preceding += counts[p];
    const rank = 1 + preceding;
    const position = sortedPos[p];
    for (let index = 0; index < ks.length; index++) {
      const k = ks[index];
      if (position < k && rank > k) sums[index] += rank - k;
    }
  }
}

/**
 * addRankPenalties for the queries q0 … q1 − 1, their keys to every point computed QUERY_BLOCK at a
 * time from `rows` (prepared as knn.ts does, with their squared norms).
 * @param {Float64Array} rows n × d
 * @param {Float64Array} norms n, from rowNorms
 * @param {number} n
 * @param {number} d
 * @param {Int32Array} indices n × stride neighbour lists in the other space (the first max(ks) used)
 * @param {number} stride
 * @param {ArrayLike<number>} ks each 1 ≤ k ≤ stride
 * @param {number} q0
 * @param {number} q1
 * @param {Float64Array} sums aligned with ks, added to
 * @param {(done: number) => void} [onBlock] queries done so far (q1 − q0 at the end), after each block
 */
export function rankPenaltyRange(rows, norms, n, d, indices, stride, ks, q0, q1, sums, onBlock) {
  let kMax = 0;
  for (let index = 0; index < ks.length; index++) kMax = Math.max(kMax, ks[index]);
  if (q1 <= q0) return;
  const ranks = rankScratch(kMax);
  // In WebAssembly SIMD where it fits (the same bits, ~2.5 times as fast; see assembly/key-rows.ts).
  const readKeys = keyReader(rows, norms, n, d, QUERY_BLOCK);
  const ids = new Int32Array(QUERY_BLOCK);
  for (let b0 = q0; b0 < q1; b0 += QUERY_BLOCK) {
    const b1 = Math.min(q1, b0 + QUERY_BLOCK);
    for (let r = 0; r < b1 - b0; r++) ids[r] = b0 + r;
    const keys = readKeys(ids, b1 - b0);
    for (let i = b0; i < b1; i++) {
      addRankPenalties(keys.subarray((i - b0) * n, (i - b0 + 1) * n), n, i, indices.subarray(i * stride, i * stride + kMax), ks, kMax, ranks, sums);
    }
    onBlock?.(b1 - q0);
  }
}

/**
 * The kMax nearest points to point i by (key, index), i left out, sorted: ids and keys. One pass
 * with an early reject; most points are rejected by one comparison.
 * @param {Float64Array} keys
 * @param {number} n
 * @param {number} i
 * @param {number} kMax
 * @param {Int32Array} outId
 * @param {Float64Array} outKey
 */
function nearestByKey(keys, n, i, kMax, outId, outKey) {
  let kept = 0;
  for (let l = 0; l < n; l++) {
    if (l === i) continue;
    const key = keys[l];
    if (kept === kMax && (key > outKey[kMax - 1] || (key === outKey[kMax - 1] && l > outId[kMax - 1]))) continue;
    let p = kept === kMax ? kMax - 1 : kept++;
    while (p > 0 && (outKey[p - 1] > key || (outKey[p - 1] === key && outId[p - 1] > l))) {
      outKey[p] = outKey[p - 1];
      outId[p] = outId[p - 1];
      p--;
    }
    outKey[p] = key;
    outId[p] = l;
  }
}

/**
 * The terms of the sampled scores (fidelity.ts sampledRankScores) for queries[r0 … r1 − 1]: each
 * query ranked against all n points in both spaces, its trustworthiness and continuity penalties
 * added to trustSums and continuitySums; returns how many of the queries' preservationK latent
 * neighbours are among their preservationK map neighbours. Latent keys of four queries at a time
 * (keyReader: each point's row is loaded once for four, and the keys do not depend on the
 * grouping).
 * @param {Float64Array} rows latent rows prepared as knn.ts does, n × d
 * @param {Float64Array} norms their squared norms
 * @param {number} n
 * @param {number} d
 * @param {Float32Array} map n × mapDims
 * @param {number} mapDims
 * @param {ArrayLike<number>} ks
 * @param {number} kMax ≥ max(ks) and ≥ min(preservationK, n − 1)
 * @param {number} preservationK
 * @param {ArrayLike<number>} queries point indices, checked by the caller
 * @param {number} r0
 * @param {number} r1
 * @param {Float64Array} trustSums aligned with ks
 * @param {Float64Array} continuitySums aligned with ks
 * @param {(done: number) => void} [onQuery] queries done so far in this range, after each
 * @returns {number}
 */
export function sampledRankRange(rows, norms, n, d, map, mapDims, ks, kMax, preservationK, queries, r0, r1, trustSums, continuitySums, onQuery) {
  if (r1 <= r0) return 0;
  const block = 4;
  const readKeys = keyReader(rows, norms, n, d, block);
  let blockKeys = new Float64Array(0);
  const mapKeys = new Float64Array(n);
  const mapId = new Int32Array(kMax);
  const mapKey = new Float64Array(kMax);
  const latentId = new Int32Array(kMax);
  const latentKey = new Float64Array(kMax);
  const scratch = rankScratch(kMax);
  let kept = 0;
  for (let r = r0; r < r1; r++) {
    const i = queries[r];
    const slot = (r - r0) % block;
    if (slot === 0) {
      const ids = Array.prototype.slice.call(queries, r, Math.min(r1, r + block));
      blockKeys = readKeys(ids, ids.length);
    }
    const latentKeys = blockKeys.subarray(slot * n, (slot + 1) * n);
    for (let l = 0; l < n; l++) {
      let s = 0;
      for (let t = 0; t < mapDims; t++) {
        const e = map[i * mapDims + t] - map[l * mapDims + t];
        s += e * e;
      }
      mapKeys[l] = s;
    }
    nearestByKey(mapKeys, n, i, kMax, mapId, mapKey);
    nearestByKey(latentKeys, n, i, kMax, latentId, latentKey);
    addRankPenalties(latentKeys, n, i, mapId, ks, kMax, scratch, trustSums);
    addRankPenalties(mapKeys, n, i, latentId, ks, kMax, scratch, continuitySums);
    for (let s = 0; s < preservationK && s < kMax; s++) {
      const j = mapId[s];
      for (let t = 0; t < preservationK && t < kMax; t++) {
        if (latentId[t] === j) {
          kept++;
          break;
        }
      }
    }
    onQuery?.(r + 1 - r0);
  }
  return kept;
}
