/**
 * Small dense-matrix helpers for lib/align. Matrices are row-major typed arrays with an explicit
 * shape (n rows × k columns): element (i, j) sits at index i·k + j. Nothing here allocates
 * number[][], because factor sets reach 1,000,000 × 64 and draws 200 × 5,000 × K.
 */
import { Matrix, SingularValueDecomposition } from 'ml-matrix';

/** A row-major real matrix; Float32Array is what factor sets are stored as, Float64Array what we compute in. */
export type RealMatrix = Float64Array | Float32Array;

/** Throws unless n and k are positive integers and the array holds exactly `count`·n·k values. */
export function checkShape(name: string, values: RealMatrix, n: number, k: number, count = 1): void {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`${name}: the number of rows must be a positive integer, got ${n}`);
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`${name}: the number of dimensions must be a positive integer, got ${k}`);
  if (!Number.isInteger(count) || count < 1) throw new RangeError(`${name}: the number of draws must be a positive integer, got ${count}`);
  const expected = count * n * k;
  if (values.length !== expected) {
    const shape = count === 1 ? `${n} × ${k}` : `${count} × ${n} × ${k}`;
    throw new RangeError(`${name}: expected ${expected} values for a ${shape} matrix, got ${values.length}`);
  }
}

/**
 * Throws at the first NaN or ±Infinity, naming its index ([i, j] or [d, i, j]) so that an import can
 * point at the offending place; an SVD would otherwise turn one bad value into a matrix of NaN.
 */
export function checkFinite(name: string, values: RealMatrix, n: number, k: number, count = 1): void {
  for (let index = 0; index < values.length; index++) {
    const value = values[index] as number;
    if (!Number.isFinite(value)) {
      const j = index % k;
      const i = Math.floor(index / k) % n;
      const d = Math.floor(index / (n * k));
      const place = count === 1 ? `[${i}, ${j}]` : `[${d}, ${i}, ${j}]`;
      throw new RangeError(`${name}: value at index ${place} is not finite (${value})`);
    }
  }
}

/** Column means of an n × k block that starts at `offset` (draws are stored one block per draw). */
export function columnMeans(values: RealMatrix, n: number, k: number, offset = 0): Float64Array {
  const means = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    const row = offset + i * k;
    for (let j = 0; j < k; j++) means[j] = (means[j] as number) + (values[row + j] as number);
  }
  for (let j = 0; j < k; j++) means[j] = (means[j] as number) / n;
  return means;
}

/** A float64 copy of the n × k block at `offset` with `shift` (length k) subtracted from every row. */
export function shiftedCopy(values: RealMatrix, n: number, k: number, shift: Float64Array | null, offset = 0): Float64Array {
  const out = new Float64Array(n * k);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) {
      const value = values[offset + i * k + j] as number;
      out[i * k + j] = shift === null ? value : value - (shift[j] as number);
    }
  }
  return out;
}

/** Sum of squares of all entries (the squared Frobenius norm), accumulated in float64. */
export function sumOfSquares(values: RealMatrix): number {
  let total = 0;
  for (let index = 0; index < values.length; index++) {
    const value = values[index] as number;
    total += value * value;
  }
  return total;
}

/**
 * Adds Aᵀ B into `into` (k × k, row-major), for A the n × k block of `a` at `aOffset` and B the
 * n × k block of `b` at `bOffset`. Cost O(n·k²). Accumulating lets the joint alignment sum the
 * cross-products of row and column factors without stacking them in memory.
 */
export function addCrossProduct(
  into: Float64Array,
  a: RealMatrix,
  b: RealMatrix,
  n: number,
  k: number,
  aOffset = 0,
  bOffset = 0,
): void {
  for (let i = 0; i < n; i++) {
    const aRow = aOffset + i * k;
    const bRow = bOffset + i * k;
    for (let p = 0; p < k; p++) {
      const x = a[aRow + p] as number;
      if (x === 0) continue;
      const target = p * k;
      for (let q = 0; q < k; q++) into[target + q] = (into[target + q] as number) + x * (b[bRow + q] as number);
    }
  }
}

/**
 * Adds (A − 1·aShiftᵀ)ᵀ (B − 1·bShiftᵀ) / (aDivisor·bDivisor) into `into` (k × k), for n × k
 * matrices A and B: the cross-product of centred, rescaled copies without making the copies (a
 * factor set may be 1,000,000 × 64, i.e. 512 MB in float64). A null shift means no centring.
 * Divisors should be powers of two, so that dividing is exact. Cost O(n·k²).
 */
export function addCentredCrossProduct(
  into: Float64Array,
  a: RealMatrix,
  b: RealMatrix,
  n: number,
  k: number,
  aShift: Float64Array | null,
  bShift: Float64Array | null,
  aDivisor = 1,
  bDivisor = 1,
): void {
  const aRow = new Float64Array(k);
  const bRow = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) {
      aRow[j] = ((a[i * k + j] as number) - (aShift === null ? 0 : (aShift[j] as number))) / aDivisor;
      bRow[j] = ((b[i * k + j] as number) - (bShift === null ? 0 : (bShift[j] as number))) / bDivisor;
    }
    for (let p = 0; p < k; p++) {
      const x = aRow[p] as number;
      if (x === 0) continue;
      for (let q = 0; q < k; q++) into[p * k + q] = (into[p * k + q] as number) + x * (bRow[q] as number);
    }
  }
}

