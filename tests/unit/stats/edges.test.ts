/**
 * Numbers at the edges: limits where the tail probabilities behind CLs are far below the double
 * range (huge deficits, thousands of background events), checked against outside sources: the
 * n = 0 CLs limit (Read, J. Phys. G 28 (2002) 2693), and the asymptotic formulae of Cowan,
 * Cranmer, Gross, Vitells (Eur. Phys. J. C 71 (2011) 1554, "CCGV") re-implemented here in log
 * space with @stdlib's normal log-CDF.
 */
import normal from '@stdlib/stats-base-dists-normal';
import { computeLimit, EXPECTED_KEYS, type CountingModelInput } from '@/shared/stats';
import { FittedProfile } from '@/shared/stats/asymptotic';
import { prepareModel } from '@/shared/stats/model';
import { bruteForce, ccgvObservedLimit } from './reference';

function oneBin(n: number, s: number, b: number): CountingModelInput {
  return { observed: [n], signal: [s], backgrounds: b === 0 ? [] : [{ name: 'flat', yields: [b] }] };
}

const edgeWarning = /edge of the range/;

describe('CLs from the logs of its tail probabilities', () => {
  test.each([745, 800, 1000, 3000, 1e4, 1e5])('exact, n = 0 over b = %f: −ln α events at 95%% and 90%% CL', (b) => {
    for (const cl of [0.95, 0.9]) {
      const r = computeLimit(oneBin(0, 1, b), { method: 'exact', cl });
      // Read, J. Phys. G 28 (2002) 2693 (common practice): CLs = e^{−(s+b)}/e^{−b} = e^{−s}, so s_up = −ln α
      expect(r.observed).toBeCloseTo(-Math.log(1 - cl), 6);
      expect(r.warnings.join(' ')).not.toMatch(edgeWarning);
    }
  });

  test('exact, a deficit of thousands of events: the limit on s is that of the CLs ratio, not of the search range', () => {
    // n = 9000 over b = 10000: P(n ≤ 9000 | b) ≈ 1e-25 is fine, but the same ratio for n = 0 … 2000
    // over b = 10⁴ is far below 1e-308. The limit on s shrinks towards −ln α as n falls.
    let previous = Infinity;
    for (const n of [9000, 7000, 5000, 2000, 500, 50, 0]) {
      const r = computeLimit(oneBin(n, 1, 1e4), { method: 'exact' });
      expect(Number.isFinite(r.observed)).toBe(true);
      expect(r.warnings).toEqual([]);
      // exact: (s+b)^k ≥ b^k term by term gives CLs ≥ e^{−s}, so s_up ≥ −ln α; fewer events, stronger limit
      expect(r.observed).toBeGreaterThanOrEqual(-Math.log(0.05) - 1e-6);
      expect(r.observed).toBeLessThanOrEqual(previous);
      previous = r.observed;
    }
  });

  test('asymptotic, one bin with b = 10⁴: the limit stays finite, falls steadily with the deficit and matches CCGV in log space', () => {
    const b = 1e4;
    let previous = Infinity;
    const counts = [...Array.from({ length: 100 }, (_, k) => b - 100 * k), 30, 10, 3, 1, 0];
    for (const n of counts) {
      const r = computeLimit(oneBin(n, 1, b));
      expect(r.warnings.join(' ')).not.toMatch(edgeWarning);
      // CCGV eqs. (65)-(66) in log space (@stdlib/stats-base-dists-normal logcdf)
      expect(r.observed / ccgvObservedLimit(n, 1, b)).toBeCloseTo(1, 4);
      // common practice: a deeper deficit never gives a weaker limit, and without jumps (steps of
      // 100 events change it by less than a factor 2; the steepest, 10000 → 9900, is 197 → 142)
      expect(r.observed).toBeLessThanOrEqual(previous * (1 + 1e-9));
      if (Number.isFinite(previous)) expect(r.observed).toBeGreaterThan(0.5 * previous);
      previous = r.observed;
    }
    // CCGV at n = 0: q̃_μ = 2μs and q_μ,A → 0, so CLs → e^{−μs}: the limit approaches −ln α events (Read 2002)
    expect(previous).toBeCloseTo(-Math.log(0.05), 2);
  });

  test('asymptotic, n = 0 over b = 10⁵ (closed form and fitted path): about −ln α events, no edge of the search', () => {
    const plain = computeLimit(oneBin(0, 1, 1e5));
    const fitted = computeLimit({ ...oneBin(0, 1, 1e5), systematics: [{ name: 'inert', effects: { flat: 0 } }] });
    for (const r of [plain, fitted]) {
      expect(r.warnings.join(' ')).not.toMatch(edgeWarning);
      // CCGV in log space (@stdlib normal logcdf); Read (2002): −ln α ≈ 2.996 events
      expect(r.observed / ccgvObservedLimit(0, 1, 1e5)).toBeCloseTo(1, 4);
      expect(r.observed).toBeCloseTo(-Math.log(0.05), 2);
    }
  });

  test('the CLs curve of a huge deficit keeps CLs = CLs+b / CLb where both underflow', () => {
    const r = computeLimit(oneBin(0, 1, 5000), { method: 'exact', clsCurve: 10 });
    for (const p of r.cls ?? []) {
      // Read (2002): CLs = e^{−μs} for n = 0 in one bin
      expect(p.cls).toBeCloseTo(Math.exp(-p.mu), 10);
    }
  });
});

