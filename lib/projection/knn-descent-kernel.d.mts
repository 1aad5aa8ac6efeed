/** Types for knn-descent-kernel.mjs (plain JavaScript so that worker threads can load it; see knn-kernel.mjs). */
export declare function mulberry32(seed: number): () => number;
export declare function squaredDistance(x: Float32Array, p: number, q: number, d: number): number;
export declare function boundedSquaredDistance(x: Float32Array, p: number, q: number, d: number, limit: number): number;
export declare function heapPush(keys: Float32Array, ids: Int32Array, fresh: Uint8Array, K: number, i: number, key: number, j: number): number;
export interface RpTree {
  order: Int32Array;
  /** Leaf l holds order[leafBounds[l]] … order[leafBounds[l + 1] − 1]. */
  leafBounds: Int32Array;
}
export declare function splitTree(x: Float32Array, n: number, d: number, leafSize: number, random: () => number): RpTree;
export declare function leafPairs(x: Float32Array, d: number, order: Int32Array, leafBounds: Int32Array): { count: number; p: Int32Array; q: Int32Array; key: Float32Array };
export declare function fillRandom(x: Float32Array, n: number, d: number, keys: Float32Array, ids: Int32Array, fresh: Uint8Array, K: number, random: () => number): number;
export declare function candidatePriority(seed: number, i: number, j: number): number;
export declare function buildCandidates(
  ids: Int32Array,
  fresh: Uint8Array,
  n: number,
  K: number,
  C: number,
  seed: number,
  newIds: Int32Array,
  newPri: Float32Array,
  oldIds: Int32Array,
  oldPri: Float32Array,
  from: number,
  to: number,
): void;
export declare function markSampled(ids: Int32Array, fresh: Uint8Array, K: number, C: number, newIds: Int32Array, from: number, to: number, marks: HeapMarks): void;
export declare class Updates {
  constructor(capacity?: number);
  count: number;
  p: Int32Array;
  q: Int32Array;
  key: Float32Array;
  add(p: number, q: number, key: number): void;
  append(p: Int32Array, q: Int32Array, key: Float32Array, count: number): void;
}
export declare class HeapMarks {
  constructor(n: number);
  stamp: Int32Array;
  value: number;
  mark(ids: Int32Array, base: number, K: number): number;
}
export declare function localJoin(x: Float32Array, d: number, keys: Float32Array, ids: Int32Array, K: number, newIds: Int32Array, oldIds: Int32Array, C: number, i0: number, i1: number, out: Updates, marks: HeapMarks): number;
export declare function applyUpdates(keys: Float32Array, ids: Int32Array, fresh: Uint8Array, K: number, p: Int32Array, q: Int32Array, key: Float32Array, count: number): number;
export declare function finishRows(heapIds: Int32Array, searchK: number, original: Int32Array, prepared: Float64Array, norms: Float64Array, d: number, k: number, from: number, to: number, heapKey: Float64Array, heapIndex: Int32Array): void;
/** Byte offsets of one search's arrays in its shared WebAssembly memory (descentLayout). */
export interface DescentLayout {
  pages: number;
  n: number;
  d: number;
  K: number;
  C: number;
  x: number;
  keys: number;
  ids: number;
  newIds: number;
  oldIds: number;
  slots: { stamp: number; outP: number; outQ: number; outKey: number }[];
  outCap: number;
}
export declare function descentLayout(n: number, d: number, K: number, C: number, slots: number, outCap?: number): DescentLayout | null;
export declare class WasmJoin {
  constructor(memory: WebAssembly.Memory, layout: DescentLayout, slot: number);
  join(i0: number, i1: number, out: Updates): number;
}
