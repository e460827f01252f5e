/**
 * CLs from pseudo-experiments: the distributions of q̃_μ under the signal-plus-background
 * hypothesis μ and under the background-only hypothesis are sampled instead of taken from the
 * asymptotic formulae (CLs: Read, J. Phys. G 28 (2002) 2693; Junk, Nucl. Instrum. Meth. A 434
 * (1999) 435; q̃_μ: Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554).
 *
 * Each pseudo-experiment draws the counts from Poisson(ν_i(μ, θ̂̂(μ))) and the constraint centres
 * from N(θ̂̂_k(μ), 1), θ̂̂ being the conditional fit to the observed data (θ̂̂(0) for the
 * background-only hypothesis), then profiles θ again. The same seed is used at every μ, so CLs(μ)
 * is a deterministic function that the bracketing root finder can narrow.
 */
import { EXPECTED_KEYS, type ExpectedKey, type ExpectedLimits } from '../schemas/counting-model';
import { BAND_SIGMAS, FittedProfile, OneBinProfile, searchLimit, type ClsValues, type ProfileSource } from './asymptotic';
import { normalCdf } from './distributions';
import { Likelihood } from './fit';
import type { PreparedModel } from './model';
import { Random } from './rng';

// Module-scope aliases: cheaper than global lookups in sandboxed runtimes (test runners' VM contexts).
const { ceil, log, max, min, round, sqrt } = Math;
const INF = Number.POSITIVE_INFINITY;

/** q̃_μ of one bin without systematics, closed form (μ̂ = (n − b)/s). */
function oneBinQ(n: number, mu: number, s: number, b: number): number {
  const muHat = (n - b) / s;
  if (mu <= muHat) return 0;
  const nu = mu * s + b;
  let q: number;
  if (n === 0) q = 2 * nu;
  else q = 2 * (nu - n - n * log(nu / n));
  if (muHat < 0) q -= n === 0 ? 2 * b : 2 * (b - n - n * log(b / n));
  return q > 0 ? q : 0;
}

/** CLs+b and CLb of each reported quantity at one μ, with the counts behind them. */
export interface ToyPoint {
  mu: number;
  /** Observed first, then the five expected quantiles in EXPECTED_KEYS order. */
  cls: Float64Array;
  clsb: Float64Array;
  clb: Float64Array;
}

/** Seeds of the two hypotheses' streams: different, and the same at every μ. */
const BACKGROUND_STREAM = 0x2545f491;

export class ToyCalculator {
  /** Pseudo-experiments thrown so far (both hypotheses, all μ). */
  generated = 0;
  private readonly cache = new Map<number, ToyPoint>();
  private readonly qsb: Float64Array;
  private readonly qb: Float64Array;
  private readonly toyLikelihood: Likelihood | undefined;
  private readonly genSignal: Float64Array;
  private readonly genBackground: Float64Array;
  private readonly genTheta: Float64Array;
  private readonly thetaFit: Float64Array;

  constructor(
    private readonly model: PreparedModel,
    private readonly source: ProfileSource,
    readonly toys: number,
    readonly seed: number,
  ) {
    this.qsb = new Float64Array(toys);
    this.qb = new Float64Array(toys);
    this.toyLikelihood = source instanceof FittedProfile ? new Likelihood(model) : undefined;
    this.genSignal = new Float64Array(model.nBins);
    this.genBackground = new Float64Array(model.nBins);
    this.genTheta = new Float64Array(model.nPar);
    this.thetaFit = new Float64Array(model.nPar);
  }

  /** Fits that did not converge in pseudo-experiments, and all of their fits. */
  fitCounts(): { fits: number; failed: number } {
    return { fits: this.toyLikelihood?.fits ?? 0, failed: this.toyLikelihood?.failedFits ?? 0 };
  }

