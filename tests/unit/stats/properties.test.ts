/**
 * Property tests (fast-check) of what any correct CLs upper limit must do, on randomly drawn
 * invented models. Limits are found to 1e-5 relative, so comparisons allow 1e-4.
 */
import fc from 'fast-check';
import { computeClsbLimit, computeLimit, EXPECTED_KEYS, type CountingModelInput } from '@/shared/stats';

const TOL = 1e-4;
const notBelow = (a: number, b: number) => a >= b * (1 - TOL);

const yieldArb = (min: number, max: number) => fc.double({ min, max, noNaN: true, noDefaultInfinity: true });

/** A model of 1–3 bins with one background and optionally two systematics. */
const modelArb = fc
  .record({
    bins: fc.integer({ min: 1, max: 3 }),
    signal: fc.array(yieldArb(0.2, 6), { minLength: 3, maxLength: 3 }),
    background: fc.array(yieldArb(0.5, 60), { minLength: 3, maxLength: 3 }),
    observed: fc.array(fc.integer({ min: 0, max: 80 }), { minLength: 3, maxLength: 3 }),
    systematics: fc.boolean(),
    norm: yieldArb(0.01, 0.3),
    shape: fc.array(yieldArb(-0.3, 0.3), { minLength: 3, maxLength: 3 }),
  })
  .map((r) => {
    const cut = <T>(a: T[]) => a.slice(0, r.bins);
    const model: CountingModelInput = {
      observed: cut(r.observed),
      signal: cut(r.signal),
      backgrounds: [{ name: 'bkg', yields: cut(r.background) }],
      systematics: r.systematics
        ? [
            { name: 'normalisation', effects: { bkg: r.norm, signal: r.norm / 2 } },
            { name: 'shape', effects: { bkg: cut(r.shape) } },
          ]
        : [],
    };
    return model;
  });

const scaleBackground = (m: CountingModelInput, f: number): CountingModelInput => ({
  ...m,
  backgrounds: (m.backgrounds ?? []).map((b) => ({ ...b, yields: b.yields.map((y) => y * f) })),
});

const scaleSystematics = (m: CountingModelInput, f: number): CountingModelInput => ({
  ...m,
  systematics: (m.systematics ?? []).map((s) => ({
    ...s,
    effects: Object.fromEntries(Object.entries(s.effects).map(([k, v]) => [k, typeof v === 'number' ? v * f : v.map((d) => d * f)])),
  })),
});

