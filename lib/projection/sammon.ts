/**
 * Sammon mapping (J. W. Sammon, "A nonlinear mapping for data structure analysis", IEEE Trans.
 * Computers C-18(5), 401–409, 1969): a 2-D layout y that minimises
 *
 *   E = (1 / Σ_{i<j} d*_ij) · Σ_{i<j} (d*_ij − d_ij)² / d*_ij,
 *
 * where d*_ij are the Euclidean distances between the rows of the factor set and d_ij those between
 * the layout's points. The 1/d* weight makes small distances count more than large ones: Sammon
 * keeps local structure better than PCA and global structure better than t-SNE or UMAP.
 *
 * Optimiser: the diagonal Newton-like update of the paper as MASS::sammon implements it (Venables &
 * Ripley, MASS, file MASS.c, function VR_sammon; R's r-cran-mass is our reference in
 * tests/unit/projection/sammon-reference.test.ts). Every point moves at once,
 *
 *   y_pm ← y_pm + magic · (∂E/∂y_pm) / |∂²E/∂y_pm²|      (signs as in VR_sammon, up to the factor −2/c),
 *
 * and the step factor `magic` starts at `initialStep` (MASS: 0.2), grows ×1.5 after an accepted
 * step (capped at 0.5) and shrinks ×0.2 when a step would raise the stress, which is then retried
 * from the same layout; when magic falls to 1e-3 or below no improving step was found and the run
 * stops. (The step shrinks by a factor 5, not 2, on a rejected step: MASS's rule, kept so that our
 * iterations follow MASS's.) After each accepted step the layout's centroid is moved to the origin.
 * Every 10 iterations the run stops when the stress fell by less than `tolerance` since the check
 * 10 iterations before (MASS's rule; stress is a dimensionless share in [0, 1], so this absolute
 * threshold is also a share of the total weighted distance).
 *
 * Where we differ from MASS, and why:
 *   - Zero input distances (duplicate rows). MASS refuses them ("zero or negative distance between
 *     objects"); the 1/d* weight is infinite there. We leave such pairs out of the stress, its
 *     normaliser and the derivatives — the way MASS itself treats missing (NaN) distances — and
 *     give duplicates one start position (the first occurrence's), so they receive identical
 *     updates and stay exactly on top of each other. Stress is then the stress of the distinct
 *     pairs, each duplicate counted with its multiplicity.
 *   - Coincident layout points (d_ij = 0 for distinct rows, possible in a given start): their
 *     direction is undefined and MASS divides by zero; we leave the pair out of that pass's
 *     derivatives (it still counts in the stress, which pushes them apart on the next pass).
 *   - Near-zero curvature. The step divides by |∂²E/∂y²|, which can pass through zero when the
 *     positive and negative parts of the curvature cancel, sending one point arbitrarily far. On
 *     the digits data MASS stops after 2 iterations at stress 0.2947 (no retry down to magic 1e-3
 *     lowers the stress); with the floor below, the same update from the same start reaches 0.1168. We
 *     bound the divisor below by `curvatureFloor` times the Gauss–Newton curvature
 *     Σ_j (y_pm − y_jm)² / (d*_ij · d_ij²) of the same point — the always-positive part of the
 *     curvature — so a step is never longer than 1/curvatureFloor Gauss–Newton steps. Set it to 0
 *     to reproduce MASS exactly.
 *   - One pass over the pairs per trial instead of two: the pass that computes the stress of a
 *     trial layout also computes the derivatives at it, which are the ones the next step needs if
 *     the trial is accepted (MASS recomputes them). Each pair is visited once (i < j) and updates
 *     both points, halving the work of VR_sammon's full n × n loop.
 *
 * Memory: the n(n − 1)/2 input distances as float64 (n = 5,000: 100 MB), which is why n is capped
 * at SAMMON_MAX_POINTS; plus O(n) work arrays. Time: O(n²·d) for the distances once, then
 * O(n²) per trial pass (n = 1,797: about 1.6 million pairs).
 */
