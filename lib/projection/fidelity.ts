/**
 * Fidelity scores of a projection: how faithfully a 2-D map keeps the neighbourhoods and distances
 * of the latent factor rows it was made from. Stored with every projection (issue 4, "Fidelity
 * scores"); pure TypeScript over typed arrays.
 *
 * Definitions (n points, latent rows x_i, map rows y_i):
 * - Trustworthiness T(k) (Venna & Kaski, ICANN 2001), exactly as sklearn.manifold.trustworthiness
 *   defines it: T(k) = 1 − 2/(nk(2n − 3k − 1)) · Σ_i Σ_{j ∈ U_k(i)} max(0, r(i, j) − k), where U_k(i)
 *   are i's k nearest neighbours on the map and r(i, j) is j's rank among all other points by
 *   latent distance from i (1 = nearest). It penalises map neighbours that are not latent
 *   neighbours ("false neighbours"). Defined for 1 ≤ k < n/2, where it lies in [0, 1].
 * - Continuity C(k): the same with the roles of the spaces swapped (neighbours in latent space,
 *   ranks on the map), i.e. sklearn's trustworthiness(map, latent). It penalises latent neighbours
 *   torn apart by the map.
 * - k-NN preservation at k: mean over points of |latent kNN ∩ map kNN| / k; the per-point share at
 *   k = 15 is the per-point fidelity used to colour the map.
 * - Shepard correlation: Spearman's ρ between latent and map distances over a sample of pairs
 *   (average ranks for ties, as scipy.stats.spearmanr).
 * - Normalised stress: Kruskal's stress-1 for ratio MDS on the same pairs, see kruskalStress.
 *
 * Ties: ranks break equal distances by the smaller index, and the neighbour graphs do the same
 * (knn.ts). scikit-learn orders tied neighbours arbitrarily (argsort, tree queries), so on data with
 * many exact ties (digits: integer pixels) its T(k) and ours differ slightly (≤ 5·10⁻⁴ is the
 * tolerance in the tests); without ties they agree exactly.
 *
 * Complexity: trustworthiness and continuity compute, for each point, its distance to every other
 * point in the ranking space — O(n²·d) time for the latent space (d = latent dimension), O(n²·2) for
 * the map — plus O(n log k) per point for the ranks, and O(16·n) scratch memory. At 20,000 × 64
 * that is ~2.6·10¹⁰ multiply-adds: 16.6 s on one thread with the distance rows in WebAssembly
 * (key-rows-kernel.mjs; 33.5 s in JavaScript), 9.0 s on two (fidelity-parallel.ts, what the
 * projection job runs). Larger sets get estimates from a
 * seeded sample of query points (sampledRankScores: each query still ranks against all n, so m
 * queries cost O(m·n·d)); neighbour preservation, Shepard ρ and stress are O(n·k) or O(pairs).
 */
import type { UniformGenerator } from '../align/random';
import { rowNorms } from './knn-kernel.mjs';
import { rankPenaltyRange, sampledRankRange } from './rank-kernel.mjs';
import { type KnnGraph, type KnnMetric, checkMatrix, exactKnn, prepareKnnRows } from './knn';

/** The k of trustworthiness and continuity stored with a projection (issue 4). */
export const FIDELITY_KS: readonly number[] = [5, 15, 50];
/** The k of neighbour preservation and of the per-point fidelity. */
export const PRESERVATION_K = 15;
/** Default number of sampled pairs for the Shepard correlation and stress. */
export const DEFAULT_PAIR_SAMPLE = 50_000;

export interface RankOptions {
  /**
   * Called with the fraction done (0–1) after each block of query rows, for a job's progress bar.
   * Throwing from it stops the computation (how a job is cancelled, as this code is synchronous).
   */
  onProgress?: (fraction: number) => void;
}

