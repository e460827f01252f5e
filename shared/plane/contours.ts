/**
 * Contour lines of a two-parameter result where a ratio equals 1: limit / theory σ×B for σ×B limits,
 * the limit itself for μ. Inside the line the ratio is below 1 and the points are excluded (common
 * practice).
 *
 * The marching squares are d3-contour's (`contours().contour`), run on ln(ratio) at level 0 over the
 * grid in index space, unsmoothed. d3-contour 4 reads a missing value (NaN) as below every level
 * (`+x >= value` is false) and, when smoothing, as −∞, pulling the line onto the valid corner next
 * to it: its rings run around missing points and along the grid's outer edge (it pads the grid with
 * "below"). So the rings are taken unsmoothed, where every vertex is the midpoint of one grid edge
 * and every segment lies inside one cell, and
 *   - a segment is kept only when its cell has four valid corners (a point there, ratio finite and
 *     > 0): segments through missing cells and along the outer edge are dropped, which BREAKS a
 *     line at a hole, never bridging it;
 *   - each kept vertex is placed on its edge by linear interpolation of ln(ratio) between the
 *     edge's two corners (as d3-contour's own smoothing does), then mapped to parameter values
 *     linearly within the cell, (1 − f)·xs[i] + f·xs[i+1], exact at grid lines.
 *
 * Orientation: d3-contour's case table puts the "above" side (ratio ≥ 1) on the right of every
 * segment with x and y growing to the right and up. Both axes are sorted ascending, so walking
 * along `points` the EXCLUDED side (ratio < 1) is on the LEFT: closed lines around an excluded
 * island run counter-clockwise (tests/unit/plane-contours.test.ts checks both).
 */
import { contours as d3Contours } from 'd3-contour';
import type { Plane } from '../schemas/plane';
import { StatsInputError, formatPath } from '../stats/errors';
import { planeGrid, type PlaneGrid, type PlaneGridOptions } from './grid';

export type ContourLine = {
  /** Vertices in parameter values (x, y); the excluded side (ratio < 1) is on the left walking along them. */
  points: [number, number][];
  /** True when the line closes on itself (its last vertex joins its first, which is not repeated). */
  closed: boolean;
};

/** ln(ratio) on the grid's cells, row by row (NaN where a point is missing or its ratio is not finite and > 0). */
function lnOnGrid(grid: PlaneGrid, ratio: ArrayLike<number>): number[] {
  const { xs, ys, index } = grid;
  const ln: number[] = new Array(xs.length * ys.length);
  for (let c = 0; c < ln.length; c++) {
    const k = index[c]!;
    const r = k >= 0 ? ratio[k]! : NaN;
    ln[c] = r > 0 && Number.isFinite(r) ? Math.log(r) : NaN;
  }
  return ln;
}

/**
 * Lines where ratio = 1 on the grid; `ratio[k]` belongs to point k (the index of `grid.index`).
 * Points with a non-finite or non-positive ratio count as missing.
 */
