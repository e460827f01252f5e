/**
 * Numbers at the edges: limits where the tail probabilities behind CLs are far below the double
 * range (huge deficits, thousands of background events), checked against outside sources: the
 * n = 0 CLs limit (Read, J. Phys. G 28 (2002) 2693), and the asymptotic formulae of Cowan,
 * Cranmer, Gross, Vitells (Eur. Phys. J. C 71 (2011) 1554, "CCGV") re-implemented here in log
 * space with @stdlib's normal log-CDF.
 */
import normal from '@stdlib/stats-base-dists-normal';
import { computeLimit, type CountingModelInput } from '@/shared/stats';

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

  /**
   * CCGV for one bin without systematics, written independently of the engine: q̃_μ and q_μ,A in
   * closed form, CLs from eqs. (65)-(66) with ln(1 − Φ(x)) = ln Φ(−x) from @stdlib's normal
   * log-CDF, the limit by bisection in ln μ.
   */
  function ccgvObservedLimit(n: number, s: number, b: number, alpha = 0.05): number {
    const dev = (nu: number, k: number) => (k === 0 ? 2 * nu : 2 * (nu - k - k * Math.log(nu / k)));
    const muHat = (n - b) / s;
    const lnSf = (x: number) => normal.logcdf(-x, 0, 1);
    const lnCls = (mu: number) => {
      const q = mu <= Math.max(0, muHat) ? 0 : Math.max(0, dev(mu * s + b, n) - (muHat < 0 ? dev(b, n) : 0));
      const qA = dev(mu * s + b, b);
      const sA = Math.sqrt(qA);
      if (q <= qA) return lnSf(Math.sqrt(q)) - normal.logcdf(sA - Math.sqrt(q), 0, 1);
      return lnSf((q + qA) / (2 * sA)) - lnSf((q - qA) / (2 * sA));
    };
    let lo = Math.log(1e-3 / s);
    let hi = Math.log(1e6 / s);
    for (let i = 0; i < 200; i++) {
      const mid = 0.5 * (lo + hi);
      if (lnCls(Math.exp(mid)) > Math.log(alpha)) lo = mid;
      else hi = mid;
    }
    return Math.exp(0.5 * (lo + hi));
  }

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
