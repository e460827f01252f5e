/**
 * exclusionRanges: crossings of a limit curve with a theory curve, interpolated linearly in the
 * parameter and in log σ. Theory curves that are exactly exponential make the crossing known in
 * closed form whatever the grids.
 */
import { exclusionRanges, StatsInputError } from '@/shared/stats';
import { exclusionOrProblem } from '@/shared/stats/exclusion';

const xs = (from: number, to: number, step: number) => Array.from({ length: Math.round((to - from) / step) + 1 }, (_, i) => from + i * step);

test('a flat limit under a falling exponential cross-section: crossing at σ0·e^{−x/λ} = limit', () => {
  const theoryX = xs(200, 1400, 100);
  const theory = { x: theoryX, central: theoryX.map((x) => 10 * Math.exp(-x / 100)), lower: theoryX.map((x) => 5 * Math.exp(-x / 100)), upper: theoryX.map((x) => 20 * Math.exp(-x / 100)) };
  const curveX = xs(250, 1200, 50);
  const r = exclusionRanges({ x: curveX, observed: curveX.map(() => 1e-3), expected: { '0': curveX.map(() => 2e-3) } }, theory);
  // exact: 10·e^{−x/100} = 1e-3 ⇒ x = 100·ln(1e4)
  expect(r.observed).toEqual([{ from: 250, to: expect.any(Number), fromOpen: true }]);
  expect(r.observed?.[0]?.to).toBeCloseTo(100 * Math.log(1e4), 9);
  expect(r.expected['0']?.[0]?.to).toBeCloseTo(100 * Math.log(5e3), 9);
  expect(r.observedTheoryLower?.[0]?.to).toBeCloseTo(100 * Math.log(5e3), 9);
  expect(r.observedTheoryUpper?.[0]?.to).toBeCloseTo(100 * Math.log(2e4), 9);
  expect(r.expected['-2']).toBeUndefined();
});

test('a limit that dips below the theory in the middle gives one closed interval with two crossings', () => {
  // Limit: e^{|x − 1000|/50}·1e-3 is log-linear on each side of the grid point 1000.
  const curveX = xs(800, 1200, 100);
  const limit = curveX.map((x) => 1e-3 * Math.exp(Math.abs(x - 1000) / 50));
  const r = exclusionRanges({ x: curveX, observed: limit }, { x: [700, 1300], central: [4e-3, 4e-3] });
  // exact: e^{|x−1000|/50} = 4 ⇒ x = 1000 ± 50·ln 4
  expect(r.observed).toHaveLength(1);
  expect(r.observed?.[0]?.from).toBeCloseTo(1000 - 50 * Math.log(4), 9);
  expect(r.observed?.[0]?.to).toBeCloseTo(1000 + 50 * Math.log(4), 9);
  expect(r.observed?.[0]?.fromOpen).toBeUndefined();
  expect(r.observed?.[0]?.toOpen).toBeUndefined();
});

test('exclusion to both edges, two separate intervals, and nothing excluded', () => {
  const x = [1, 2, 3, 4, 5];
  const theory = { x, central: [1, 1, 1, 1, 1] };
  expect(exclusionRanges({ x, observed: [0.5, 0.5, 0.5, 0.5, 0.5] }, theory).observed).toEqual([{ from: 1, to: 5, fromOpen: true, toOpen: true }]);
  const two = exclusionRanges({ x, observed: [0.5, 2, 0.5, 2, 0.5] }, theory).observed ?? [];
  expect(two).toHaveLength(3);
  expect(two[0]).toMatchObject({ from: 1, fromOpen: true });
  expect(two[2]).toMatchObject({ to: 5, toOpen: true });
  // log-linear between 0.5 and 2: ln ratio crosses zero halfway
  expect(two[0]?.to).toBeCloseTo(1.5, 12);
  expect(two[1]?.from).toBeCloseTo(2.5, 12);
  expect(exclusionRanges({ x, observed: [2, 2, 2, 2, 2] }, theory).observed).toEqual([]);
});

test('only the common range of the two grids is used', () => {
  const r = exclusionRanges({ x: [0, 10], observed: [0.1, 0.1] }, { x: [4, 6], central: [1, 1] });
  expect(r.observed).toEqual([{ from: 4, to: 6, fromOpen: true, toOpen: true }]);
  expect(exclusionRanges({ x: [0, 1], observed: [0.1, 0.1] }, { x: [4, 6], central: [1, 1] }).observed).toEqual([]);
});

