/**
 * The engine's own normal, chi-square, Poisson and gamma functions against an outside
 * general-purpose statistics library (@stdlib/stats-base-dists-*), and the textbook
 * significance ↔ p-value correspondences.
 */
import normal from '@stdlib/stats-base-dists-normal';
import chisquare from '@stdlib/stats-base-dists-chisquare';
import poisson from '@stdlib/stats-base-dists-poisson';
import {
  chiSquareCdf,
  chiSquareSf,
  erfc,
  lnGamma,
  logErfc,
  logNormalCdf,
  logNormalSf,
  logPoissonCdf,
  logRegularizedGammaQ,
  normalCdf,
  normalQuantile,
  normalQuantileUpper,
  normalSf,
  poissonCdf,
  poissonPmf,
  poissonQuantile,
  regularizedGammaP,
  regularizedGammaQ,
} from '@/shared/stats';

function relErr(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

function grid(from: number, to: number, step: number): number[] {
  const out: number[] = [];
  for (let x = from; x <= to + 1e-12; x += step) out.push(x);
  return out;
}

describe('normal distribution', () => {
  test('Φ(x) matches @stdlib/stats-base-dists-normal to 1e-12 relative from −37 to 8', () => {
    for (const x of grid(-37, 8, 0.0137)) {
      // @stdlib/stats-base-dists-normal
      expect(relErr(normalCdf(x), normal.cdf(x, 0, 1))).toBeLessThan(1e-12);
    }
  });

  test('1 − Φ(x) is computed without cancellation: matches @stdlib Φ(−x) in the far upper tail', () => {
    for (const x of grid(0, 37, 0.0137)) {
      // @stdlib/stats-base-dists-normal (by symmetry, 1 − Φ(x) = Φ(−x))
      expect(relErr(normalSf(x), normal.cdf(-x, 0, 1))).toBeLessThan(1e-12);
    }
  });

  test('Φ⁻¹ matches @stdlib/stats-base-dists-normal (its quantile for p ≥ 1e-4, its CDF beyond)', () => {
    for (const p of [1e-4, 0.001, 0.0228, 0.1, 0.3, 0.5, 0.7, 0.9, 0.975, 0.999]) {
      // @stdlib/stats-base-dists-normal
      expect(normalQuantile(p)).toBeCloseTo(normal.quantile(p, 0, 1), 10);
    }
    // That library's quantile loses digits in the far tail; its CDF does not, so round-trip through it.
    for (const p of [1e-300, 1e-100, 1e-30, 1e-12, 1e-9, 1e-6]) {
      // @stdlib/stats-base-dists-normal
      expect(relErr(normal.cdf(normalQuantile(p), 0, 1), p)).toBeLessThan(1e-11);
    }
  });

  test('Φ⁻¹ inverts Φ in the tails where a quantile of 1 − p would lose every digit', () => {
    for (const q of [1e-12, 1e-20, 1e-50, 1e-100, 1e-300]) {
      const x = normalQuantileUpper(q);
      expect(relErr(normalSf(x), q)).toBeLessThan(1e-12);
      expect(normalQuantile(q)).toBeCloseTo(-x, 10);
    }
  });

  test('one-sided 5σ ↔ 2.87e-7 and 1.645 ↔ 0.05', () => {
    // common practice: the 5σ discovery threshold is a one-sided p-value of 2.87e-7
    expect(normalSf(5)).toBeCloseTo(2.87e-7, 9);
    expect(normalQuantileUpper(2.866515718791939e-7)).toBeCloseTo(5, 10);
    // common practice: a one-sided 95% CL corresponds to 1.645σ
    expect(normalSf(1.6448536269514722)).toBeCloseTo(0.05, 14);
    expect(normalQuantileUpper(0.05)).toBeCloseTo(1.6448536269514722, 12);
    // common practice: two-sided 95% ↔ 1.96σ
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963984540054, 12);
  });

  test('erfc handles arguments beyond the double range of e^{−x²}', () => {
    expect(erfc(30)).toBe(0);
    expect(erfc(-30)).toBe(2);
    expect(erfc(0)).toBe(1);
    expect(Number.isNaN(erfc(NaN))).toBe(true);
  });
});

describe('logs of normal tails, where the tails underflow', () => {
  test('ln Φ(x) and ln(1 − Φ(x)) match @stdlib normal.logcdf from −10⁶ to 10⁶', () => {
    const xs = [...grid(-40, 40, 0.0731), -1e6, -1e4, -500, -100, -60, 100, 500, 1e4, 1e6];
    for (const x of xs) {
      // @stdlib/stats-base-dists-normal (logcdf, and by symmetry ln(1 − Φ(x)) = ln Φ(−x))
      const ref = normal.logcdf(x, 0, 1);
      const refSf = normal.logcdf(-x, 0, 1);
      expect(Math.abs(logNormalCdf(x) - ref)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(ref)));
      expect(Math.abs(logNormalSf(x) - refSf)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(refSf)));
    }
  });

  test('ln erfc agrees with erfc where erfc is representable, and follows −x² − ln(x√π) beyond', () => {
    for (const x of grid(-5, 26, 0.0917)) expect(Math.abs(logErfc(x) - Math.log(erfc(x)))).toBeLessThan(1e-13 * Math.max(1, x * x));
    for (const x of [30, 100, 1e3, 1e5]) {
      // Abramowitz & Stegun 7.1.23 (from memory): erfc x ≈ e^{−x²}/(x√π)·Σ (−1)^m (2m−1)!!/(2x²)^m,
      // here to m = 4 (the next term is below 1e-12 relative at x = 30)
      const u = 1 / (2 * x * x);
      const asym = -x * x - Math.log(x * Math.sqrt(Math.PI)) + Math.log1p(-u + 3 * u * u - 15 * u ** 3 + 105 * u ** 4);
      expect(Math.abs(logErfc(x) - asym)).toBeLessThan(1e-12 * x * x);
    }
    expect(logErfc(Infinity)).toBe(-Infinity);
    expect(logErfc(-Infinity)).toBeCloseTo(Math.LN2, 15);
  });
});

