import fc from 'fast-check';
import { planeContours, ratioContours, type ContourLine } from '@/shared/plane/contours';
import { planeGrid } from '@/shared/plane/grid';
import type { Plane } from '@/shared/schemas/plane';
import { StatsInputError } from '@/shared/stats/errors';

type Pt = [number, number];

/** Points of xs × ys (y outer), optionally without some, and the ratio at each. */
function sample(xs: number[], ys: number[], ratio: (x: number, y: number) => number, drop: (x: number, y: number) => boolean = () => false) {
  const x: number[] = [];
  const y: number[] = [];
  for (const b of ys) for (const a of xs) if (!drop(a, b)) { x.push(a); y.push(b); }
  const grid = planeGrid(x, y);
  return { x, y, grid, lines: ratioContours(grid, x.map((a, k) => ratio(a, y[k]!))) };
}

const range = (from: number, to: number, n: number) => Array.from({ length: n }, (_, i) => from + ((to - from) * i) / (n - 1));

/** Segments of a line (closing segment included for closed lines). */
function segments(line: ContourLine): Array<[Pt, Pt]> {
  const p = line.points;
  const out: Array<[Pt, Pt]> = [];
  for (let k = 0; k + 1 < p.length; k++) out.push([p[k]!, p[k + 1]!]);
  if (line.closed) out.push([p[p.length - 1]!, p[0]!]);
  return out;
}

/** Shoelace formula (common practice): positive for counter-clockwise rings. */
function signedArea(points: Pt[]): number {
  let a = 0;
  for (let k = 0; k < points.length; k++) {
    const [x0, y0] = points[k]!;
    const [x1, y1] = points[(k + 1) % points.length]!;
    a += x0 * y1 - x1 * y0;
  }
  return a / 2;
}

/** Every segment has ratio < 1 a step `eps` to its left and > 1 a step to its right. */
function excludedOnTheLeft(lines: ContourLine[], ratio: (x: number, y: number) => number, eps: number): boolean {
  for (const line of lines) {
    for (const [a, b] of segments(line)) {
      const len = Math.hypot(b[0] - a[0], b[1] - a[1]);
      if (len === 0) continue;
      const mx = (a[0] + b[0]) / 2;
      const my = (a[1] + b[1]) / 2;
      const nx = -(b[1] - a[1]) / len; // left normal
      const ny = (b[0] - a[0]) / len;
      if (!(ratio(mx + eps * nx, my + eps * ny) < 1 && ratio(mx - eps * nx, my - eps * ny) > 1)) return false;
    }
  }
  return true;
}

const maxOf = (values: number[]) => values.reduce((m, v) => Math.max(m, v), 0);