test.each([
  [{ x: [1, 1, 2], observed: [1, 1, 1] }, { x: [1, 2], central: [1, 1] }, 'curve.x[1]'],
  [{ x: [1, 2], observed: [1, 0] }, { x: [1, 2], central: [1, 1] }, 'curve.observed[1]'],
  [{ x: [1, 2], observed: [1] }, { x: [1, 2], central: [1, 1] }, 'curve.observed'],
  [{ x: [1, 2], expected: { '1': [1, NaN] } }, { x: [1, 2], central: [1, 1] }, 'curve.expected["1"][1]'],
  [{ x: [1, 2], observed: [1, 1] }, { x: [1, 2], central: [1, -1] }, 'theory.central[1]'],
  [{ x: [1, 2], observed: [1, 1] }, { x: [2], central: [1] }, 'theory.x'],
])('bad curves name the field', (curve, theory, field) => {
  try {
    exclusionRanges(curve, theory);
    throw new Error('expected a StatsInputError');
  } catch (err) {
    expect(err).toBeInstanceOf(StatsInputError);
    expect((err as StatsInputError).field).toBe(field);
  }
});

describe('touching is not crossing', () => {
  const x = [1, 2, 3, 4, 5];
  const theory = { x, central: [1, 1, 1, 1, 1] };

  test('a limit that touches the theory at one grid point from below keeps one excluded range', () => {
    // common practice: an excluded range ends where the limit crosses above the theory; at a
    // tangent point (limit = theory, below on both sides) nothing is crossed
    expect(exclusionRanges({ x, observed: [0.5, 0.5, 1, 0.5, 0.5] }, theory).observed).toEqual([{ from: 1, to: 5, fromOpen: true, toOpen: true }]);
    expect(exclusionRanges({ x, observed: [2, 0.5, 1, 0.5, 2] }, theory).observed).toEqual([{ from: 1.5, to: 4.5 }]);
  });

  test('a touch where the two values agree only to rounding (1e-15 relative) is still a touch', () => {
    // The same σ computed two ways (a stored table and a re-evaluated formula) differs in the last
    // digits; a "crossing" of 1e-15 in σ is no physical crossing (common practice).
    const central = x.map((v) => 10 * Math.exp(-v / 2));
    for (const eps of [0, 1e-15, -1e-15, 3e-13]) {
      const observed = central.map((c, i) => (i === 2 ? c * (1 + eps) : 0.5 * c));
      expect(exclusionRanges({ x, observed }, { x, central }).observed).toEqual([{ from: 1, to: 5, fromOpen: true, toOpen: true }]);
    }
  });

  test('touching from above excludes nothing; a real crossing still splits; equality over a stretch ends the range', () => {
    expect(exclusionRanges({ x, observed: [2, 2, 1, 2, 2] }, theory).observed).toEqual([]);
    const split = exclusionRanges({ x, observed: [0.5, 2, 0.5, 0.5, 0.5] }, theory).observed ?? [];
    expect(split).toHaveLength(2);
    // exact (log-linear between 0.5 and 2): the crossings are halfway
    expect(split[0]?.to).toBeCloseTo(1.5, 12);
    expect(split[1]?.from).toBeCloseTo(2.5, 12);
    // limit = theory from x = 2 to 3, then above: the range ends where the equality starts
    expect(exclusionRanges({ x, observed: [0.5, 1, 1, 2, 2] }, theory).observed).toEqual([{ from: 1, to: 2, fromOpen: true }]);
  });
});

describe('a limit on μ without a theory curve is read against μ = 1', () => {
  // μ_up(m) = 0.25·e^{m/2}: below 1 up to m = 2 ln 4 = 2.7726 (closed form; log-linear
  // interpolation follows an exponential exactly). Common practice: the signal as predicted is
  // excluded where the upper limit on its strength is below 1.
  const x = [1, 2, 3, 4];
  const mu = x.map((m) => 0.25 * Math.exp(m / 2));
  test('excluded where the limit is below 1, the crossing in closed form', () => {
    const ex = exclusionOrProblem({ x, observed: mu, expected: { '0': mu.map((v) => v * 2) } }, null, 'mu');
    expect(ex.problem).toBeNull();
    expect(ex.ranges!.observed).toHaveLength(1);
    expect(ex.ranges!.observed![0]).toMatchObject({ from: 1, fromOpen: true });
    expect(ex.ranges!.observed![0]!.to).toBeCloseTo(2 * Math.log(4), 10);
    // Twice the limit: below 1 up to m = 2 ln 2.
    expect(ex.ranges!.expected['0']![0]!.to).toBeCloseTo(2 * Math.log(2), 10);
  });
  test('σ×B without theory still has no range, and a bad μ grid is named', () => {
    expect(exclusionOrProblem({ x, observed: mu }, null, 'xsec')).toEqual({ ranges: null, problem: expect.stringMatching(/No theory curve/) });
    expect(exclusionOrProblem({ x: [2, 1], observed: [0.5, 0.5] }, null, 'mu').problem).toMatch(/curve\.x/);
  });
});