describe('properties of CLs limits', () => {
  test('more background never gives a stronger expected limit', () => {
    // common practice: the expected sensitivity falls as the background grows. With the nominal
    // Asimov dataset the expected limits depend on the model only, not on the observed counts.
    fc.assert(
      fc.property(modelArb, yieldArb(1.01, 3), (model, factor) => {
        const a = computeLimit(model, { asimov: 'nominal' });
        const b = computeLimit(scaleBackground(model, factor), { asimov: 'nominal' });
        for (const key of EXPECTED_KEYS) expect(notBelow(b.expected[key], a.expected[key])).toBe(true);
      }),
      { numRuns: 40, seed: 101 },
    );
  });

  test('more observed events never give a stronger observed limit', () => {
    // common practice: an excess can only weaken an upper limit. Without nuisance parameters
    // ∂q̃_μ/∂n_j = 2 ln(ν_j(μ̂)/ν_j(μ)) ≤ 0 for μ̂ < μ, so CLs(μ) grows with every count; with one bin
    // the same holds through the profiled θ. (With a systematic correlated across bins, more events
    // in a background-dominated bin can pull the shared background up and legitimately strengthen
    // the limit from another bin, so multi-bin models with systematics are not drawn here.)
    const arb = modelArb.filter((m) => (m.systematics ?? []).length === 0 || m.observed.length === 1);
    fc.assert(
      fc.property(arb, fc.nat({ max: 2 }), fc.integer({ min: 1, max: 15 }), (model, bin, extra) => {
        const j = bin % model.observed.length;
        const more = { ...model, observed: model.observed.map((n, i) => (i === j ? n + extra : n)) };
        const a = computeLimit(model, { asimov: 'nominal' });
        const b = computeLimit(more, { asimov: 'nominal' });
        expect(notBelow(b.observed, a.observed)).toBe(true);
      }),
      { numRuns: 60, seed: 202 },
    );
  });

  test('more observed events never give a stronger exact one-bin limit', () => {
    // Read, J. Phys. G 28 (2002) 2693: CLs = P(n ≤ n_obs | s+b)/P(n ≤ n_obs | b) grows with n_obs.
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 40 }), yieldArb(0, 30), yieldArb(0.1, 5), (n, b, s) => {
        const model = (count: number): CountingModelInput => ({ observed: [count], signal: [s], backgrounds: [{ name: 'bkg', yields: [b] }] });
        const a = computeLimit(model(n), { method: 'exact' });
        const c = computeLimit(model(n + 1), { method: 'exact' });
        expect(notBelow(c.observed, a.observed)).toBe(true);
      }),
      { numRuns: 60, seed: 303 },
    );
  });

  test('a CLs limit is never below the CLs+b limit', () => {
    // Read, J. Phys. G 28 (2002) 2693: CLs = CLs+b/CLb with CLb ≤ 1.
    fc.assert(
      fc.property(modelArb, fc.constantFrom('profiled' as const, 'nominal' as const), (model, asimov) => {
        const cls = computeLimit(model, { asimov }).observed;
        const clsb = computeClsbLimit(model, { asimov });
        expect(notBelow(cls, clsb)).toBe(true);
      }),
      { numRuns: 40, seed: 404 },
    );
  });

  test('larger systematics never give a stronger expected limit', () => {
    // Widening the constraints can only flatten the profile likelihood of the Asimov data, so
    // q_μ,A falls and every expected limit rises (Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554).
    fc.assert(
      fc.property(modelArb, yieldArb(1.05, 3), (model, factor) => {
        const withSyst: CountingModelInput = model.systematics?.length ? model : { ...model, systematics: [{ name: 'normalisation', effects: { bkg: 0.1 } }] };
        const a = computeLimit(withSyst, { asimov: 'nominal' });
        const b = computeLimit(scaleSystematics(withSyst, factor), { asimov: 'nominal' });
        for (const key of EXPECTED_KEYS) expect(notBelow(b.expected[key], a.expected[key])).toBe(true);
      }),
      { numRuns: 40, seed: 505 },
    );
  });

  test('larger systematics never give a stronger observed limit when the data agree with the background', () => {
    // With observed counts at the nominal background (rounded), a wider constraint only adds
    // freedom that the background-only fit does not need.
    fc.assert(
      fc.property(modelArb, yieldArb(1.05, 3), (model, factor) => {
        const bkg = model.backgrounds?.[0]?.yields ?? [];
        const base: CountingModelInput = {
          ...model,
          observed: bkg.map((b) => Math.round(b)),
          systematics: [{ name: 'normalisation', effects: { bkg: 0.15 } }],
        };
        const a = computeLimit(base, { asimov: 'nominal' });
        const b = computeLimit(scaleSystematics(base, factor), { asimov: 'nominal' });
        expect(notBelow(b.observed, a.observed)).toBe(true);
      }),
      { numRuns: 30, seed: 606 },
    );
  });

  test('the expected band is ordered from −2σ to +2σ', () => {
    // Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554: the limit for μ̂ = Nσ grows with N.
    fc.assert(
      fc.property(modelArb, (model) => {
        const r = computeLimit(model);
        for (let j = 1; j < EXPECTED_KEYS.length; j++) {
          expect(r.expected[EXPECTED_KEYS[j] as '0']).toBeGreaterThan(r.expected[EXPECTED_KEYS[j - 1] as '0']);
        }
      }),
      { numRuns: 40, seed: 707 },
    );
  });

  test('pseudo-experiments and asymptotic formulae agree within a few percent at ~100 events per bin', () => {
    // Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554: the asymptotic distributions hold for large counts.
    fc.assert(
      fc.property(yieldArb(90, 120), yieldArb(4, 20), fc.integer({ min: -15, max: 15 }), (b, s, shift) => {
        const model: CountingModelInput = { observed: [Math.round(b) + shift], signal: [s], backgrounds: [{ name: 'bkg', yields: [b] }] };
        const asym = computeLimit(model);
        const toys = computeLimit(model, { method: 'toys', toys: 10000, seed: 77 });
        expect(Math.abs(toys.observed / asym.observed - 1)).toBeLessThan(0.05);
        expect(Math.abs(toys.expected['0'] / asym.expected['0'] - 1)).toBeLessThan(0.05);
      }),
      { numRuns: 6, seed: 808 },
    );
  });
});
