/**
 * Settings of each projection method: zod schemas (strict, with defaults) that the API, the job
 * worker and the projection form share, and PARAM_DOCS, the documentation a form shows beside each
 * field (meaning, range, trade-off). Names follow the API of issue 4 (`nNeighbors`, `minDist`,
 * `spread`, `nEpochs`, `metric` for UMAP).
 *
 * Two kinds of check:
 *   - projectionParamsSchemas[method]: what can be checked without the data (types, ranges,
 *     unknown keys). A form validates against these.
 *   - parseProjectionParams(method, params, n): the same, then the checks that need the number of
 *     points n (t-SNE's perplexity < (n − 1)/3, UMAP's nNeighbors < n, Sammon's and t-SNE's point
 *     limits) and the defaults that depend on n (UMAP's nEpochs). The job worker calls this (through
 *     runProjection), and stores what it returns: every setting, defaults filled in, so a projection
 *     can be re-created exactly.
 *
 * Metric: only UMAP offers cosine (1 − cos θ between rows, through the kNN graph it is built on).
 * PCA, Sammon mapping and t-SNE as implemented here work on Euclidean distances (PCA on the
 * covariance, Sammon on condensed Euclidean distances, druid.js's t-SNE on squared Euclidean
 * distances), so their schemas accept `metric: "euclidean"` only and refuse "cosine" with a message
 * that says so, rather than silently computing something else. (Cosine on those methods would mean
 * L2-normalising the rows first; a later issue may offer that as an explicit preprocessing step.)
 */
import { z } from 'zod';

// This module is imported by the projection form (a client component), so it depends on zod only:
// sammon.ts's limits are repeated here (methods-params.test.ts checks they agree) rather than imported,
// which would pull sammon.ts, pca.ts and ml-matrix into the browser bundle.
/** sammon.ts's SAMMON_MAX_POINTS. */
export const SAMMON_POINT_LIMIT = 5000;
/** sammon.ts's SAMMON_DEFAULTS.maxIterations and .tolerance (MASS::sammon's niter and tol). */
const SAMMON_DEFAULT_ITERATIONS = 100;
const SAMMON_DEFAULT_TOLERANCE = 1e-4;

export type ProjectionMethod = 'pca' | 'umap' | 'sammon' | 'tsne';
export const PROJECTION_METHODS: readonly ProjectionMethod[] = ['pca', 'umap', 'sammon', 'tsne'];

/** What a form shows for one setting. */
export interface ParamDoc {
  /** Short field label. */
  label: string;
  /** Meaning, range and trade-off, in one or a few sentences. */
  help: string;
}

/**
 * Largest number of points t-SNE accepts. druid.js's t-SNE is exact: it keeps the N × N affinity
 * matrix P and, per iteration, N × N scratch (its WASM kernel holds two more), all float64 — 5,000
 * points take ~0.8 GB and O(N²) work per iteration. Beyond this, use UMAP.
 */
export const TSNE_MAX_POINTS = 5000;

/** UMAP's epoch default switches at this many points (umap-learn's rule: 500 up to 10,000, else 200). */
export const UMAP_EPOCHS_SWITCH = 10_000;

