/**
 * Cross-validation folds by observation (row of the long table), seeded. For a Bernoulli outcome
 * the folds are stratified: the 0s and the 1s are shuffled and dealt out separately, so every fold
 * holds nearly the same share of positives (which matters with rare outcomes, where an unlucky
 * fold could hold none and have no AUC).
 */
import type { UniformGenerator } from '@/lib/align/random';

/** Fisher–Yates shuffle in place. */
function shuffle(values: Int32Array, uniform: UniformGenerator): void {
  for (let i = values.length - 1; i > 0; i--) {
    const j = Math.floor(uniform() * (i + 1));
    const v = values[i] as number;
    values[i] = values[j] as number;
    values[j] = v;
  }
}

/** The fold (0 … folds − 1) of every observation. */
export function assignFolds(y: Float64Array, folds: number, stratified: boolean, uniform: UniformGenerator): Int32Array {
  const n = y.length;
  const fold = new Int32Array(n);
  const groups: Int32Array[] = [];
  if (stratified) {
    let positives = 0;
    for (let t = 0; t < n; t++) if (y[t] === 1) positives++;
    const ones = new Int32Array(positives);
    const zeros = new Int32Array(n - positives);
    let o = 0;
    let z = 0;
    for (let t = 0; t < n; t++) {
      if (y[t] === 1) ones[o++] = t;
      else zeros[z++] = t;
    }
    groups.push(ones, zeros);
  } else {
    const all = new Int32Array(n);
    for (let t = 0; t < n; t++) all[t] = t;
    groups.push(all);
  }
  // Deal each shuffled group round-robin, continuing where the previous group stopped so that
  // fold sizes differ by at most one overall.
  let next = 0;
  for (const group of groups) {
    shuffle(group, uniform);
    for (let s = 0; s < group.length; s++) {
      fold[group[s] as number] = next;
      next = (next + 1) % folds;
    }
  }
  return fold;
}

/** Indexes of the observations in and out of fold `f`. */
export function splitFold(fold: Int32Array, f: number): { train: Int32Array; test: Int32Array } {
  let testCount = 0;
  for (let t = 0; t < fold.length; t++) if (fold[t] === f) testCount++;
  const train = new Int32Array(fold.length - testCount);
  const test = new Int32Array(testCount);
  let a = 0;
  let b = 0;
  for (let t = 0; t < fold.length; t++) {
    if (fold[t] === f) test[b++] = t;
    else train[a++] = t;
  }
  return { train, test };
}
