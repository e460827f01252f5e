/**
 * Limits on μ against sources outside the engine: the Particle Data Group's table of classical
 * Poisson upper limits, the n = 0 CLs limit, the asymptotic formulae of Cowan, Cranmer, Gross,
 * Vitells (Eur. Phys. J. C 71 (2011) 1554, "CCGV" below) re-implemented here by brute force with
 * @stdlib's normal distribution, and pseudo-experiments against the exact calculation.
 */
import normal from '@stdlib/stats-base-dists-normal';
import chisquare from '@stdlib/stats-base-dists-chisquare';
import poisson from '@stdlib/stats-base-dists-poisson';
import { computeLimit, EXPECTED_KEYS, type CountingModelInput, type LimitResult } from '@/shared/stats';
import { FittedProfile } from '@/shared/stats/asymptotic';
import { prepareModel } from '@/shared/stats/model';
import { bruteForce } from './reference';

const ALPHA = 0.05;
const Phi = (x: number) => normal.cdf(x, 0, 1);
const PhiInv = (p: number) => normal.quantile(p, 0, 1);

function oneBin(n: number, s: number, b: number): CountingModelInput {
  return { observed: [n], signal: [s], backgrounds: b === 0 ? [] : [{ name: 'flat', yields: [b] }] };
}

function expectOrderedBands(r: LimitResult) {
  for (let j = 1; j < EXPECTED_KEYS.length; j++) {
    expect(r.expected[EXPECTED_KEYS[j] as '0']).toBeGreaterThan(r.expected[EXPECTED_KEYS[j - 1] as '0']);
  }
}

describe('exact one-bin CLs with no background reproduces the classical Poisson upper limits', () => {
  // PDG Review of Particle Physics, Statistics review, table of Poisson upper limits for n observed
  // events with no background (values from memory, to the table's two decimals).
  const table95 = [3.0, 4.74, 6.3, 7.75, 9.15, 10.51, 11.84, 13.15, 14.43, 15.71, 16.96];
  const table90 = [2.3, 3.89, 5.32, 6.68, 7.99, 9.27, 10.53, 11.77, 12.99, 14.21, 15.41];

  test.each(table95.map((v, n) => [n, v]))('95%% CL, n = %i → %f', (n, value) => {
    const r = computeLimit(oneBin(n, 1, 0), { method: 'exact', cl: 0.95 });
    // PDG Review of Particle Physics, Statistics review, table of Poisson upper limits (from memory)
    expect(Math.abs(r.observed - value)).toBeLessThanOrEqual(0.005 + 1e-9);
    // common practice: the classical limit is half the χ² quantile with 2(n+1) degrees of freedom
    // (@stdlib/stats-base-dists-chisquare)
    expect(r.observed).toBeCloseTo(chisquare.quantile(0.95, 2 * (n + 1)) / 2, 4);
  });

  test.each(table90.map((v, n) => [n, v]))('90%% CL, n = %i → %f', (n, value) => {
    const r = computeLimit(oneBin(n, 1, 0), { method: 'exact', cl: 0.9 });
    // PDG Review of Particle Physics, Statistics review, table of Poisson upper limits (from memory)
    expect(Math.abs(r.observed - value)).toBeLessThanOrEqual(0.005 + 1e-9);
    // common practice: half the χ² quantile with 2(n+1) degrees of freedom (@stdlib chi-square)
    expect(r.observed).toBeCloseTo(chisquare.quantile(0.9, 2 * (n + 1)) / 2, 4);
  });

  test('the limit is on μ: a signal yield of 2.5 events at μ = 1 divides the event limit by 2.5', () => {
    const r = computeLimit(oneBin(3, 2.5, 0), { method: 'exact' });
    // PDG Review of Particle Physics, Statistics review, table of Poisson upper limits (from memory): 7.75 for n = 3
    expect(r.observed * 2.5).toBeCloseTo(7.75, 2);
  });
});

