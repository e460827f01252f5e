import { planeGrid } from '@/shared/plane/grid';
import { PLANE_LIMITS } from '@/shared/schemas/plane';
import { StatsInputError } from '@/shared/stats/errors';

/** Points of the full grid xs × ys, row by row (y outer). */
function full(xs: number[], ys: number[]): { x: number[]; y: number[] } {
  const x: number[] = [];
  const y: number[] = [];
  for (const b of ys) for (const a of xs) { x.push(a); y.push(b); }
  return { x, y };
}

function refusal(fn: () => unknown): StatsInputError {
  try {
    fn();
  } catch (e) {
    if (e instanceof StatsInputError) return e;
    throw e;
  }
  throw new Error('expected a StatsInputError');
}

describe('planeGrid', () => {
  test('builds sorted axes and the cell → point index, holes as -1, points in any order', () => {
    // An invented mass plane: a triangle of cells (y ≥ x) missing, points shuffled.
    const pts: Array<[number, number]> = [];
    for (const my of [0, 100, 250, 400]) for (const mx of [300, 500, 700]) if (my < mx) pts.push([mx, my]);
    pts.reverse();
    const g = planeGrid(pts.map((p) => p[0]), pts.map((p) => p[1]));
    expect(g.xs).toEqual([300, 500, 700]);
    expect(g.ys).toEqual([0, 100, 250, 400]);
    for (let j = 0; j < g.ys.length; j++) {
      for (let i = 0; i < g.xs.length; i++) {
        const k = g.index[j * g.xs.length + i]!;
        if (g.ys[j]! < g.xs[i]!) expect(pts[k]).toEqual([g.xs[i], g.ys[j]]);
        else expect(k).toBe(-1);
      }
    }
  });

  test('values equal within 1e-9 relative are one grid line (the smallest value), 1e-6 apart are not', () => {
    const { x, y } = full([1, 2, 3], [10, 20]);
    x[4] = 2 * (1 + 4e-10); // the same grid line as 2
    const g = planeGrid(x, y);
    expect(g.xs).toEqual([1, 2, 3]);
    const h = full([1, 2, 3], [10, 20]);
    h.x[4] = 2 * (1 + 1e-6);
    expect(planeGrid(h.x, h.y).xs).toEqual([1, 2, 2 * (1 + 1e-6), 3]);
  });

  test('irregular spacing is kept exactly', () => {
    const xs = [0.1, 0.3, 0.35, 1.7, 9];
    expect(planeGrid(full(xs, [1, 2]).x, full(xs, [1, 2]).y).xs).toEqual(xs);
  });

  test('refuses columns of different lengths', () => {
    const e = refusal(() => planeGrid([1, 2, 1, 2], [1, 1, 2]));
    expect(e.field).toBe('y');
    expect(e.message).toBe('y must have one value per point: there are 4 x values and 3 y values');
  });

  test('refuses non-finite coordinates, naming the point', () => {
    const { x, y } = full([1, 2, 3], [1, 2]);
    y[4] = NaN;
    const e = refusal(() => planeGrid(x, y));
    expect(e.field).toBe('y[4]');
    expect(e.message).toBe('y[4] must be a finite number (got NaN)');
    x[2] = Infinity;
    expect(refusal(() => planeGrid(x, y)).message).toBe('x[2] must be a finite number (got Infinity)');
  });

  test('refuses two points at the same (x, y), naming both', () => {
    const { x, y } = full([1, 2, 3], [1, 2]);
    x.push(2);
    y.push(1);
    const e = refusal(() => planeGrid(x, y));
    expect(e.field).toBe('x[6]');
    expect(e.message).toBe('x[6] and y[6] repeat point 1 (x[1], y[1]): both are at (2, 1)');
  });

  test('refuses one-row grids', () => {
    const e = refusal(() => planeGrid([1, 2, 3, 4], [5, 5, 5, 5]));
    expect(e.field).toBe('y');
    expect(e.message).toBe(`y has only one distinct value (5): a plane needs at least ${PLANE_LIMITS.minAxisValues} on each axis (one-row grids are one-parameter results)`);
    expect(refusal(() => planeGrid([], [])).message).toBe('x has no values: a plane needs at least 2 on each axis (one-row grids are one-parameter results)');
  });

  test('refuses more than 200 distinct values on an axis, saying the 200 × 200 limit', () => {
    const xs = Array.from({ length: 201 }, (_, i) => i);
    const { x, y } = full(xs, [0, 1]);
    const e = refusal(() => planeGrid(x, y));
    expect(e.field).toBe('x');
    expect(e.message).toBe('x has 201 distinct values: a plane may have at most 200 on each axis (200 × 200 points)');
  });

  test('refuses a point off the grid (a jittered coordinate on both axes)', () => {
    const { x, y } = full([1000, 1500, 2000], [100, 200, 300]);
    x[4] = 1500.013;
    y[4] = 200.002;
    const e = refusal(() => planeGrid(x, y));
    expect(e.field).toBe('x[4]');
    expect(e.message).toBe('x[4] and y[4] are off the grid: no other point shares the x value 1500.013 or the y value 200.002 (values equal within 1e-9 relative are one grid line); is a coordinate jittered?');
  });

  test('refuses point sets that fill fewer than half of their grid, saying how many of how many', () => {
    // A diagonal band of an invented 5 × 5 plane: 9 of 25 cells (every point shares a line with another).
    const x: number[] = [];
    const y: number[] = [];
    for (let i = 0; i < 5; i++) for (const d of [0, 1]) if (i + d < 5) { x.push(i); y.push(i + d); }
    const e = refusal(() => planeGrid(x, y));
    expect(e.field).toBe('x');
    expect(e.message).toBe('x and y do not form a grid with holes: only 9 of the 25 cells of the 5 × 5 grid their values span are present (at least half must be)');
  });

  test('accepts a grid at least half full and a 2 × N grid', () => {
    const x = [0, 1, 0, 1];
    const y = [0, 0, 1, 2];
    expect(planeGrid(x, y).index.length).toBe(6);
    const two = full([0, 1], [0, 1, 2, 3, 4]);
    expect(planeGrid(two.x, two.y).ys).toEqual([0, 1, 2, 3, 4]);
  });
});
