/**
 * Our own typed-array UMAP kernel (McInnes, Healy & Melville, "UMAP: Uniform Manifold
 * Approximation and Projection for Dimension Reduction", arXiv:1802.03426, 2018): the fuzzy
 * simplicial set of a neighbour graph and the stochastic-gradient layout, the two steps where
 * umap-js 1.4.0 misses issue 4's benchmark goal.
 *
 * Why it exists instead of umap-js's own steps (issue 4: "where a step of umap-js misses the goal,
 * replace that step with our own typed-array kernel"):
 *   - umap-js builds the fuzzy set in a SparseMatrix backed by a Map keyed by "row:col" strings,
 *     and every set operation of the fuzzy union (transpose, add, subtract, pairwise multiply,
 *     multiply by a scalar, twice) builds another such Map plus number[] copies of its rows,
 *     columns and values. At 50,000 × 32 that is ~2.7 GB and minutes (measured 358 s against uwot's
 *     73 s, scripts/bench-projection.ts). Here the graph is one CSR pass: counting sort by row,
 *     a merge of each row with its transpose, Int32Array/Float64Array throughout (~40 bytes per
 *     edge).
 *   - umap-js's epochs walk number[][] points (a heap object per point) and number[] edge arrays.
 *     Here the layout is one flat Float64Array (n × 2) and the edge state lives in typed arrays.
 *
 * What it keeps: umap-js's arithmetic, operation for operation and in the same order (the same
 * smooth-kNN bisection, the same membership strengths, the union as (a + b) − a·b, the same
 * pruning, epochs-per-sample bookkeeping, gradient formulas, clipping, learning-rate schedule and
 * the same draws from the seeded generator for negative samples). The one change is how powers
 * are formed: exp(b · ln x) instead of Math.pow (about twice as fast in V8, and powers are most of
 * an epoch's time); with LayoutSettings.exactPow the kernel uses Math.pow and reproduces umap-js's
 * layout on the same graph, start and seed bit for bit — the strongest check there is that the
 * bookkeeping is the reference's (tests/unit/projection/umap-kernel.test.ts, which also checks the
 * fast default's trustworthiness against umap-js's). Float64 is used for the layout and the
 * weights, not Float32, because JavaScript computes in doubles anyway (a Float32 store would only
 * add a rounding per update) and because the bit-for-bit check needs umap-js's doubles; memory is
 * 16 bytes per point, a few MB at 100,000 points. The result is converted to Float32 only at the
 * end (umap.ts).
 *
 * Threads: the fuzzy set costs milliseconds to a second even at 50,000 points and runs on one
 * thread. UmapLayout, the in-place descent, is sequential by design (each update reads positions
 * the previous one moved); a Hogwild split across threads, as uwot and umap-learn do, would make
 * coordinates depend on thread timing. The default layout is therefore the batch one
 * (umap-batch.ts), which runs on worker threads and still gives the same bits for a seed;
 * UmapLayout remains engine 'asterism', the check that our bookkeeping is umap-js's.
 *
 * The neighbour convention is umap-js's (and umap-learn's and uwot's): a point's neighbourhood of
 * size nNeighbors counts the point itself at distance 0, so nNeighbors = 15 uses the point and its
 * 14 nearest others. Our KnnGraph excludes the point, so the kernel reads its first nNeighbors − 1
 * columns and treats the point itself implicitly (column 0 of umap-js's lists, which its
 * smoothKNNDistance skips and whose membership strength is 0).
 */
import { findABParams } from 'umap-js/dist/umap';
import type { UniformGenerator } from '../align/random';
import type { KnnGraph } from './knn';

/**
 * Bisection steps for each point's sigma (the reference algorithm's n_iter, umap-learn and umap-js
 * default 64). 64 halvings reach any double; fewer steps would stop short of the target on points
 * whose sigma is far from the starting guess 1.
 */
export const SMOOTH_K_ITERATIONS = 64;

/**
 * Stop the sigma bisection when |Σ exp(−(d − ρ)/σ) − log₂ k| is below this (umap-learn and umap-js
 * SMOOTH_K_TOLERANCE). Smaller changes nothing visible; larger makes sigmas coarser.
 */
export const SMOOTH_K_TOLERANCE = 1e-5;