describe('fits at large counts', () => {
  const notConverged = /did not converge/;

  test.each([
    [9e5, 1e6, 0.003],
    [1.002e6, 1e6, 0.01],
    [4e7, 5e7, 0.001],
  ])('n = %f over b = %f with a %f background uncertainty: no false warning, the limit of a golden-section brute force', (n, b, delta) => {
    const model: CountingModelInput = { observed: [n], signal: [3.1], backgrounds: [{ name: 'flat', yields: [b] }], systematics: [{ name: 'norm', effects: { flat: delta } }] };
    const r = computeLimit(model);
    expect(r.warnings.join(' ')).not.toMatch(notConverged);
    // CCGV + Read (CLs), profiled by golden-section search with no Newton steps: CLs(μ_up) = α
    expect(bruteForce(n, 3.1, b, 1 + delta, 'profiled').cls(r.observed) / 0.05).toBeCloseTo(1, 3);
  });

  /** The benchmark's 30-bin resonance search, its counts multiplied by `scale`. */
  function scaled(scale: number): CountingModelInput {
    const bins = 30;
    const background = Array.from({ length: bins }, (_, i) => scale * (400 * Math.exp(-(50 * i) / 400) + 2));
    const signal = Array.from({ length: bins }, (_, i) => Math.sqrt(scale) * 12 * Math.exp(-0.5 * ((500 + 50 * i - 1200) / 72) ** 2) + 1e-3);
    // Observed: the background with a ±√b wiggle, whole numbers.
    const observed = background.map((v, i) => Math.round(v + Math.sqrt(v) * Math.sin(1.7 * i)));
    return {
      observed,
      signal,
      backgrounds: [{ name: 'falling', yields: background }],
      systematics: [
        { name: 'luminosity', effects: { signal: 0.025, falling: 0.025 } },
        { name: 'background normalisation', effects: { falling: 0.08 } },
        { name: 'background slope', effects: { falling: background.map((_, i) => -0.1 + (0.3 * i) / (bins - 1)) } },
      ],
    };
  }

  test.each([1e2, 1e4, 1e6])('30 bins with 3 nuisance parameters at %f × the benchmark counts: every fit converges', (scale) => {
    const r = computeLimit(scaled(scale));
    expect(r.warnings.join(' ')).not.toMatch(notConverged);
    for (const v of [r.observed, ...Object.values(r.expected)]) expect(Number.isFinite(v) && v > 0).toBe(true);
  });

  test('conditional fits near the minimum at 10⁶ events stop there in a few iterations instead of repeating a zero-length step', () => {
    // The Asimov dataset of a 10% deficit under a 0.3% uncertainty: θ̂̂(0) ≈ −31, ν ≈ 9.1e5; warm
    // starts near θ̂̂(0), as the limit search gives them, leave decrements that −ln L cannot resolve.
    const model: CountingModelInput = { observed: [9e5], signal: [3.1], backgrounds: [{ name: 'flat', yields: [1e6] }], systematics: [{ name: 'norm', effects: { flat: 0.003 } }] };
    const profile = new FittedProfile(prepareModel(model), 'profiled');
    const lik = profile.asimovLikelihood;
    lik.maxIterations = 25;
    const failedBefore = lik.failedFits;
    for (let j = 0; j < 50; j++) {
      const mu = 20 + 1.7 * j;
      for (const offset of [-0.1, -0.04, -0.01, 0, 0.01]) {
        const theta = Float64Array.from(profile.thetaAtZero);
        theta[0] = (theta[0] as number) + offset;
        const nll = lik.fitConditional(mu, theta);
        // common practice: at a minimum no step of θ by ±1e-3 lowers −ln L beyond its rounding
        // (ε·Σ(n + ν) ≈ 4e-10 here)
        for (const h of [-1e-3, 1e-3]) expect(lik.nll(mu, [(theta[0] as number) + h])).toBeGreaterThan(nll - 1e-9);
      }
    }
    expect(lik.failedFits - failedBefore).toBe(0);
  });
});