export interface TrustworthinessOptions extends RankOptions {
  /** Latent metric (ranks are taken in it); the map is always Euclidean. Default 'euclidean'. */
  metric?: KnnMetric;
  /** Dimensions of the map rows, default 2. */
  mapDims?: number;
  /**
   * The map's Euclidean kNN graph with k ≥ max(ks), if already computed (saves an O(n²) search;
   * with a different tie order than ours the result changes only where map distances tie).
   */
  mapKnn?: KnnGraph;
}

export interface ContinuityOptions extends RankOptions {
  /** Latent metric (neighbours are taken in it). Default 'euclidean'. */
  metric?: KnnMetric;
  /** Dimensions of the map rows, default 2. */
  mapDims?: number;
  /** The latent kNN graph (same metric) with k ≥ max(ks), if already computed. */
  latentKnn?: KnnGraph;
}

function checkKs(ks: readonly number[], n: number): number {
  if (ks.length === 0) throw new RangeError('fidelity: give at least one k');
  let largest = 0;
  for (const k of ks) {
    if (!Number.isInteger(k) || k < 1 || k >= n / 2) {
      throw new RangeError(`fidelity: k must be an integer with 1 ≤ k < n/2 = ${n / 2} (where trustworthiness lies in [0, 1]), got ${k}`);
    }
    largest = Math.max(largest, k);
  }
  return largest;
}

function checkGraph(what: string, graph: KnnGraph, n: number, k: number, metric: KnnMetric): void {
  if (graph.n !== n) throw new RangeError(`fidelity: ${what} has ${graph.n} points, expected ${n}`);
  if (graph.k < k) throw new RangeError(`fidelity: ${what} has k = ${graph.k}, need at least ${k}`);
  if (graph.metric !== metric) throw new RangeError(`fidelity: ${what} uses the ${graph.metric} metric, expected ${metric}`);
  if (graph.indices.length !== n * graph.k) throw new RangeError(`fidelity: ${what} has ${graph.indices.length} indices, expected ${n * graph.k}`);
}

/**
 * For each k in ks, Σ_i Σ_{s<k} max(0, r(i, neighbours_i[s]) − k), where r ranks by the keys of
 * `rows` (prepared as knn.ts does) and neighbours come from `graph` (another space); on this
 * thread (fidelity-parallel.ts spreads the same sums over worker threads).
 */
function rankPenalties(rows: Float64Array, n: number, d: number, graph: KnnGraph, ks: readonly number[], onProgress?: (fraction: number) => void): Float64Array {
  const sums = new Float64Array(ks.length);
  const norms = new Float64Array(n);
  rowNorms(rows, n, d, norms);
  rankPenaltyRange(rows, norms, n, d, graph.indices, graph.k, ks, 0, n, sums, onProgress && ((done) => onProgress(done / n)));
  return sums;
}

function normalise(sums: Float64Array, n: number, ks: readonly number[]): Float64Array {
  const out = new Float64Array(ks.length);
  for (let index = 0; index < ks.length; index++) {
    const k = ks[index] as number;
    out[index] = 1 - (sums[index] as number) * (2 / (n * k * (2 * n - 3 * k - 1)));
  }
  return out;
}

/**
 * Trustworthiness T(k) for each k in ks (see the module comment), as sklearn.manifold.trustworthiness(latent, map, n_neighbors=k, metric).
 *
 * @param latent - n × d latent rows, row-major.
 * @param n - points, ≥ 3.
 * @param d - latent dimensions.
 * @param map - n × mapDims map coordinates, row-major.
 * @param ks - neighbourhood sizes, each 1 ≤ k < n/2. Small k (5) judges the nearest neighbours
 *   only, large k (50) the wider neighbourhood; the cost barely depends on k.
 * @returns T(k) aligned with ks, each in [0, 1], 1 = no false neighbours.
 */
