/** Types for knn-kernel.mjs (plain JavaScript so that worker threads can load it; see there). */
export declare const METRIC_EUCLIDEAN: 0;
export declare const METRIC_COSINE: 1;
export declare const EMPTY_INDEX: number;
export type MetricCode = typeof METRIC_EUCLIDEAN | typeof METRIC_COSINE;
export declare function prepareRows(data: Float32Array, n: number, d: number, metric: MetricCode, out: Float64Array): number;
export declare function resetHeaps(heapKey: Float64Array, heapIndex: Int32Array): void;
export declare function heapOffer(heapKey: Float64Array, heapIndex: Int32Array, base: number, k: number, key: number, index: number): void;
export declare function rowNorms(x: Float64Array, n: number, d: number, out: Float64Array): void;
export declare function pairKey(x: Float64Array, norms: Float64Array, d: number, i: number, j: number): number;
export declare function scanBlockRows(
  x: Float64Array,
  norms: Float64Array,
  n: number,
  d: number,
  k: number,
  blockSize: number,
  blockRows: ArrayLike<number>,
  heapKey: Float64Array,
  heapIndex: Int32Array,
  onBlockRow?: (tiles: number) => void,
): void;
export declare function finishHeaps(
  heapKey: Float64Array,
  heapIndex: Int32Array,
  n: number,
  k: number,
  metric: MetricCode,
  indices: Int32Array,
  distances: Float32Array,
): void;
export declare function keyRows(x: Float64Array, norms: Float64Array, n: number, d: number, q0: number, q1: number, out: Float64Array): void;
export declare function keyRowsAt(x: Float64Array, norms: Float64Array, n: number, d: number, ids: ArrayLike<number>, out: Float64Array): void;
export declare function insertSorted(keys: Float64Array, ids: Int32Array, count: number, key: number, id: number): void;
