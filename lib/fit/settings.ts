/**
 * Settings of a factorization-machine fit, as the analyst gives them (form and API share this
 * schema; it imports nothing but zod so a client bundle may use it).
 *
 * The model (Rendle, "Factorization Machines", ICDM 2010, restricted to two categorical fields plus
 * covariates) is
 *
 *   y_ij ~ Likelihood(g⁻¹(μ + a_i + b_j + x_ijᵀβ + γ_i·δ_j + offset_ij)),
 *
 * with i the row entity, j the column entity, γ_i, δ_j ∈ ℝᴷ their latent factors. See lib/fit/model.ts.
 */
import { z } from 'zod';

export const LIKELIHOODS = ['gaussian', 'bernoulli', 'poisson'] as const;
export type Likelihood = (typeof LIKELIHOODS)[number];

export const FIT_METHODS = ['map', 'variational'] as const;
export type FitMethod = (typeof FIT_METHODS)[number];

/** Rank bounds: 1 is a single latent dimension; 64 keeps the factors small enough to store and map. */
export const MIN_RANK = 1;
export const MAX_RANK = 64;

const columnName = z.string().trim().min(1, 'Give the column name (as in the header) or its 1-based number.').max(200, 'Column names are at most 200 characters.');

/**
 * A covariate column. A bare name lets the fit decide the type: numeric when more than half of the
 * sampled non-blank cells are numbers (the import module's rule, so a stray "abc" in a numeric
 * column is reported as a bad value rather than turning the column categorical), else categorical.
 * Categorical columns are one-hot encoded with the first level seen as the reference (dropped, so
 * the indicators are not collinear with the intercept μ).
 */
export const covariateSpecSchema = z.union([
  columnName,
  z.strictObject({
    column: columnName,
    type: z.enum(['numeric', 'categorical'], { message: 'A covariate type is "numeric" or "categorical".' }),
  }),
]);
export type CovariateSpec = z.infer<typeof covariateSpecSchema>;

