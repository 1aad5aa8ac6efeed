/** Types for objective-kernel.mjs (plain JavaScript so that worker threads can load it; see there). */
export declare const KIND_GAUSSIAN: 0;
export declare const KIND_BERNOULLI: 1;
export declare const KIND_POISSON: 2;
export interface KernelSpec {
  p: number;
  rank: number;
  entities: boolean;
  kind: number;
  mu: number;
  a: number;
  b: number;
  beta: number;
  gamma: number;
  delta: number;
}
export declare function accumulateRange(
  theta: Float64Array,
  grad: Float64Array,
  row: Int32Array,
  column: Int32Array,
  y: Float64Array,
  x: Float64Array,
  offset: Float64Array | null,
  spec: KernelSpec,
  precision: number,
  start: number,
  end: number,
): number;