/**
 * Floor of sigma as a share of the point's mean neighbour distance (umap-learn and umap-js
 * MIN_K_DIST_SCALE): keeps exp(−(d − ρ)/σ) finite where the neighbours are (nearly) equidistant.
 */
export const MIN_K_DIST_SCALE = 1e-3;

/**
 * Local connectivity (umap-learn's local_connectivity, fixed at its default 1): how many nearest
 * neighbours a point is assumed connected to with certainty (ρ = distance to the first non-zero
 * neighbour). Higher values make the graph more connected and the map smoother; 1 is what UMAP's
 * theory assumes (the manifold is locally connected) and what every reference uses by default.
 */
export const LOCAL_CONNECTIVITY = 1;

/**
 * Bandwidth of the smooth-kNN target log₂(k) · bandwidth (umap-learn's bandwidth, fixed at 1):
 * larger values widen every point's kernel.
 */
export const BANDWIDTH = 1;

/**
 * Negative samples per positive sample (umap-learn's negative_sample_rate, default 5): more
 * separates clusters more strongly and costs proportionally more time per epoch.
 */
export const NEGATIVE_SAMPLE_RATE = 5;

/**
 * Starting learning rate (umap-learn's learning_rate, default 1), decayed linearly to 0 over the
 * epochs: larger moves points faster but can tear neighbourhoods early on.
 */
export const INITIAL_LEARNING_RATE = 1;

/**
 * Weight of the repulsive (negative-sample) term (umap-learn's repulsion_strength, gamma, default
 * 1): larger spreads clusters apart, smaller lets them clump.
 */
export const REPULSION_STRENGTH = 1;

/**
 * Gradient components are clipped to ±CLIP (umap-learn and umap-js clip at 4): stops a single
 * near-coincident pair from throwing a point across the map.
 */
export const GRADIENT_CLIP = 4;

/** Per point: ρ (distance to the nearest non-zero neighbour) and σ (the smooth-kNN bandwidth). */
export interface SmoothKnn {
  rhos: Float64Array;
  sigmas: Float64Array;
}

/**
 * The symmetric fuzzy graph as an edge list sorted by (row, col), zero weights left out. Every
 * edge appears in both directions with the same weight.
 */
export interface FuzzyGraph {
  n: number;
  rows: Int32Array;
  cols: Int32Array;
  weights: Float64Array;
}

function checkGraph(knn: KnnGraph, nNeighbors: number): number {
  const m = nNeighbors - 1;
  if (!Number.isInteger(nNeighbors) || nNeighbors < 2) throw new RangeError(`UMAP kernel: nNeighbors must be an integer ≥ 2, got ${nNeighbors}`);
  if (knn.k < m) throw new RangeError(`UMAP kernel: the neighbour graph has k = ${knn.k}; nNeighbors = ${nNeighbors} needs ${m}`);
  if (knn.indices.length !== knn.n * knn.k || knn.distances.length !== knn.n * knn.k) throw new RangeError('UMAP kernel: the neighbour graph should hold n × k entries');
  return m;
}

/**
 * smooth_knn_dist of the reference algorithm, as umap-js computes it: for each point, ρ is the
 * distance to its first non-zero neighbour and σ is found by bisection so that
 * Σ_j exp(−max(0, d_j − ρ)/σ) over its nNeighbors − 1 other neighbours equals log₂(nNeighbors),
 * then floored at MIN_K_DIST_SCALE times the mean neighbour distance (the mean counts the point
 * itself at distance 0, as umap-js's does).
 */