  /** CLs, CLs+b and CLb at μ for the observed data and the five expected quantiles (cached by μ). */
  evaluate(mu: number): ToyPoint {
    const hit = this.cache.get(mu);
    if (hit) return hit;
    const qObs = this.source.qObserved(mu);
    this.samplesAt(mu);
    const n = this.toys;
    const point: ToyPoint = { mu, cls: new Float64Array(6), clsb: new Float64Array(6), clb: new Float64Array(6) };
    const fill = (slot: number, q: number) => {
      const v = clsFromSorted(this.qsb, this.qb, q);
      point.clsb[slot] = v.clsb;
      point.clb[slot] = v.clb;
      point.cls[slot] = v.cls;
    };
    fill(0, qObs);
    EXPECTED_KEYS.forEach((key, j) => fill(j + 1, this.qb[expectedQuantileIndex(key, n)] as number));
    this.cache.set(mu, point);
    return point;
  }

  /**
   * q̃_μ of this calculator's pseudo-experiments drawn under μ and under μ = 0, each ascending
   * (views on buffers that the next call overwrites). The sampling behind `evaluate`, for callers
   * that merge pseudo-experiments from several calculators (chunks, shared/stats/toy-chunks.ts).
   */
  samplesAt(mu: number): { qsb: Float64Array; qb: Float64Array } {
    this.sample(mu, true, this.qsb);
    this.sample(mu, false, this.qb);
    this.qsb.sort();
    this.qb.sort();
    return { qsb: this.qsb, qb: this.qb };
  }

  /** Fills `out` with q̃_μ of pseudo-experiments drawn under μ (signal) or under μ = 0. */
  private sample(mu: number, signalHypothesis: boolean, out: Float64Array): void {
    const rng = new Random(signalHypothesis ? this.seed : this.seed ^ BACKGROUND_STREAM);
    const genMu = signalHypothesis ? mu : 0;
    this.generated += this.toys;
    const source = this.source;
    if (source instanceof OneBinProfile || this.toyLikelihood === undefined) {
      const s = this.model.signal[0] as number;
      const b = this.model.background[0] as number;
      const lambda = genMu * s + b;
      for (let t = 0; t < this.toys; t++) out[t] = oneBinQ(rng.poisson(lambda), mu, s, b);
      return;
    }
    const fitted = source as FittedProfile;
    const lik = this.toyLikelihood;
    const { nBins, nPar } = this.model;
    if (signalHypothesis) fitted.conditionalTheta(mu, this.genTheta);
    else this.genTheta.set(fitted.thetaAtZero);
    lik.expected(this.genTheta, this.genSignal, this.genBackground);
    for (let t = 0; t < this.toys; t++) {
      for (let i = 0; i < nBins; i++) {
        lik.data[i] = rng.poisson(genMu * (this.genSignal[i] as number) + (this.genBackground[i] as number));
      }
      for (let k = 0; k < nPar; k++) lik.globals[k] = (this.genTheta[k] as number) + rng.normal();
      this.thetaFit.set(this.genTheta);
      const free = lik.fitFree('zero', genMu, this.thetaFit);
      if (free.mu >= mu) {
        out[t] = 0;
        continue;
      }
      const conditional = lik.fitConditional(mu, this.thetaFit);
      const q = 2 * (conditional - free.nll);
      out[t] = q > 0 ? q : 0;
    }
  }
}

/**
 * CLs+b, CLb and CLs of the test-statistic value `q` from ascending samples of q̃_μ under the
 * signal-plus-background (`qsb`) and background-only (`qb`) hypotheses (equal sizes).
 */
export function clsFromSorted(qsb: Float64Array, qb: Float64Array, q: number): ClsValues {
  const n = qb.length;
  // Pseudo-experiments tie with the observed value when their data are the same: compare with
  // a tolerance above the fits' precision so that ties count as "at least as extreme".
  const threshold = q - 1e-7 * max(1, q);
  const clsb = countAtLeast(qsb, threshold) / n;
  const kb = countAtLeast(qb, threshold);
  // No background-only pseudo-experiment as extreme: CLb is below 1/n; take half a count.
  const clb = (kb > 0 ? kb : 0.5) / n;
  return { clsb, clb, cls: min(1, clsb / clb) };
}

