/**
 * The grid of a two-parameter result (shared/schemas/plane.ts): checks that the points (x[k], y[k])
 * form a rectangular grid, possibly with holes and irregular spacing, and builds the index from grid
 * cells to points.
 *
 * Near-equal coordinates: two values of one axis are the same grid line when they differ by at most
 * `tolerance` (default 1e-9) times the largest magnitude on that axis. Values are grouped in sorted
 * order, each group measured from its smallest value (so a group never chains wider than the
 * tolerance), and the grid line takes that smallest value exactly. A coordinate moved by more than
 * that (e.g. 1000.013 among 1000s) is its own grid line, and a point with such a coordinate on both
 * axes is refused as off the grid.
 */
import { PLANE_LIMITS } from '../schemas/plane';
import { StatsInputError } from '../stats/errors';

export const PLANE_GRID_TOLERANCE = 1e-9;

export type PlaneGridOptions = {
  /** Relative tolerance for the same grid line (default PLANE_GRID_TOLERANCE). */
  tolerance?: number;
};

export type PlaneGrid = {
  /** Sorted distinct x values (grid lines). */
  xs: number[];
  /** Sorted distinct y values. */
  ys: number[];
  /** Cell (i, j) — xs[i], ys[j] — at j * xs.length + i: the point index there, -1 when missing. */
  index: Int32Array;
};

const fmt = (v: number) => String(Number(v.toPrecision(10)));

/** Grid lines of one axis and, per point, the line it is on. */
function axisLines(values: number[], tolerance: number): { lines: number[]; lineOf: Int32Array; count: Int32Array } {
  const order = Array.from(values.keys()).sort((a, b) => (values[a] as number) - (values[b] as number));
  let scale = 0;
  for (const v of values) scale = Math.max(scale, Math.abs(v));
  const tol = tolerance * scale;
  const lines: number[] = [];
  const counts: number[] = [];
  const lineOf = new Int32Array(values.length);
  let start = -Infinity;
  for (const k of order) {
    const v = values[k] as number;
    if (lines.length === 0 || v - start > tol) {
      lines.push(v);
      counts.push(0);
      start = v;
    }
    lineOf[k] = lines.length - 1;
    counts[lines.length - 1]! += 1;
  }
  return { lines, lineOf, count: Int32Array.from(counts) };
}

/**
 * Checks the points and builds the grid index. Throws StatsInputError naming the field (`x[17]`,
 * `y`) for: columns of different lengths, non-finite coordinates, a point off the grid, fewer than
 * PLANE_LIMITS.minAxisValues or more than PLANE_LIMITS.maxAxisValues distinct values on an axis,
 * two points at the same (x, y), and point sets filling fewer than half of their grid's cells.
 */
export function planeGrid(x: readonly number[], y: readonly number[], opts: PlaneGridOptions = {}): PlaneGrid {
  const tolerance = opts.tolerance ?? PLANE_GRID_TOLERANCE;
  if (x.length !== y.length) throw new StatsInputError('y', `must have one value per point: there are ${x.length} x values and ${y.length} y values`);
  for (const [name, col] of [['x', x], ['y', y]] as const) {
    col.forEach((v, k) => {
      if (!Number.isFinite(v)) throw new StatsInputError(`${name}[${k}]`, `must be a finite number (got ${String(v)})`);
    });
  }
  const ax = axisLines(x as number[], tolerance);
  const ay = axisLines(y as number[], tolerance);
  const n = x.length;

  // A point alone on both its grid lines belongs to no row and no column of the others.
  if (n > 1) {
    for (let k = 0; k < n; k++) {
      if (ax.count[ax.lineOf[k]!] === 1 && ay.count[ay.lineOf[k]!] === 1) {
        throw new StatsInputError(`x[${k}]`, `and y[${k}] are off the grid: no other point shares the x value ${fmt(x[k]!)} or the y value ${fmt(y[k]!)} (values equal within ${tolerance} relative are one grid line); is a coordinate jittered?`);
      }
    }
  }

  for (const [name, a] of [['x', ax], ['y', ay]] as const) {
    const d = a.lines.length;
    if (d < PLANE_LIMITS.minAxisValues) {
      throw new StatsInputError(name, `has ${d === 0 ? 'no values' : `only one distinct value (${fmt(a.lines[0]!)})`}: a plane needs at least ${PLANE_LIMITS.minAxisValues} on each axis (one-row grids are one-parameter results)`);
    }
    if (d > PLANE_LIMITS.maxAxisValues) {
      throw new StatsInputError(name, `has ${d} distinct values: a plane may have at most ${PLANE_LIMITS.maxAxisValues} on each axis (${PLANE_LIMITS.maxAxisValues} × ${PLANE_LIMITS.maxAxisValues} points)`);
    }
  }

  const nx = ax.lines.length;
  const ny = ay.lines.length;
  const index = new Int32Array(nx * ny).fill(-1);
  for (let k = 0; k < n; k++) {
    const cell = ay.lineOf[k]! * nx + ax.lineOf[k]!;
    const other = index[cell]!;
    if (other >= 0) {
      throw new StatsInputError(`x[${k}]`, `and y[${k}] repeat point ${other} (x[${other}], y[${other}]): both are at (${fmt(x[k]!)}, ${fmt(y[k]!)})`);
    }
    index[cell] = k;
  }
  if (2 * n < nx * ny) {
    throw new StatsInputError('x', `and y do not form a grid with holes: only ${n} of the ${nx * ny} cells of the ${nx} × ${ny} grid their values span are present (at least half must be)`);
  }
  return { xs: ax.lines, ys: ay.lines, index };
}