import { fitPca, transformPca } from './pca';

/** A row-major real matrix: Float32Array is what factor sets are stored in, Float64Array what we compute in. */
export type SammonInput = Float32Array | Float64Array;

/**
 * Largest number of points accepted. The condensed distance matrix takes 4·n(n − 1) bytes
 * (5,000 points: 100 MB; 20,000 would take 1.6 GB) and each pass O(n²) time; beyond this use UMAP,
 * or run Sammon on a sample of the points.
 */
export const SAMMON_MAX_POINTS = 5000;

/** Why a run stopped. */
export type SammonStopReason =
  /** The stress fell by less than `tolerance` over the last 10 iterations. */
  | 'tolerance'
  /** No step, down to magic = 1e-3, lowered the stress: a local minimum at the step's resolution, or a stall. */
  | 'step-size'
  /** `maxIterations` accepted steps were taken. */
  | 'max-iterations'
  /** Nothing to optimise: fewer than 2 distinct points, so the stress is 0 from the start. */
  | 'trivial';

export interface SammonOptions {
  /**
   * Start layout, n × 2 row-major. Default: the first two PCA scores of the data (unstandardised),
   * which is what MASS's default start cmdscale() gives for Euclidean distances, up to a
   * reflection. Sammon's stress has many local minima; a PCA start is deterministic and already
   * keeps the global spread, so the optimiser only has to repair local distances.
   */
  initial?: SammonInput;
  /**
   * Most accepted steps; integer ≥ 0, default 100 (MASS's niter). Each costs one O(n²) pass, plus
   * one per rejected trial. More iterations lower the stress further on data that keeps
   * improving (digits does for hundreds), at linear cost in time; 0 returns the start with its stress.
   */
  maxIterations?: number;
  /**
   * Stop when the stress fell by less than this over the last 10 accepted steps; ≥ 0, default
   * 1e-4 (MASS's tol). The stress is a share in [0, 1], so 1e-4 is a hundredth of a percent of the
   * total weighted distance. Smaller runs longer for ever smaller gains; 0 runs to maxIterations
   * (or until no step improves).
   */
  tolerance?: number;
  /**
   * First step factor `magic`; in (0, 0.5], default 0.2 (MASS's magic; Sammon suggested 0.3–0.4).
   * It adapts (×1.5 up to 0.5 after a success, ×0.2 after a failure), so the start value mostly
   * matters for the first few iterations: larger moves faster from a poor start, smaller wastes
   * fewer rejected trials from a good one.
   */
  initialStep?: number;
  /**
   * Lower bound on the Newton divisor |∂²E/∂y²|, as a multiple of the point's Gauss–Newton
   * curvature (see the module comment); in [0, 1], default 0.1. 0 is MASS's exact update, which
   * can stall on larger data (digits: 2 iterations). Larger values make steps more cautious
   * (1 never steps further than Gauss–Newton would) and cost more iterations on easy data;
   * 0.1 only acts where the curvature nearly vanishes.
   */
  curvatureFloor?: number;
  /** Called after every accepted step with its number (1-based) and the stress reached. */
  onProgress?: (iteration: number, stress: number) => void;
  /** Checked before every pass over the pairs; when aborted the run throws the signal's reason. */
  signal?: AbortSignal;
}

export const SAMMON_DEFAULTS = {
  maxIterations: 100,
  tolerance: 1e-4,
  initialStep: 0.2,
  curvatureFloor: 0.1,
} as const;

export interface SammonResult {
  /** n × 2 row-major layout, centred at the origin (the start, uncentred, when no step was accepted). */
  layout: Float32Array;
  /** Sammon's stress of `layout`, in [0, 1]: 0 is a perfect map. */
  stress: number;
  /** Stress of the start layout. */
  initialStress: number;
  /** Number of accepted steps. */
  iterations: number;
  /** Passes over the pairs (one for the start, one per trial step, accepted or rejected): the unit of cost. */
  evaluations: number;
  /** True when the run stopped on `tolerance` (or had nothing to optimise), not on a limit or a stall. */
  converged: boolean;
  stopReason: SammonStopReason;
}