export function smoothKnnDistances(knn: KnnGraph, nNeighbors: number): SmoothKnn {
  const m = checkGraph(knn, nNeighbors);
  const { n, k, distances } = knn;
  const target = (Math.log(nNeighbors) / Math.log(2)) * BANDWIDTH;
  const rhos = new Float64Array(n);
  const sigmas = new Float64Array(n);
  // The mean over all points of each point's mean distance, for points whose neighbours are all
  // at distance 0 (umap-js recomputes it per such point; it is the same number).
  let meanOfMeans = Number.NaN;
  const meanOf = (i: number): number => {
    let sum = 0;
    for (let s = 0; s < m; s++) sum += distances[i * k + s] as number;
    return sum / nNeighbors;
  };
  for (let i = 0; i < n; i++) {
    const row = i * k;
    // LOCAL_CONNECTIVITY = 1: ρ is the first non-zero distance (0 when there is none).
    let rho = 0;
    for (let s = 0; s < m; s++) {
      const distance = distances[row + s] as number;
      if (distance > 0) {
        rho = distance;
        break;
      }
    }
    rhos[i] = rho;
    let lo = 0;
    let hi = Infinity;
    let mid = 1;
    for (let iteration = 0; iteration < SMOOTH_K_ITERATIONS; iteration++) {
      let psum = 0;
      for (let s = 0; s < m; s++) {
        const d = (distances[row + s] as number) - rho;
        psum += d > 0 ? Math.exp(-(d / mid)) : 1;
      }
      if (Math.abs(psum - target) < SMOOTH_K_TOLERANCE) break;
      if (psum > target) {
        hi = mid;
        mid = (lo + hi) / 2;
      } else {
        lo = mid;
        mid = hi === Infinity ? mid * 2 : (lo + hi) / 2;
      }
    }
    let sigma = mid;
    if (rho > 0) {
      const floor = MIN_K_DIST_SCALE * meanOf(i);
      if (sigma < floor) sigma = floor;
    } else {
      if (Number.isNaN(meanOfMeans)) {
        let total = 0;
        for (let p = 0; p < n; p++) total += meanOf(p);
        meanOfMeans = total / n;
      }
      const floor = MIN_K_DIST_SCALE * meanOfMeans;
      if (sigma < floor) sigma = floor;
    }
    sigmas[i] = sigma;
  }
  return { rhos, sigmas };
}

/**
 * The fuzzy simplicial set: membership strengths exp(−max(0, d − ρ_i)/σ_i) of each directed
 * neighbour edge, symmetrised by fuzzy union (set_op_mix_ratio 1) w = a + b − a·b, where a and b
 * are the strengths of i → j and j → i (0 where absent). One CSR pass: a counting sort by row of
 * the edges and their transposes; a row's transposed entries arrive in increasing column order
 * (rows are visited in order), its own entries are sorted by column, and the two sorted lists are
 * merged. Zero weights are left out (umap-js drops them when it lists the edges).
 */
export function fuzzySimplicialSet(knn: KnnGraph, nNeighbors: number): FuzzyGraph {
  const m = checkGraph(knn, nNeighbors);
  const { n, k, indices, distances } = knn;
  const { rhos, sigmas } = smoothKnnDistances(knn, nNeighbors);

  // Directed strengths, n × m, and each row's own entries sorted by column.
  const ownCols = new Int32Array(n * m);
  const ownVals = new Float64Array(n * m);
  const inDegree = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) {
    const rho = rhos[i] as number;
    const sigma = sigmas[i] as number;
    const base = i * m;
    for (let s = 0; s < m; s++) {
      const j = indices[i * k + s] as number;
      if (j < 0 || j >= n) throw new RangeError(`UMAP kernel: neighbour index ${j} of point ${i} is out of range`);
      const distance = distances[i * k + s] as number;
      // umap-js gives the point itself strength 0; our graph excludes it, but a self index would
      // mean the same.
      const value = j === i ? 0 : distance - rho <= 0 ? 1 : Math.exp(-((distance - rho) / sigma));
      // Insertion by column (m ≤ 199): keeps the row sorted for the merge.
      let t = s;
      while (t > 0 && (ownCols[base + t - 1] as number) > j) {
        ownCols[base + t] = ownCols[base + t - 1] as number;
        ownVals[base + t] = ownVals[base + t - 1] as number;
        t--;
      }
      ownCols[base + t] = j;
      ownVals[base + t] = value;
      inDegree[j + 1] = (inDegree[j + 1] as number) + 1;
    }
  }
  // Transposed entries by row (CSR): row j holds (i, strength of i → j) in increasing i.
  for (let j = 0; j < n; j++) inDegree[j + 1] = (inDegree[j + 1] as number) + (inDegree[j] as number);
  const inStart = inDegree;
  const fill = inStart.slice(0, n);
  const inCols = new Int32Array(n * m);
  const inVals = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    for (let s = 0; s < m; s++) {
      const j = ownCols[i * m + s] as number;
      const at = fill[j] as number;
      inCols[at] = i;
      inVals[at] = ownVals[i * m + s] as number;
      fill[j] = at + 1;
    }
  }

  // Merge each row's own and transposed lists; at most 2 · n · m edges.
  const capacity = 2 * n * m;
  const rows = new Int32Array(capacity);
  const cols = new Int32Array(capacity);
  const weights = new Float64Array(capacity);
  let count = 0;
  const push = (i: number, j: number, w: number): void => {
    // `w > 0` also drops NaN, as umap-js's `if (entry.value)` does.
    if (!(w > 0)) return;
    rows[count] = i;
    cols[count] = j;
    weights[count] = w;
    count++;
  };
  for (let i = 0; i < n; i++) {
    let a = i * m;
    const aEnd = a + m;
    let b = inStart[i] as number;
    const bEnd = inStart[i + 1] as number;
    while (a < aEnd || b < bEnd) {
      const colA = a < aEnd ? (ownCols[a] as number) : n;
      const colB = b < bEnd ? (inCols[b] as number) : n;
      // The union a + b − a·b written as umap-js evaluates it: (a + b) − a·b, with 0 for a missing
      // side (which leaves the other side's value exactly).
      if (colA === colB) {
        const x = ownVals[a] as number;
        const y = inVals[b] as number;
        push(i, colA, x + y - x * y);
        a++;
        b++;
      } else if (colA < colB) {
        push(i, colA, ownVals[a] as number);
        a++;
      } else {
        push(i, colB, inVals[b] as number);
        b++;
      }
    }
  }
  return { n, rows: rows.slice(0, count), cols: cols.slice(0, count), weights: weights.slice(0, count) };
}

