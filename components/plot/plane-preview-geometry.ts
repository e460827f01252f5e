/**
 * The quick look at a result over two parameters, as plain numbers for the SVG: its points as
 * cells coloured by their limit (log scale, `planeRamp`), its contour lines as paths and round
 * ticks on both (linear) axes. Pure, so it is tested without rendering. A full plane figure is a
 * figure kind of its own; this is only a preview on the result page, and on a two-parameter
 * scan's page while it runs: there each point has a state, and only finished points are coloured
 * (the others are drawn as empty, running or failed cells, `states`).
 */
import type { Plane, PlaneContourLine, PlaneContours } from '@/shared/schemas/plane';
import { contourGroups } from '@/shared/curves/plane';
import { linearAxisTicks, TICK_LENGTH, tickLabelWidth, type Margin, type Tick } from './quick-plot-geometry';

/** At most this many values per axis are drawn (every k-th beyond it), so a 200 × 200 plane stays light. */
export const PREVIEW_MAX_PER_AXIS = 60;

/**
 * A point's state on a scan's page: waiting for a worker (or a retry), being computed, finished
 * (coloured by its limit), failed, or never computed because the scan was cancelled. A result's
 * points are all done.
 */
export type PlanePointState = 'pending' | 'running' | 'done' | 'failed' | 'cancelled';
export const PLANE_POINT_STATES: readonly PlanePointState[] = ['done', 'running', 'pending', 'failed', 'cancelled'];
export type PlaneStateCounts = Record<PlanePointState, number> & { total: number };

/** A drawn cell; `fill` is the ramp colour of its limit for a done point, '' otherwise. */
export type PlaneCell = { key: string; x: number; y: number; w: number; h: number; fill: string; state: PlanePointState };
export type PlaneLinePath = { key: string; which: string; d: string };
export type PlanePreviewGeometry = {
  width: number;
  height: number;
  area: { x: number; y: number; width: number; height: number };
  cells: PlaneCell[];
  lines: PlaneLinePath[];
  xRange: [number, number];
  yRange: [number, number];
  /** The limits the colours span (the lowest and highest drawn), and which limit they show. */
  colourRange: [number, number] | null;
  colouredBy: 'observed' | 'expected median' | null;
  /** Every k-th value per axis is drawn (1: all). */
  stride: number;
  /** Round ticks inside the axis ranges; labels that would overlap are '' (marks only). */
  xTicks: Tick[];
  yTicks: Tick[];
  /** One path of crosses over the failed cells ('' when none failed). */
  failedMarks: string;
  /** Points in each state, all of them (not only the drawn ones). */
  counts: PlaneStateCounts;
};

/**
 * Margins around the drawing area. The left one is the least: it grows to the widest y tick label
 * plus the rotated axis title's band (`Y_TITLE_BAND`), so labels and title never overlap.
 */
export const PLANE_MARGIN: Margin = { top: 10, right: 12, bottom: 40, left: 44 };
/** Room for the rotated y axis title at the left edge (its centre line at 12 px). */
export const Y_TITLE_BAND = 22;

/** The input: a plane's coordinates and limits (a result's plane, or a scan's points so far). */
export type PlanePreviewInput = Pick<Plane, 'x' | 'y' | 'observed' | 'expected'>;

/** How many points are in each state (no states: all done). */
export function planeStateCounts(n: number, states?: readonly PlanePointState[]): PlaneStateCounts {
  const counts: PlaneStateCounts = { total: n, done: 0, running: 0, pending: 0, failed: 0, cancelled: 0 };
  for (let k = 0; k < n; k++) counts[states?.[k] ?? 'done']++;
  return counts;
}

/**
 * The counts in words, for a screen reader and the e2e tests: "All 49 points done" once every
 * point is, else "12 of 49 points done, 1 failed, 2 running, 34 queued" (states with no point left out).
 */
export function describePlaneProgress(c: PlaneStateCounts): string {
  if (c.total > 0 && c.done === c.total) return `All ${c.total} points done`;
  const rest = [
    c.failed ? `${c.failed} failed` : '',
    c.running ? `${c.running} running` : '',
    c.pending ? `${c.pending} queued` : '',
    c.cancelled ? `${c.cancelled} cancelled` : '',
  ].filter(Boolean);
  return [`${c.done} of ${c.total} points done`, ...rest].join(', ');
}

const sortedUnique = (v: number[]) => [...new Set(v.filter(Number.isFinite))].sort((a, b) => a - b);

function hex(c: string): [number, number, number] {
  return [parseInt(c.slice(1, 3), 16), parseInt(c.slice(3, 5), 16), parseInt(c.slice(5, 7), 16)];
}

/** A colour between the ramp's stops: t = 0 the first, t = 1 the last. */
export function rampColour(ramp: readonly string[], t: number): string {
  const u = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * (ramp.length - 1);
  const i = Math.min(ramp.length - 2, Math.floor(u));
  const f = u - i;
  const a = hex(ramp[i]!);
  const b = hex(ramp[i + 1]!);
  return `#${a.map((v, k) => Math.round(v + (b[k]! - v) * f).toString(16).padStart(2, '0')).join('')}`;
}

/** The half-way points between neighbouring axis values: each value's cell runs between them. */
function edges(values: number[]): number[] {
  if (values.length === 1) return [values[0]! - 0.5, values[0]! + 0.5];
  const out = [values[0]! - (values[1]! - values[0]!) / 2];
  for (let i = 1; i < values.length; i++) out.push((values[i - 1]! + values[i]!) / 2);
  out.push(values[values.length - 1]! + (values[values.length - 1]! - values[values.length - 2]!) / 2);
  return out;
}