/**
 * Index, in `n` ascending background-only samples, of the q̃_μ that stands for the expected
 * band N: the value exceeded with probability Φ(N) (a deficit, N < 0, gives a large q̃_μ and the
 * stronger limit).
 */
export function expectedQuantileIndex(key: ExpectedKey, n: number): number {
  const p = 1 - normalCdf(BAND_SIGMAS[key]);
  return min(n - 1, max(0, ceil(p * n) - 1));
}

/**
 * Monte-Carlo uncertainty of a limit μ from `n` pseudo-experiments per hypothesis: the binomial
 * errors of CLs+b and CLb propagated to CLs, then to μ through the slope −dCLs/dμ measured around
 * the limit (common practice). A flat CLs means the limit is not resolved better than 10 %.
 */
export function toyLimitError(at: ClsValues, n: number, slope: number, mu: number): number {
  const { cls, clsb, clb } = at;
  const relVar = (clsb > 0 ? (1 - clsb) / (n * clsb) : 1) + (clb > 0 ? (1 - clb) / (n * clb) : 1);
  const sigmaCls = cls * sqrt(relVar);
  return slope > 0 ? min(sigmaCls / slope, mu) : 0.1 * mu;
}

/** Number of entries ≥ threshold in an ascending array. */
function countAtLeast(sorted: Float64Array, threshold: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if ((sorted[mid] as number) < threshold) lo = mid + 1;
    else hi = mid;
  }
  return sorted.length - lo;
}

export interface ToyLimits {
  observed: number;
  expected: ExpectedLimits;
  observedError: number;
  expectedError: ExpectedLimits;
  atEdge: boolean;
  /** Fewest pseudo-experiments behind a CLs+b or CLb at a limit (for a warning). */
  fewestInTail: number;
  clsAt: (mu: number) => ClsValues;
}

/**
 * Limits from pseudo-experiments, each searched from its asymptotic counterpart. The Monte-Carlo
 * uncertainty propagates the binomial errors of CLs+b and CLb to μ through the slope of CLs(μ)
 * measured between 0.9 and 1.1 times the limit.
 */
export function toyLimits(calc: ToyCalculator, alpha: number, guesses: { observed: number; expected: ExpectedLimits }, muScale: number): ToyLimits {
  const lnAlpha = log(alpha);
  const n = calc.toys;
  let atEdge = false;
  let fewestInTail = INF;
  const solve = (slot: number, guess: number): { value: number; error: number } => {
    const result = searchLimit((mu) => log(max(calc.evaluate(mu).cls[slot] as number, 1e-300)) - lnAlpha, guess, muScale, 1e-4);
    atEdge ||= result.atEdge;
    const mu = result.value;
    const at = calc.evaluate(mu);
    const clsb = at.clsb[slot] as number;
    const clb = at.clb[slot] as number;
    fewestInTail = min(fewestInTail, round(clsb * n), round(clb * n));
    const cls = at.cls[slot] as number;
    const slope = ((calc.evaluate(0.9 * mu).cls[slot] as number) - (calc.evaluate(1.1 * mu).cls[slot] as number)) / (0.2 * mu);
    return { value: mu, error: toyLimitError({ cls, clsb, clb }, n, slope, mu) };
  };
  const obs = solve(0, guesses.observed);
  const expected = {} as ExpectedLimits;
  const expectedError = {} as ExpectedLimits;
  EXPECTED_KEYS.forEach((key: ExpectedKey, j) => {
    const r = solve(j + 1, guesses.expected[key]);
    expected[key] = r.value;
    expectedError[key] = r.error;
  });
  const clsAt = (mu: number): ClsValues => {
    const p = calc.evaluate(mu);
    return { cls: p.cls[0] as number, clsb: p.clsb[0] as number, clb: p.clb[0] as number };
  };
  return { observed: obs.value, expected, observedError: obs.error, expectedError, atEdge, fewestInTail, clsAt };
}
