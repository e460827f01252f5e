/**
 * Asymptotic CLs upper limits from the one-sided profile-likelihood test statistic q̃_μ with μ̂
 * bounded below by zero, its asymptotic distribution and the Asimov dataset:
 * G. Cowan, K. Cranmer, E. Gross, O. Vitells, "Asymptotic formulae for likelihood-based tests of
 * new physics", Eur. Phys. J. C 71 (2011) 1554 (below: CCGV). CLs = CLs+b / CLb:
 * A. L. Read, J. Phys. G 28 (2002) 2693; T. Junk, Nucl. Instrum. Meth. A 434 (1999) 435.
 */
import { EXPECTED_KEYS, type AsimovChoice, type ClsSample, type ExpectedLimits } from '../schemas/counting-model';
import { logNormalCdf, logNormalSf, normalCdf, normalQuantileUpper } from './distributions';
import { Likelihood } from './fit';
import type { PreparedModel } from './model';
import { findDecreasingRoot, type RootResult } from './roots';

// Module-scope aliases: cheaper than global lookups in sandboxed runtimes (test runners' VM contexts).
const { exp, log, max, sqrt } = Math;
const INF = Number.POSITIVE_INFINITY;
const LN2 = Math.LN2;
const isFiniteNumber = Number.isFinite;

/** The profile-likelihood quantities a limit needs, on observed and Asimov data. */
export interface ProfileSource {
  /** Unconstrained best-fit μ̂ (may be negative). */
  readonly muHat: number;
  /** Best fit with μ ≥ 0 (q̃_μ is zero for μ at or below it). */
  readonly muHatBounded: number;
  /** A natural scale of μ: the μ that gives one signal event in total. */
  readonly muScale: number;
  /** q̃_μ on the observed data. */
  qObserved(mu: number): number;
  /** q_μ,A on the background-only Asimov dataset (its μ̂ is 0, so q̃ = q there). */
  qAsimov(mu: number): number;
  /** Fits done and fits that did not converge. */
  fitCounts(): { fits: number; failed: number };
  /** Notes gathered while setting up (plain words). */
  readonly notes: string[];
}

/** 2·(ν − n − n ln(ν/n)): twice the Poisson −ln L of ν relative to its best value n. */
function poissonDeviance(nu: number, n: number): number {
  if (n === 0) return 2 * nu;
  if (!(nu > 0)) return INF;
  return 2 * (nu - n - n * log(nu / n));
}

/**
 * One bin without nuisance parameters: everything has a closed form (μ̂ = (n − b)/s), which is what
 * makes a one-bin limit take microseconds.
 */
export class OneBinProfile implements ProfileSource {
  readonly muHat: number;
  readonly muHatBounded: number;
  readonly muScale: number;
  readonly notes: string[] = [];
  private readonly qAtZero: number;

  constructor(
    private readonly n: number,
    private readonly s: number,
    private readonly b: number,
  ) {
    this.muHat = (n - b) / s;
    this.muHatBounded = max(0, this.muHat);
    this.muScale = 1 / s;
    this.qAtZero = this.muHat < 0 ? poissonDeviance(b, n) : 0;
  }

  qObserved(mu: number): number {
    if (mu <= this.muHatBounded) return 0;
    // CCGV eq. (16): for μ̂ < 0 the denominator is the fit at μ = 0.
    return max(0, poissonDeviance(mu * this.s + this.b, this.n) - this.qAtZero);
  }

  qAsimov(mu: number): number {
    return poissonDeviance(mu * this.s + this.b, this.b);
  }

  fitCounts(): { fits: number; failed: number } {
    return { fits: 0, failed: 0 };
  }
}

/**
 * Any counting model: profiles the nuisance parameters by fits. The Asimov dataset is the
 * background-only expectation with the nuisance parameters at their fit to the observed data
 * under μ = 0 and the constraint centres moved there ("profiled"), or all at 0 ("nominal").
 */
export class FittedProfile implements ProfileSource {
  readonly muHat: number;
  readonly muHatBounded: number;
  readonly muScale: number;
  readonly notes: string[] = [];
  readonly observedLikelihood: Likelihood;
  readonly asimovLikelihood: Likelihood;
  /** θ̂̂(0) on the observed data, the background-only fit. */
  readonly thetaAtZero: Float64Array;
  readonly asimovUsed: AsimovChoice;
  private readonly nllMinBounded: number;
  private readonly warmObserved: Float64Array;
  private readonly warmAsimov: Float64Array;