export function trustworthiness(latent: Float32Array, n: number, d: number, map: Float32Array, ks: readonly number[] = FIDELITY_KS, options: TrustworthinessOptions = {}): Float64Array {
  const metric = options.metric ?? 'euclidean';
  const mapDims = options.mapDims ?? 2;
  const kMax = checkKs(ks, n);
  checkMatrix('trustworthiness: map', map, n, mapDims);
  const rows = prepareKnnRows(latent, n, d, metric);
  const mapKnn = options.mapKnn ?? exactKnn(map, n, mapDims, kMax, 'euclidean');
  checkGraph('the map kNN graph', mapKnn, n, kMax, 'euclidean');
  return normalise(rankPenalties(rows, n, d, mapKnn, ks, options.onProgress), n, ks);
}

/**
 * Continuity C(k) for each k in ks: trustworthiness with the spaces swapped, as
 * sklearn.manifold.trustworthiness(map, latent, n_neighbors=k) for the Euclidean metric.
 * Parameters as trustworthiness.
 * @returns C(k) aligned with ks, each in [0, 1], 1 = no latent neighbour torn away.
 */
export function continuity(latent: Float32Array, n: number, d: number, map: Float32Array, ks: readonly number[] = FIDELITY_KS, options: ContinuityOptions = {}): Float64Array {
  const metric = options.metric ?? 'euclidean';
  const mapDims = options.mapDims ?? 2;
  const kMax = checkKs(ks, n);
  const rows = prepareKnnRows(map, n, mapDims, 'euclidean');
  const latentKnn = options.latentKnn ?? exactKnn(latent, n, d, kMax, metric);
  checkGraph('the latent kNN graph', latentKnn, n, kMax, metric);
  return normalise(rankPenalties(rows, n, mapDims, latentKnn, ks, options.onProgress), n, ks);
}

export interface NeighbourPreservation {
  /** Mean share, in [0, 1]; 1 = every point keeps all its k latent neighbours on the map. */
  mean: number;
  /** Per point, |latent kNN ∩ map kNN| / k, in [0, 1] (multiples of 1/k). */
  perPoint: Float32Array;
}

/**
 * k-NN preservation: for each point the share of its k latent neighbours that are among its k map
 * neighbours, and the mean share. With k = 15 the per-point share is the per-point fidelity.
 *
 * @param latentKnn - latent kNN graph with at least k neighbours.
 * @param mapKnn - map kNN graph (Euclidean) of the same points with at least k neighbours.
 * @param k - neighbourhood size, 1 … min(latentKnn.k, mapKnn.k); default 15. Small k is strict
 *   (a neighbour one place too far counts as lost); large k is forgiving but blurs local detail.
 */
export function neighbourPreservation(latentKnn: KnnGraph, mapKnn: KnnGraph, k: number = PRESERVATION_K): NeighbourPreservation {
  const n = latentKnn.n;
  if (mapKnn.n !== n) throw new RangeError(`neighbour preservation: the graphs have ${n} and ${mapKnn.n} points`);
  if (!Number.isInteger(k) || k < 1 || k > latentKnn.k || k > mapKnn.k) {
    throw new RangeError(`neighbour preservation: k must be an integer from 1 to ${Math.min(latentKnn.k, mapKnn.k)}, got ${k}`);
  }
  // stamp[j] = i + 1 marks j as a map neighbour of the current point i: O(k) per point, no clearing.
  const stamp = new Int32Array(n);
  const perPoint = new Float32Array(n);
  let total = 0;
  for (let i = 0; i < n; i++) {
    for (let s = 0; s < k; s++) stamp[mapKnn.indices[i * mapKnn.k + s] as number] = i + 1;
    let kept = 0;
    for (let s = 0; s < k; s++) if (stamp[latentKnn.indices[i * latentKnn.k + s] as number] === i + 1) kept++;
    perPoint[i] = kept / k;
    total += kept / k;
  }
  return { mean: total / n, perPoint };
}

/** A sample of unordered pairs (i < j), as two aligned arrays. */
export interface PairSample {
  i: Int32Array;
  j: Int32Array;
}

