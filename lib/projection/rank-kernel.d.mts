/** Types for rank-kernel.mjs (plain JavaScript so that worker threads can load it; see knn-kernel.mjs). */
export declare const QUERY_BLOCK: number;
export interface RankScratch {
  sortedKey: Float64Array;
  sortedId: Int32Array;
  sortedPos: Int32Array;
  counts: Int32Array;
}
export declare function rankScratch(kMax: number): RankScratch;
export declare function addRankPenalties(keys: Float64Array, n: number, i: number, neighbours: Int32Array, ks: ArrayLike<number>, kMax: number, scratch: RankScratch, sums: Float64Array): void;
export declare function rankPenaltyRange(
  rows: Float64Array,
  norms: Float64Array,
  n: number,
  d: number,
  indices: Int32Array,
  stride: number,
  ks: ArrayLike<number>,
  q0: number,
  q1: number,
  sums: Float64Array,
  onBlock?: (done: number) => void,
): void;
export declare function sampledRankRange(
  rows: Float64Array,
  norms: Float64Array,
  n: number,
  d: number,
  map: Float32Array,
  mapDims: number,
  ks: ArrayLike<number>,
  kMax: number,
  preservationK: number,
  queries: ArrayLike<number>,
  r0: number,
  r1: number,
  trustSums: Float64Array,
  continuitySums: Float64Array,
  onQuery?: (done: number) => void,
): number;
