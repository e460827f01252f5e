/**
 * Exact CLs for one bin without systematics, with the observed count as test statistic:
 * CLs = P(n ≤ n_obs | s + b) / P(n ≤ n_obs | b) (Read, J. Phys. G 28 (2002) 2693; Junk,
 * Nucl. Instrum. Meth. A 434 (1999) 435). With b = 0 it is the classical Poisson upper limit.
 */
import { EXPECTED_KEYS, type ExpectedLimits } from '../schemas/counting-model';
import { BAND_SIGMAS, searchLimit, type ClsValues } from './asymptotic';
import { logPoissonCdf, normalCdf, poissonQuantile } from './distributions';
import { StatsInputError } from './errors';
import type { PreparedModel } from './model';

// Module-scope aliases: cheaper than global lookups in sandboxed runtimes (test runners' VM contexts).
const { exp, log, sqrt } = Math;

export interface ExactOutcome {
  observed: number;
  expected: ExpectedLimits;
  muHat: number;
  atEdge: boolean;
  clsAt: (mu: number) => ClsValues;
}

/**
 * ln CLs of n observed events at signal s = μ·signal over background b, from the logs of the two
 * Poisson CDFs: both underflow for a deficit far below a large background (n = 0 over b ≳ 745
 * events), their ratio does not (it is e^{−s} for n = 0).
 */
export function exactLogCls(n: number, mu: number, signal: number, background: number): number {
  return logPoissonCdf(n, mu * signal + background) - logPoissonCdf(n, background);
}

/** CLs, CLs+b and CLb of n observed events at signal s = μ·signal over background b. */
export function exactCls(n: number, mu: number, signal: number, background: number): ClsValues {
  const lnClb = logPoissonCdf(n, background);
  const lnClsb = logPoissonCdf(n, mu * signal + background);
  return { cls: exp(lnClsb - lnClb), clsb: exp(lnClsb), clb: exp(lnClb) };
}

/** Exact CLs limits on μ; throws StatsInputError unless the model is one bin without systematics. */
export function exactLimits(model: PreparedModel, alpha: number): ExactOutcome {
  if (model.nBins !== 1 || model.nPar !== 0) {
    throw new StatsInputError(
      'method',
      `"exact" needs one bin without systematics; this model has ${model.nBins} bin${model.nBins === 1 ? '' : 's'} and ${model.nPar} systematic${model.nPar === 1 ? '' : 's'} (use "asymptotic" or "toys")`,
    );
  }
  const n = model.observed[0] as number;
  if (!Number.isInteger(n)) {
    throw new StatsInputError('observed[0]', `must be a whole number of events for the "exact" method (got ${n})`);
  }
  const s = model.signal[0] as number;
  const b = model.background[0] as number;
  const lnAlpha = log(alpha);
  let atEdge = false;
  const limitFor = (count: number): number => {
    // Classical guess s_up ≈ n + 2√(n+1) + 2 events keeps the bracket search short.
    const guess = (count + 2 * sqrt(count + 1) + 2) / s;
    const result = searchLimit((mu) => exactLogCls(count, mu, s, b) - lnAlpha, guess, 1 / s);
    atEdge ||= result.atEdge;
    return result.value;
  };
  const observed = limitFor(n);
  const expected = {} as ExpectedLimits;
  const cache = new Map<number, number>();
  for (const key of EXPECTED_KEYS) {
    // The band edge N is the limit of the count at the Φ(N) quantile of Poisson(b): a lower count
    // gives the stronger limit, so "-2" comes from the 2.3% quantile.
    const count = poissonQuantile(normalCdf(BAND_SIGMAS[key]), b);
    let value = cache.get(count);
    if (value === undefined) {
      value = limitFor(count);
      cache.set(count, value);
    }
    expected[key] = value;
  }
  return { observed, expected, muHat: (n - b) / s, atEdge, clsAt: (mu) => exactCls(n, mu, s, b) };
}
