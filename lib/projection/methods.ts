/**
 * The one entry point the projection job worker calls: a factor set's rows in, a 2-D layout out,
 * for any of the four methods of issue 4, with validated settings (defaults filled in, to be stored
 * with the projection), progress, cancellation and the library version to print on figures.
 *
 *   - pca: our exact PCA (pca.ts), the scores on the first two components, and their explained
 *     variance ratios. Deterministic without randomness; the seed has no effect.
 *   - umap: umap-js 1.4.0's fuzzy graph and gradients in our typed-array kernels on our kNN graph,
 *     from a PCA start, with the batch layout on worker threads (umap.ts, umap-batch.ts); umap-js
 *     itself remains the reference engine.
 *   - sammon: our Sammon mapping (sammon.ts), from the PCA start, final stress reported. No
 *     randomness; the seed has no effect.
 *   - tsne: druid.js 0.9.0's exact t-SNE with its seeded start (tsne.ts).
 *
 * Settings: params.ts (schemas, PARAM_DOCS for the form, the n-dependent checks).
 * Cancellation: aborting `signal` rejects with an Error named 'AbortError' (job-control.ts) within
 * one epoch / iteration / pass; a projection either returns whole or throws.
 */
import { type ProgressReporter as Reporter, ProgressReporter, type ProjectionProgress, cancellable, throwIfCancelled, yieldToEventLoop } from './job-control';
import { type KnnGraph, checkMatrix } from './knn';
import { type PcaParams, type ProjectionMethod, type SammonParams, parseProjectionParams } from './params';
import { fitPca, transformPca } from './pca';
import { sammonAsync } from './sammon';
import { DRUID_VERSION, runTsne } from './tsne';
import { DEFAULT_UMAP_ENGINE, runUmap, UMAP_ENGINE_VERSIONS } from './umap';
import { BATCH_PARALLEL_MIN_POINTS } from './umap-batch';

export type { ProjectionMethod } from './params';
export {
  PARAM_DOCS,
  PROJECTION_METHODS,
  ProjectionParamsError,
  TSNE_MAX_POINTS,
  parseProjectionParams,
  projectionParamsSchemas,
  type ParamDoc,
  type ParamsIssue,
  type PcaParams,
  type ProjectionParamsByMethod,
  type SammonParams,
  type TsneParams,
  type UmapParams,
} from './params';
export { type ProjectionProgress, projectionAbortError } from './job-control';

/** What runProjection needs. */
export interface ProjectionInput {
  /** n × d factor rows, row-major, all finite. */
  data: Float32Array;
  /** Number of points (entities), ≥ 3. */
  n: number;
  /** Latent dimensions per row, ≥ 1. */
  d: number;
  method: ProjectionMethod;
  /** The method's settings as received (validated here with params.ts; undefined = all defaults). */
  params: unknown;
  /**
   * Seed of the method's randomness (UMAP's negative sampling, t-SNE's start; PCA and Sammon use
   * none); its low 32 bits are used. Store it with the projection.
   */
  seed: number;
  onProgress?: ProjectionProgress;
  signal?: AbortSignal;
  /**
   * The factor set's precomputed neighbour graph, shared with the fidelity scores (UMAP only; it
   * must have the settings' metric and k ≥ nNeighbors − 1). Computed here when absent.
   */
  knn?: KnnGraph;
  /**
   * Worker threads at most, for the methods that use them (UMAP's layout, from
   * BATCH_PARALLEL_MIN_POINTS points: below, one thread is faster); each method's default when absent.
   */
  threads?: number;
}

export interface ProjectionResult {
  /** n × 2 row-major layout, in entity order. */
  coordinates: Float32Array;
  /** The validated settings with every default filled in (what to store and show). */
  params: Record<string, unknown>;
  /** PCA only: shares of the total variance on the two components, each in [0, 1]. */
  explainedVarianceRatio?: number[];
  /** Sammon only: Sammon's stress of the layout, in [0, 1]. */
  stress?: number;
  /** Implementation and version, e.g. "umap-js 1.4.0", for reproducibility and figures. */
  libraryVersion: string;
}

/** Library strings stored with each method's projections. */
export const PROJECTION_LIBRARY_VERSIONS: Record<ProjectionMethod, string> = {
  pca: 'asterism pca',
  umap: UMAP_ENGINE_VERSIONS[DEFAULT_UMAP_ENGINE],
  sammon: 'asterism sammon',
  tsne: `@saehrimnir/druidjs ${DRUID_VERSION}`,
};