/** Smallest step factor tried before giving up (MASS: 1e-3). */
const MIN_MAGIC = 1e-3;
/** Largest step factor (MASS: 0.5). */
const MAX_MAGIC = 0.5;

/**
 * Sammon mapping of the n × d rows of `data` (Euclidean distances).
 *
 * @param data - n·d finite values, row-major.
 * @param n - number of points, integer in [1, SAMMON_MAX_POINTS].
 * @param d - number of columns, integer ≥ 1.
 * @throws RangeError for a bad shape, a non-finite value, n > SAMMON_MAX_POINTS or a bad option;
 *   the signal's reason when aborted.
 */
export function sammon(data: SammonInput, n: number, d: number, options: SammonOptions = {}): SammonResult {
  const run = prepare(data, n, d, options);
  const steps = optimise(run.distances, n, run.start, run.settings);
  for (;;) {
    options.signal?.throwIfAborted();
    const next = steps.next();
    if (next.done) return next.value;
  }
}

/**
 * As `sammon`, but yields to the event loop before every pass over the pairs, so that an abort
 * raised by a timer, a message or a database notification (not only from onProgress) is seen
 * within one pass. Costs a few microseconds per pass.
 */
export async function sammonAsync(data: SammonInput, n: number, d: number, options: SammonOptions = {}): Promise<SammonResult> {
  const run = prepare(data, n, d, options);
  const steps = optimise(run.distances, n, run.start, run.settings);
  for (;;) {
    await new Promise<void>((resolve) => setImmediate(resolve));
    options.signal?.throwIfAborted();
    const next = steps.next();
    if (next.done) return next.value;
  }
}

/**
 * The n(n − 1)/2 Euclidean distances between the rows of `data`, condensed upper triangle
 * row by row (pair i < j at i·n − i(i+1)/2 + j − i − 1, scipy's pdist order), in float64.
 */
export function condensedDistances(data: SammonInput, n: number, d: number): Float64Array {
  checkMatrix('condensedDistances', data, n, d);
  checkSize(n);
  // One float64 copy (n·d, small next to the distances) so the inner loop reads one array type.
  const x = Float64Array.from(data);
  const out = new Float64Array((n * (n - 1)) / 2);
  let index = 0;
  for (let i = 0; i < n; i++) {
    const a = i * d;
    for (let j = i + 1; j < n; j++) {
      const b = j * d;
      // Four partial sums: independent chains the CPU can overlap (d is 64 for digits).
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      let m = 0;
      for (; m + 3 < d; m += 4) {
        const u0 = (x[a + m] as number) - (x[b + m] as number);
        const u1 = (x[a + m + 1] as number) - (x[b + m + 1] as number);
        const u2 = (x[a + m + 2] as number) - (x[b + m + 2] as number);
        const u3 = (x[a + m + 3] as number) - (x[b + m + 3] as number);
        s0 += u0 * u0;
        s1 += u1 * u1;
        s2 += u2 * u2;
        s3 += u3 * u3;
      }
      for (; m < d; m++) {
        const u = (x[a + m] as number) - (x[b + m] as number);
        s0 += u * u;
      }
      out[index++] = Math.sqrt(s0 + s1 + (s2 + s3));
    }
  }
  return out;
}

/**
 * Sammon's stress of an n × 2 layout against condensed input distances, with zero-distance pairs
 * left out (as in the optimiser); 0 when every input distance is 0.
 */