/**
 * Pairs of distinct points for the Shepard correlation and the stress.
 *
 * @param n - points, ≥ 2.
 * @param maxPairs - sample size, 1 … 10⁷. When n(n−1)/2 ≤ maxPairs every pair is used, in order
 *   (no randomness). Otherwise maxPairs distinct pairs are drawn uniformly without replacement
 *   (rejection of repeats). Spearman's ρ from m pairs has a standard error of at most ~1/√m
 *   (0.0045 at the default 50,000); cost is O(m·d + m log m).
 * @param random - uniform generator in [0, 1), e.g. mulberry32(seed); its seed is stored with the
 *   projection so the sample can be re-drawn.
 */
export function samplePairs(n: number, maxPairs: number, random: UniformGenerator): PairSample {
  if (!Number.isInteger(n) || n < 2) throw new RangeError(`pair sample: n must be an integer ≥ 2, got ${n}`);
  if (!Number.isInteger(maxPairs) || maxPairs < 1 || maxPairs > 10_000_000) throw new RangeError(`pair sample: maxPairs must be an integer from 1 to 10⁷, got ${maxPairs}`);
  const total = (n * (n - 1)) / 2;
  if (total <= maxPairs) {
    const i = new Int32Array(total);
    const j = new Int32Array(total);
    let next = 0;
    for (let a = 0; a < n; a++) {
      for (let b = a + 1; b < n; b++) {
        i[next] = a;
        j[next] = b;
        next++;
      }
    }
    return { i, j };
  }
  const i = new Int32Array(maxPairs);
  const j = new Int32Array(maxPairs);
  // Keys a·n + b stay below 2⁵³ for n < 9·10⁷.
  const seen = new Set<number>();
  let next = 0;
  while (next < maxPairs) {
    const first = Math.floor(random() * n);
    let second = Math.floor(random() * (n - 1));
    if (second >= first) second++;
    const a = Math.min(first, second);
    const b = Math.max(first, second);
    const key = a * n + b;
    if (seen.has(key)) continue;
    seen.add(key);
    i[next] = a;
    j[next] = b;
    next++;
  }
  return { i, j };
}

/**
 * Latent and map distances of the sampled pairs, in the latent metric (Euclidean length or
 * 1 − cos θ) and Euclidean on the map, in Float64.
 */
export function pairDistances(latent: Float32Array, n: number, d: number, map: Float32Array, pairs: PairSample, metric: KnnMetric = 'euclidean', mapDims = 2): { latent: Float64Array; map: Float64Array } {
  const rows = prepareKnnRows(latent, n, d, metric);
  checkMatrix('pair distances: map', map, n, mapDims);
  const m = pairs.i.length;
  const latentDistances = new Float64Array(m);
  const mapDistances = new Float64Array(m);
  for (let p = 0; p < m; p++) {
    const a = pairs.i[p] as number;
    const b = pairs.j[p] as number;
    // Direct differences in both spaces: only m pairs, so the cheaper expansion of the kNN kernel
    // buys nothing, and differences keep exact ties exact (as scipy.spatial.distance.pdist does),
    // which Spearman's average ranks depend on. Cosine: ‖u − v‖²/2 = 1 − cos θ for unit rows.
    let key = 0;
    for (let t = 0; t < d; t++) {
      const diff = (rows[a * d + t] as number) - (rows[b * d + t] as number);
      key += diff * diff;
    }
    latentDistances[p] = metric === 'cosine' ? key / 2 : Math.sqrt(key);
    let mapKey = 0;
    for (let t = 0; t < mapDims; t++) {
      const diff = (map[a * mapDims + t] as number) - (map[b * mapDims + t] as number);
      mapKey += diff * diff;
    }
    mapDistances[p] = Math.sqrt(mapKey);
  }
  return { latent: latentDistances, map: mapDistances };
}

