/**
 * Fitting a factorization machine to a long table of observations (pure: no database). The entry
 * point is fitFactorizationMachine; the table becomes a Design through buildDesign (in memory),
 * ObservationReader (row by row) or readObservationFile (streamed from disk). Settings and their
 * zod schema, shared with the form, are in ./settings.
 */
export { fitFactorizationMachine, metricsFor, FitCancelledError, COLD_START_THRESHOLD } from './fit-factorization-machine';
export type { FitOptions, FitProgress, ProgressCallback, FitResult, FitMetrics, ModelMetrics, Convergence, Interval, MainEffectIntervals, ColdStart, FitPhase } from './fit-factorization-machine';
export { buildDesign, ObservationReader, checkRank, parameterCount, separationWarnings } from './observations';
export type { Design, ObservationColumns } from './observations';
export { readObservationFile } from './read-observations';
export { fitMap, prepareDesign, toFittedModel } from './map';
export type { FittedModel, MapOptions, MapFit, ModelKind, ModelSpec, PreparedDesign } from './map';
export { predictPairs, rowAffinity } from './predict';
export type { PairPrediction, PredictOptions } from './predict';
export { auc, logLoss, meanPoissonDeviance, rmse } from './metrics';
export type { Calibration, CalibrationBin, PosteriorPredictive, OutcomeHistogram, PredictiveStatistic } from './ppc';
export type { VariationalOptions } from './variational';
export { fitSettingsSchema, resolveFitSettings } from './settings';
export type { FitSettings, ResolvedFitSettings, Likelihood, FitMethod } from './settings';