describe('ratio = 1 contours against closed forms', () => {
  // Linear interpolation of a smooth function between grid points has error O(h²) (numerical
  // analysis; e.g. Burden & Faires, Numerical Analysis, the interpolation error term — from memory),
  // so halving the spacing divides the contour's largest error by about 4.
  const circle = (x: number, y: number) => (x * x + y * y) / 1.3 ** 2;

  test('a circle: one closed counter-clockwise line, error O(h²) (about 4× smaller at half the spacing)', () => {
    const errors = [21, 41].map((n) => {
      const h = 4 / (n - 1);
      const { lines } = sample(range(-2, 2, n), range(-2, 2, n), circle);
      expect(lines).toHaveLength(1);
      expect(lines[0]!.closed).toBe(true);
      expect(signedArea(lines[0]!.points)).toBeGreaterThan(0);
      expect(Math.abs(signedArea(lines[0]!.points) - Math.PI * 1.3 ** 2)).toBeLessThan(0.5 * h * h * 2 * Math.PI * 1.3);
      expect(excludedOnTheLeft(lines, circle, h / 2)).toBe(true);
      const err = maxOf(lines[0]!.points.map(([x, y]) => Math.abs(Math.hypot(x, y) - 1.3)));
      // The stated tolerance: 0.5 h² (the interpolation bound with |ln ratio|'' ≲ 1/r² here).
      expect(err).toBeLessThan(0.5 * h * h);
      return err;
    });
    const shrink = errors[0]! / errors[1]!;
    expect(shrink).toBeGreaterThan(3);
    expect(shrink).toBeLessThan(5.5);
  });

  test('a straight line x + 2y = 1: exact when ln(ratio) is linear, O(h²) when the ratio is', () => {
    // ln(ratio) linear in x and y: linear interpolation reproduces it exactly (common practice).
    const exact = sample(range(-2, 2, 15), range(-2, 2, 15), (x, y) => Math.exp(x + 2 * y - 1));
    expect(exact.lines).toHaveLength(1);
    expect(exact.lines[0]!.closed).toBe(false);
    for (const [x, y] of exact.lines[0]!.points) expect(x + 2 * y).toBeCloseTo(1, 12);
    // ratio = (x + 2y + 3)/4 is linear, ln(ratio) is not: error O(h²) again.
    const linear = (x: number, y: number) => (x + 2 * y + 3) / 4;
    const errors = [17, 33].map((n) => {
      const h = 4 / (n - 1);
      const { lines } = sample(range(-2, 2, n), range(-2, 2, n), linear);
      expect(lines).toHaveLength(1);
      expect(excludedOnTheLeft(lines, linear, h / 2)).toBe(true);
      const err = maxOf(lines[0]!.points.map(([x, y]) => Math.abs(x + 2 * y - 1) / Math.sqrt(5)));
      expect(err).toBeLessThan(0.5 * h * h);
      return err;
    });
    expect(errors[0]! / errors[1]!).toBeGreaterThan(3);
    expect(errors[0]! / errors[1]!).toBeLessThan(5.5);
  });

  test('irregular spacing: a line x = a on a grid line lands exactly at a; between lines it is interpolated in the cell', () => {
    const xs = [0, 0.13, 0.5, 0.7, 1.45, 2, 3.3];
    const ys = [10, 11, 15, 16.5, 30];
    const onLine = (x: number) => (x / 1.45) ** 3; // exactly 1 at x = 1.45
    const { lines } = sample(xs, ys, onLine);
    expect(lines).toHaveLength(1);
    expect(lines[0]!.points.map((p) => p[0])).toEqual(ys.map(() => 1.45));
    // Excluded side (x < a, ratio < 1: common practice) on the left: the line walks up in y.
    expect(lines[0]!.points.map((p) => p[1])).toEqual(ys);
    const between = sample(xs, ys, (x) => Math.exp(4 * (x - 1)));
    expect(between.lines).toHaveLength(1);
    for (const [x] of between.lines[0]!.points) expect(x).toBeCloseTo(1, 12);
    expect(between.lines[0]!.points[0]![1]).toBe(10);
  });
});

