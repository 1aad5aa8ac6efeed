/** Types for hash-kernel.mjs. */
export declare function mulberry32(seed: number): () => number;
export declare function fmix32(h: number): number;