  constructor(model: PreparedModel, asimov: AsimovChoice) {
    const obs = new Likelihood(model);
    this.observedLikelihood = obs;
    const nPar = model.nPar;
    let sumS = 0;
    let sumB = 0;
    let sumN = 0;
    for (let i = 0; i < model.nBins; i++) {
      sumS += model.signal[i] as number;
      sumB += model.background[i] as number;
      sumN += model.observed[i] as number;
    }
    this.muScale = 1 / sumS;
    const thetaHat = new Float64Array(nPar);
    const bounded = obs.fitFree('zero', max(0, (sumN - sumB) / sumS), thetaHat);
    this.muHatBounded = bounded.mu;
    this.nllMinBounded = bounded.nll;
    if (bounded.mu > 0) {
      this.muHat = bounded.mu;
    } else {
      // μ̂ < 0 is reported but used by nothing: q̃_μ takes the μ = 0 fit then. With empty bins its
      // minimum can sit on the ν_i = 0 boundary, which a Newton fit approaches without meeting the
      // convergence test; that is not a fit the limits depend on, so it is not counted as failed.
      const failedBefore = obs.failedFits;
      const thetaFree = Float64Array.from(thetaHat);
      this.muHat = obs.fitFree('feasible', 0, thetaFree).mu;
      obs.failedFits = failedBefore;
    }
    this.thetaAtZero = new Float64Array(nPar);
    const nllZero = obs.fitConditional(0, this.thetaAtZero);
    this.asimovUsed = asimov;
    if (asimov === 'profiled' && !isFiniteNumber(nllZero)) {
      // Observed events where no background is expected: no background-only fit exists.
      this.asimovUsed = 'nominal';
      this.notes.push('The background-only fit to the observed data is impossible (events where no background is expected); the expected limits use the nominal Asimov dataset.');
    }
    const thetaA = this.asimovUsed === 'profiled' ? this.thetaAtZero : new Float64Array(nPar);
    const asimovLik = new Likelihood(model);
    const s = new Float64Array(model.nBins);
    const b = new Float64Array(model.nBins);
    asimovLik.expected(thetaA, s, b);
    // Asimov counts are the expectation itself, not rounded (CCGV sect. 3.1).
    asimovLik.data.set(b);
    asimovLik.globals.set(thetaA);
    this.asimovLikelihood = asimovLik;
    this.warmObserved = Float64Array.from(this.thetaAtZero);
    this.warmAsimov = Float64Array.from(thetaA);
  }

  qObserved(mu: number): number {
    if (mu <= this.muHatBounded) return 0;
    const nll = this.observedLikelihood.fitConditional(mu, this.warmObserved);
    return max(0, 2 * (nll - this.nllMinBounded));
  }

  /** θ̂̂(μ) on the observed data, written to `out`. */
  conditionalTheta(mu: number, out: Float64Array): number {
    out.set(this.warmObserved);
    return this.observedLikelihood.fitConditional(mu, out);
  }

  qAsimov(mu: number): number {
    // The Asimov −ln L is 0 at its best fit (μ = 0, θ = its constraint centres).
    return max(0, 2 * this.asimovLikelihood.fitConditional(mu, this.warmAsimov));
  }

  fitCounts(): { fits: number; failed: number } {
    return {
      fits: this.observedLikelihood.fits + this.asimovLikelihood.fits,
      failed: this.observedLikelihood.failedFits + this.asimovLikelihood.failedFits,
    };
  }
}

/** Picks the closed form for one bin without systematics, fits otherwise. */
export function profileSource(model: PreparedModel, asimov: AsimovChoice): ProfileSource {
  if (model.nBins === 1 && model.nPar === 0) {
    return new OneBinProfile(model.observed[0] as number, model.signal[0] as number, model.background[0] as number);
  }
  return new FittedProfile(model, asimov);
}

export interface ClsValues {
  cls: number;
  clsb: number;
  clb: number;
}

/** ln CLs+b and ln CLb. */
export interface LogClValues {
  lnClsb: number;
  lnClb: number;
}

/**
 * ln CLs+b and ln CLb from q̃_μ (observed) and q_μ,A, with σ² = μ²/q_μ,A (CCGV eqs. (30)-(32)).
 * For q̃_μ ≤ μ²/σ²: CLs+b = 1 − Φ(√q̃_μ), CLb = Φ(√q_μ,A − √q̃_μ); for q̃_μ > μ²/σ² (reached by
 * deficits, μ̂ < 0) the second branch of CCGV eqs. (65)-(66): CLs+b = 1 − Φ((q̃_μ + μ²/σ²)/(2μ/σ)),
 * CLb = 1 − Φ((q̃_μ − μ²/σ²)/(2μ/σ)). In that branch both tails underflow for a deep deficit
 * over a large background (arguments beyond 38.5) while their ratio stays ordinary
 * (ln CLs → −q̃_μ/2 as q_μ,A → 0): the logs are computed directly.
 */