export function ratioContours(grid: PlaneGrid, ratio: ArrayLike<number>): ContourLine[] {
  const { xs, ys } = grid;
  const nx = xs.length;
  const ny = ys.length;
  const ln = lnOnGrid(grid, ratio);
  // Cell (i, j) between grid lines i, i+1 and j, j+1: usable when its four corners are.
  const cellOk = new Uint8Array(Math.max(0, (nx - 1) * (ny - 1)));
  for (let j = 0; j + 1 < ny; j++) {
    for (let i = 0; i + 1 < nx; i++) {
      const c = j * nx + i;
      cellOk[j * (nx - 1) + i] = Number.isNaN(ln[c]! + ln[c + 1]! + ln[c + nx]! + ln[c + nx + 1]!) ? 0 : 1;
    }
  }
  // d3 places value (i, j) at (i + 0.5, j + 0.5); unsmoothed vertices are edge midpoints.
  const keep = (a: [number, number], b: [number, number]) => {
    const i = Math.floor((a[0] + b[0]) / 2 - 0.5);
    const j = Math.floor((a[1] + b[1]) / 2 - 0.5);
    return i >= 0 && j >= 0 && i + 1 < nx && j + 1 < ny && cellOk[j * (nx - 1) + i] === 1;
  };
  const place = (p: [number, number]): [number, number] => {
    const [X, Y] = p;
    if (Number.isInteger(X)) {
      // On the x-edge between (X − 1, j) and (X, j).
      const i = X - 1;
      const j = Y - 0.5;
      const l0 = ln[j * nx + i]!;
      const f = l0 / (l0 - ln[j * nx + i + 1]!);
      return [(1 - f) * xs[i]! + f * xs[i + 1]!, ys[j]!];
    }
    const i = X - 0.5;
    const j = Y - 1;
    const l0 = ln[j * nx + i]!;
    const f = l0 / (l0 - ln[(j + 1) * nx + i]!);
    return [xs[i]!, (1 - f) * ys[j]! + f * ys[j + 1]!];
  };

  const generator = d3Contours().size([nx, ny]).smooth(false);
  const multi = generator.contour(ln, 0);
  const out: ContourLine[] = [];
  for (const polygon of multi.coordinates) {
    for (const ring of polygon as [number, number][][]) {
      // d3 rings repeat their first vertex at the end.
      const m = ring.length - 1;
      if (m < 2) continue;
      const kept: boolean[] = [];
      for (let s = 0; s < m; s++) kept.push(keep(ring[s]!, ring[s + 1]!));
      if (kept.every(Boolean)) {
        const pts = distinct(ring.slice(0, m).map(place));
        if (pts.length > 1 && same(pts[0]!, pts[pts.length - 1]!)) pts.pop();
        if (pts.length > 2) out.push({ points: pts, closed: true });
        continue;
      }
      // Open stretches: each starts after a dropped segment.
      for (let s = 0; s < m; s++) {
        if (!kept[s] || kept[(s - 1 + m) % m]) continue;
        const pts: [number, number][] = [place(ring[s]!)];
        for (let t = s; kept[t % m]; t++) pts.push(place(ring[(t % m) + 1]!));
        const line = distinct(pts);
        if (line.length > 1) out.push({ points: line, closed: false });
      }
    }
  }
  return out;
}

const same = (a: [number, number], b: [number, number]) => a[0] === b[0] && a[1] === b[1];

/**
 * The boundary rings, in parameter values, of where the grid's points are NOT excluded (ratio ≥ 1),
 * for filling: d3-contour's polygons of ln(ratio) ≥ 0, unsmoothed. A vertex between two points
 * with a ratio is placed as `ratioContours` places it, so the filled edge lies exactly on that
 * contour line; a vertex next to a missing point is placed halfway to it, and one beyond the grid's
 * outer edge on the grid's last line, so a region ends where the cells drawn round its points end
 * and never spans a hole.
 * Ring direction is d3's and not meant for the non-zero rule: fill with the even-odd rule.
 */
export function ratioRegionRings(grid: PlaneGrid, ratio: ArrayLike<number>): [number, number][][] {
  const { xs, ys } = grid;
  const nx = xs.length;
  const ny = ys.length;
  const ln = lnOnGrid(grid, ratio);
  const at = (i: number, j: number) => (i >= 0 && j >= 0 && i < nx && j < ny ? ln[j * nx + i]! : NaN);
  // Between values a and b at parameter values pa and pb: where ln crosses 0; next to a missing
  // point halfway (where a cell drawn round each point ends); beyond the grid on its last line.
  const between = (a: number, b: number, pa: number, pb: number) => {
    if (pa === pb) return pa;
    if (Number.isNaN(a) || Number.isNaN(b)) return (pa + pb) / 2;
    const f = a / (a - b);
    return (1 - f) * pa + f * pb;
  };
  const clampX = (i: number) => xs[Math.max(0, Math.min(nx - 1, i))]!;
  const clampY = (j: number) => ys[Math.max(0, Math.min(ny - 1, j))]!;
  const place = ([X, Y]: [number, number]): [number, number] => {
    if (Number.isInteger(X)) {
      const i = X - 1;
      const j = Y - 0.5;
      return [between(at(i, j), at(i + 1, j), clampX(i), clampX(i + 1)), ys[j]!];
    }
    const i = X - 0.5;
    const j = Y - 1;
    return [xs[i]!, between(at(i, j), at(i, j + 1), clampY(j), clampY(j + 1))];
  };
  const out: [number, number][][] = [];
  for (const polygon of d3Contours().size([nx, ny]).smooth(false).contour(ln, 0).coordinates) {
    for (const ring of polygon as [number, number][][]) {
      const pts = distinct(ring.slice(0, -1).map(place));
      if (pts.length > 1 && same(pts[0]!, pts[pts.length - 1]!)) pts.pop();
      if (pts.length > 2) out.push(pts);
    }
  }
  return out;
}

/**
 * Drops a vertex equal to the one before it: where the ratio is exactly 1 at a grid point, the
 * vertices of the edges meeting there all land on that point.
 */