export const fitSettingsSchema = z
  .strictObject({
    /** Column naming the row entity i (e.g. shop). */
    rowColumn: columnName,
    /** Column naming the column entity j (e.g. book category). */
    columnColumn: columnName,
    /** Column holding the outcome y: any finite number (gaussian), 0/1 (bernoulli), a count ≥ 0 (poisson). */
    outcome: columnName,
    covariates: z.array(covariateSpecSchema).max(200, 'At most 200 covariates.').optional(),
    /**
     * Column added to the linear predictor with coefficient 1 (e.g. log footfall for counts). How its
     * values are read is `offsetScale`.
     */
    offset: columnName.optional(),
    /**
     * "log" (default): the offset column is already on the linear-predictor scale (log exposure for
     * Poisson) and is added as is. "exposure": the column holds a positive exposure E (footfall,
     * person-years) and log E is added, so for Poisson the expected count is proportional to E.
     */
    offsetScale: z.enum(['log', 'exposure'], { message: 'offsetScale is "log" or "exposure".' }).optional(),
    likelihood: z.enum(LIKELIHOODS, { message: 'The likelihood is "gaussian", "bernoulli" or "poisson".' }),
    /**
     * K, the number of latent dimensions (1–64). Larger K can fit more structure but needs more
     * observations per entity (each entity gets K + 1 parameters) and overfits sooner; the held-out
     * comparison and, with `hierarchical`, the ARD scales show whether extra dimensions earn their keep.
     */
    rank: z
      .number({ message: 'The rank is a whole number from 1 to 64.' })
      .int('The rank is a whole number from 1 to 64.')
      .min(MIN_RANK, 'The rank is at least 1.')
      .max(MAX_RANK, 'The rank is at most 64.'),
    /**
     * "map" (default): the posterior mode, fast. "variational": mean-field variational inference
     * started at the mode, giving draws of the factors and intervals for the main effects. It is an
     * approximation that tends to understate posterior spread and ignores correlations.
     */
    method: z.enum(FIT_METHODS, { message: 'The method is "map" or "variational".' }).optional(),
    /**
     * Automatic relevance determination: each latent dimension k gets its own prior scale τ_k,
     * learned from the data, so dimensions the data does not support shrink towards zero. Without it
     * every factor element has a Normal(0, 1) prior. Costs nothing extra; the shrinkage can remove a
     * weak but real dimension when data are few.
     */
    hierarchical: z.boolean().optional(),
    /**
     * Number of cross-validation folds, 2–20 (default 5). More folds train on more data (less
     * pessimistic held-out error) but cost one fit per fold per model. 0 skips cross-validation.
     */
    folds: z
      .number({ message: 'folds is a whole number: 0 (no cross-validation) or 2 to 20.' })
      .int('folds is a whole number: 0 (no cross-validation) or 2 to 20.')
      .refine((value) => value === 0 || (value >= 2 && value <= 20), 'folds is 0 (no cross-validation) or from 2 to 20.')
      .optional(),
    /** Seed of the random start, fold assignment and variational draws; same seed and data, same result. */
    seed: z
      .number({ message: 'The seed is a whole number from 0 to 4294967295.' })
      .int('The seed is a whole number from 0 to 4294967295.')
      .min(0, 'The seed is at least 0.')
      .max(4294967295, 'The seed is at most 4294967295.')
      .optional(),
    /**
     * σ, the prior standard deviation of the intercept-free main effects a_i, b_j and the covariate
     * effects β (per standard deviation of the covariate), on the linear-predictor scale. Range
     * 0.001–10000, default 1 (0.01 to 100 is typical). Small σ shrinks main effects towards zero
     * (robust for entities with few observations); large σ approaches unpenalised maximum
     * likelihood (badly determined for sparse entities, and for Bernoulli it lets separated
     * entities run off towards ±∞). The intercept μ is not penalised.
     */
    priorScale: z
      .number({ message: 'The prior scale is a positive number.' })
      .min(0.001, 'The prior scale is at least 0.001.')
      .max(10000, 'The prior scale is at most 10000.')
      .optional(),
    /** Number of posterior draws of the factors kept by the variational method, 10–1000 (default 200). */
    draws: z
      .number({ message: 'draws is a whole number from 10 to 1000.' })
      .int('draws is a whole number from 10 to 1000.')
      .min(10, 'Keep at least 10 draws.')
      .max(1000, 'Keep at most 1000 draws.')
      .optional(),
  })
  .refine((settings) => settings.rowColumn !== settings.columnColumn, {
    message: 'The row and column entities must be two different columns.',
    path: ['columnColumn'],
  })
  .refine((settings) => settings.outcome !== settings.rowColumn && settings.outcome !== settings.columnColumn, {
    message: 'The outcome cannot also be an entity column.',
    path: ['outcome'],
  })
  .refine((settings) => settings.offsetScale === undefined || settings.offset !== undefined, {
    message: 'offsetScale needs an offset column.',
    path: ['offsetScale'],
  });

export type FitSettings = z.infer<typeof fitSettingsSchema>;

/** Settings with every default filled in, which is what the numeric core works with and what is stored. */
export interface ResolvedFitSettings {
  rowColumn: string;
  columnColumn: string;
  outcome: string;
  covariates: CovariateSpec[];
  offset: string | null;
  offsetScale: 'log' | 'exposure';
  likelihood: Likelihood;
  rank: number;
  method: FitMethod;
  hierarchical: boolean;
  folds: number;
  seed: number;
  priorScale: number;
  draws: number;
}

export const DEFAULT_FOLDS = 5;
export const DEFAULT_SEED = 1;
export const DEFAULT_PRIOR_SCALE = 1;
export const DEFAULT_DRAWS = 200;

export function resolveFitSettings(settings: FitSettings): ResolvedFitSettings {
  return {
    rowColumn: settings.rowColumn,
    columnColumn: settings.columnColumn,
    outcome: settings.outcome,
    covariates: settings.covariates ?? [],
    offset: settings.offset ?? null,
    offsetScale: settings.offsetScale ?? 'log',
    likelihood: settings.likelihood,
    rank: settings.rank,
    method: settings.method ?? 'map',
    hierarchical: settings.hierarchical ?? false,
    folds: settings.folds ?? DEFAULT_FOLDS,
    seed: settings.seed ?? DEFAULT_SEED,
    priorScale: settings.priorScale ?? DEFAULT_PRIOR_SCALE,
    draws: settings.draws ?? DEFAULT_DRAWS,
  };
}