describe('missing cells break contours, never bridge them', () => {
  const r = (x: number, y: number) => (x * x + y * y) / 1;

  test('a hole on the circle: one open line, no segment inside the cells next to the hole', () => {
    const hole = (x: number, y: number) => Math.abs(x - 1) < 0.25 && Math.abs(y) < 0.25;
    const { lines } = sample(range(-2, 2, 21), range(-2, 2, 21), r, hole);
    expect(lines).toHaveLength(1);
    expect(lines[0]!.closed).toBe(false);
    // Cells with a missing corner cover 0.6 < x < 1.4, −0.4 < y < 0.4.
    for (const [a, b] of segments(lines[0]!)) {
      const mx = (a[0] + b[0]) / 2;
      const my = (a[1] + b[1]) / 2;
      expect(mx > 0.6 + 1e-12 && mx < 1.4 - 1e-12 && Math.abs(my) < 0.4 - 1e-12).toBe(false);
    }
    const ends = [lines[0]!.points[0]!, lines[0]!.points.at(-1)!];
    for (const [x, y] of ends) expect(Math.abs(x - 0.6) < 1e-12 || Math.abs(x - 1.4) < 1e-12 || Math.abs(Math.abs(y) - 0.4) < 1e-12).toBe(true);
    expect(excludedOnTheLeft(lines, r, 0.1)).toBe(true);
  });

  test('a straight line through a hole comes out as two pieces ending at the hole', () => {
    const { lines } = sample(range(0, 1, 11), range(0, 10, 11), (x) => Math.exp(x - 0.55), (x, y) => Math.abs(x - 0.5) < 0.01 && y === 5);
    expect(lines).toHaveLength(2);
    const spans = lines.map((l) => [l.points[0]![1], l.points.at(-1)![1]]).sort((p, q) => p[0]! - q[0]!);
    expect(spans).toEqual([[0, 4], [6, 10]]);
  });

  test('a triangle of missing cells (y > x): lines stay in the cells below the diagonal', () => {
    const xs = range(0, 10, 21);
    const ring = (x: number, y: number) => ((x - 5) ** 2 + y * y) / 16;
    const { lines } = sample(xs, xs, ring, (x, y) => y > x);
    expect(lines.length).toBeGreaterThan(0);
    for (const line of lines) {
      expect(line.closed).toBe(false);
      for (const [a, b] of segments(line)) expect((a[1] + b[1]) / 2).toBeLessThanOrEqual((a[0] + b[0]) / 2 + 1e-12);
      for (const [x, y] of line.points) expect(Math.abs(Math.hypot(x - 5, y) - 4)).toBeLessThan(0.5 * 0.5 ** 2);
    }
    expect(excludedOnTheLeft(lines, ring, 0.2)).toBe(true);
  });

  test('a grid one cell wide (2 × N): lines across it, and a hole there leaves nothing to bridge', () => {
    const xs = [0, 1];
    const ys = range(0, 9, 10);
    const across = sample(xs, ys, (_x, y) => Math.exp(y - 4.5));
    // Excluded below (y < 4.5): walking towards −x keeps it on the left.
    expect(across.lines).toEqual([{ points: [[1, 4.5], [0, 4.5]], closed: false }]);
    const broken = sample(xs, ys, (_x, y) => Math.exp(y - 4.5), (x, y) => x === 0 && y === 5);
    expect(broken.lines).toEqual([]);
    const along = sample(xs, ys, (x) => Math.exp(x - 0.5), (x, y) => x === 0 && y === 5);
    expect(along.lines.map((l) => [l.points[0]![1], l.points.at(-1)![1]])).toEqual(expect.arrayContaining([[0, 4], [6, 9]]));
    expect(along.lines).toHaveLength(2);
  });

  test('a ratio of exactly 1 at grid points gives no repeated vertices', () => {
    // ratio = exp(x + y − 2) is 1 on the grid points (0, 2), (1, 1), (2, 0) of an integer grid.
    const { lines } = sample(range(0, 3, 4), range(0, 3, 4), (x, y) => Math.exp(x + y - 2));
    expect(lines).toHaveLength(1);
    const pts = lines[0]!.points;
    for (let k = 1; k < pts.length; k++) expect(pts[k]).not.toEqual(pts[k - 1]);
    for (const [x, y] of pts) expect(x + y).toBeCloseTo(2, 12);
  });

  test('non-positive and non-finite ratios count as missing', () => {
    const bad = sample(range(0, 1, 11), range(0, 10, 11), (x, y) => (y === 5 && x === 0.5 ? -1 : y === 5 && x === 0.6 ? Infinity : Math.exp(x - 0.55)));
    expect(bad.lines).toHaveLength(2);
  });
});

describe('random planes (no ring lost, none bridged)', () => {
  test('segments found = the sign changes of cells with four valid corners / 2', () => {
    // Marching squares (common practice): a cell with four valid corners holds one segment per two of
    // its edges where ln(ratio) changes sign (≥ 0 counts as above, as in d3-contour).
    fc.assert(
      fc.property(fc.integer({ min: 2, max: 9 }), fc.integer({ min: 2, max: 9 }), fc.array(fc.double({ min: -2, max: 2, noNaN: true }), { minLength: 81, maxLength: 81 }), fc.array(fc.boolean(), { minLength: 81, maxLength: 81 }), (nx, ny, values, gone) => {
        const xs = range(0, nx - 1, nx).map((v) => v * v + v);
        const ys = range(0, ny - 1, ny);
        // Kept off 0: a ratio of exactly 1 at a grid point gives zero-length segments, which are dropped
        // (the test 'a ratio of exactly 1 at grid points …' covers that case).
        const lnAt = (i: number, j: number) => (values[j * 9 + i]! >= 0 ? 0.01 + values[j * 9 + i]! : values[j * 9 + i]! - 0.01);
        const missing = (i: number, j: number) => gone[j * 9 + i]! && (i + j) % 3 === 0;
        const x: number[] = [];
        const y: number[] = [];
        const ratio: number[] = [];
        for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) {
          x.push(xs[i]!);
          y.push(ys[j]!);
          ratio.push(missing(i, j) ? NaN : Math.exp(lnAt(i, j)));
        }
        const lines = ratioContours(planeGrid(x, y), ratio);
        let expected = 0;
        for (let j = 0; j + 1 < ny; j++) for (let i = 0; i + 1 < nx; i++) {
          const corners: Array<[number, number]> = [[i, j], [i + 1, j], [i + 1, j + 1], [i, j + 1]];
          if (corners.some(([a, b]) => missing(a, b))) continue;
          const up = corners.map(([a, b]) => lnAt(a, b) >= 0);
          expected += up.filter((u, k) => u !== up[(k + 1) % 4]).length / 2;
        }
        const found = lines.reduce((s, l) => s + segments(l).length, 0);
        expect(found).toBe(expected);
        for (const line of lines) expect(line.points.length).toBeGreaterThan(1);
      }),
      { numRuns: 300, seed: 15 },
    );
  });
});