/**
 * Drops edges whose weight is below max / nEpochs (they would be sampled less than once in the
 * whole run; umap-learn and umap-js do the same before the layout).
 */
export function pruneFuzzyGraph(graph: FuzzyGraph, nEpochs: number): FuzzyGraph {
  let max = 0;
  for (let e = 0; e < graph.weights.length; e++) if ((graph.weights[e] as number) > max) max = graph.weights[e] as number;
  const threshold = max / nEpochs;
  let count = 0;
  for (let e = 0; e < graph.weights.length; e++) if ((graph.weights[e] as number) >= threshold) count++;
  const rows = new Int32Array(count);
  const cols = new Int32Array(count);
  const weights = new Float64Array(count);
  let at = 0;
  for (let e = 0; e < graph.weights.length; e++) {
    const w = graph.weights[e] as number;
    if (w < threshold) continue;
    rows[at] = graph.rows[e] as number;
    cols[at] = graph.cols[e] as number;
    weights[at] = w;
    at++;
  }
  return { n: graph.n, rows, cols, weights };
}

/**
 * The curve 1 / (1 + a·x^(2b)) that approximates the target membership in the layout: 1 up to
 * minDist, then exp(−(x − minDist)/spread). umap-js's findABParams (a Levenberg–Marquardt fit on
 * 300 points of [0, 3·spread]) is reused so both engines fit the same a and b.
 *
 * @param minDist - how tightly points may pack, 0–1 (smaller: tighter clumps).
 * @param spread - the scale of the embedded distances, 0.5–5, ≥ minDist.
 */
export function curveParameters(minDist: number, spread: number): { a: number; b: number } {
  return findABParams(spread, minDist);
}

/** Settings of the SGD layout. */
export interface LayoutSettings {
  /** Curve parameters (curveParameters). */
  a: number;
  b: number;
  /** Epochs, ≥ 1: more epochs settle the layout further; cost is linear. */
  nEpochs: number;
  /** Seeded uniform generator for the negative samples (e.g. mulberry32(seed)). */
  random: UniformGenerator;
  /**
   * true: powers by Math.pow, exactly as umap-js forms them, so the layout equals umap-js's bit
   * for bit on the same graph, start and generator (the tests' proof that the bookkeeping is the
   * same). false (default): by exp(b · ln x), about twice as fast per power, which is most of an
   * epoch's time; coordinates then differ from umap-js's in the last bits, which the stochastic
   * descent amplifies into a different layout of the same quality (trustworthiness checked
   * against umap-js in the tests). Deterministic either way.
   */
  exactPow?: boolean;
}