export function sammonStress(distances: Float64Array, layout: SammonInput, n: number): number {
  if (distances.length !== (n * (n - 1)) / 2) throw new RangeError(`sammonStress: expected ${(n * (n - 1)) / 2} distances for ${n} points, got ${distances.length}`);
  checkMatrix('sammonStress', layout, n, 2);
  let total = 0;
  let weighted = 0;
  let index = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const target = distances[index++] as number;
      if (target === 0) continue;
      const dx = (layout[2 * i] as number) - (layout[2 * j] as number);
      const dy = (layout[2 * i + 1] as number) - (layout[2 * j + 1] as number);
      const residual = target - Math.sqrt(dx * dx + dy * dy);
      total += target;
      weighted += (residual * residual) / target;
    }
  }
  return total > 0 ? weighted / total : 0;
}

interface Settings {
  maxIterations: number;
  tolerance: number;
  initialStep: number;
  curvatureFloor: number;
  onProgress: ((iteration: number, stress: number) => void) | undefined;
}

function prepare(data: SammonInput, n: number, d: number, options: SammonOptions) {
  checkMatrix('sammon', data, n, d);
  checkSize(n);
  const settings: Settings = {
    maxIterations: options.maxIterations ?? SAMMON_DEFAULTS.maxIterations,
    tolerance: options.tolerance ?? SAMMON_DEFAULTS.tolerance,
    initialStep: options.initialStep ?? SAMMON_DEFAULTS.initialStep,
    curvatureFloor: options.curvatureFloor ?? SAMMON_DEFAULTS.curvatureFloor,
    onProgress: options.onProgress,
  };
  if (!Number.isInteger(settings.maxIterations) || settings.maxIterations < 0) throw new RangeError(`sammon: maxIterations must be an integer ≥ 0, got ${settings.maxIterations}`);
  if (!(settings.tolerance >= 0) || !Number.isFinite(settings.tolerance)) throw new RangeError(`sammon: tolerance must be a finite number ≥ 0, got ${settings.tolerance}`);
  if (!(settings.initialStep > 0 && settings.initialStep <= MAX_MAGIC)) throw new RangeError(`sammon: initialStep must lie in (0, ${MAX_MAGIC}], got ${settings.initialStep}`);
  if (!(settings.curvatureFloor >= 0 && settings.curvatureFloor <= 1)) throw new RangeError(`sammon: curvatureFloor must lie in [0, 1], got ${settings.curvatureFloor}`);
  options.signal?.throwIfAborted();

  let start: Float64Array;
  if (options.initial !== undefined) {
    checkMatrix('sammon: initial layout', options.initial, n, 2);
    start = Float64Array.from(options.initial);
  } else {
    start = pcaStart(data, n, d);
  }
  const distances = condensedDistances(data, n, d);
  snapDuplicates(distances, n, start);
  return { distances, start, settings };
}

/** First two PCA scores; a second coordinate of 0 when the data has one column or one row. */
function pcaStart(data: SammonInput, n: number, d: number): Float64Array {
  const start = new Float64Array(2 * n);
  if (n < 2) return start;
  const components = Math.min(2, d, n);
  const scores = transformPca(fitPca(data, n, d, { components }), data, n);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < components; c++) start[2 * i + c] = scores[i * components + c] as number;
  }
  return start;
}

/**
 * Gives every duplicate row (zero distance to an earlier row) the start position of its first
 * occurrence, so that duplicates, which get identical updates, stay together.
 */
function snapDuplicates(distances: Float64Array, n: number, start: Float64Array): void {
  const snapped = new Uint8Array(n);
  let index = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      // Row i is itself the first occurrence unless it was snapped earlier; then its own first
      // occurrence already gave j the same position (distance 0 is transitive).
      if (distances[index++] === 0 && snapped[i] === 0 && snapped[j] === 0) {
        start[2 * j] = start[2 * i] as number;
        start[2 * j + 1] = start[2 * i + 1] as number;
        snapped[j] = 1;
      }
    }
  }
}

/**
 * The optimiser as a generator that yields before every pass over the pairs, so that the sync and
 * async drivers can check the abort signal (and the async one yield to the event loop) between
 * passes without duplicating the algorithm.
 */