function distinct(points: [number, number][]): [number, number][] {
  const out: [number, number][] = [];
  for (const p of points) if (out.length === 0 || !same(out[out.length - 1]!, p)) out.push(p);
  return out;
}

export type PlaneQuantity = 'mu' | 'xsec';

/** The ratio of σ×B limits to the theory σ×B, point by point. */
const over = (limit: readonly number[], theory: readonly number[]) => limit.map((v, k) => v / theory[k]!);

/**
 * The region between the expected −1σ and +1σ contours, as rings to fill with the even-odd rule:
 * the not-excluded regions of the two edges overlaid, so what is covered once lies between them
 * (excluded by the −1σ edge, not by the +1σ edge). Null when an edge, or for σ×B the theory
 * σ×B, is not stored; the ratio is the one `planeContours` uses.
 */
export function bandRegionRings(grid: PlaneGrid, plane: Plane, quantity: PlaneQuantity): [number, number][][] | null {
  const lower = plane.expected?.['-1'];
  const upper = plane.expected?.['1'];
  if (!lower || !upper) return null;
  const central = plane.theory?.central;
  if (quantity === 'xsec' && !central) return null;
  const ratio = (limit: readonly number[]) => (quantity === 'xsec' ? over(limit, central!) : limit);
  return [...ratioRegionRings(grid, ratio(lower)), ...ratioRegionRings(grid, ratio(upper))];
}

type BandKey = '-1' | '0' | '1';
const BAND_KEYS: readonly BandKey[] = ['-1', '0', '1'];

/**
 * The derived lines of one version. A key is absent when its inputs are not stored; an empty list
 * means the line was derived but nowhere on the grid does the ratio cross 1.
 */
export type PlaneContours = {
  observed?: ContourLine[];
  expected: Partial<Record<BandKey, ContourLine[]>>;
  /** Observed limit against the theory band's lower / upper edge (σ×B with a band only). */
  observedTheoryLower?: ContourLine[];
  observedTheoryUpper?: ContourLine[];
  /** Why nothing could be derived, in plain words; null otherwise. */
  problem: string | null;
};

function checkColumn(col: readonly number[], path: Array<string | number>, n: number): readonly number[] {
  if (col.length !== n) throw new StatsInputError(formatPath(path), `must have one value per point: ${col.length} values for ${n} points`);
  return col;
}

/**
 * The ratio = 1 lines of a plane: observed, expected median and ±1σ, and for σ×B limits with a theory
 * band the observed limit against its lower and upper edge. For `mu` the limit itself is the ratio
 * (theory, if stored, is not used). Refusals of the grid or of column lengths throw StatsInputError.
 */
export function planeContours(plane: Plane, quantity: PlaneQuantity, opts: PlaneGridOptions = {}): PlaneContours {
  const grid = planeGrid(plane.x, plane.y, opts);
  const n = plane.x.length;
  const result: PlaneContours = { expected: {}, problem: null };
  const observed = plane.observed ? checkColumn(plane.observed, ['observed'], n) : undefined;
  const expected: Partial<Record<BandKey, readonly number[]>> = {};
  for (const key of BAND_KEYS) {
    const col = plane.expected?.[key];
    if (col) expected[key] = checkColumn(col, ['expected', key], n);
  }
  const hasLimits = observed !== undefined || BAND_KEYS.some((k) => expected[k]);
  if (!hasLimits) return { ...result, problem: 'no observed or expected limit is stored, so no contour can be derived' };

  if (quantity === 'mu') {
    if (observed) result.observed = ratioContours(grid, observed);
    for (const key of BAND_KEYS) if (expected[key]) result.expected[key] = ratioContours(grid, expected[key]!);
    return result;
  }
  if (!plane.theory) return { ...result, problem: 'no theory σ×B is stored, so no contour can be derived' };
  const central = checkColumn(plane.theory.central, ['theory', 'central'], n);
  if (observed) {
    result.observed = ratioContours(grid, over(observed, central));
    if (plane.theory.lower) result.observedTheoryLower = ratioContours(grid, over(observed, checkColumn(plane.theory.lower, ['theory', 'lower'], n)));
    if (plane.theory.upper) result.observedTheoryUpper = ratioContours(grid, over(observed, checkColumn(plane.theory.upper, ['theory', 'upper'], n)));
  }
  for (const key of BAND_KEYS) if (expected[key]) result.expected[key] = ratioContours(grid, over(expected[key]!, central));
  return result;
}