export const PARAM_DOCS = {
  pca: {
    standardise: {
      label: 'Standardise dimensions',
      help:
        'Divide each latent dimension by its standard deviation before PCA (PCA of correlations). Use it when dimensions have unrelated scales; ' +
        'leave it off (default) when the scale is meaningful, as for most fitted factors — standardising gives near-noise dimensions the same weight as dominant ones.',
    },
    metric: {
      label: 'Distance',
      help: 'Euclidean only: PCA keeps the directions of largest variance, which is a Euclidean notion. Cosine is offered for UMAP.',
    },
  },
  umap: {
    nNeighbors: {
      label: 'Neighbours',
      help:
        'Size of the neighbourhood each point is connected to, counting the point itself (as umap-learn and uwot count), integer 2–200, default 15, at most n − 1. ' +
        'Small values (5–10) keep fine local detail but can break clusters into fragments; large values (50+) show broader structure and blur small groups, and cost more time.',
    },
    minDist: {
      label: 'Minimum distance',
      help:
        'How tightly points may pack on the map, 0–1, default 0.1, at most the spread. Small values give dense, well-separated clumps (good for seeing clusters); ' +
        'larger values (0.5+) spread points evenly and keep more of the topology, at the cost of visible separation.',
    },
    spread: {
      label: 'Spread',
      help:
        'The overall scale of the embedded points, 0.5–5, default 1; together with minimum distance it sets how clumped the map looks. ' +
        'Larger spread with the same minimum distance gives more clustered maps. Rarely needs changing.',
    },
    nEpochs: {
      label: 'Epochs',
      help:
        'Passes of the layout optimisation, integer 10–2000; default 500 up to 10,000 points and 200 beyond (umap-learn\'s rule). ' +
        'More epochs settle the layout further at linear cost in time; below ~100 the map may not have converged.',
    },
    metric: {
      label: 'Distance',
      help:
        'How latent rows are compared when finding neighbours: "euclidean" (default; the scale of the factors matters) or "cosine" (1 − cos θ; only the direction of a row matters, ' +
        'useful for embeddings whose norms encode frequency rather than kind).',
    },
    init: {
      label: 'Start layout',
      help:
        '"pca" (default): start from the first two principal components, scaled to the range 0–10 as umap-learn does; deterministic and keeps the global arrangement of groups more faithfully. ' +
        '"random": umap-js\'s own uniform random start in [−10, 10] (seeded); groups may land anywhere relative to each other.',
    },
  },
  sammon: {
    maxIterations: {
      label: 'Maximum iterations',
      help:
        'Most accepted optimisation steps, integer 1–5000, default 100 (as R\'s MASS::sammon). Each costs one pass over all n(n − 1)/2 pairs. ' +
        'More steps keep lowering the stress on data that keeps improving, at linear cost in time.',
    },
    tolerance: {
      label: 'Tolerance',
      help:
        'Stop when the stress fell by less than this over the last 10 steps, 0–0.1, default 0.0001 (as MASS::sammon). Stress is a share in [0, 1], so 0.0001 is a hundredth of a percent. ' +
        'Smaller runs longer for ever smaller gains; 0 runs to the iteration limit.',
    },
    metric: {
      label: 'Distance',
      help: 'Euclidean only: Sammon mapping matches the Euclidean distances between latent rows. Cosine is offered for UMAP.',
    },
  },
  tsne: {
    perplexity: {
      label: 'Perplexity',
      help:
        'The effective number of neighbours each point attends to, 5–100, default 30, and less than (n − 1)/3. Low values focus on very local structure and can split groups; ' +
        'high values take in more neighbours and show larger structures, and cost more time in the calibration.',
    },
    iterations: {
      label: 'Iterations',
      help:
        'Optimisation steps, integer 250–5000, default 1000 (scikit-learn\'s default; the first 100 steps exaggerate attractions, the first 250 use low momentum). ' +
        'More steps settle the layout further at linear cost; each step costs O(n²).',
    },
    learningRate: {
      label: 'Learning rate',
      help:
        'Step size of the gradient descent (druid.js\'s epsilon), 1–1000, default 10 (druid.js\'s default, with per-coordinate adaptive gains). ' +
        'Too small and the layout converges slowly; too large and points scatter into a ball.',
    },
    init: {
      label: 'Start layout',
      help:
        '"random" (default): druid.js\'s seeded Gaussian start (standard deviation 0.0001); different seeds give different, equally valid maps. ' +
        '"pca": the first two principal components scaled to standard deviation 0.0001 (as scikit-learn\'s init="pca"); keeps the global arrangement better, and the seed then has no effect.',
    },
    metric: {
      label: 'Distance',
      help: 'Euclidean only (t-SNE\'s Gaussian kernel on squared Euclidean distances, as druid.js implements it). Cosine is offered for UMAP.',
    },
  },
} as const satisfies Record<ProjectionMethod, Record<string, ParamDoc>>;

function intIn(name: string, min: number, max: number) {
  return z
    .number({ error: `${name} must be a number` })
    .int({ error: `${name} must be a whole number from ${min} to ${max}` })
    .min(min, { error: `${name} must be at least ${min}` })
    .max(max, { error: `${name} must be at most ${max}` });
}

function numberIn(name: string, min: number, max: number) {
  return z
    .number({ error: `${name} must be a finite number` })
    .min(min, { error: `${name} must be at least ${min}` })
    .max(max, { error: `${name} must be at most ${max}` });
}

