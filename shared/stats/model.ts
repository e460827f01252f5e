/**
 * Validation of counting models and their flat, typed-array form used by the likelihood.
 */
import { countingModelSchema, SIGNAL_PROCESS, type CountingModel } from '../schemas/counting-model';
import { errorFromZod, formatPath, StatsInputError } from './errors';

/**
 * A validated counting model in flat arrays. Process 0 is the signal, processes 1… the
 * backgrounds. Layouts: yields[p·nBins + i]; logEffects[(k·nProc + p)·nBins + i] = ln(1 + δ_kpi).
 */
export interface PreparedModel {
  nBins: number;
  nProc: number;
  nPar: number;
  observed: Float64Array;
  yields: Float64Array;
  logEffects: Float64Array;
  /** affects[k·nProc + p] = 1 when systematic k changes process p in some bin. */
  affects: Uint8Array;
  /**
   * Bins systematic k can change: [binFrom[k], binTo[k]) holds every bin with a non-zero effect of
   * k on any process (empty, 0 to 0, when none). Outside it ∂ν_i/∂θ_k is exactly 0, so the fit's
   * sums skip those bins with the same result; a combination of channels (shared/combine/joint.ts)
   * has most parameters acting in one channel's bins only.
   */
  binFrom: Int32Array;
  binTo: Int32Array;
  /** The same per systematic and process: [effectFrom[k·nProc + p], effectTo[k·nProc + p]). */
  effectFrom: Int32Array;
  effectTo: Int32Array;
  processNames: string[];
  parameterNames: string[];
  /** Nominal signal and total background per bin. */
  signal: Float64Array;
  background: Float64Array;
  cl: number | undefined;
}

/** Validates a counting model (zod schema plus semantic checks); throws StatsInputError naming the field. */
export function parseCountingModel(input: unknown, fieldPrefix = ''): CountingModel {
  const parsed = countingModelSchema.safeParse(input);
  if (!parsed.success) throw errorFromZod(parsed.error, fieldPrefix);
  return parsed.data;
}

/** Validates and flattens a counting model for the likelihood. */
export function prepareModel(input: unknown, fieldPrefix = ''): PreparedModel {
  const model = parseCountingModel(input, fieldPrefix);
  const nBins = model.observed.length;
  const nProc = 1 + model.backgrounds.length;
  const nPar = model.systematics.length;
  const processNames = [SIGNAL_PROCESS, ...model.backgrounds.map((b) => b.name)];
  const yields = new Float64Array(nProc * nBins);
  yields.set(model.signal, 0);
  model.backgrounds.forEach((b, j) => yields.set(b.yields, (j + 1) * nBins));
  const logEffects = new Float64Array(nPar * nProc * nBins);
  const affects = new Uint8Array(nPar * nProc);
  model.systematics.forEach((syst, k) => {
    for (const [process, effect] of Object.entries(syst.effects)) {
      const p = processNames.indexOf(process);
      const base = (k * nProc + p) * nBins;
      for (let i = 0; i < nBins; i++) {
        const delta = typeof effect === 'number' ? effect : (effect[i] as number);
        const value = Math.log1p(delta);
        logEffects[base + i] = value;
        if (value !== 0) affects[k * nProc + p] = 1;
      }
    }
  });
  const binFrom = new Int32Array(nPar);
  const binTo = new Int32Array(nPar);
  const effectFrom = new Int32Array(nPar * nProc);
  const effectTo = new Int32Array(nPar * nProc);
  for (let k = 0; k < nPar; k++) {
    let from = nBins;
    let to = 0;
    for (let p = 0; p < nProc; p++) {
      const base = (k * nProc + p) * nBins;
      let pFrom = nBins;
      let pTo = 0;
      for (let i = 0; i < nBins; i++) {
        if (logEffects[base + i] !== 0) {
          if (i < pFrom) pFrom = i;
          pTo = i + 1;
        }
      }
      if (pFrom < pTo) {
        effectFrom[k * nProc + p] = pFrom;
        effectTo[k * nProc + p] = pTo;
        if (pFrom < from) from = pFrom;
        if (pTo > to) to = pTo;
      }
    }
    binFrom[k] = from < to ? from : 0;
    binTo[k] = from < to ? to : 0;
  }
  const signal = Float64Array.from(model.signal);
  const background = new Float64Array(nBins);
  for (let p = 1; p < nProc; p++) for (let i = 0; i < nBins; i++) background[i] = (background[i] as number) + (yields[p * nBins + i] as number);
  for (let i = 0; i < nBins; i++) {
    if ((model.observed[i] as number) > 0 && signal[i] === 0 && background[i] === 0) {
      throw new StatsInputError(
        formatPath(['observed', i], fieldPrefix),
        `has ${model.observed[i]} events in a bin where the signal and every background are zero: no signal strength can explain them`,
      );
    }
  }
  return {
    nBins,
    nProc,
    nPar,
    observed: Float64Array.from(model.observed),
    yields,
    logEffects,
    affects,
    binFrom,
    binTo,
    effectFrom,
    effectTo,
    processNames,
    parameterNames: model.systematics.map((s) => s.name),
    signal,
    background,
    cl: model.cl,
  };
}