/**
 * The stochastic-gradient layout (the reference algorithm's optimize_layout, as umap-js's
 * optimizeLayoutStep computes it), over a flat n × 2 embedding that it moves in place. Each
 * edge (tail = row, head = col) is sampled in proportion to its weight (every epochsPerSample
 * epochs); a sample attracts head and tail, then pushes the head away from NEGATIVE_SAMPLE_RATE
 * uniformly drawn points per sample. Both ends of a positive edge move (a fit, as in umap-learn
 * and umap-js), and each edge appears in both directions.
 */
export class UmapLayout {
  readonly nEpochs: number;
  private epoch = 0;
  private alpha = INITIAL_LEARNING_RATE;
  private readonly head: Int32Array;
  private readonly tail: Int32Array;
  private readonly epochsPerSample: Float64Array;
  private readonly epochsPerNegativeSample: Float64Array;
  private readonly epochOfNextSample: Float64Array;
  private readonly epochOfNextNegativeSample: Float64Array;

  /**
   * @param graph - the pruned fuzzy graph (pruneFuzzyGraph).
   * @param embedding - n × 2 row-major start; moved in place.
   */
  constructor(
    graph: FuzzyGraph,
    readonly embedding: Float64Array,
    private readonly settings: LayoutSettings,
  ) {
    if (embedding.length !== graph.n * 2) throw new RangeError(`UMAP kernel: the embedding should hold n × 2 = ${graph.n * 2} values, got ${embedding.length}`);
    if (!Number.isInteger(settings.nEpochs) || settings.nEpochs < 1) throw new RangeError(`UMAP kernel: nEpochs must be a positive integer, got ${settings.nEpochs}`);
    this.nEpochs = settings.nEpochs;
    // umap-js lists the edges as head = col, tail = row.
    this.head = graph.cols;
    this.tail = graph.rows;
    const count = graph.weights.length;
    let max = 0;
    for (let e = 0; e < count; e++) if ((graph.weights[e] as number) > max) max = graph.weights[e] as number;
    this.epochsPerSample = new Float64Array(count).fill(-1);
    for (let e = 0; e < count; e++) {
      const samples = ((graph.weights[e] as number) / max) * this.nEpochs;
      if (samples > 0) this.epochsPerSample[e] = this.nEpochs / samples;
    }
    this.epochsPerNegativeSample = new Float64Array(count);
    for (let e = 0; e < count; e++) this.epochsPerNegativeSample[e] = (this.epochsPerSample[e] as number) / NEGATIVE_SAMPLE_RATE;
    this.epochOfNextNegativeSample = this.epochsPerNegativeSample.slice();
    this.epochOfNextSample = this.epochsPerSample.slice();
  }

  /** Epochs run so far. */
  get currentEpoch(): number {
    return this.epoch;
  }