export function asymptoticLogCl(q: number, qA: number, out: LogClValues): LogClValues {
  if (!(qA > 0)) {
    out.lnClsb = -LN2;
    out.lnClb = -LN2;
    return out;
  }
  if (q === INF) {
    // No fit at this μ explains the data at all: excluded outright.
    out.lnClsb = -INF;
    out.lnClb = 0;
    return out;
  }
  const sA = sqrt(qA);
  if (q <= qA) {
    const sq = sqrt(q);
    out.lnClsb = logNormalSf(sq);
    out.lnClb = logNormalCdf(sA - sq);
  } else {
    out.lnClsb = logNormalSf((q + qA) / (2 * sA));
    out.lnClb = logNormalSf((q - qA) / (2 * sA));
  }
  return out;
}

const logScratch: LogClValues = { lnClsb: 0, lnClb: 0 };

/** CLs+b, CLb and CLs from q̃_μ and q_μ,A (see asymptoticLogCl); CLs is exp(ln CLs+b − ln CLb). */
export function asymptoticCls(q: number, qA: number, out?: ClsValues): ClsValues {
  const res = out ?? { cls: 1, clsb: 1, clb: 1 };
  const l = asymptoticLogCl(q, qA, logScratch);
  res.clsb = exp(l.lnClsb);
  res.clb = exp(l.lnClb);
  res.cls = exp(l.lnClsb - l.lnClb);
  return res;
}

/**
 * The value of √q_μ,A at the expected limit of band N: √q_μ,A(μ) = Φ⁻¹(1 − αΦ(N)) + N (from
 * CLs = α with μ̂ = Nσ under the background-only hypothesis, CCGV sect. 4.2 with CLs).
 */
export function expectedSignificance(alpha: number, n: number): number {
  return normalQuantileUpper(alpha * normalCdf(n)) + n;
}

export const BAND_SIGMAS: Record<(typeof EXPECTED_KEYS)[number], number> = { '-2': -2, '-1': -1, '0': 0, '1': 1, '2': 2 };

export interface LimitSearch {
  value: number;
  atEdge: boolean;
  root: RootResult;
}

/** Range of μ searched, relative to the μ that gives one signal event. */
export const MU_RANGE = { low: 1e-7, high: 1e8 };

/** Relative tolerance of the limit's root finding (the issue asks for 1e-4). */
export const LIMIT_RTOL = 1e-5;

/** Finds μ where the decreasing f(μ) crosses zero, inside the searched range of μ. */
export function searchLimit(f: (mu: number) => number, guess: number, scale: number, rtol = LIMIT_RTOL): LimitSearch {
  const lo = MU_RANGE.low * scale;
  const hi = MU_RANGE.high * scale;
  const root = findDecreasingRoot(f, guess, lo, hi, rtol);
  return { value: root.x, atEdge: !root.bracketed, root };
}

/** Expected limits from the Asimov dataset: solve √q_μ,A(μ) = Φ⁻¹(1 − αΦ(N)) + N for each band N. */
export function asymptoticExpected(source: ProfileSource, alpha: number): { limits: ExpectedLimits; atEdge: boolean } {
  const limits = { '-2': 0, '-1': 0, '0': 0, '1': 0, '2': 0 } as ExpectedLimits;
  let atEdge = false;
  // Start from the large-background form μ ≈ Z·√b/s and reuse each answer as the next guess.
  let guess = 2 * source.muScale;
  for (const key of ['0', '-1', '-2', '1', '2'] as const) {
    const z = expectedSignificance(alpha, BAND_SIGMAS[key]);
    const result = searchLimit((mu) => z - sqrt(source.qAsimov(mu)), guess, source.muScale);
    limits[key] = result.value;
    atEdge ||= result.atEdge;
    guess = result.value;
  }
  return { limits, atEdge };
}

/** Observed limit: CLs(μ) = α (or CLs+b(μ) = α with `clsb`), searched in ln CL for a smooth root. */
export function asymptoticObserved(source: ProfileSource, alpha: number, guess: number, clsb = false): LimitSearch {
  const values: LogClValues = { lnClsb: 0, lnClb: 0 };
  const lnAlpha = log(alpha);
  return searchLimit(
    (mu) => {
      asymptoticLogCl(source.qObserved(mu), source.qAsimov(mu), values);
      return (clsb ? values.lnClsb : values.lnClsb - values.lnClb) - lnAlpha;
    },
    guess,
    source.muScale,
  );
}

/** Samples of CLs, CLs+b and CLb on an even μ grid from 0 to `muMax`. */
export function sampleCurve(evaluate: (mu: number) => ClsValues, muMax: number, points: number): ClsSample[] {
  const out: ClsSample[] = [];
  for (let j = 0; j < points; j++) {
    const mu = (muMax * j) / (points - 1);
    const v = evaluate(mu);
    out.push({ mu, cls: v.cls, clsb: v.clsb, clb: v.clb });
  }
  return out;
}
