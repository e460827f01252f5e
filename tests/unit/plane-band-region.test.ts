/**
 * The filled ±1σ expected band of a plane: the region between the −1σ and +1σ contours, as rings
 * for the even-odd rule (shared/plane/contours.ts `bandRegionRings`).
 *
 * The checks sample a ratio whose ratio-1 lines are circles, (x² + y²)·f / R² = 1 at radius R/√f,
 * so the band between the −1σ edge (limit × 0.7, the larger excluded circle) and the +1σ edge
 * (limit × 1.4, the smaller) is the annulus R/√1.4 < r < R/√0.7 (closed form). Linear
 * interpolation of a smooth function between grid points errs by O(h²) (from memory, Burden &
 * Faires, Numerical Analysis), so points further than a few spacings from either circle must be
 * classified exactly.
 */
import { bandRegionRings, planeContours, ratioRegionRings } from '@/shared/plane/contours';
import { planeGrid } from '@/shared/plane/grid';
import type { Plane } from '@/shared/schemas/plane';

type Pt = [number, number];

/** Even-odd rule (common practice): a point is inside when a ray from it crosses the rings an odd number of times. */
function insideEvenOdd(rings: Pt[][], [px, py]: Pt): boolean {
  let inside = false;
  for (const ring of rings) {
    for (let k = 0, m = ring.length - 1; k < ring.length; m = k++) {
      const [xk, yk] = ring[k]!;
      const [xm, ym] = ring[m]!;
      if (yk > py !== ym > py && px < ((xm - xk) * (py - yk)) / (ym - yk) + xk) inside = !inside;
    }
  }
  return inside;
}

const range = (from: number, to: number, n: number) => Array.from({ length: n }, (_, i) => from + ((to - from) * i) / (n - 1));

const R = 1;
function circlePlane(n: number, drop: (x: number, y: number) => boolean = () => false, quantity: 'mu' | 'xsec' = 'mu'): Plane {
  const xs = range(-2, 2, n);
  const x: number[] = [];
  const y: number[] = [];
  for (const b of xs) for (const a of xs) if (!drop(a, b)) { x.push(a); y.push(b); }
  const median = x.map((a, k) => (a * a + y[k]! * y[k]!) / (R * R));
  // For σ×B the limits are the ratio times a theory that falls with x: the ratio is the same.
  const theory = x.map((a) => 3 * Math.exp(-a));
  const scale = (f: number) => median.map((v, k) => v * f * (quantity === 'xsec' ? theory[k]! : 1));
  return { yName: 'y', yUnit: '', x, y, observed: scale(1), expected: { '-1': scale(0.7), '0': scale(1), '1': scale(1.4) }, ...(quantity === 'xsec' ? { theory: { central: theory } } : {}) };
}

