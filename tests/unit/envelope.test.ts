import fc from 'fast-check';
import { bestExpectedEnvelope, type EnvelopeInput } from '@/shared/combine/envelope';
import { StatsInputError } from '@/shared/stats/errors';
import type { LimitUnits } from '@/shared/units';

const TeV: LimitUnits = { parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb' };

/** A curve whose ln(limit) is a + b·x (exactly linear in the interpolation), bands as fixed ratios. */
function loglinear(name: string, a: number, b: number, xs: number[], units = TeV, obsRatio = 1.1): EnvelopeInput {
  const med = xs.map((x) => Math.exp(a + b * x));
  return { name, units, curve: { x: xs, observed: med.map((v) => v * obsRatio), expected: { '-1': med.map((v) => v * 0.7), '0': med, '1': med.map((v) => v * 1.4) } } };
}

describe('best-expected envelope', () => {
  test('the switch between two inputs sits at the crossing of their expected medians (closed form for lines in ln(limit))', () => {
    // ln E₁ = 1 − 0.5x, ln E₂ = −0.2 − 0.1x cross at x* = (1 + 0.2)/(0.5 − 0.1) = 3 (common practice:
    // the crossing of two straight lines), between the grid points 2.5 and 3.5.
    const xs = [1, 1.5, 2, 2.5, 3.5, 4, 5];
    const env = bestExpectedEnvelope([loglinear('steep', 1, -0.5, xs), loglinear('flat', -0.2, -0.1, xs, TeV, 0.9)]);
    const j = env.crossing.indexOf(true);
    expect(env.curve.x[j]).toBeCloseTo(3, 12);
    // Left of the crossing the flatter curve is lower; right of it the steeper one.
    expect(env.chosen.slice(0, j + 1).every((c) => c === 1)).toBe(true);
    expect(env.chosen.slice(j + 1).every((c) => c === 0)).toBe(true);
    expect(env.segments).toEqual([
      { input: 1, from: 1, to: expect.closeTo(3, 12) },
      { input: 0, from: expect.closeTo(3, 12), to: 5 },
    ]);
    // The chosen input's observed limit and band are reported, not a mix.
    const k = env.curve.x.indexOf(4);
    expect(env.curve.observed![k]).toBeCloseTo(1.1 * Math.exp(1 - 0.5 * 4), 12);
    expect(env.curve.expected!['1']![k]).toBeCloseTo(1.4 * Math.exp(1 - 0.5 * 4), 12);
    expect(env.curve.expected!['0']![j]).toBeCloseTo(Math.exp(-0.2 - 0.1 * 3), 12);
  });

  test('every point takes the lowest expected median among the inputs covering it (brute force, random curves)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.record({ a: fc.double({ min: -3, max: 3, noNaN: true }), b: fc.double({ min: -2, max: 0.5, noNaN: true }), start: fc.integer({ min: 0, max: 6 }), len: fc.integer({ min: 2, max: 8 }) }), { minLength: 2, maxLength: 6 }),
        (specs) => {
          const inputs = specs.map((s, i) => loglinear(`input ${i}`, s.a, s.b, Array.from({ length: s.len }, (_, k) => (s.start + k) * 0.5 + i * 0.01)));
          const env = bestExpectedEnvelope(inputs);
          env.curve.x.forEach((x, j) => {
            const covering = specs.flatMap((s, i) => {
              const xs = inputs[i]!.curve.x;
              return x >= xs[0]! - 1e-12 && x <= xs[xs.length - 1]! + 1e-12 ? [s.a + s.b * x] : [];
            });
            expect(Math.log(env.curve.expected!['0']![j]!)).toBeCloseTo(Math.min(...covering), 9);
          });
          // The grid keeps increasing through the inserted crossings.
          env.curve.x.forEach((x, j) => j === 0 || expect(x).toBeGreaterThan(env.curve.x[j - 1]!));
        },
      ),
      { numRuns: 200, seed: 7 },
    );
  });

  test('inputs are used inside their own range only', () => {
    const env = bestExpectedEnvelope([loglinear('wide', 0, -0.2, [1, 2, 3, 4, 5, 6]), loglinear('narrow, better', -5, 0, [2, 3, 4])]);
    expect(env.segments.map((s) => [s.input, s.from, s.to])).toEqual([
      [0, 1, 1],
      [1, 2, 4],
      [0, 5, 6],
    ]);
  });

  test('GeV and pb inputs are converted to the first input’s TeV and fb', () => {
    const inGeV = loglinear('in GeV', 0, 0, [1000, 2000, 3000], { parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'pb' });
    const env = bestExpectedEnvelope([loglinear('in TeV', 10, 0, [1, 2, 3]), inGeV]);
    expect(env.converted).toEqual([{ input: 1, change: 'GeV → TeV, pb → fb' }]);
    expect(env.curve.x).toEqual([1, 2, 3]);
    // 1 pb = 1000 fb (SI prefixes).
    expect(env.curve.expected!['0']![0]).toBeCloseTo(1000, 9);
    expect(env.chosen).toEqual([1, 1, 1]);
  });

  test('refused, naming the input: μ with σ×B, no expected median, too few or too many inputs, bad values', () => {
    const ok = loglinear('a', 0, -0.1, [1, 2, 3]);
    const err = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        if (e instanceof StatsInputError) return `${e.field}: ${e.reason}`;
        throw e;
      }
      throw new Error('not refused');
    };
    expect(err(() => bestExpectedEnvelope([ok, loglinear('on mu', 0, 0, [1, 2], { parameterUnit: 'TeV', quantity: 'mu', quantityUnit: '' })]))).toBe(
      'inputs.1: (on mu) cannot be combined with a: it limits the signal strength μ, the axis shows σ×B',
    );
    expect(err(() => bestExpectedEnvelope([ok, { ...ok, name: 'no median', curve: { x: [1, 2], observed: [1, 1] } }]))).toContain('inputs.1.curve.expected: (no median) has no expected median');
    expect(err(() => bestExpectedEnvelope([ok]))).toBe('inputs: must hold 2 to 20 results (got 1)');
    expect(err(() => bestExpectedEnvelope(Array.from({ length: 21 }, () => ok)))).toBe('inputs: must hold 2 to 20 results (got 21)');
    expect(err(() => bestExpectedEnvelope([ok, { ...ok, curve: { x: [1, 2], expected: { '0': [1, -1] } } }]))).toContain('inputs.1.curve.expected.0[1]');
  });

  test('bands that not every input gives are left out and named; the observed line needs every input', () => {
    const a = loglinear('a', 0, -0.1, [1, 2, 3]);
    const b: EnvelopeInput = { name: 'b', units: TeV, curve: { x: [1, 2, 3], expected: { '0': [2, 2, 2] } } };
    const env = bestExpectedEnvelope([a, b]);
    expect(env.missingBands).toEqual(['-2', '-1', '1', '2']);
    expect(env.curve.observed).toBeUndefined();
    expect(Object.keys(env.curve.expected!)).toEqual(['0']);
  });
});