describe('gamma functions', () => {
  test('ln Γ(n) = ln((n−1)!) for whole numbers', () => {
    let lnFact = 0;
    for (let n = 1; n < 60; n++) {
      // exact: Γ(n) = (n − 1)!
      expect(lnGamma(n)).toBeCloseTo(lnFact, 10);
      lnFact += Math.log(n);
    }
    // exact: Γ(1/2) = √π
    expect(lnGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 13);
  });

  test('P(a, x) + Q(a, x) = 1 and both agree with @stdlib chi-square (P(k/2, x/2) is its CDF)', () => {
    for (const a of [0.5, 1, 2.5, 7, 40, 300]) {
      for (const x of [0.01, 0.3, 1, 3, 10, 60, 400]) {
        const p = regularizedGammaP(a, x);
        const q = regularizedGammaQ(a, x);
        expect(p + q).toBeCloseTo(1, 13);
        // @stdlib/stats-base-dists-chisquare
        expect(p).toBeCloseTo(chisquare.cdf(2 * x, 2 * a), 12);
      }
    }
  });
});

describe('chi-square distribution', () => {
  test('CDF and upper tail match @stdlib/stats-base-dists-chisquare', () => {
    for (const k of [1, 2, 3, 5, 10, 31, 100]) {
      for (let x = 0.01; x < 300; x *= 1.37) {
        const ref = chisquare.cdf(x, k);
        // @stdlib/stats-base-dists-chisquare
        if (ref > 1e-300) expect(relErr(chiSquareCdf(x, k), ref)).toBeLessThan(1e-11);
        if (ref < 0.999) expect(relErr(chiSquareSf(x, k), 1 - ref)).toBeLessThan(1e-10);
      }
    }
  });

  test('the 95% quantile of one degree of freedom is 1.96² = 3.84', () => {
    // common practice: Δχ² = 3.84 for a two-sided 95% interval on one parameter
    expect(chiSquareSf(1.959963984540054 ** 2, 1)).toBeCloseTo(0.05, 12);
  });
});

describe('Poisson distribution', () => {
  test('pmf and CDF match @stdlib/stats-base-dists-poisson', () => {
    for (const lambda of [0.1, 1, 3.3, 10, 47, 300, 5000]) {
      for (let k = 0; k < 2 * lambda + 30; k += lambda > 100 ? 7 : 1) {
        // @stdlib/stats-base-dists-poisson
        const pmf = poisson.pmf(k, lambda);
        if (pmf > 1e-300) expect(relErr(poissonPmf(k, lambda), pmf)).toBeLessThan(1e-10);
        const cdf = poisson.cdf(k, lambda);
        if (cdf > 1e-300) expect(relErr(poissonCdf(k, lambda), cdf)).toBeLessThan(1e-10);
      }
    }
  });

  test('ln CDF matches a log-sum-exp of @stdlib Poisson logpmf, also where the CDF underflows', () => {
    for (const lambda of [0.3, 4, 60, 745, 2000, 1e4, 1e5]) {
      for (const k of [0, 1, 3, 10, 50, 0.5 * lambda, 0.9 * lambda, lambda, 1.2 * lambda].map(Math.floor)) {
        // @stdlib/stats-base-dists-poisson logpmf, summed in log space (exact in k ≤ 1.2λ + 1 terms)
        const terms = Array.from({ length: k + 1 }, (_, j) => poisson.logpmf(j, lambda));
        const top = Math.max(...terms);
        const ref = top + Math.log(terms.reduce((sum, t) => sum + Math.exp(t - top), 0));
        // Both sides add terms of size λ and k ln λ (10⁶ for λ = 10⁵) to reach a log of order 1:
        // double rounding of those terms, 2.2e-16 each, is the agreement possible.
        const rounding = 4.4e-16 * (lambda + k * Math.abs(Math.log(lambda)));
        expect(Math.abs(logPoissonCdf(k, lambda) - ref)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(ref)) + rounding);
      }
    }
    // exact: P(N = 0 | λ) = e^{−λ}
    expect(logPoissonCdf(0, 1e4)).toBeCloseTo(-1e4, 8);
    expect(logPoissonCdf(-1, 3)).toBe(-Infinity);
    expect(logPoissonCdf(2, 0)).toBe(0);
    // @stdlib/stats-base-dists-chisquare: Q(a, x) = 1 − chi-square CDF(2x; 2a) where that is representable
    for (const [a, x] of [[0.5, 0.2], [3, 1], [3, 9], [40, 55]] as const) {
      expect(logRegularizedGammaQ(a, x)).toBeCloseTo(Math.log(1 - chisquare.cdf(2 * x, 2 * a)), 10);
    }
  });

  test('quantile is the smallest count whose CDF reaches p (@stdlib/stats-base-dists-poisson)', () => {
    for (const lambda of [0.5, 3.2, 19.5, 250]) {
      for (const p of [0.0228, 0.1587, 0.5, 0.8413, 0.9772]) {
        const k = poissonQuantile(p, lambda);
        // @stdlib/stats-base-dists-poisson
        expect(k).toBeCloseTo(poisson.quantile(p, lambda), 12);
      }
    }
  });

  test('zero mean and negative counts', () => {
    expect(poissonPmf(0, 0)).toBe(1);
    expect(poissonPmf(3, 0)).toBe(0);
    expect(poissonCdf(-1, 4)).toBe(0);
    expect(poissonCdf(0, 0)).toBe(1);
  });
});
