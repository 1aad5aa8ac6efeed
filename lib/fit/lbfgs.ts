/**
 * Limited-memory BFGS (Liu & Nocedal 1989) with a strong-Wolfe line search (Nocedal & Wright,
 * Numerical Optimization, 2nd ed., algorithms 7.4 (two-loop recursion), 3.5 and 3.6 (line search
 * and zoom)). Deterministic: no randomness, a fixed order of floating-point operations.
 *
 * Why L-BFGS: the MAP objective is smooth with up to ~10⁵–10⁶ parameters; a quasi-Newton method
 * needs far fewer passes over the data than a first-order method for tight convergence, which the
 * comparisons against reference libraries (1e-4) need, and it has no learning rate to tune.
 */

/** f(θ), writing ∇f(θ) into grad. */
export type ObjectiveFunction = (theta: Float64Array, grad: Float64Array) => number;

export interface LbfgsOptions {
  /**
   * Correction pairs kept (m). 5–20 is usual; more pairs give a better curvature model per
   * iteration for 2·m·size extra memory and work. Default 10.
   */
  memory?: number;
  /** Stop after this many iterations (default 1000). */
  maxIterations?: number;
  /**
   * Stop when the objective fell by less than ftol·max(|f|, 1) in an iteration (default 1e-10; SciPy's
   * L-BFGS-B default is 2.2e-9). Smaller is tighter and slower.
   */
  ftol?: number;
  /** Stop when the largest gradient component is below gtol (default 1e-9; the objective is a per-observation mean). */
  gtol?: number;
  /** Called after every iteration; returning false stops the run (reason "stopped"). */
  onIteration?: (iteration: number, f: number) => boolean | void | Promise<boolean | void>;
}

export type StopReason = 'ftol' | 'gtol' | 'max-iterations' | 'line-search' | 'stopped';

export interface LbfgsResult {
  theta: Float64Array;
  f: number;
  iterations: number;
  evaluations: number;
  gradientNorm: number;
  reason: StopReason;
  /** The objective after each iteration (index 0 is the start). */
  history: Float64Array;
}

function dot(a: Float64Array, b: Float64Array): number {
  let total = 0;
  for (let index = 0; index < a.length; index++) total += (a[index] as number) * (b[index] as number);
  return total;
}

function maxAbs(a: Float64Array): number {
  let worst = 0;
  for (let index = 0; index < a.length; index++) {
    const v = Math.abs(a[index] as number);
    if (v > worst) worst = v;
  }
  return worst;
}

/** Minimiser of the cubic through (a, fa, ga), (b, fb, gb), kept inside the bracket away from its ends. */
function interpolate(a: number, fa: number, ga: number, b: number, fb: number, gb: number): number {
  const lo = Math.min(a, b);
  const hi = Math.max(a, b);
  const d1 = ga + gb - 3 * ((fa - fb) / (a - b));
  const discriminant = d1 * d1 - ga * gb;
  let point = Number.NaN;
  if (discriminant >= 0 && Number.isFinite(fb)) {
    const d2 = Math.sign(b - a) * Math.sqrt(discriminant);
    point = b - (b - a) * ((gb + d2 - d1) / (gb - ga + 2 * d2));
  }
  const margin = 0.1 * (hi - lo);
  if (!Number.isFinite(point) || point < lo + margin || point > hi - margin) point = (lo + hi) / 2;
  return point;
}