/** Ranks 1 … m with ties given the average of the ranks they span (scipy.stats.rankdata 'average'). */
export function averageRanks(values: Float64Array): Float64Array {
  const m = values.length;
  const order = new Int32Array(m);
  for (let index = 0; index < m; index++) order[index] = index;
  order.sort((a, b) => (values[a] as number) - (values[b] as number) || a - b);
  const ranks = new Float64Array(m);
  let start = 0;
  while (start < m) {
    let end = start + 1;
    const value = values[order[start] as number] as number;
    while (end < m && values[order[end] as number] === value) end++;
    // Positions start … end−1 hold ranks start+1 … end; their mean is (start + 1 + end) / 2.
    const rank = (start + 1 + end) / 2;
    for (let p = start; p < end; p++) ranks[order[p] as number] = rank;
    start = end;
  }
  return ranks;
}

/** Pearson correlation of two equal-length arrays (two-pass, Float64); NaN if either is constant. */
function pearson(x: Float64Array, y: Float64Array): number {
  const m = x.length;
  let mx = 0;
  let my = 0;
  for (let p = 0; p < m; p++) {
    mx += x[p] as number;
    my += y[p] as number;
  }
  mx /= m;
  my /= m;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let p = 0; p < m; p++) {
    const dx = (x[p] as number) - mx;
    const dy = (y[p] as number) - my;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  return sxx > 0 && syy > 0 ? sxy / Math.sqrt(sxx * syy) : Number.NaN;
}

/**
 * Spearman's ρ: the Pearson correlation of the average ranks (as scipy.stats.spearmanr).
 * In [−1, 1]; NaN when either input is constant (no ranking).
 */
export function spearmanRho(x: Float64Array, y: Float64Array): number {
  if (x.length !== y.length || x.length < 2) throw new RangeError(`Spearman's rho: need two arrays of equal length ≥ 2, got ${x.length} and ${y.length}`);
  return pearson(averageRanks(x), averageRanks(y));
}

/**
 * Normalised stress: Kruskal's stress-1 for ratio MDS,
 *   S = √( Σ (d_ij − b·δ_ij)² / Σ d_ij² ),  b = Σ d_ij δ_ij / Σ δ_ij²,
 * with d_ij the map distances and δ_ij the latent distances, b the least-squares scale that puts
 * the latent distances in map units. It equals sin θ for the angle θ between the vectors of
 * distances, so S ∈ [0, 1], is invariant to rescaling either space, is 0 only when the map keeps
 * all sampled distances up to one scale, and gives the same value when the map distances are the
 * ones scaled (√(Σ(a·d − δ)²/Σδ²) with a = Σdδ/Σd²). (Normalising the scaled form by the scaled map
 * distances instead would give tan θ, which is unbounded.) NaN when all d or all δ are 0.
 *
 * @param latentDistances - δ_ij, ≥ 0.
 * @param mapDistances - d_ij, ≥ 0, aligned with δ.
 */
export function kruskalStress(latentDistances: Float64Array, mapDistances: Float64Array): number {
  if (latentDistances.length !== mapDistances.length || latentDistances.length === 0) {
    throw new RangeError(`stress: need two non-empty arrays of equal length, got ${latentDistances.length} and ${mapDistances.length}`);
  }
  let sdd = 0;
  let sdl = 0;
  let sll = 0;
  for (let p = 0; p < latentDistances.length; p++) {
    const delta = latentDistances[p] as number;
    const dist = mapDistances[p] as number;
    sdd += dist * dist;
    sdl += dist * delta;
    sll += delta * delta;
  }
  if (!(sdd > 0) || !(sll > 0)) return Number.NaN;
  const b = sdl / sll;
  // Residuals summed directly (not 1 − cos²), so a near-perfect map keeps its small stress exactly.
  let residual = 0;
  for (let p = 0; p < latentDistances.length; p++) {
    const r = (mapDistances[p] as number) - b * (latentDistances[p] as number);
    residual += r * r;
  }
  return Math.sqrt(residual / sdd);
}

