import { buildQuickPlot, extent, formatTick, logDomain, logTicks, MIN_PLOT_SIZE, wantsLogY } from '@/components/plot/quick-plot-geometry';

/** The points of an SVG path of M/L commands (what d3's linear line and area produce). */
function pathPoints(d: string): [number, number][] {
  return [...d.matchAll(/[ML]\s*(-?[\d.]+(?:e[-+]?\d+)?)[ ,](-?[\d.]+(?:e[-+]?\d+)?)/gi)].map((m) => [Number(m[1]), Number(m[2])]);
}

const curve = {
  x: [1, 2, 3, 4],
  observed: [2, 0.5, 0.08, 0.03],
  expected: { '-2': [0.8, 0.2, 0.04, 0.012], '-1': [1.1, 0.3, 0.05, 0.018], '0': [1.5, 0.4, 0.07, 0.025], '1': [2.1, 0.55, 0.1, 0.035], '2': [2.9, 0.75, 0.14, 0.05] },
};
const theory = { x: [1, 2.5, 4], central: [40, 1, 0.02], lower: [35, 0.8, 0.015], upper: [45, 1.2, 0.025] };

describe('log axis', () => {
  test('the domain is widened to whole decades and the ticks sit at the decades', () => {
    expect(logDomain(0.012, 45)).toEqual([0.01, 100]);
    expect(logTicks(0.01, 100)).toEqual([0.01, 0.1, 1, 10, 100]);
    expect(logTicks(1e-6, 1e-3)).toEqual([1e-6, 1e-5, 1e-4, 1e-3]);
  });
  test('fewer than three decade ticks get the 2× and 5× ticks as well', () => {
    expect(logDomain(2, 7)).toEqual([1, 10]);
    expect(logTicks(1, 10)).toEqual([1, 2, 5, 10]);
    expect(logTicks(0.5, 20)).toEqual([0.5, 1, 2, 5, 10, 20]);
    expect(logTicks(1, 100)).toEqual([1, 10, 100]);
  });
  test('labels: decades written out, far decades as powers of ten', () => {
    expect([0.001, 0.01, 1, 10, 1000, 10000].map(formatTick)).toEqual(['0.001', '0.01', '1', '10', '1000', '10000']);
    expect(formatTick(1e-4)).toBe('10⁻⁴');
    expect(formatTick(1e6)).toBe('10⁶');
    expect(formatTick(2.5)).toBe('2.5');
    expect(formatTick(-1.5)).toBe('−1.5');
  });
  test('log only when every value is positive', () => {
    expect(wantsLogY([0.1, 3])).toBe(true);
    expect(wantsLogY([0, 3])).toBe(false);
    expect(wantsLogY([])).toBe(false);
    expect(extent([3, NaN, -1, 7])).toEqual([-1, 7]);
    expect(extent([NaN])).toBeNull();
  });
});

describe('geometry', () => {
  const g = buildQuickPlot({ width: 400, height: 300, curve, theory, margin: { top: 10, right: 10, bottom: 40, left: 50 } })!;

  test('the drawing area is the box minus the margins; y is logarithmic over whole decades', () => {
    expect(g.area).toEqual({ x: 50, y: 10, width: 340, height: 250 });
    expect(g.logY).toBe(true);
    expect(g.yDomain).toEqual([0.01, 100]);
    expect(g.yTicks.map((t) => t.value)).toEqual([0.01, 0.1, 1, 10, 100]);
    // Decades are evenly spaced, top decade at the top edge, bottom at the bottom edge.
    const pos = g.yTicks.map((t) => t.pos);
    expect(pos[0]).toBeCloseTo(260);
    expect(pos[4]).toBeCloseTo(10);
    for (let i = 1; i < pos.length; i++) expect(pos[i - 1]! - pos[i]!).toBeCloseTo(62.5);
  });

  test('the observed path passes through every point at its scaled position', () => {
    const pts = pathPoints(g.paths.observed!);
    expect(pts).toHaveLength(4);
    curve.x.forEach((x, i) => {
      const [sx, sy] = g.toScreen(x, curve.observed[i]!);
      expect(pts[i]![0]).toBeCloseTo(sx, 1);
      expect(pts[i]![1]).toBeCloseTo(sy, 1);
    });
    // x = 1 is the left edge of the drawing area, x = 4 the right edge.
    expect(pts[0]![0]).toBeCloseTo(50, 1);
    expect(pts[3]![0]).toBeCloseTo(390, 1);
    // y = 2 is log10(2) decades above 1 (1 is at 260 − 2 × 62.5 = 135).
    expect(pts[0]![1]).toBeCloseTo(135 - Math.log10(2) * 62.5, 1);
  });

  test('a band runs along its upper edge and back along its lower edge', () => {
    const pts = pathPoints(g.paths.band1!);
    expect(pts).toHaveLength(8);
    const upper = pts.slice(0, 4);
    const lower = pts.slice(4).reverse();
    curve.x.forEach((x, i) => {
      expect(upper[i]![1]).toBeCloseTo(g.toScreen(x, curve.expected['1'][i]!)[1], 1);
      expect(lower[i]![1]).toBeCloseTo(g.toScreen(x, curve.expected['-1'][i]!)[1], 1);
    });
    expect(Object.keys(g.paths).sort()).toEqual(['band1', 'band2', 'expected', 'observed', 'theory', 'theoryBand']);
  });

  test('the theory curve uses its own grid', () => {
    const pts = pathPoints(g.paths.theory!);
    expect(pts.map((p) => p[0])).toEqual(theory.x.map((x) => expect.closeTo(g.toScreen(x, 1)[0], 1)));
  });

  test('x ticks are round values inside the domain', () => {
    expect(g.xDomain).toEqual([1, 4]);
    for (const t of g.xTicks) {
      expect(t.value).toBeGreaterThanOrEqual(1);
      expect(t.value).toBeLessThanOrEqual(4);
      expect(t.pos).toBeCloseTo(g.toScreen(t.value, 1)[0]);
    }
  });

  test('values at or below zero switch to a linear axis from zero; bad cells leave gaps', () => {
    const lin = buildQuickPlot({ width: 400, height: 300, curve: { x: [1, 2, 3], observed: [0.5, -0.2, 1] } })!;
    expect(lin.logY).toBe(false);
    expect(lin.yDomain[0]).toBeLessThanOrEqual(-0.2);
    const gap = buildQuickPlot({ width: 400, height: 300, curve: { x: [1, 2, 3, 4], observed: [1, NaN, 0.5, 0.2] } })!;
    // Two separate pieces: M…(one point) then M…L…
    expect(gap.paths.observed!.match(/M/g)).toHaveLength(2);
    expect(pathPoints(gap.paths.observed!)).toHaveLength(3);
  });

  test('tiny boxes and empty data draw nothing', () => {
    expect(buildQuickPlot({ width: MIN_PLOT_SIZE.width - 1, height: 300, curve })).toBeNull();
    expect(buildQuickPlot({ width: 400, height: 300, curve: { x: [1, 2] } })).toBeNull();
  });
});