  /** Runs one epoch (no-op after the last); returns the epochs run so far. */
  step(): number {
    if (this.epoch >= this.nEpochs) return this.epoch;
    const n = this.epoch;
    const { a, b, random } = this.settings;
    const y = this.embedding;
    const nVertices = y.length / 2;
    const { head, tail, epochsPerSample, epochsPerNegativeSample, epochOfNextSample, epochOfNextNegativeSample } = this;
    const alpha = this.alpha;
    const exactPow = this.settings.exactPow === true;
    // The same products umap-js forms left to right, computed once.
    const attractScale = -2 * a * b;
    const bMinus1 = b - 1;
    const repelScale = 2 * REPULSION_STRENGTH * b;
    const count = epochsPerSample.length;
    for (let e = 0; e < count; e++) {
      if ((epochOfNextSample[e] as number) > n) continue;
      const j = head[e] as number;
      const k = tail[e] as number;
      const jx = j * 2;
      const kx = k * 2;
      let dx = (y[jx] as number) - (y[kx] as number);
      let dy = (y[jx + 1] as number) - (y[kx + 1] as number);
      const distSquared = dx * dx + dy * dy;
      let gradCoeff = 0;
      if (distSquared > 0) {
        if (exactPow) {
          gradCoeff = attractScale * Math.pow(distSquared, bMinus1);
          gradCoeff /= a * Math.pow(distSquared, b) + 1;
        } else {
          // d^b once, by exp(b·ln d) (about twice as fast as Math.pow in V8, relative error
          // ~1e-16), and d^(b−1) = d^b / d.
          const power = Math.exp(b * Math.log(distSquared));
          gradCoeff = (attractScale * (power / distSquared)) / (a * power + 1);
        }
      }
      // Dimension 0 moves both points before dimension 1 is read, as in umap-js.
      let grad = clip(gradCoeff * dx);
      y[jx] = (y[jx] as number) + grad * alpha;
      y[kx] = (y[kx] as number) + -grad * alpha;
      dy = (y[jx + 1] as number) - (y[kx + 1] as number);
      grad = clip(gradCoeff * dy);
      y[jx + 1] = (y[jx + 1] as number) + grad * alpha;
      y[kx + 1] = (y[kx + 1] as number) + -grad * alpha;
      epochOfNextSample[e] = (epochOfNextSample[e] as number) + (epochsPerSample[e] as number);

      const perNegative = epochsPerNegativeSample[e] as number;
      const nNegSamples = Math.floor((n - (epochOfNextNegativeSample[e] as number)) / perNegative);
      for (let p = 0; p < nNegSamples; p++) {
        const other = Math.floor(random() * nVertices);
        const ox = other * 2;
        dx = (y[jx] as number) - (y[ox] as number);
        dy = (y[jx + 1] as number) - (y[ox + 1] as number);
        const d2 = dx * dx + dy * dy;
        let repel = 0;
        if (d2 > 0) {
          repel = repelScale;
          repel /= (0.001 + d2) * (a * (exactPow ? Math.pow(d2, b) : Math.exp(b * Math.log(d2))) + 1);
        } else if (j === other) {
          continue;
        }
        // Coincident distinct points: push by the clip value in every dimension (umap-js's rule).
        grad = repel > 0 ? clip(repel * dx) : GRADIENT_CLIP;
        y[jx] = (y[jx] as number) + grad * alpha;
        dy = (y[jx + 1] as number) - (y[ox + 1] as number);
        grad = repel > 0 ? clip(repel * dy) : GRADIENT_CLIP;
        y[jx + 1] = (y[jx + 1] as number) + grad * alpha;
      }
      epochOfNextNegativeSample[e] = (epochOfNextNegativeSample[e] as number) + nNegSamples * perNegative;
    }
    this.alpha = INITIAL_LEARNING_RATE * (1 - n / this.nEpochs);
    this.epoch++;
    return this.epoch;
  }
}

function clip(x: number): number {
  return x > GRADIENT_CLIP ? GRADIENT_CLIP : x < -GRADIENT_CLIP ? -GRADIENT_CLIP : x;
}

export interface TransformSettings {
  /** Curve parameters of the fitted layout (curveParameters(minDist, spread)). */
  a: number;
  b: number;
  /** The fitted layout's nNeighbors: each new point joins its nNeighbors − 1 nearest fitted points. */
  nNeighbors: number;
  /**
   * Epochs that move the new points, ≥ 1. A third of the fit's is enough (the fitted layout is
   * fixed, only local placement is refined; umap-learn's transform uses a fraction of the fit's
   * epochs too — from memory); more cost linearly and change little.
   */
  nEpochs: number;
  /** Seeded uniform generator for the negative samples. */
  random: UniformGenerator;
}

/**
 * Places new points (an entity's posterior draws, say) on a fitted UMAP layout, as the reference
 * algorithm's transform does. Each new point gets membership strengths to its nNeighbors − 1
 * nearest fitted points (smooth-kNN distances on its own neighbour distances), starts at the
 * strength-weighted mean of their positions, and is then moved by SGD epochs in which only the
 * new points move: attracted along their edges, repelled from uniformly drawn fitted points. The
 * fitted layout stays as it is, so the answer is where the layout would put such a point.
 *
 * @param embedding - the fitted n × 2 layout (row-major).
 * @param neighbours - for each of q new points, its nNeighbors − 1 nearest fitted points (indices
 *   into the layout) and distances in the latent metric, nearest first: q × (nNeighbors − 1).
 * @returns q × 2 positions.
 */
