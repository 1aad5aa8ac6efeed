/** Types for key-rows-kernel.mjs (plain JavaScript so that worker threads can load it; see knn-kernel.mjs). */
export declare const WASM_KEY_ROWS_MAX_BYTES: number;
export declare class WasmKeyRows {
  static create(rows: Float64Array, norms: Float64Array, n: number, d: number, maxQueries: number): WasmKeyRows | null;
  readonly n: number;
  readonly d: number;
  readonly maxQueries: number;
  keys(ids: ArrayLike<number>, count: number): Float64Array;
}
export declare function keyReader(rows: Float64Array, norms: Float64Array, n: number, d: number, maxQueries: number): (ids: ArrayLike<number>, count: number) => Float64Array;