function euclideanOnly(method: string) {
  return z
    .literal('euclidean', { error: `metric: only "euclidean" is offered for ${method}; cosine distances are offered for UMAP` })
    .default('euclidean')
    .describe(`Distance: Euclidean only for ${method}.`);
}

const pcaSchema = z.strictObject({
  standardise: z.boolean({ error: 'standardise must be true or false' }).default(false).describe(PARAM_DOCS.pca.standardise.help),
  metric: euclideanOnly('PCA'),
});

const umapSchema = z
  .strictObject({
    nNeighbors: intIn('nNeighbors', 2, 200).default(15).describe(PARAM_DOCS.umap.nNeighbors.help),
    minDist: numberIn('minDist', 0, 1).default(0.1).describe(PARAM_DOCS.umap.minDist.help),
    spread: numberIn('spread', 0.5, 5).default(1).describe(PARAM_DOCS.umap.spread.help),
    /** Optional here: the default depends on n and is filled in by parseProjectionParams. */
    nEpochs: intIn('nEpochs', 10, 2000).optional().describe(PARAM_DOCS.umap.nEpochs.help),
    metric: z
      .enum(['euclidean', 'cosine'], { error: 'metric must be "euclidean" or "cosine"' })
      .default('euclidean')
      .describe(PARAM_DOCS.umap.metric.help),
    init: z.enum(['pca', 'random'], { error: 'init must be "pca" or "random"' }).default('pca').describe(PARAM_DOCS.umap.init.help),
  })
  // umap-learn raises "min_dist must be less than or equal to spread" (UMAP._validate_parameters).
  // Checked only when every field is valid, so an out-of-range minDist is reported once.
  .refine((p) => p.minDist <= p.spread, { error: 'minDist must not exceed spread', path: ['minDist'], when: (payload) => payload.issues.length === 0 });

const sammonSchema = z.strictObject({
  maxIterations: intIn('maxIterations', 1, 5000).default(SAMMON_DEFAULT_ITERATIONS).describe(PARAM_DOCS.sammon.maxIterations.help),
  tolerance: numberIn('tolerance', 0, 0.1).default(SAMMON_DEFAULT_TOLERANCE).describe(PARAM_DOCS.sammon.tolerance.help),
  metric: euclideanOnly('Sammon mapping'),
});

const tsneSchema = z.strictObject({
  perplexity: numberIn('perplexity', 5, 100).default(30).describe(PARAM_DOCS.tsne.perplexity.help),
  iterations: intIn('iterations', 250, 5000).default(1000).describe(PARAM_DOCS.tsne.iterations.help),
  learningRate: numberIn('learningRate', 1, 1000).default(10).describe(PARAM_DOCS.tsne.learningRate.help),
  init: z.enum(['random', 'pca'], { error: 'init must be "random" or "pca"' }).default('random').describe(PARAM_DOCS.tsne.init.help),
  metric: euclideanOnly('t-SNE'),
});

/** The schemas a form and the API validate against (checks that do not need the data). */
export const projectionParamsSchemas = {
  pca: pcaSchema,
  umap: umapSchema,
  sammon: sammonSchema,
  tsne: tsneSchema,
} as const;

export type PcaParams = z.output<typeof pcaSchema>;
/** UMAP settings after parseProjectionParams: nEpochs is always filled in. */
export type UmapParams = Omit<z.output<typeof umapSchema>, 'nEpochs'> & { nEpochs: number };
export type SammonParams = z.output<typeof sammonSchema>;
export type TsneParams = z.output<typeof tsneSchema>;

export interface ProjectionParamsByMethod {
  pca: PcaParams;
  umap: UmapParams;
  sammon: SammonParams;
  tsne: TsneParams;
}

/** One problem with the settings: where (a setting name, or "" for the whole object) and what. */
export interface ParamsIssue {
  path: string;
  message: string;
}

/**
 * Settings refused. `message` lists every problem ("umap settings: nNeighbors must be at most 200;
 * minDist must be at least 0"); `issues` has them one by one, for a form to put beside its fields.
 */
export class ProjectionParamsError extends RangeError {
  override readonly name = 'ProjectionParamsError';