describe('n = 0 observed: the 95% CLs limit is −ln 0.05 ≈ 2.996 signal events whatever the background', () => {
  test.each([0, 0.2, 1, 3.7, 12, 150])('exact, b = %f', (b) => {
    const r = computeLimit(oneBin(0, 1, b), { method: 'exact' });
    // common practice: CLs = e^{−(s+b)}/e^{−b} = e^{−s}
    expect(r.observed).toBeCloseTo(-Math.log(0.05), 4);
  });

  test('pseudo-experiments agree within their Monte-Carlo uncertainty', () => {
    const r = computeLimit(oneBin(0, 1, 2.4), { method: 'toys', toys: 20000, seed: 5 });
    // common practice: −ln 0.05 ≈ 2.996 events
    expect(Math.abs(r.observed - -Math.log(0.05))).toBeLessThan(4 * (r.observedError as number) + 1e-3);
    expect(r.observedError).toBeGreaterThan(0);
  });
});

describe('asymptotic formulae (CCGV)', () => {
  test('one bin, large background, no systematics: median expected limit on s → Φ⁻¹(1 − α/2)·√b ≈ 1.96√b', () => {
    // CCGV with σ ≈ √b for large b; common practice: 1.96√b. The approach is from above, as
    // 1 + Z/(3√b) (expanding q_μ,A = 2[s − b ln(1 + s/b)]), so the ratio must shrink towards 1.
    const ratio = (b: number) => computeLimit(oneBin(b, 1, b)).expected['0'] / (PhiInv(1 - ALPHA / 2) * Math.sqrt(b));
    const deviations = [1e2, 1e4, 1e6, 1e8].map((b) => ratio(b) - 1);
    for (let j = 1; j < deviations.length; j++) expect(deviations[j]).toBeLessThan((deviations[j - 1] as number) / 5);
    expect(Math.abs(deviations[3] as number)).toBeLessThan(1e-4);
    const b = 1e8;
    const r = computeLimit(oneBin(b, 1, b));
    // CCGV band N: √q_μ,A = Φ⁻¹(1 − αΦ(N)) + N, with √q_μ,A ≈ s/√b for large b (@stdlib normal)
    for (const key of EXPECTED_KEYS) {
      const n = Number(key);
      const z = PhiInv(1 - ALPHA * Phi(n)) + n;
      expect(r.expected[key] / (z * Math.sqrt(b))).toBeCloseTo(1, 2);
    }
    expectOrderedBands(r);
  });

  test('observed equals the median expected limit when the data equal the background (μ̂ = 0)', () => {
    // CCGV: with μ̂ = 0, q̃_μ = q_μ,A, so CLs = 2(1 − Φ(√q_μ,A)) as for the median.
    const r = computeLimit(oneBin(40, 3, 40));
    expect(r.muHat).toBe(0);
    expect(r.observed / r.expected['0']).toBeCloseTo(1, 4);
  });

  test('μ̂ = (n − b)/s in one bin, negative for a deficit', () => {
    // exact: the Poisson maximum-likelihood estimate
    expect(computeLimit(oneBin(31, 4, 23)).muHat).toBeCloseTo(2, 12);
    expect(computeLimit(oneBin(15, 4, 23)).muHat).toBeCloseTo(-2, 12);
  });

  test('a deficit gives an observed limit below the median expected (the q̃_μ > μ²/σ² branch)', () => {
    const r = computeLimit(oneBin(12, 2, 25));
    expect(r.muHat).toBeLessThan(0);
    expect(r.observed).toBeLessThan(r.expected['0']);
    expect(r.observed).toBeGreaterThan(0);
  });

  test('the fitted path (with an inert nuisance parameter) agrees with the one-bin closed form', () => {
    const plain = computeLimit(oneBin(17, 2.2, 14.5));
    const fitted = computeLimit({ ...oneBin(17, 2.2, 14.5), systematics: [{ name: 'inert', effects: { flat: 0 } }] });
    expect(fitted.observed / plain.observed).toBeCloseTo(1, 4);
    for (const key of EXPECTED_KEYS) expect(fitted.expected[key] / plain.expected[key]).toBeCloseTo(1, 4);
    expect(fitted.muHat).toBeCloseTo(plain.muHat, 6);
  });

  test('without nuisance parameters the profiled and nominal Asimov datasets coincide', () => {
    const model: CountingModelInput = { observed: [9, 4], signal: [1, 2], backgrounds: [{ name: 'flat', yields: [7.5, 5.2] }] };
    const a = computeLimit(model, { asimov: 'profiled' });
    const b = computeLimit(model, { asimov: 'nominal' });
    for (const key of EXPECTED_KEYS) expect(a.expected[key]).toBeCloseTo(b.expected[key], 6);
  });
});

