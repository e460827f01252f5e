/**
 * computeLimit: upper limits on the signal strength μ at a confidence level, observed and
 * expected (median and ±1σ/±2σ bands), by the asymptotic formulae, pseudo-experiments or the exact
 * one-bin Poisson calculation.
 */
import {
  limitOptionsSchema,
  type AsimovChoice,
  type ClsSample,
  type CountingModelInput,
  type LimitMethod,
  type LimitOptions,
  type LimitResult,
} from '../schemas/counting-model';
import {
  asymptoticCls,
  asymptoticExpected,
  asymptoticObserved,
  FittedProfile,
  profileSource,
  sampleCurve,
  type ClsValues,
} from './asymptotic';
import { errorFromZod } from './errors';
import { exactLimits } from './exact';
import { prepareModel, type PreparedModel } from './model';
import { MIN_TAIL_TOYS, ToyCalculator, toyLimits, toysForBands } from './toys';

/** Options after defaults. */
export interface ResolvedOptions {
  cl: number | undefined;
  method: LimitMethod;
  asimov: AsimovChoice;
  /** Pseudo-experiments per hypothesis; undefined: enough for the −2σ edge at the CL used (toysForBands). */
  toys: number | undefined;
  seed: number;
  curvePoints: number;
}

export const DEFAULT_CURVE_POINTS = 40;
/** Below this many expected background events in a bin that carries signal, asymptotics are doubtful. */
export const FEW_EVENTS = 5;

/** Validates limit options (throws StatsInputError with fields like `options.method`). */
export function resolveOptions(options: unknown, fieldPrefix = 'options'): ResolvedOptions {
  const parsed = limitOptionsSchema.safeParse(options ?? {});
  if (!parsed.success) throw errorFromZod(parsed.error, fieldPrefix);
  const o = parsed.data;
  const curve = o.clsCurve;
  return {
    cl: o.cl,
    method: o.method ?? 'asymptotic',
    asimov: o.asimov ?? 'profiled',
    toys: o.toys,
    seed: o.seed ?? 1,
    curvePoints: curve === true ? DEFAULT_CURVE_POINTS : typeof curve === 'number' ? curve : 0,
  };
}

/**
 * Upper limit on μ for a counting model.
 *
 * @param model the counting model (validated here; bad input throws `StatsInputError` naming the field)
 * @param options `{ cl?, method?: "asymptotic" | "toys" | "exact", asimov?: "profiled" | "nominal", toys?, seed?, clsCurve? }`
 * @returns observed and expected limits on μ (`expected["-2"]` is the lower, stronger edge of the
 *   ±2σ band, `"0"` the median), μ̂, warnings, optionally the CLs-vs-μ samples, and for
 *   pseudo-experiments their Monte-Carlo uncertainty.
 */
export function computeLimit(model: CountingModelInput, options: LimitOptions = {}): LimitResult {
  const resolved = resolveOptions(options);
  const prepared = prepareModel(model);
  return limitForPrepared(prepared, resolved);
}

/**
 * Observed CLs+b upper limit on μ (asymptotic): the limit without the CLb protection, which a CLs
 * limit is never below. For diagnostics and comparisons.
 */
export function computeClsbLimit(model: CountingModelInput, options: LimitOptions = {}): number {
  const resolved = resolveOptions(options);
  const prepared = prepareModel(model);
  const alpha = 1 - (resolved.cl ?? prepared.cl ?? 0.95);
  const source = profileSource(prepared, resolved.asimov);
  const expected = asymptoticExpected(source, alpha);
  return asymptoticObserved(source, alpha, expected.limits['0'] + Math.max(0, source.muHat), true).value;
}