  constructor(
    readonly method: string,
    readonly issues: ParamsIssue[],
  ) {
    super(`${method} settings: ${issues.map((issue) => issue.message).join('; ')}`);
  }
}

function issuesOf(error: z.ZodError): ParamsIssue[] {
  return error.issues.map((issue) => {
    const path = issue.path.map(String).join('.');
    if (issue.code === 'unrecognized_keys') {
      const keys = issue.keys.map((key) => JSON.stringify(key)).join(', ');
      return { path, message: `unknown setting${issue.keys.length > 1 ? 's' : ''} ${keys}` };
    }
    return { path, message: issue.message };
  });
}

function isMethod(method: unknown): method is ProjectionMethod {
  return typeof method === 'string' && (PROJECTION_METHODS as readonly string[]).includes(method);
}

/**
 * Validates `params` for `method` on data of n points and fills in every default.
 *
 * @param method - 'pca' | 'umap' | 'sammon' | 'tsne'.
 * @param params - the settings as received (an object; undefined or null means all defaults).
 * @param n - number of points the projection will run on (for the checks that depend on it).
 * @throws ProjectionParamsError naming every problem.
 */
export function parseProjectionParams<M extends ProjectionMethod>(method: M, params: unknown, n: number): ProjectionParamsByMethod[M];
export function parseProjectionParams(method: ProjectionMethod, params: unknown, n: number): ProjectionParamsByMethod[ProjectionMethod] {
  if (!isMethod(method)) {
    throw new ProjectionParamsError(String(method), [{ path: '', message: `unknown method ${JSON.stringify(method)}; expected one of ${PROJECTION_METHODS.join(', ')}` }]);
  }
  const input = params ?? {};
  const parsed = projectionParamsSchemas[method].safeParse(input);
  if (!parsed.success) throw new ProjectionParamsError(method, issuesOf(parsed.error));
  const issues: ParamsIssue[] = [];
  switch (method) {
    case 'pca': {
      if (n < 3) issues.push({ path: '', message: `PCA needs at least 3 points for a map, got ${n}` });
      check(method, issues);
      return parsed.data as PcaParams;
    }
    case 'umap': {
      const p = parsed.data as z.output<typeof umapSchema>;
      // umap-js refuses n ≤ nNeighbors ("Not enough data points"); the neighbourhood counts the point itself.
      if (p.nNeighbors > n - 1) issues.push({ path: 'nNeighbors', message: `nNeighbors must be at most n − 1 = ${n - 1} for ${n} points, got ${p.nNeighbors}` });
      check(method, issues);
      const nEpochs = p.nEpochs ?? (n > UMAP_EPOCHS_SWITCH ? 200 : 500);
      return { nNeighbors: p.nNeighbors, minDist: p.minDist, spread: p.spread, nEpochs, metric: p.metric, init: p.init };
    }
    case 'sammon': {
      if (n > SAMMON_POINT_LIMIT) issues.push({ path: '', message: `Sammon mapping takes at most ${SAMMON_POINT_LIMIT} points (its n(n − 1)/2 distances are kept in memory), got ${n}; use UMAP` });
      if (n < 3) issues.push({ path: '', message: `Sammon mapping needs at least 3 points, got ${n}` });
      check(method, issues);
      return parsed.data as SammonParams;
    }
    case 'tsne': {
      const p = parsed.data as TsneParams;
      if (n > TSNE_MAX_POINTS) issues.push({ path: '', message: `t-SNE takes at most ${TSNE_MAX_POINTS} points (it is exact, O(n²) memory and time), got ${n}; use UMAP` });
      // Rtsne / bhtsne refuse 3·perplexity > n − 1 ("Perplexity is too large for the number of
      // samples"): each point needs ~3·perplexity neighbours for its Gaussian to be calibrated.
      if (3 * p.perplexity >= n - 1) {
        issues.push({ path: 'perplexity', message: `perplexity must be less than (n − 1)/3 = ${formatNumber((n - 1) / 3)} for ${n} points, got ${p.perplexity}` });
      }
      check(method, issues);
      return p;
    }
  }
}

function check(method: ProjectionMethod, issues: ParamsIssue[]): void {
  if (issues.length > 0) throw new ProjectionParamsError(method, issues);
}

function formatNumber(value: number): string {
  return Number.isInteger(value) ? String(value) : value.toFixed(2);
}