export interface DistanceFidelityOptions {
  /** Latent metric, default 'euclidean'. */
  metric?: KnnMetric;
  /** Map dimensions, default 2. */
  mapDims?: number;
  /** Sampled pairs, see samplePairs; default 50,000. */
  maxPairs?: number;
}

/**
 * Shepard correlation (Spearman's ρ between latent and map distances) and normalised stress on
 * one seeded sample of pairs. `random` is consumed only when not every pair fits the sample.
 */
export function distanceFidelity(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  random: UniformGenerator,
  options: DistanceFidelityOptions = {},
): { shepardRho: number; stress: number; pairs: number } {
  const pairs = samplePairs(n, options.maxPairs ?? DEFAULT_PAIR_SAMPLE, random);
  const distances = pairDistances(latent, n, d, map, pairs, options.metric ?? 'euclidean', options.mapDims ?? 2);
  return {
    shepardRho: spearmanRho(distances.latent, distances.map),
    stress: kruskalStress(distances.latent, distances.map),
    pairs: pairs.i.length,
  };
}

export interface ProjectionFidelity {
  /** The k of trustworthiness and continuity, aligned with the two arrays below. */
  ks: Int32Array;
  /** T(k); NaN where k ≥ n/2 (not defined; store null). */
  trustworthiness: Float64Array;
  /** C(k); NaN where k ≥ n/2. */
  continuity: Float64Array;
  /** Mean k-NN preservation at preservationK (NaN when n − 1 < preservationK). */
  knnPreservation: number;
  /** Per-point share at preservationK, Float32 n (zeros when not defined). */
  perPoint: Float32Array;
  shepardRho: number;
  stress: number;
  /** Pairs used for ρ and stress. */
  pairs: number;
}

export interface ProjectionFidelityOptions extends DistanceFidelityOptions, RankOptions {
  /** Default FIDELITY_KS (5, 15, 50); ks ≥ n/2 are reported as NaN, not thrown. */
  ks?: readonly number[];
  /** Default 15. */
  preservationK?: number;
  /** Latent kNN graph (options.metric) with enough neighbours, e.g. the cached one UMAP used. */
  latentKnn?: KnnGraph;
  /** Map kNN graph (Euclidean), if already computed. */
  mapKnn?: KnnGraph;
}

/** Settings of one projection's scores, shared by projectionFidelity and fidelity-parallel.ts. */
export interface FidelityPlan {
  metric: KnnMetric;
  mapDims: number;
  /** Every k asked for (the scores are aligned with these). */
  ks: Int32Array;
  /** The ks below n/2, where T and C are defined. */
  validKs: number[];
  preservationK: number;
  /** Neighbours each kNN graph needs. */
  graphK: number;
}

export function fidelityPlan(n: number, map: Float32Array, options: ProjectionFidelityOptions = {}): FidelityPlan {
  const mapDims = options.mapDims ?? 2;
  checkMatrix('fidelity: map', map, n, mapDims);
  const allKs = options.ks ?? FIDELITY_KS;
  const preservationK = options.preservationK ?? PRESERVATION_K;
  const validKs = allKs.filter((k) => Number.isInteger(k) && k >= 1 && k < n / 2);
  const graphK = Math.min(n - 1, Math.max(preservationK, ...validKs));
  return { metric: options.metric ?? 'euclidean', mapDims, ks: Int32Array.from(allKs), validKs, preservationK, graphK };
}

/** Rank penalty sums of trustworthiness and continuity, aligned with plan.validKs. */
export interface RankSums {
  trust: Float64Array;
  continuity: Float64Array;
}

/**
 * The scores from the rank sums (undefined when no k is valid) and the two graphs: T, C, neighbour
 * preservation and the distance scores (`random` drives only their pair sample).
 */