describe('planeContours', () => {
  // An invented mass plane, σ×B limits in fb: the limit is theory × the circle ratio.
  function plane(withBand: boolean): Plane {
    const x: number[] = [];
    const y: number[] = [];
    for (const b of range(-2, 2, 21)) for (const a of range(-2, 2, 21)) { x.push(a); y.push(b); }
    const central = x.map((a, k) => 10 * Math.exp(-a - y[k]!));
    const ratio = x.map((a, k) => a * a + y[k]! ** 2);
    return {
      yName: 'm(χ)', yUnit: 'GeV', x, y,
      observed: central.map((t, k) => t * ratio[k]!),
      expected: { '-1': central.map((t, k) => t * ratio[k]! * 1.44), '0': central.map((t, k) => t * ratio[k]!), '1': central.map((t, k) => t * ratio[k]! / 1.44), '2': central },
      theory: withBand ? { central, lower: central.map((t) => t / 2), upper: central.map((t) => t * 2) } : { central },
    };
  }
  const radius = (lines: ContourLine[] | undefined) => {
    const pts = lines!.flatMap((l) => l.points);
    return pts.reduce((s, [x, y]) => s + Math.hypot(x, y), 0) / pts.length;
  };

  test('σ×B with a theory band: the five lines at the radii the ratios give', () => {
    const out = planeContours(plane(true), 'xsec');
    expect(out.problem).toBeNull();
    expect(Object.keys(out.expected).sort()).toEqual(['-1', '0', '1']);
    // ratio = ρ² × factor = 1 at ρ = 1/√factor.
    expect(radius(out.observed)).toBeCloseTo(1, 1);
    expect(radius(out.expected['0'])).toBeCloseTo(1, 1);
    expect(radius(out.expected['-1'])).toBeCloseTo(1 / 1.2, 1);
    expect(radius(out.expected['1'])).toBeCloseTo(1.2, 1);
    expect(radius(out.observedTheoryLower)).toBeCloseTo(Math.SQRT1_2, 1); // theory halved: ratio doubled
    expect(radius(out.observedTheoryUpper)).toBeCloseTo(Math.SQRT2, 1);
  });

  test('σ×B without a band: no band lines; without theory: the problem says why', () => {
    const out = planeContours(plane(false), 'xsec');
    expect(out.observedTheoryLower).toBeUndefined();
    expect(out.observedTheoryUpper).toBeUndefined();
    expect(out.observed).toHaveLength(1);
    const bare = { ...plane(false), theory: undefined };
    expect(planeContours(bare, 'xsec')).toEqual({ expected: {}, problem: 'no theory σ×B is stored, so no contour can be derived' });
  });

  test('μ: the limit is the ratio, theory unused', () => {
    const p = plane(true);
    const mu: Plane = { ...p, observed: p.x.map((a, k) => (a * a + p.y[k]! ** 2) / 2.25), expected: undefined };
    const out = planeContours(mu, 'mu');
    expect(radius(out.observed)).toBeCloseTo(1.5, 1);
    expect(out.expected).toEqual({});
    expect(out.observedTheoryLower).toBeUndefined();
    expect(planeContours({ ...mu, observed: undefined }, 'mu').problem).toBe('no observed or expected limit is stored, so no contour can be derived');
  });

  test('columns of the wrong length and bad grids are refused with StatsInputError', () => {
    const p = plane(false);
    const short: Plane = { ...p, expected: { '0': p.expected!['0']!.slice(1) } };
    expect(() => planeContours(short, 'xsec')).toThrow(new StatsInputError('expected["0"]', 'must have one value per point: 440 values for 441 points'));
    const dup: Plane = { ...p, x: [...p.x.slice(0, -1), p.x[0]!], y: [...p.y.slice(0, -1), p.y[0]!] };
    expect(() => planeContours(dup, 'xsec')).toThrow(StatsInputError);
  });
});
