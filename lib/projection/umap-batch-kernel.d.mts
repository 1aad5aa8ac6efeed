/** Types for umap-batch-kernel.mjs (plain JavaScript so that worker threads can load it; see knn-kernel.mjs). */
export declare const ADAM_BETA1: number;
export declare const ADAM_BETA2: number;
export declare const ADAM_EPSILON: number;
/** x^b for x > 0, relative error below 1e-6 where the result is a normal double (else 0 or Infinity). */
export declare function fastPower(x: number, b: number): number;
export declare function vertexStream(seed: number, epoch: number, i: number): number;
export interface BatchState {
  n: number;
  rowStart: Int32Array;
  cols: Int32Array;
  perSample: Float64Array;
  nextSample: Float64Array;
  nextNegative: Float64Array;
  m1: Float64Array;
  m2: Float64Array;
}
export declare function batchEpoch(
  state: BatchState,
  from: number,
  to: number,
  read: Float64Array,
  write: Float64Array,
  epoch: number,
  nEpochs: number,
  a: number,
  b: number,
  seed: number,
): void;