export function fidelityFromSums(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  random: UniformGenerator,
  plan: FidelityPlan,
  graphs: { latentKnn: KnnGraph; mapKnn: KnnGraph },
  sums: RankSums | undefined,
  maxPairs?: number,
): ProjectionFidelity {
  const { ks, validKs, preservationK, graphK, metric, mapDims } = plan;
  const trust = new Float64Array(ks.length).fill(Number.NaN);
  const cont = new Float64Array(ks.length).fill(Number.NaN);
  if (sums) {
    const t = normalise(sums.trust, n, validKs);
    const c = normalise(sums.continuity, n, validKs);
    for (let index = 0; index < ks.length; index++) {
      const position = validKs.indexOf(ks[index] as number);
      if (position >= 0) {
        trust[index] = t[position] as number;
        cont[index] = c[position] as number;
      }
    }
  }
  const preserved = preservationK <= graphK ? neighbourPreservation(graphs.latentKnn, graphs.mapKnn, preservationK) : { mean: Number.NaN, perPoint: new Float32Array(n) };
  const distances = distanceFidelity(latent, n, d, map, random, { metric, mapDims, maxPairs });
  return { ks, trustworthiness: trust, continuity: cont, knnPreservation: preserved.mean, perPoint: preserved.perPoint, ...distances };
}

/** Checks both graphs against the plan before any rank work. */
export function checkFidelityGraphs(plan: FidelityPlan, n: number, latentKnn: KnnGraph, mapKnn: KnnGraph): void {
  checkGraph('the latent kNN graph', latentKnn, n, plan.graphK, plan.metric);
  checkGraph('the map kNN graph', mapKnn, n, plan.graphK, 'euclidean');
}

/**
 * Every fidelity score of one projection, computing each kNN graph once (or reusing the given
 * ones), on this thread; fidelity-parallel.ts computes the same scores, bit for bit, on worker
 * threads. `random` drives only the pair sample. For small factor sets (e.g. 40 categories) the ks
 * that are not below n/2 come back NaN rather than failing the projection.
 */
export function projectionFidelity(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  random: UniformGenerator,
  options: ProjectionFidelityOptions = {},
): ProjectionFidelity {
  const plan = fidelityPlan(n, map, options);
  const latentKnn = options.latentKnn ?? exactKnn(latent, n, d, plan.graphK, plan.metric);
  const mapKnn = options.mapKnn ?? exactKnn(map, n, plan.mapDims, plan.graphK, 'euclidean');
  checkFidelityGraphs(plan, n, latentKnn, mapKnn);
  let sums: RankSums | undefined;
  if (plan.validKs.length > 0) {
    // Each half of the rank work reports half of the progress.
    const progress = options.onProgress;
    sums = {
      trust: rankPenalties(prepareKnnRows(latent, n, d, plan.metric), n, d, mapKnn, plan.validKs, progress && ((f) => progress(f / 2))),
      continuity: rankPenalties(prepareKnnRows(map, n, plan.mapDims, 'euclidean'), n, plan.mapDims, latentKnn, plan.validKs, progress && ((f) => progress(0.5 + f / 2))),
    };
  }
  return fidelityFromSums(latent, n, d, map, random, plan, { latentKnn, mapKnn }, sums, options.maxPairs);
}

export interface SampledRankScores {
  /** The k, aligned with the arrays below. */
  ks: Int32Array;
  /** Estimated T(k). */
  trustworthiness: Float64Array;
  /** Estimated C(k). */
  continuity: Float64Array;
  /** Mean share of a query's preservationK latent neighbours among its preservationK map neighbours. */
  knnPreservation: number;
  /** Query points used. */
  queries: number;
}

export interface SampledRankOptions {
  metric?: KnnMetric;
  mapDims?: number;
  preservationK?: number;
  onProgress?: (fraction: number) => void;
}