describe.each([
  ['excess', 34, 24],
  ['deficit', 15, 24],
  ['small counts', 3, 2.5],
])('brute-force CCGV check, one bin with a 15%% background uncertainty (%s)', (_label, n, b) => {
  const s = 3.1;
  const kappa = 1.15;
  const model: CountingModelInput = {
    observed: [n],
    signal: [s],
    backgrounds: [{ name: 'flat', yields: [b] }],
    systematics: [{ name: 'background normalisation', effects: { flat: kappa - 1 } }],
  };
  test.each(['nominal', 'profiled'] as const)('%s Asimov dataset', (asimov) => {
    const r = computeLimit(model, { asimov });
    const ref = bruteForce(n, s, b, kappa, asimov);
    // CCGV + Read (CLs): CLs(μ_up) = α at the observed limit
    expect(ref.cls(r.observed) / ALPHA).toBeCloseTo(1, 3);
    // CCGV: √q_μ,A at the expected limit of band N is Φ⁻¹(1 − αΦ(N)) + N (@stdlib normal)
    for (const key of EXPECTED_KEYS) {
      const z = PhiInv(1 - ALPHA * Phi(Number(key))) + Number(key);
      expect(Math.sqrt(ref.qA(r.expected[key])) / z).toBeCloseTo(1, 3);
    }
    expectOrderedBands(r);
  });
});

describe('the profiled Asimov dataset', () => {
  test('a fit to it returns μ = 0 and the nuisance parameters of the background-only fit to the data', () => {
    // CCGV sect. 3.1 with the constraint centres moved to θ̂̂(0): the Asimov data reproduce their own parameters.
    const profile = new FittedProfile(
      prepareModel({
        observed: [19, 4, 11],
        signal: [1, 2, 1],
        backgrounds: [{ name: 'flat', yields: [14, 6, 9] }],
        systematics: [
          { name: 'norm', effects: { flat: 0.15 } },
          { name: 'tilt', effects: { flat: [-0.1, 0, 0.1] } },
        ],
      }),
      'profiled',
    );
    const theta = new Float64Array(2);
    const fit = profile.asimovLikelihood.fitFree('feasible', 0.5, theta);
    expect(fit.mu).toBeCloseTo(0, 6);
    expect(theta[0]).toBeCloseTo(profile.thetaAtZero[0] as number, 6);
    expect(theta[1]).toBeCloseTo(profile.thetaAtZero[1] as number, 6);
    expect(Math.abs(profile.thetaAtZero[0] as number)).toBeGreaterThan(0.1); // the data did pull it
    expect(fit.nll).toBeCloseTo(0, 9);
  });
});

describe('CLs-vs-μ diagnostic samples', () => {
  test('40 points from 0 past 1.5× the weakest limit, crossing α at the observed limit', () => {
    const r = computeLimit(
      { observed: [12, 7, 3], signal: [1.2, 2.5, 1.1], backgrounds: [{ name: 'dijet', yields: [10.1, 6.3, 2.2] }], systematics: [{ name: 'luminosity', effects: { signal: 0.02, dijet: 0.02 } }] },
      { clsCurve: true },
    );
    const curve = r.cls ?? [];
    expect(curve).toHaveLength(40);
    expect(curve[0]?.mu).toBe(0);
    const last = curve[curve.length - 1]?.mu ?? 0;
    expect(last).toBeCloseTo(1.5 * Math.max(r.observed, r.expected['2']), 10);
    for (const p of curve) {
      // Read, J. Phys. G 28 (2002) 2693: CLs = CLs+b / CLb
      expect(p.cls).toBeCloseTo(p.clsb / p.clb, 12);
    }
    const k = curve.findIndex((p) => p.cls < ALPHA);
    const before = curve[k - 1];
    const after = curve[k];
    expect(before && after).toBeTruthy();
    if (before && after) {
      expect(before.mu).toBeLessThan(r.observed);
      expect(after.mu).toBeGreaterThanOrEqual(r.observed);
    }
  });
});

