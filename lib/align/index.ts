/**
 * Alignment of latent factors, which are identified only up to rotation, reflection and scale:
 * orthogonal Procrustes between two factor sets and generalised Procrustes for posterior draws.
 * Pure TypeScript on row-major typed arrays; no database, no framework.
 */
export type { RealMatrix } from './matrix';
export {
  alignOnto,
  orthogonalProcrustes,
  procrustesDisparity,
  type AlignOntoOptions,
  type OrthogonalProcrustesResult,
  type ProcrustesDisparityResult,
} from './procrustes';
export {
  GPA_DEFAULTS,
  generalisedProcrustes,
  naiveMean,
  type AlignedDraws,
  type GeneralisedProcrustesOptions,
  type GeneralisedProcrustesResult,
} from './gpa';
export { mulberry32, normalArray, normalGenerator, randomOrthogonal, type UniformGenerator } from './random';