export function transformUmap(embedding: Float32Array, neighbours: { q: number; indices: Int32Array; distances: Float32Array }, settings: TransformSettings): Float64Array {
  const m = settings.nNeighbors - 1;
  const { q, indices } = neighbours;
  const n = embedding.length / 2;
  if (indices.length !== q * m || neighbours.distances.length !== q * m) throw new RangeError(`UMAP transform: expected q × ${m} neighbours`);
  if (!Number.isInteger(settings.nEpochs) || settings.nEpochs < 1) throw new RangeError(`UMAP transform: nEpochs must be a positive integer, got ${settings.nEpochs}`);
  const { rhos, sigmas } = smoothKnnDistances({ n: q, k: m, metric: 'euclidean', indices, distances: neighbours.distances }, settings.nNeighbors);
  const weights = new Float64Array(q * m);
  let max = 0;
  const out = new Float64Array(q * 2);
  for (let r = 0; r < q; r++) {
    let wx = 0;
    let wy = 0;
    let total = 0;
    for (let s = 0; s < m; s++) {
      const e = r * m + s;
      const excess = (neighbours.distances[e] as number) - (rhos[r] as number);
      const w = excess > 0 ? Math.exp(-excess / (sigmas[r] as number)) : 1;
      weights[e] = w;
      if (w > max) max = w;
      const j = indices[e] as number;
      wx += w * (embedding[2 * j] as number);
      wy += w * (embedding[2 * j + 1] as number);
      total += w;
    }
    out[2 * r] = total > 0 ? wx / total : 0;
    out[2 * r + 1] = total > 0 ? wy / total : 0;
  }
  const { a, b, nEpochs, random } = settings;
  const count = q * m;
  const perSample = new Float64Array(count).fill(-1);
  for (let e = 0; e < count; e++) {
    const samples = max > 0 ? ((weights[e] as number) / max) * nEpochs : 0;
    if (samples > 0) perSample[e] = nEpochs / samples;
  }
  const perNegative = perSample.map((v) => v / NEGATIVE_SAMPLE_RATE);
  const nextSample = perSample.slice();
  const nextNegative = perNegative.slice();
  for (let epoch = 0; epoch < nEpochs; epoch++) {
    const alpha = INITIAL_LEARNING_RATE * (1 - epoch / nEpochs);
    for (let e = 0; e < count; e++) {
      if ((perSample[e] as number) <= 0 || (nextSample[e] as number) > epoch) continue;
      const r = Math.floor(e / m);
      const j = indices[e] as number;
      const dx = (out[2 * r] as number) - (embedding[2 * j] as number);
      const dy = (out[2 * r + 1] as number) - (embedding[2 * j + 1] as number);
      const d2 = dx * dx + dy * dy;
      if (d2 > 0) {
        const power = Math.exp(b * Math.log(d2));
        const coeff = (-2 * a * b * (power / d2)) / (a * power + 1);
        out[2 * r] = (out[2 * r] as number) + clip(coeff * dx) * alpha;
        out[2 * r + 1] = (out[2 * r + 1] as number) + clip(coeff * dy) * alpha;
      }
      nextSample[e] = (nextSample[e] as number) + (perSample[e] as number);
      const negatives = Math.floor((epoch - (nextNegative[e] as number)) / (perNegative[e] as number));
      for (let p = 0; p < negatives; p++) {
        const other = Math.floor(random() * n);
        const ox = (out[2 * r] as number) - (embedding[2 * other] as number);
        const oy = (out[2 * r + 1] as number) - (embedding[2 * other + 1] as number);
        const o2 = ox * ox + oy * oy;
        if (o2 <= 0) continue;
        const repel = (2 * REPULSION_STRENGTH * b) / ((0.001 + o2) * (a * Math.exp(b * Math.log(o2)) + 1));
        out[2 * r] = (out[2 * r] as number) + clip(repel * ox) * alpha;
        out[2 * r + 1] = (out[2 * r + 1] as number) + clip(repel * oy) * alpha;
      }
      nextNegative[e] = (nextNegative[e] as number) + negatives * (perNegative[e] as number);
    }
  }
  return out;
}