function linePath(line: PlaneContourLine, sx: (v: number) => number, sy: (v: number) => number): string {
  const pts = line.points.filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y));
  if (pts.length < 2) return '';
  return pts.map(([x, y], i) => `${i ? 'L' : 'M'}${sx(x).toFixed(1)} ${sy(y).toFixed(1)}`).join('') + (line.closed ? 'Z' : '');
}

/** A cross from corner to corner of a cell, inset so it stays inside the cell's outline. */
function crossPath(c: { x: number; y: number; w: number; h: number }): string {
  const i = Math.min(c.w, c.h) * 0.2;
  const [x0, x1, y0, y1] = [c.x + i, c.x + c.w - i, c.y + i, c.y + c.h - i].map((v) => v.toFixed(1));
  return `M${x0} ${y0}L${x1} ${y1}M${x1} ${y0}L${x0} ${y1}`;
}

/**
 * Everything the preview draws for a box of `width` × `height` px, or null when the box is too
 * small or there are no points. With `states` (one per point) only done points are coloured and
 * the colour range spans theirs; without, every point is done.
 *
 * The axes run over the cells' outer edges, not to "nice" ends: widening them to round values
 * (d3's `nice()`) would add empty strips that read as points missing. The ticks are d3's round
 * values inside that range (`linearAxisTicks`).
 */
export function buildPlanePreview(opts: { width: number; height: number; plane: PlanePreviewInput; contours: PlaneContours | null; ramp: readonly string[]; margin?: Margin; states?: readonly PlanePointState[] }): PlanePreviewGeometry | null {
  const { width, height, plane, contours, ramp, states } = opts;
  const m0 = opts.margin ?? PLANE_MARGIN;
  const top = m0.top;
  const areaHeight = height - m0.top - m0.bottom;
  if (areaHeight < 60) return null;
  const xs = sortedUnique(plane.x);
  const ys = sortedUnique(plane.y);
  if (!xs.length || !ys.length) return null;
  const xe = edges(xs);
  const ye = edges(ys);
  const xRange: [number, number] = [xe[0]!, xe[xe.length - 1]!];
  const yRange: [number, number] = [ye[0]!, ye[ye.length - 1]!];
  // y first: the widest y label decides the left margin, and with it the x axis' length.
  const yTicks = linearAxisTicks(yRange, top + areaHeight, top, { horizontal: false });
  const widest = Math.max(0, ...yTicks.map((t) => tickLabelWidth(t.label)));
  const left = Math.max(m0.left, Y_TITLE_BAND + widest + TICK_LENGTH + 3);
  const area = { x: left, y: top, width: width - left - m0.right, height: areaHeight };
  if (area.width < 60) return null;
  const sx = (v: number) => area.x + ((v - xRange[0]) / (xRange[1] - xRange[0] || 1)) * area.width;
  const sy = (v: number) => area.y + area.height - ((v - yRange[0]) / (yRange[1] - yRange[0] || 1)) * area.height;
  const xTicks = linearAxisTicks(xRange, area.x, area.x + area.width, { horizontal: true, bounds: [0, width] });

  const values = plane.observed ?? plane.expected?.['0'];
  const colouredBy = plane.observed ? 'observed' : plane.expected?.['0'] ? 'expected median' : null;
  const stateOf = (k: number): PlanePointState => states?.[k] ?? 'done';
  const logs: number[] = [];
  (values ?? []).forEach((v, k) => {
    if (stateOf(k) === 'done' && Number.isFinite(v) && v > 0) logs.push(Math.log(v));
  });
  let lo = Infinity;
  let hi = -Infinity;
  for (const l of logs) {
    if (l < lo) lo = l;
    if (l > hi) hi = l;
  }
  const colourRange: [number, number] | null = logs.length ? [Math.exp(lo), Math.exp(hi)] : null;

  const stride = Math.max(1, Math.ceil(Math.max(xs.length, ys.length) / PREVIEW_MAX_PER_AXIS));
  const xIndex = new Map(xs.map((v, i) => [v, i]));
  const yIndex = new Map(ys.map((v, i) => [v, i]));
  const cells: PlaneCell[] = [];
  for (let k = 0; k < plane.x.length; k++) {
    const i = xIndex.get(plane.x[k]!);
    const j = yIndex.get(plane.y[k]!);
    if (i === undefined || j === undefined || i % stride || j % stride) continue;
    const v = values?.[k];
    const state = stateOf(k);
    const t = v !== undefined && v > 0 && hi > lo ? (Math.log(v) - lo) / (hi - lo) : 0.5;
    const x0 = sx(xe[i]!);
    const x1 = sx(xe[Math.min(i + stride, xs.length)]!);
    const y0 = sy(ye[Math.min(j + stride, ys.length)]!);
    const y1 = sy(ye[j]!);
    cells.push({ key: `${i}:${j}`, x: x0, y: y0, w: Math.max(0.5, x1 - x0), h: Math.max(0.5, y1 - y0), fill: state === 'done' ? rampColour(ramp, t) : '', state });
  }
  const failedMarks = cells.filter((c) => c.state === 'failed').map(crossPath).join('');
  const lines: PlaneLinePath[] = [];
  if (contours) {
    for (const g of contourGroups(contours)) {
      g.lines.forEach((l, n) => {
        const d = linePath(l, sx, sy);
        if (d) lines.push({ key: `${g.which}:${n}`, which: g.which, d });
      });
    }
  }
  return { width, height, area, cells, lines, xRange, yRange, colourRange, colouredBy, stride, xTicks, yTicks, failedMarks, counts: planeStateCounts(plane.x.length, states) };
}