export async function minimizeLbfgs(fn: ObjectiveFunction, start: Float64Array, options: LbfgsOptions = {}): Promise<LbfgsResult> {
  const m = options.memory ?? 10;
  const maxIterations = options.maxIterations ?? 1000;
  const ftol = options.ftol ?? 1e-10;
  const gtol = options.gtol ?? 1e-9;
  const size = start.length;
  let theta = Float64Array.from(start);
  let grad = new Float64Array(size);
  let f = fn(theta, grad);
  let evaluations = 1;
  if (!Number.isFinite(f)) throw new Error('The objective is not finite at the start; check the data for extreme values.');
  const history: number[] = [f];

  const sList: Float64Array[] = [];
  const yList: Float64Array[] = [];
  const rhoList: number[] = [];
  const alpha = new Float64Array(m);
  const direction = new Float64Array(size);
  let trial = new Float64Array(size);
  let trialGrad = new Float64Array(size);
  let reason: StopReason = 'max-iterations';
  let iteration = 0;

  if (maxAbs(grad) <= gtol) reason = 'gtol';
  else {
    while (iteration < maxIterations) {
      // Two-loop recursion: direction = −H∇f.
      for (let index = 0; index < size; index++) direction[index] = -(grad[index] as number);
      const pairs = sList.length;
      for (let h = pairs - 1; h >= 0; h--) {
        const s = sList[h] as Float64Array;
        const y = yList[h] as Float64Array;
        const a = (rhoList[h] as number) * dot(s, direction);
        alpha[h] = a;
        for (let index = 0; index < size; index++) direction[index] = (direction[index] as number) - a * (y[index] as number);
      }
      if (pairs > 0) {
        const s = sList[pairs - 1] as Float64Array;
        const y = yList[pairs - 1] as Float64Array;
        const gammaScale = dot(s, y) / dot(y, y);
        for (let index = 0; index < size; index++) direction[index] = (direction[index] as number) * gammaScale;
      }
      for (let h = 0; h < pairs; h++) {
        const s = sList[h] as Float64Array;
        const y = yList[h] as Float64Array;
        const b = (rhoList[h] as number) * dot(y, direction);
        const coefficient = (alpha[h] as number) - b;
        for (let index = 0; index < size; index++) direction[index] = (direction[index] as number) + coefficient * (s[index] as number);
      }
      let slope = dot(grad, direction);
      if (!(slope < 0)) {
        // Not a descent direction (curvature model broke down): restart from steepest descent.
        sList.length = 0;
        yList.length = 0;
        rhoList.length = 0;
        for (let index = 0; index < size; index++) direction[index] = -(grad[index] as number);
        slope = dot(grad, direction);
      }
      // First step: a unit step along −∇f may be far too long; scale it to length 1/‖∇f‖∞ as a guess.
      const initialStep = pairs === 0 && iteration === 0 ? Math.min(1, 1 / maxAbs(grad)) : 1;

      const search = lineSearch(fn, theta, f, slope, direction, initialStep, trial, trialGrad);
      evaluations += search.evaluations;
      if (search.step === 0) {
        if (sList.length === 0) {
          reason = 'line-search';
          break;
        }
        // Retry once from steepest descent before giving up.
        sList.length = 0;
        yList.length = 0;
        rhoList.length = 0;
        continue;
      }
      // s = θ₊ − θ, y = ∇f₊ − ∇f; recycle the oldest pair's arrays.
      const s = sList.length === m ? (sList.shift() as Float64Array) : new Float64Array(size);
      const y = yList.length === m ? (yList.shift() as Float64Array) : new Float64Array(size);
      if (rhoList.length === m) rhoList.shift();
      for (let index = 0; index < size; index++) {
        s[index] = (trial[index] as number) - (theta[index] as number);
        y[index] = (trialGrad[index] as number) - (grad[index] as number);
      }
      const sy = dot(s, y);
      const previous = f;
      [theta, trial] = [trial, theta];
      [grad, trialGrad] = [trialGrad, grad];
      f = search.f;
      iteration += 1;
      history.push(f);
      // Keep the pair only with positive curvature (always true after a strong-Wolfe step, barring rounding).
      if (sy > 1e-12 * Math.sqrt(dot(s, s) * dot(y, y))) {
        sList.push(s);
        yList.push(y);
        rhoList.push(1 / sy);
      }
      if (options.onIteration && (await options.onIteration(iteration, f)) === false) {
        reason = 'stopped';
        break;
      }
      if (maxAbs(grad) <= gtol) {
        reason = 'gtol';
        break;
      }
      if (previous - f <= ftol * Math.max(Math.abs(f), Math.abs(previous), 1)) {
        reason = 'ftol';
        break;
      }
    }
  }
  return { theta, f, iterations: iteration, evaluations, gradientNorm: Math.sqrt(dot(grad, grad)), reason, history: Float64Array.from(history) };
}