/** Settings of the sampled scores, every input checked (sampledRankScores, fidelity-parallel.ts). */
export function sampledPlan(n: number, map: Float32Array, ks: readonly number[], queries: ArrayLike<number>, options: SampledRankOptions): { metric: KnnMetric; mapDims: number; preservationK: number; kMax: number } {
  const mapDims = options.mapDims ?? 2;
  const preservationK = options.preservationK ?? PRESERVATION_K;
  const kMax = Math.max(checkKs(ks, n), Math.min(preservationK, n - 1));
  checkMatrix('fidelity: map', map, n, mapDims);
  for (let r = 0; r < queries.length; r++) {
    const i = queries[r] as number;
    if (!Number.isInteger(i) || i < 0 || i >= n) throw new RangeError(`fidelity: query ${i} is not a point index`);
  }
  return { metric: options.metric ?? 'euclidean', mapDims, preservationK, kMax };
}

/**
 * Trustworthiness T(k), continuity C(k) and k-NN preservation estimated from the neighbourhoods of
 * some query points only, for factor sets too large for the exact O(n²·d) scores (above 20,000
 * rows). Each query i is ranked against all n points in both spaces, so its terms are exact:
 * Σ_{j ∈ U_k(i)} max(0, r(i, j) − k) with map neighbours U and latent ranks r for T, the same with
 * the spaces swapped for C. The estimate 1 − 2/(m·k·(2n − 3k − 1)) · Σ_{i ∈ queries} (term) puts
 * the mean of the m per-query terms in place of the mean over all n, so with m random queries its
 * standard error is the terms' standard deviation / √m (m = 500: ~0.005 on typical maps, a rule of
 * thumb from the per-point spread). With every point a query it equals trustworthiness() and
 * continuity(). Cost O(m·n·(d + log k)): one latent distance row per query, ~1.6·10¹⁰
 * multiply-adds at 1,000,000 × 32 with m = 500.
 *
 * @param queries - distinct point indices (e.g. a seeded sample).
 * @param ks - each 1 ≤ k < n/2.
 * @param onProgress - fraction done after each query; throwing from it stops the computation.
 */
export function sampledRankScores(
  latent: Float32Array,
  n: number,
  d: number,
  map: Float32Array,
  ks: readonly number[],
  queries: ArrayLike<number>,
  options: SampledRankOptions = {},
): SampledRankScores {
  const { metric, mapDims, preservationK, kMax } = sampledPlan(n, map, ks, queries, options);
  const m = queries.length;
  const rows = prepareKnnRows(latent, n, d, metric);
  const norms = new Float64Array(n);
  rowNorms(rows, n, d, norms);
  const trustSums = new Float64Array(ks.length);
  const continuitySums = new Float64Array(ks.length);
  const onProgress = options.onProgress;
  const kept = sampledRankRange(rows, norms, n, d, map, mapDims, ks, kMax, preservationK, queries, 0, m, trustSums, continuitySums, onProgress && ((done) => onProgress(done / m)));
  return sampledScoresFromSums(ks, n, m, kMax, preservationK, { trust: trustSums, continuity: continuitySums }, kept);
}

/** The estimates from the sums of sampledRankRange over all m queries (fidelity-parallel.ts adds them up over threads). */
export function sampledScoresFromSums(ks: readonly number[], n: number, m: number, kMax: number, preservationK: number, sums: RankSums, kept: number): SampledRankScores {
  const estimate = (values: Float64Array) => Float64Array.from(ks, (k, index) => 1 - (2 * (values[index] as number)) / (m * k * (2 * n - 3 * k - 1)));
  return {
    ks: Int32Array.from(ks),
    trustworthiness: estimate(sums.trust),
    continuity: estimate(sums.continuity),
    knnPreservation: m > 0 ? kept / (m * Math.min(preservationK, kMax)) : Number.NaN,
    queries: m,
  };
}

/**
 * Trustworthiness T(k) alone from some query points (sampledRankScores; the benchmark's score of
 * layouts above 20,000 points).
 */
export function sampledTrustworthiness(latent: Float32Array, n: number, d: number, map: Float32Array, k: number, queries: ArrayLike<number>, metric: KnnMetric = 'euclidean', mapDims = 2): number {
  return sampledRankScores(latent, n, d, map, [k], queries, { metric, mapDims }).trustworthiness[0] as number;
}