/**
 * Writes A R into `out` (n × k at `outOffset`), for A the n × k block of `a` at `aOffset` and R a
 * k × k matrix at `rOffset` of `r`. Cost O(n·k²). Accumulates each row in float64 before storing,
 * so a Float32Array `out` loses precision only once; each row is read in full before it is
 * written, so `out` may be `a` itself (in place).
 */
export function multiplyInto(
  out: RealMatrix,
  a: RealMatrix,
  r: Float64Array,
  n: number,
  k: number,
  aOffset = 0,
  rOffset = 0,
  outOffset = 0,
): void {
  const row = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    row.fill(0);
    const aRow = aOffset + i * k;
    for (let p = 0; p < k; p++) {
      const x = a[aRow + p] as number;
      if (x === 0) continue;
      const rRow = rOffset + p * k;
      for (let q = 0; q < k; q++) row[q] = (row[q] as number) + x * (r[rRow + q] as number);
    }
    out.set(row, outOffset + i * k);
  }
}

/**
 * The power of two nearest above max |x| (1 for an all-zero array), so that dividing by it is exact
 * and brings the largest magnitude into [0.5, 1): products of such values neither overflow nor
 * underflow for data of any scale, and the result is bit-for-bit a rescaling.
 */
export function powerOfTwoScale(values: ArrayLike<number>, offset = 0, length = values.length - offset): number {
  let largest = 0;
  for (let index = offset; index < offset + length; index++) largest = Math.max(largest, Math.abs(values[index] as number));
  if (largest === 0 || !Number.isFinite(largest)) return 1;
  // Clamped to the normal range so the factor is finite and nonzero (2^1024 overflows).
  const exponent = Math.min(1023, Math.max(-1022, Math.floor(Math.log2(largest)) + 1));
  return 2 ** exponent;
}

/**
 * The orthogonal factor of the polar decomposition of a k × k matrix M = U S Vᵀ, i.e. U Vᵀ, and
 * the sum of the singular values. This is the solution of the orthogonal Procrustes problem for
 * M = Aᵀ B (Schönemann 1966). Reflections are allowed: no determinant correction is applied.
 * The SVD is ml-matrix's (a port of JAMA's Golub–Kahan–Reinsch algorithm), fine for K up to a
 * few hundred. M is first divided by a power of two bringing its largest entry near 1, because
 * that SVD loses orthogonality on subnormal or huge entries (found by the property tests); U Vᵀ
 * does not depend on a positive scale, and the singular values are multiplied back exactly.
 * Entries below 2⁻⁵⁰⁰ of the largest are then set to 0: subnormal entries keep only a few
 * significant bits, which breaks the Householder steps of that SVD (a column of them normalises
 * to a vector far from unit length), while changing M by 2⁻⁵⁰⁰ relative moves U Vᵀ only where
 * it is undetermined anyway.
 * An all-zero M (nothing to fit) gives the identity and scale 0, as SciPy's LAPACK SVD does.
 */
const NEGLIGIBLE = 2 ** -500;

export function polarOrthogonal(m: Float64Array, k: number): { rotation: Float64Array; scale: number } {
  const factor = powerOfTwoScale(m);
  const matrix = new Matrix(k, k);
  let zero = true;
  for (let p = 0; p < k; p++) {
    for (let q = 0; q < k; q++) {
      const scaled = (m[p * k + q] as number) / factor;
      const value = Math.abs(scaled) < NEGLIGIBLE ? 0 : scaled;
      if (value !== 0) zero = false;
      matrix.set(p, q, value);
    }
  }
  const rotation = new Float64Array(k * k);
  if (zero) {
    for (let p = 0; p < k; p++) rotation[p * k + p] = 1;
    return { rotation, scale: 0 };
  }
  const svd = new SingularValueDecomposition(matrix, { computeLeftSingularVectors: true, computeRightSingularVectors: true });
  const u = svd.leftSingularVectors;
  const v = svd.rightSingularVectors;
  for (let p = 0; p < k; p++) {
    for (let q = 0; q < k; q++) {
      let total = 0;
      for (let s = 0; s < k; s++) total += u.get(p, s) * v.get(q, s);
      rotation[p * k + q] = total;
    }
  }
  let scale = 0;
  for (const value of svd.diagonal) scale += value;
  return { rotation, scale: scale * factor };
}

/**
 * Adds (A R − 1·shiftᵀ) into `into` (n × k, float64), for A the n × k block of `a` at `aOffset`
 * and R the k × k matrix of `r` at `rOffset`; `shift` (length k) is subtracted from every row, or
 * nothing when null. Cost O(n·k²). Used to sum rotated draws into the running mean.
 */
export function addProductInto(
  into: Float64Array,
  a: RealMatrix,
  r: Float64Array,
  n: number,
  k: number,
  aOffset: number,
  rOffset: number,
  shift: Float64Array | null,
): void {
  for (let i = 0; i < n; i++) {
    const aRow = aOffset + i * k;
    const outRow = i * k;
    if (shift !== null) for (let q = 0; q < k; q++) into[outRow + q] = (into[outRow + q] as number) - (shift[q] as number);
    for (let p = 0; p < k; p++) {
      const x = a[aRow + p] as number;
      if (x === 0) continue;
      const rRow = rOffset + p * k;
      for (let q = 0; q < k; q++) into[outRow + q] = (into[outRow + q] as number) + x * (r[rRow + q] as number);
    }
  }
}
