// @ts-check
/**
 * Seeded randomness shared by the main thread and the worker-thread kernels (plain JavaScript
 * for the reason given in knn-kernel.mjs; types in hash-kernel.d.mts): the one generator of the
 * project (lib/align/random.ts re-exports it) and a hash for keyed random streams that any thread
 * can compute for any item, so that results do not depend on how the work is split.
 */

/**
 * mulberry32 (Tommy Ettinger's 32-bit generator, public domain): fast, 2³² period, good enough
 * for simulation and test data; not for cryptography.
 * @param {number} seed any number; its low 32 bits are used
 * @returns {() => number} uniform numbers in [0, 1)
 */
export function mulberry32(seed) {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * The 32-bit finaliser of MurmurHash3: a bijection on 32-bit integers that spreads every input bit
 * over the output, so nearby keys give unrelated values.
 * @param {number} h
 * @returns {number} a signed 32-bit integer
 */
export function fmix32(h) {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h | 0;
}