/**
 * Projects the n × d rows of `input.data` to two dimensions with `input.method`.
 *
 * @throws ProjectionParamsError for refused settings (before any work), RangeError for bad data,
 *   an Error named 'AbortError' when `signal` is aborted.
 */
export async function runProjection(input: ProjectionInput): Promise<ProjectionResult> {
  const { data, n, d, method, signal } = input;
  if (!Number.isFinite(input.seed)) throw new RangeError(`projection: seed must be a finite number, got ${input.seed}`);
  const seed = input.seed >>> 0;
  const libraryVersion = PROJECTION_LIBRARY_VERSIONS[method];
  const progress = new ProgressReporter(input.onProgress);
  // Settings first (refused settings should not cost a pass over the data), then the data.
  const ready = <P>(params: P): P => {
    checkMatrix('projection', data, n, d);
    throwIfCancelled(signal);
    return params;
  };
  let result: ProjectionResult;
  switch (method) {
    case 'pca': {
      const params = ready(parseProjectionParams('pca', input.params, n));
      result = { ...(await runPca(data, n, d, params, progress, signal)), params: { ...params }, libraryVersion };
      break;
    }
    case 'sammon': {
      const params = ready(parseProjectionParams('sammon', input.params, n));
      result = { ...(await runSammon(data, n, d, params, progress, signal)), params: { ...params }, libraryVersion };
      break;
    }
    case 'umap': {
      const params = ready(parseProjectionParams('umap', input.params, n));
      const coordinates = await runUmap({ data, n, d, params, seed, progress, ...(signal ? { signal } : {}), ...(input.knn ? { knn: input.knn } : {}), ...(input.threads !== undefined ? { threads: n >= BATCH_PARALLEL_MIN_POINTS ? input.threads : 1 } : {}) });
      result = { coordinates, params: { ...params }, libraryVersion };
      break;
    }
    case 'tsne': {
      const params = ready(parseProjectionParams('tsne', input.params, n));
      const coordinates = await runTsne({ data, n, d, params, seed, progress, ...(signal ? { signal } : {}) });
      result = { coordinates, params: { ...params }, libraryVersion };
      break;
    }
    default:
      // Not a method (input from outside TypeScript): parseProjectionParams names the choices.
      parseProjectionParams(method, input.params, n);
      throw new RangeError(`projection: unknown method ${JSON.stringify(method)}`);
  }
  throwIfCancelled(signal);
  progress.finish();
  return result;
}

async function runPca(data: Float32Array, n: number, d: number, params: PcaParams, progress: Reporter, signal: AbortSignal | undefined) {
  progress.report(0, 'principal components');
  await yieldToEventLoop();
  throwIfCancelled(signal);
  const components = Math.min(2, d);
  const model = fitPca(data, n, d, { components, standardise: params.standardise });
  const scores = transformPca(model, data, n);
  const coordinates = new Float32Array(n * 2);
  // With one latent dimension the map's second coordinate is 0 (and its explained variance 0).
  for (let i = 0; i < n; i++) for (let c = 0; c < components; c++) coordinates[i * 2 + c] = scores[i * components + c] as number;
  const explainedVarianceRatio = Array.from(model.explainedVarianceRatio);
  while (explainedVarianceRatio.length < 2) explainedVarianceRatio.push(0);
  return { coordinates, explainedVarianceRatio };
}

async function runSammon(data: Float32Array, n: number, d: number, params: SammonParams, progress: Reporter, signal: AbortSignal | undefined) {
  progress.report(0, 'pairwise distances');
  await yieldToEventLoop();
  throwIfCancelled(signal);
  const { maxIterations } = params;
  const result = await cancellable(signal, () =>
    sammonAsync(data, n, d, {
      maxIterations,
      tolerance: params.tolerance,
      // The start is sammon.ts's default: the first two PCA scores (unstandardised).
      ...(signal ? { signal } : {}),
      onProgress: (iteration, stress) => progress.report(iteration / maxIterations, `optimising layout, iteration ${iteration}/${maxIterations}, stress ${stress.toFixed(4)}`),
    }),
  );
  return { coordinates: result.layout, stress: result.stress };
}