describe('pseudo-experiment bands', () => {
  const ordered = (r: { expected: Record<string, number> }) => EXPECTED_KEYS.slice(1).every((k, j) => r.expected[k]! >= r.expected[EXPECTED_KEYS[j]!]!);

  test('are never inverted, whatever the counts, the number of pseudo-experiments or the seed', () => {
    // common practice: the band edges are limits at increasing quantiles of one background-only
    // distribution, so −2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ (equal where discrete quantiles tie)
    const cases: Array<[CountingModelInput, number, number]> = [];
    for (const b of [0.05, 0.3, 1, 5, 12]) for (const toys of [50, 100, 300]) for (const seed of [1, 2]) cases.push([oneBin(Math.round(b), 1, b), toys, seed]);
    for (const b of [0.3, 1, 3]) {
      for (const seed of [1, 2]) {
        cases.push([{ observed: [Math.round(b), 1], signal: [1, 0.5], backgrounds: [{ name: 'f', yields: [b, 0.7] }], systematics: [{ name: 'n', effects: { f: 0.2 } }] }, 200, seed]);
      }
    }
    const inverted = cases.filter(([model, toys, seed]) => !ordered(computeLimit(model, { method: 'toys', toys, seed })));
    expect(inverted.map(([m, toys, seed]) => `b=${m.backgrounds?.[0]?.yields[0]} toys=${toys} seed=${seed}`)).toEqual([]);
  });

  test('edges whose quantiles fall on the same count are equal, and equal to the exact limit of that count', () => {
    // b = 0.3: P(n = 0) = e^{−0.3} = 74% (exact), so the 2.3%, 15.9% and 50% quantiles of the
    // background-only test statistic are all n = 0, whose CLs is e^{−s} (Read, J. Phys. G 28 (2002) 2693)
    const r = computeLimit(oneBin(0, 1, 0.3), { method: 'toys', toys: 4000, seed: 7 });
    expect(r.expected['-2']).toBe(r.expected['0']);
    expect(r.expected['-1']).toBe(r.expected['0']);
    expect(Math.abs(r.expected['0'] - -Math.log(0.05))).toBeLessThan(4 * (r.expectedError?.['0'] as number) + 1e-3);
  });
});

describe('how many pseudo-experiments', () => {
  const fewToys = /use at least ([\d,]+) pseudo-experiments/;

  test.each([0.95, 0.9])('the default at %f CL is enough for the −2σ edge: ≥ 20 of each hypothesis beyond the test statistic', (cl) => {
    // Rule (common practice for Monte-Carlo p-values): at the −2σ limit CLb ≈ Φ(−2) and CLs+b = α·Φ(−2);
    // 20 pseudo-experiments beyond it (±22%) need n ≥ 20/(α·Φ(−2)) (@stdlib normal for Φ)
    const needed = 20 / ((1 - cl) * normal.cdf(-2, 0, 1));
    const r = computeLimit(oneBin(12, 1, 12), { method: 'toys', cl, seed: 4 });
    expect(r.toys?.perHypothesis).toBeGreaterThanOrEqual(needed);
    expect(r.toys?.perHypothesis).toBeLessThan(needed + 1000);
    expect(r.warnings.join(' ')).not.toMatch(/pseudo-experiments? falls? beyond/);
  });

  test('too few: the warning says how many are needed, and that many are enough', () => {
    const model = oneBin(12, 1, 12);
    const few = computeLimit(model, { method: 'toys', toys: 2000, seed: 4 });
    const match = fewToys.exec(few.warnings.join(' '));
    expect(match).not.toBeNull();
    const needed = Number((match?.[1] ?? '').replace(/,/g, ''));
    // same rule as above: about 20/(α·Φ(−2)) ≈ 17,600 for this −2σ edge (@stdlib normal)
    expect(needed).toBeGreaterThan(0.5 * (20 / (0.05 * normal.cdf(-2, 0, 1))));
    expect(needed).toBeLessThan(2 * (20 / (0.05 * normal.cdf(-2, 0, 1))));
    const enough = computeLimit(model, { method: 'toys', toys: needed, seed: 4 });
    expect(enough.warnings.join(' ')).not.toMatch(fewToys);
  });
});
