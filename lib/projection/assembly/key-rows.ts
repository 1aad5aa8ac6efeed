// AssemblyScript, compiled to ../key-rows.wasm by `npm run build:wasm` (the .wasm is committed;
// tests/unit/projection/key-rows-wasm.test.ts checks that it matches this source and that its keys
// equal knn-kernel.mjs keyRowsAt's bit for bit).
//
// The squared distances ‖x_q‖² + ‖x_l‖² − 2 x_q·x_l from up to four query rows to every row, the
// inner loop of the exact fidelity scores (rank-kernel.mjs). Why WebAssembly: V8 has no SIMD for
// JavaScript; here two rows' dot products share each 128-bit multiply and add (f64x2, one row per
// lane), so every lane still sums its own products in the order t = 0 … d − 1 with separate
// multiplies and adds, exactly as the JavaScript kernel does: the keys are the same bits.
//
// Memory: imported, laid out by the caller (key-rows-kernel.mjs); every pointer is a byte offset.
//   paired: the rows two by two, coordinate-interleaved: row l's coordinate t at
//           ((l >> 1) · 2d + 2t + (l & 1)) · 8, with a zero row after an odd last row;
//   norms:  the squared norms, padded likewise to an even count;
//   ids:    the query rows' indices (Int32);
//   out:    count × n keys, row r for query ids[r].

@inline
function coordinate(paired: usize, d: i32, row: i32, t: i32): f64 {
  return load<f64>(paired + ((<usize>(row >> 1) * <usize>(2 * d) + <usize>(2 * t) + <usize>(row & 1)) << 3));
}

@inline
function clampedKey(queryNorm: f64, norms: v128, dot: v128): v128 {
  const key = f64x2.sub(f64x2.add(f64x2.splat(queryNorm), norms), f64x2.mul(f64x2.splat(2), dot));
  const zero = f64x2.splat(0);
  return v128.bitselect(key, zero, f64x2.gt(key, zero));
}

@inline
function storeKeys(out: usize, n: i32, r: i32, p: i32, keys: v128): void {
  const at = out + ((<usize>r * <usize>n + <usize>(2 * p)) << 3);
  if (2 * p + 1 < n) v128.store(at, keys);
  else store<f64>(at, f64x2.extract_lane(keys, 0));
}

/** Keys from the `count` (1–4) query rows ids[0 … count − 1] to all n rows, into out. */
export function keyRows(paired: usize, norms: usize, n: i32, d: i32, ids: usize, count: i32, out: usize): void {
  // Fewer than four queries: the missing ones repeat the last (computed, not stored).
  const q0 = load<i32>(ids);
  const q1 = count > 1 ? load<i32>(ids, 4) : q0;
  const q2 = count > 2 ? load<i32>(ids, 8) : q1;
  const q3 = count > 3 ? load<i32>(ids, 12) : q2;
  const n0 = load<f64>(norms + (<usize>q0 << 3));
  const n1 = load<f64>(norms + (<usize>q1 << 3));
  const n2 = load<f64>(norms + (<usize>q2 << 3));
  const n3 = load<f64>(norms + (<usize>q3 << 3));
  const pairs = (n + 1) >> 1;
  const pairBytes = <usize>(2 * d) << 3;
  for (let p = 0; p < pairs; p++) {
    const base = paired + <usize>p * pairBytes;
    let a0 = f64x2.splat(0);
    let a1 = f64x2.splat(0);
    let a2 = f64x2.splat(0);
    let a3 = f64x2.splat(0);
    for (let t = 0; t < d; t++) {
      const v = v128.load(base + (<usize>t << 4));
      a0 = f64x2.add(a0, f64x2.mul(f64x2.splat(coordinate(paired, d, q0, t)), v));
      a1 = f64x2.add(a1, f64x2.mul(f64x2.splat(coordinate(paired, d, q1, t)), v));
      a2 = f64x2.add(a2, f64x2.mul(f64x2.splat(coordinate(paired, d, q2, t)), v));
      a3 = f64x2.add(a3, f64x2.mul(f64x2.splat(coordinate(paired, d, q3, t)), v));
    }
    const m = v128.load(norms + (<usize>p << 4));
    storeKeys(out, n, 0, p, clampedKey(n0, m, a0));
    if (count > 1) storeKeys(out, n, 1, p, clampedKey(n1, m, a1));
    if (count > 2) storeKeys(out, n, 2, p, clampedKey(n2, m, a2));
    if (count > 3) storeKeys(out, n, 3, p, clampedKey(n3, m, a3));
  }
}