describe('the ±1σ band as a region (bandRegionRings)', () => {
  const inner = R / Math.sqrt(1.4);
  const outer = R / Math.sqrt(0.7);

  test.each(['mu', 'xsec'] as const)('covers the annulus between the ±1σ circles, nothing else (%s)', (quantity) => {
    const n = 81;
    const h = 4 / (n - 1);
    const plane = circlePlane(n, undefined, quantity);
    const rings = bandRegionRings(planeGrid(plane.x, plane.y), plane, quantity)!;
    expect(rings.length).toBeGreaterThanOrEqual(2);
    let checked = 0;
    const wrong: Pt[] = [];
    for (const px of range(-1.9, 1.9, 41)) {
      for (const py of range(-1.9, 1.9, 41)) {
        const r = Math.hypot(px, py);
        if (Math.abs(r - inner) < 2 * h || Math.abs(r - outer) < 2 * h) continue;
        if (insideEvenOdd(rings, [px, py]) !== (r > inner && r < outer)) wrong.push([px, py]);
        checked++;
      }
    }
    expect(wrong).toEqual([]);
    expect(checked).toBeGreaterThan(900);
  });

  test('its edges lie on the stored ±1σ contour lines (the same placement)', () => {
    const plane = circlePlane(41);
    const grid = planeGrid(plane.x, plane.y);
    const rings = bandRegionRings(grid, plane, 'mu')!;
    const lines = planeContours(plane, 'mu').expected;
    const onLines = new Set([...lines['-1']!, ...lines['1']!].flatMap((l) => l.points.map((p) => p.join(','))));
    const vertices = rings.flat();
    expect(vertices.length).toBeGreaterThan(50);
    // Every vertex is on a ±1σ line, or on the grid's outer edge (where the not-excluded regions end).
    const onEdge = ([x, y]: number[]) => Math.abs(x!) === 2 || Math.abs(y!) === 2;
    for (const p of vertices) expect(onLines.has(p.join(',')) || onEdge(p)).toBe(true);
    expect(vertices.filter((p) => !onEdge(p)).length).toBeGreaterThan(50);
  });

  test('the error shrinks with the grid spacing: the ring area approaches π(R²/0.7 − R²/1.4)', () => {
    // The rings are the grid's outer edge twice (cancelling) and the two circles: the band's area
    // under the even-odd rule is |outer circle| − |inner circle| (shoelace, common practice).
    const area = (ring: Pt[]) => Math.abs(ring.reduce((s, [x0, y0], k) => { const [x1, y1] = ring[(k + 1) % ring.length]!; return s + x0 * y1 - x1 * y0; }, 0) / 2);
    const exact = Math.PI * (R * R / 0.7 - R * R / 1.4);
    const errorAt = (n: number) => {
      const plane = circlePlane(n);
      const rings = bandRegionRings(planeGrid(plane.x, plane.y), plane, 'mu')!;
      const areas = rings.map(area).filter((a) => a < 15).sort((a, b) => b - a);
      expect(areas).toHaveLength(2);
      return Math.abs(areas[0]! - areas[1]! - exact);
    };
    const coarse = errorAt(21);
    const fine = errorAt(41);
    expect(coarse).toBeLessThan(0.05 * exact);
    expect(fine).toBeLessThan(coarse / 2.5);
  });

  test('never spans missing points: a missing quarter stays empty, and nothing crashes', () => {
    const plane = circlePlane(41, (a, b) => a > 0.05 && b > 0.05);
    const rings = bandRegionRings(planeGrid(plane.x, plane.y), plane, 'mu')!;
    // Inside the annulus, but where there are no points (away from the quarter's edges).
    for (const p of [[0.8, 0.8], [0.3, 1.0], [1.0, 0.3]] as Pt[]) expect(insideEvenOdd(rings, p)).toBe(false);
    for (const p of [[-0.8, -0.8], [-1.0, 0.3], [0.3, -1.0]] as Pt[]) expect(insideEvenOdd(rings, p)).toBe(true);
    // Next to the hole the region ends halfway between the last point (0) and the first missing
    // one (0.1), where the colour map's cell round the last point ends: no vertex reaches further.
    const vertices = rings.flat();
    expect(vertices.filter(([x, y]) => x > 0.05 + 1e-9 && y > 0.05 + 1e-9)).toEqual([]);
    expect(vertices.filter(([x, y]) => (Math.abs(x - 0.05) < 1e-9 && y > 0.3) || (Math.abs(y - 0.05) < 1e-9 && x > 0.3)).length).toBeGreaterThan(4);
  });

  test('a grid two points wide and an empty band give rings or none, never a crash', () => {
    const x = [0, 1, 0, 1, 0, 1];
    const y = [0, 0, 1, 1, 2, 2];
    const grid = planeGrid(x, y);
    expect(() => ratioRegionRings(grid, [0.5, 2, 0.5, 2, 0.5, 2])).not.toThrow();
    const band = bandRegionRings(grid, { yName: 'y', yUnit: '', x, y, expected: { '-1': [2, 2, 2, 2, 2, 2], '1': [3, 3, 3, 3, 3, 3] } }, 'mu')!;
    // Neither edge excludes anything: both not-excluded regions are the whole grid and cancel.
    expect(insideEvenOdd(band, [0.5, 1])).toBe(false);
  });

  test('null when an edge or the theory is not stored', () => {
    const plane = circlePlane(11);
    const grid = planeGrid(plane.x, plane.y);
    expect(bandRegionRings(grid, { ...plane, expected: { '0': plane.expected!['0']! } }, 'mu')).toBeNull();
    expect(bandRegionRings(grid, plane, 'xsec')).toBeNull();
  });
});
