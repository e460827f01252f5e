/**
 * Bandwright's statistics engine: CLs upper limits on the signal strength μ for counting models,
 * scans over a parameter grid, and excluded ranges against a theory curve. Pure TypeScript with no
 * platform dependency: the server's jobs and the app's previews call the same code.
 */
export { computeLimit, computeClsbLimit } from './limit';
export { computeScan } from './scan';
export { exclusionRanges, type ExcludedRange, type ExclusionRanges, type LimitCurve, type TheoryCurve } from './exclusion';
export { StatsInputError, type InputProblem } from './errors';
export {
  erfc,
  normalCdf,
  normalSf,
  logNormalSf,
  logNormalCdf,
  logErfc,
  normalPdf,
  normalQuantile,
  normalQuantileUpper,
  lnGamma,
  regularizedGammaP,
  regularizedGammaQ,
  logRegularizedGammaQ,
  poissonPmf,
  poissonCdf,
  logPoissonCdf,
  poissonQuantile,
  chiSquareCdf,
  chiSquareSf,
} from './distributions';
export { Random } from './rng';
export {
  EXPECTED_KEYS,
  countingModelSchema,
  limitOptionsSchema,
  limitResultSchema,
  scanPointSchema,
  scanPointResultSchema,
  type AsimovChoice,
  type ClsSample,
  type CountingModel,
  type CountingModelInput,
  type ExpectedKey,
  type ExpectedLimits,
  type LimitMethod,
  type LimitOptions,
  type LimitResult,
  type ScanPoint,
  type ScanPointResult,
  type SigmaBLimits,
} from '../schemas/counting-model';
export { fitNuisanceParameters, type NuisanceFit, type NuisancePull } from './pulls';
export { withSigmaB } from './scan';
export {
  computeToyPoint,
  decodeToySamples,
  encodeToySamples,
  mergeToyChunks,
  planToyPoint,
  toyChunks,
  toyChunkSizes,
  ToyChunkRun,
  ToyRunStopped,
  TOY_CHUNK_SIZE,
  TOY_GRID_POINTS,
  type ToyChunkResult,
  type ToyPlan,
  type ToyPointOptions,
} from './toy-chunks';