function* optimise(distances: Float64Array, n: number, start: Float64Array, settings: Settings): Generator<void, SammonResult, void> {
  let layout: Float64Array = start;
  let trial: Float64Array = new Float64Array(2 * n);
  // Derivative sums at `layout` (current) and at `trial` (candidate).
  let current: Float64Array = new Float64Array(SUMS * n);
  let candidate: Float64Array = new Float64Array(SUMS * n);

  let total = 0;
  for (let index = 0; index < distances.length; index++) total += distances[index] as number;
  if (total === 0) {
    return { layout: Float32Array.from(layout), stress: 0, initialStress: 0, iterations: 0, evaluations: 0, converged: true, stopReason: 'trivial' };
  }

  yield;
  const initialStress = evaluate(distances, n, layout, current) / total;
  let evaluations = 1;
  let stress = initialStress;
  let stressTenAgo = initialStress;
  let magic = settings.initialStep;
  let iterations = 0;
  let stopReason: SammonStopReason = 'max-iterations';

  while (iterations < settings.maxIterations) {
    let accepted = false;
    let trialStress = stress;
    while (magic > MIN_MAGIC) {
      step(layout, trial, current, magic, settings.curvatureFloor, n);
      yield;
      trialStress = evaluate(distances, n, trial, candidate) / total;
      evaluations++;
      // `<=` as MASS (it rejects only e > eprev): an equal stress is accepted and magic grows.
      if (trialStress <= stress) {
        accepted = true;
        break;
      }
      magic *= 0.2;
    }
    if (!accepted) {
      stopReason = 'step-size';
      break;
    }
    magic = Math.min(magic * 1.5, MAX_MAGIC);
    stress = trialStress;
    iterations++;
    centre(trial, n);
    [layout, trial] = [trial, layout];
    [current, candidate] = [candidate, current];
    settings.onProgress?.(iterations, stress);
    if (iterations % 10 === 0) {
      if (stress > stressTenAgo - settings.tolerance) {
        stopReason = 'tolerance';
        break;
      }
      stressTenAgo = stress;
    }
  }
  return {
    layout: Float32Array.from(layout),
    stress,
    initialStress,
    iterations,
    evaluations,
    converged: stopReason === 'tolerance',
    stopReason,
  };
}

/**
 * Per-point sums for the update, six float64 per point so that one pair touches one cache line
 * of its partner: [e1x, e1y, e2x, e2y, gnx, gny] — VR_sammon's first (e1) and second (e2)
 * derivative sums and the Gauss–Newton curvature (gn), per coordinate.
 */
const SUMS = 6;

/**
 * One pass over the pairs: returns Σ (d* − d)²/d* (unnormalised stress) of `layout` and fills
 * `sums` with, per point i and coordinate m (δ = y_im − y_jm, r = d* − d):
 *   e1 = Σ_j δ r / (d* d),   e2 = Σ_j (r − δ² (1 + r/d) / d) / (d* d),   gn = Σ_j δ² / (d* d²).
 */