interface SearchResult {
  step: number;
  f: number;
  evaluations: number;
}

/**
 * Strong-Wolfe line search (N&W algorithms 3.5/3.6, c1 = 1e-4, c2 = 0.9 as is usual for
 * quasi-Newton methods). Leaves the accepted point and its gradient in `trial` / `trialGrad`;
 * step 0 means none was found in 30 evaluations.
 */
function lineSearch(
  fn: ObjectiveFunction,
  theta: Float64Array,
  f0: number,
  slope0: number,
  direction: Float64Array,
  initialStep: number,
  trial: Float64Array,
  trialGrad: Float64Array,
): SearchResult {
  const c1 = 1e-4;
  const c2 = 0.9;
  const size = theta.length;
  let evaluations = 0;
  const at = (step: number): { f: number; slope: number } => {
    for (let index = 0; index < size; index++) trial[index] = (theta[index] as number) + step * (direction[index] as number);
    const f = fn(trial, trialGrad);
    evaluations += 1;
    return { f, slope: Number.isFinite(f) ? dot(trialGrad, direction) : Number.NaN };
  };
  let previousStep = 0;
  let previousF = f0;
  let previousSlope = slope0;
  let step = initialStep;
  for (let attempt = 0; attempt < 30; attempt++) {
    const { f, slope } = at(step);
    if (!Number.isFinite(f)) {
      // Overflow (e.g. e^η = ∞): the step is too long, whatever the bracket says.
      step = previousStep + (step - previousStep) * 0.1;
      continue;
    }
    if (f > f0 + c1 * step * slope0 || (attempt > 0 && f >= previousF)) {
      return zoom(at, f0, slope0, previousStep, previousF, previousSlope, step, f, slope, 30 - attempt);
    }
    if (Math.abs(slope) <= -c2 * slope0) return { step, f, evaluations };
    if (slope >= 0) return zoom(at, f0, slope0, step, f, slope, previousStep, previousF, previousSlope, 30 - attempt);
    previousStep = step;
    previousF = f;
    previousSlope = slope;
    step *= 2;
  }
  return { step: 0, f: f0, evaluations };

  function zoom(
    evaluate: (step: number) => { f: number; slope: number },
    fStart: number,
    slopeStart: number,
    lo: number,
    fLo: number,
    slopeLo: number,
    hi: number,
    fHi: number,
    slopeHi: number,
    budget: number,
  ): SearchResult {
    for (let attempt = 0; attempt < budget; attempt++) {
      const step = interpolate(lo, fLo, slopeLo, hi, fHi, slopeHi);
      const { f, slope } = evaluate(step);
      if (!Number.isFinite(f) || f > fStart + c1 * step * slopeStart || f >= fLo) {
        hi = step;
        fHi = Number.isFinite(f) ? f : Number.POSITIVE_INFINITY;
        slopeHi = Number.isFinite(slope) ? slope : Number.NaN;
      } else {
        if (Math.abs(slope) <= -c2 * slopeStart) return { step, f, evaluations };
        if (slope * (hi - lo) >= 0) {
          hi = lo;
          fHi = fLo;
          slopeHi = slopeLo;
        }
        lo = step;
        fLo = f;
        slopeLo = slope;
      }
      if (Math.abs(hi - lo) < 1e-16 * Math.max(1, Math.abs(lo))) break;
    }
    // No strong-Wolfe point, but a decrease is still progress: accept the best low end.
    if (lo > 0 && fLo < fStart) {
      const { f } = evaluate(lo);
      return { step: lo, f, evaluations };
    }
    return { step: 0, f: fStart, evaluations };
  }
}