describe('pseudo-experiments', () => {
  test('one bin without systematics: agree with the exact calculation within the Monte-Carlo uncertainty', () => {
    // q̃_μ decreases with n below μs + b, so toy CLs estimates P(n ≤ n_obs | s+b)/P(n ≤ n_obs | b)
    // (Read, J. Phys. G 28 (2002) 2693), which @stdlib's Poisson CDF gives exactly.
    const model = oneBin(4, 1.5, 3.2);
    const toys = computeLimit(model, { method: 'toys', toys: 20000, seed: 3 });
    const exactCls = (mu: number) => poisson.cdf(4, mu * 1.5 + 3.2) / poisson.cdf(4, 3.2);
    expect(Math.abs(exactCls(toys.observed) - ALPHA)).toBeLessThan(0.004);
    const exact = computeLimit(model, { method: 'exact' });
    expect(Math.abs(toys.observed - exact.observed)).toBeLessThan(4 * (toys.observedError as number) + 1e-3);
    expect(toys.toys?.total).toBeGreaterThan(40000);
  });

  test('the same seed gives the same result; another seed another one', () => {
    const model: CountingModelInput = { observed: [5, 2], signal: [1, 1.5], backgrounds: [{ name: 'flat', yields: [4, 2.5] }], systematics: [{ name: 'norm', effects: { flat: 0.1 } }] };
    const a = computeLimit(model, { method: 'toys', toys: 300, seed: 42 });
    const b = computeLimit(model, { method: 'toys', toys: 300, seed: 42 });
    const c = computeLimit(model, { method: 'toys', toys: 300, seed: 43 });
    expect(b).toEqual(a);
    expect(c.observed).not.toBe(a.observed);
    expect(a.observedError).toBeGreaterThan(0);
    for (const key of EXPECTED_KEYS) expect(a.expectedError?.[key]).toBeGreaterThan(0);
  });

  test('agree with the asymptotic formulae within a few percent at ~100 events per bin', () => {
    // CCGV: the asymptotic distributions hold for large counts.
    const model = oneBin(104, 8, 100);
    const asym = computeLimit(model);
    const toys = computeLimit(model, { method: 'toys', toys: 20000, seed: 9 });
    expect(Math.abs(toys.observed / asym.observed - 1)).toBeLessThan(0.04);
    for (const key of ['-1', '0', '1'] as const) expect(Math.abs(toys.expected[key] / asym.expected[key] - 1)).toBeLessThan(0.05);
  });
});

describe('warnings', () => {
  test('few expected events per bin with the asymptotic method', () => {
    expect(computeLimit(oneBin(3, 1, 2.5)).warnings.join(' ')).toMatch(/fewer than 5/);
    expect(computeLimit(oneBin(30, 1, 25)).warnings).toEqual([]);
  });

  test('a warning names the fallback when no background-only fit exists', () => {
    const r = computeLimit({ observed: [4, 2], signal: [1, 1], backgrounds: [{ name: 'flat', yields: [4, 0] }], systematics: [{ name: 'norm', effects: { flat: 0.1 } }] });
    expect(r.asimov).toBe('nominal');
    expect(r.warnings.join(' ')).toMatch(/nominal Asimov/);
    expect(Number.isFinite(r.observed)).toBe(true);
  });
});

describe('zero counts and yields that go to zero', () => {
  test('bins with no background and no events take part without breaking the fit', () => {
    const r = computeLimit({
      observed: [0, 0, 6],
      signal: [2, 0, 1],
      backgrounds: [{ name: 'flat', yields: [0, 0, 5] }],
      systematics: [{ name: 'norm', effects: { flat: 0.2, signal: [0.1, 0.1, 0.1] } }],
    });
    for (const v of [r.observed, ...Object.values(r.expected)]) expect(Number.isFinite(v) && v > 0).toBe(true);
    expect(r.warnings.join(' ')).not.toMatch(/did not converge/);
  });

  test('n = 0 over a background fitted towards zero gives μ̂ at the ν = 0 boundary', () => {
    const r = computeLimit(oneBin(0, 2, 3));
    // exact: μ̂ = (n − b)/s = −1.5
    expect(r.muHat).toBeCloseTo(-1.5, 12);
  });
});
