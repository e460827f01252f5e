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
import { BAND_SIGMAS, FittedProfile, MU_RANGE, OneBinProfile, type ClsValues, type ProfileSource } from './asymptotic';
import { normalCdf } from './distributions';
import { Likelihood } from './fit';
import type { PreparedModel } from './model';
import { Random } from './rng';
import { findDecreasingRoot } from './roots';

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
  /** The test statistic each CLs was taken at (observed q̃_μ, then the background-only quantiles). */
  q: Float64Array;
}

/**
 * How many pseudo-experiments of each hypothesis must lie at or beyond the test statistic at a
 * limit: a tail count k estimates CLs+b or CLb with relative error ≈ 1/√k (binomial), 22% for 20
 * (common practice for Monte-Carlo p-values). The −2σ edge is the hardest: there CLb ≈ Φ(−2) =
 * 2.3% and CLs+b = α·CLb, so it needs n ≥ 20/(α·Φ(−2)) per hypothesis (17,600 at 95% CL, 8,800
 * at 90%, 88,000 at 99%); a deficit can make the observed limit need more (its CLb is small).
 */
export const MIN_TAIL_TOYS = 20;

/** Pseudo-experiments per hypothesis for which the −2σ edge meets MIN_TAIL_TOYS (rounded up to 1000). */
export function toysForBands(alpha: number): number {
  return 1000 * ceil(MIN_TAIL_TOYS / (alpha * normalCdf(BAND_SIGMAS['-2'])) / 1000);
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
    const point: ToyPoint = { mu, cls: new Float64Array(6), clsb: new Float64Array(6), clb: new Float64Array(6), q: new Float64Array(6) };
    const fill = (slot: number, q: number) => {
      const v = clsFromSorted(this.qsb, this.qb, q);
      point.q[slot] = q;
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
  /** Pseudo-experiments per hypothesis that would put MIN_TAIL_TOYS behind every CLs+b and CLb at a limit. */
  toysNeeded: number;
  clsAt: (mu: number) => ClsValues;
}

/**
 * The order in which the band edges are searched, each bounded by the one before it: the median
 * first, then outwards. `below`: the edge lies at or below its neighbour's limit; `above`: at or above.
 */
const BAND_SEARCH: ReadonlyArray<{ key: ExpectedKey; neighbour?: ExpectedKey; side?: 'below' | 'above' }> = [
  { key: '0' },
  { key: '-1', neighbour: '0', side: 'below' },
  { key: '-2', neighbour: '-1', side: 'below' },
  { key: '1', neighbour: '0', side: 'above' },
  { key: '2', neighbour: '1', side: 'above' },
];

/**
 * Limits from pseudo-experiments, each searched from its asymptotic counterpart. The Monte-Carlo
 * uncertainty propagates the binomial errors of CLs+b and CLb to μ through the slope of CLs(μ)
 * measured between 0.9 and 1.1 times the limit.
 *
 * The band edges are never inverted: their CLs(μ) come from increasing quantiles of one
 * background-only sample, ordered in expectation but not toy by toy, and a step-shaped CLs(μ) can
 * cross α more than once. So each edge is searched only on its side of its inner neighbour's limit
 * (−1σ below the median, −2σ below −1σ, +1σ above it, +2σ above +1σ); where it has no crossing
 * there, or where its quantile is the same test statistic as the neighbour's (discrete counts:
 * the same number of events), it takes the neighbour's limit — a tie, not an edge of the search.
 */
export function toyLimits(calc: ToyCalculator, alpha: number, guesses: { observed: number; expected: ExpectedLimits }, muScale: number): ToyLimits {
  const lnAlpha = log(alpha);
  const n = calc.toys;
  const searchLow = MU_RANGE.low * muScale;
  const searchHigh = MU_RANGE.high * muScale;
  let atEdge = false;
  let fewestInTail = INF;
  let smallestTail = 1;
  const measure = (slot: number, mu: number): { value: number; error: number } => {
    const at = calc.evaluate(mu);
    const clsb = at.clsb[slot] as number;
    const clb = at.clb[slot] as number;
    fewestInTail = min(fewestInTail, round(clsb * n), round(clb * n));
    // A tail that is empty here still holds fewer than one pseudo-experiment in n.
    smallestTail = min(smallestTail, max(clsb, 0.5 / n), max(clb, 0.5 / n));
    const cls = at.cls[slot] as number;
    const slope = ((calc.evaluate(0.9 * mu).cls[slot] as number) - (calc.evaluate(1.1 * mu).cls[slot] as number)) / (0.2 * mu);
    return { value: mu, error: toyLimitError({ cls, clsb, clb }, n, slope, mu) };
  };
  const solve = (slot: number, guess: number, low: number, high: number, tie?: number): { value: number; error: number } => {
    const f = (mu: number) => log(max(calc.evaluate(mu).cls[slot] as number, 1e-300)) - lnAlpha;
    const root = findDecreasingRoot(f, min(max(guess, low), high), low, high, 1e-4);
    // Out of its bracket at the neighbour's side: the tie; at the other end: the edge of the search.
    if (!root.bracketed && root.x !== tie) atEdge = true;
    return measure(slot, root.x);
  };
  const obs = solve(0, guesses.observed, searchLow, searchHigh);
  const expected = {} as ExpectedLimits;
  const expectedError = {} as ExpectedLimits;
  for (const { key, neighbour, side } of BAND_SEARCH) {
    const slot = EXPECTED_KEYS.indexOf(key) + 1;
    let r: { value: number; error: number };
    if (neighbour === undefined) {
      r = solve(slot, guesses.expected[key], searchLow, searchHigh);
    } else {
      const bound = expected[neighbour];
      const at = calc.evaluate(bound);
      if (at.q[slot] === at.q[EXPECTED_KEYS.indexOf(neighbour) + 1]) r = measure(slot, bound);
      else if (side === 'below') r = solve(slot, guesses.expected[key], searchLow, bound, bound);
      else r = solve(slot, guesses.expected[key], bound, searchHigh, bound);
    }
    expected[key] = r.value;
    expectedError[key] = r.error;
  }
  const clsAt = (mu: number): ClsValues => {
    const p = calc.evaluate(mu);
    return { cls: p.cls[0] as number, clsb: p.clsb[0] as number, clb: p.clb[0] as number };
  };
  const toysNeeded = ceil(MIN_TAIL_TOYS / smallestTail);
  return { observed: obs.value, expected, observedError: obs.error, expectedError, atEdge, fewestInTail, toysNeeded, clsAt };
}