function evaluate(distances: Float64Array, n: number, layout: Float64Array, sums: Float64Array): number {
  sums.fill(0);
  let weighted = 0;
  let index = 0;
  for (let i = 0; i < n; i++) {
    const xi = layout[2 * i] as number;
    const yi = layout[2 * i + 1] as number;
    // Point i's sums stay in registers while j runs; point j's are updated in the array.
    let e1x = 0;
    let e1y = 0;
    let e2x = 0;
    let e2y = 0;
    let gnx = 0;
    let gny = 0;
    for (let j = i + 1; j < n; j++) {
      const target = distances[index++] as number;
      if (target === 0) continue;
      const dx = xi - (layout[2 * j] as number);
      const dy = yi - (layout[2 * j + 1] as number);
      const dx2 = dx * dx;
      const dy2 = dy * dy;
      const mapped = Math.sqrt(dx2 + dy2);
      const residual = target - mapped;
      if (mapped === 0) {
        // (d* − 0)² / d* = d*; no derivative: the direction is undefined.
        weighted += target;
        continue;
      }
      // One division per pair: 1/d* and 1/d follow from 1/(d* d).
      const inverseProduct = 1 / (target * mapped);
      const inverseMapped = target * inverseProduct;
      weighted += residual * residual * mapped * inverseProduct;
      const force = residual * inverseProduct;
      const bend = (1 + residual * inverseMapped) * inverseMapped;
      const hx = (residual - dx2 * bend) * inverseProduct;
      const hy = (residual - dy2 * bend) * inverseProduct;
      const gauss = inverseProduct * inverseMapped;
      const fx = dx * force;
      const fy = dy * force;
      const cx = dx2 * gauss;
      const cy = dy2 * gauss;
      e1x += fx;
      e1y += fy;
      e2x += hx;
      e2y += hy;
      gnx += cx;
      gny += cy;
      const base = SUMS * j;
      sums[base] = (sums[base] as number) - fx;
      sums[base + 1] = (sums[base + 1] as number) - fy;
      sums[base + 2] = (sums[base + 2] as number) + hx;
      sums[base + 3] = (sums[base + 3] as number) + hy;
      sums[base + 4] = (sums[base + 4] as number) + cx;
      sums[base + 5] = (sums[base + 5] as number) + cy;
    }
    const base = SUMS * i;
    sums[base] = (sums[base] as number) + e1x;
    sums[base + 1] = (sums[base + 1] as number) + e1y;
    sums[base + 2] = (sums[base + 2] as number) + e2x;
    sums[base + 3] = (sums[base + 3] as number) + e2y;
    sums[base + 4] = (sums[base + 4] as number) + gnx;
    sums[base + 5] = (sums[base + 5] as number) + gny;
  }
  return weighted;
}

/** trial = layout + magic · e1 / max(|e2|, floor · gn), per point and coordinate. */
function step(layout: Float64Array, trial: Float64Array, sums: Float64Array, magic: number, floor: number, n: number): void {
  for (let i = 0; i < n; i++) {
    for (let m = 0; m < 2; m++) {
      const base = SUMS * i + m;
      const first = sums[base] as number;
      const divisor = Math.max(Math.abs(sums[base + 2] as number), floor * (sums[base + 4] as number));
      const index = 2 * i + m;
      // A point with no usable pair (all its partners coincide with it or are duplicates) has
      // e1 = e2 = gn = 0 and stays where it is.
      trial[index] = divisor > 0 ? (layout[index] as number) + (magic * first) / divisor : (layout[index] as number);
    }
  }
}

function centre(layout: Float64Array, n: number): void {
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < n; i++) {
    sx += layout[2 * i] as number;
    sy += layout[2 * i + 1] as number;
  }
  sx /= n;
  sy /= n;
  for (let i = 0; i < n; i++) {
    layout[2 * i] = (layout[2 * i] as number) - sx;
    layout[2 * i + 1] = (layout[2 * i + 1] as number) - sy;
  }
}

function checkSize(n: number): void {
  if (n > SAMMON_MAX_POINTS) {
    throw new RangeError(
      `sammon: ${n} points exceed SAMMON_MAX_POINTS = ${SAMMON_MAX_POINTS} (the pairwise distances alone would take ${Math.round((4 * n * (n - 1)) / 1e6)} MB); use UMAP or a sample of the points`,
    );
  }
}

function checkMatrix(name: string, data: SammonInput, n: number, d: number): void {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`${name}: the number of rows must be a positive integer, got ${n}`);
  if (!Number.isInteger(d) || d < 1) throw new RangeError(`${name}: the number of columns must be a positive integer, got ${d}`);
  if (data.length !== n * d) throw new RangeError(`${name}: expected ${n * d} values for a ${n} × ${d} matrix, got ${data.length}`);
  for (let index = 0; index < data.length; index++) {
    const value = data[index] as number;
    if (!Number.isFinite(value)) throw new RangeError(`${name}: value at [${Math.floor(index / d)}, ${index % d}] is not finite (${value})`);
  }
}