/** The limit of an already prepared model (used by computeLimit and computeScan). */
export function limitForPrepared(model: PreparedModel, options: ResolvedOptions): LimitResult {
  const cl = options.cl ?? model.cl ?? 0.95;
  const alpha = 1 - cl;
  const warnings: string[] = [];

  if (options.method === 'exact') {
    const exact = exactLimits(model, alpha);
    if (exact.atEdge) warnings.push(edgeWarning());
    const result: LimitResult = { method: 'exact', cl, observed: exact.observed, expected: exact.expected, muHat: exact.muHat, warnings };
    if (options.curvePoints > 0) result.cls = curve(exact.clsAt, exact.observed, exact.expected['2'], options.curvePoints);
    return result;
  }

  const source = profileSource(model, options.asimov);
  const asimovUsed = source instanceof FittedProfile ? source.asimovUsed : options.asimov;
  const expected = asymptoticExpected(source, alpha);
  const observed = asymptoticObserved(source, alpha, expected.limits['0'] + Math.max(0, source.muHat));
  warnings.push(...source.notes);

  if (options.method === 'toys') {
    const perHypothesis = options.toys ?? toysForBands(alpha);
    const calc = new ToyCalculator(model, source, perHypothesis, options.seed);
    const toys = toyLimits(calc, alpha, { observed: observed.value, expected: expected.limits }, source.muScale);
    if (toys.atEdge) warnings.push(edgeWarning());
    if (toys.fewestInTail < MIN_TAIL_TOYS) warnings.push(fewToysWarning(toys.fewestInTail, toys.toysNeeded));
    const result: LimitResult = {
      method: 'toys',
      cl,
      asimov: asimovUsed,
      observed: toys.observed,
      expected: toys.expected,
      muHat: source.muHat,
      observedError: toys.observedError,
      expectedError: toys.expectedError,
      warnings,
    };
    if (options.curvePoints > 0) result.cls = curve(toys.clsAt, toys.observed, toys.expected['2'], options.curvePoints);
    const fitWarning = fitFailureWarning(addCounts(source.fitCounts(), calc.fitCounts()));
    if (fitWarning) warnings.push(fitWarning);
    result.toys = { perHypothesis, total: calc.generated, seed: options.seed };
    return result;
  }

  if (observed.atEdge || expected.atEdge) warnings.push(edgeWarning());
  const few = fewEventsWarning(model);
  if (few) warnings.push(few);
  const result: LimitResult = {
    method: 'asymptotic',
    cl,
    asimov: asimovUsed,
    observed: observed.value,
    expected: expected.limits,
    muHat: source.muHat,
    warnings,
  };
  if (options.curvePoints > 0) {
    const values: ClsValues = { cls: 1, clsb: 1, clb: 1 };
    const at = (mu: number): ClsValues => ({ ...asymptoticCls(source.qObserved(mu), source.qAsimov(mu), values) });
    result.cls = curve(at, observed.value, expected.limits['2'], options.curvePoints);
  }
  const fitWarning = fitFailureWarning(source.fitCounts());
  if (fitWarning) warnings.push(fitWarning);
  return result;
}

function curve(at: (mu: number) => ClsValues, observed: number, expectedWeakest: number, points: number): ClsSample[] {
  const top = Math.max(observed, expectedWeakest);
  return sampleCurve(at, 1.5 * (Number.isFinite(top) && top > 0 ? top : 1), points);
}

function addCounts(a: { fits: number; failed: number }, b: { fits: number; failed: number }) {
  return { fits: a.fits + b.fits, failed: a.failed + b.failed };
}

export function edgeWarning(): string {
  return 'A limit sits at the edge of the range of μ searched: the data barely constrain μ; treat that limit as a bound of the search, not a result.';
}

/**
 * The warning for too few pseudo-experiments beyond a limit's test statistic, with how many per
 * hypothesis would put MIN_TAIL_TOYS there (rounded up to two significant digits).
 */
export function fewToysWarning(fewest: number, needed: number): string {
  const digits = 10 ** Math.max(0, Math.floor(Math.log10(needed)) - 1);
  const rounded = Math.ceil(needed / digits) * digits;
  return `Only ${fewest} ${fewest === 1 ? 'pseudo-experiment falls' : 'pseudo-experiments fall'} beyond the observed or expected test statistic at a limit: the Monte-Carlo uncertainty is large (${MIN_TAIL_TOYS} or more are needed for about ±20%); use at least ${rounded.toLocaleString('en')} pseudo-experiments per hypothesis.`;
}

/** The warning for fits that did not converge, or undefined when all did. */
export function fitFailureWarning(counts: { fits: number; failed: number }): string | undefined {
  if (counts.failed === 0) return undefined;
  return `${counts.failed} of ${counts.fits} likelihood fits did not converge; the result uses the best point each of them reached.`;
}

/** Warns when bins that carry signal expect few background events (asymptotic formulae doubtful). */
export function fewEventsWarning(model: PreparedModel): string | undefined {
  let totalSignal = 0;
  for (let i = 0; i < model.nBins; i++) totalSignal += model.signal[i] as number;
  const bins: number[] = [];
  for (let i = 0; i < model.nBins; i++) {
    if ((model.signal[i] as number) >= 0.01 * totalSignal && (model.background[i] as number) < FEW_EVENTS) bins.push(i);
  }
  if (bins.length === 0) return undefined;
  // Bins are numbered from 1 here, as people count them (field paths elsewhere count from 0).
  const shown = bins.slice(0, 5).map((i) => i + 1).join(', ') + (bins.length > 5 ? ` and ${bins.length - 5} more` : '');
  return `Few expected events: bin${bins.length === 1 ? '' : 's'} ${shown} expect${bins.length === 1 ? 's' : ''} fewer than ${FEW_EVENTS} background events, where the asymptotic formulae may be inaccurate; consider pseudo-experiments (method "toys")${model.nBins === 1 && model.nPar === 0 ? ' or the exact method' : ''}.`;
}
