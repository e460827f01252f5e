/**
 * The quick look at a result over two parameters, as plain numbers for the SVG: its points as
 * cells coloured by their limit (log scale, `planeRamp`), and its contour lines as paths. Pure, so
 * it is tested without rendering. A full plane figure is a figure kind of its own; this is only a
 * preview on the result page.
 */
import type { Plane, PlaneContourLine, PlaneContours } from '@/shared/schemas/plane';
import { contourGroups } from '@/shared/curves/plane';
import type { Margin } from './quick-plot-geometry';

/** At most this many values per axis are drawn (every k-th beyond it), so a 200 × 200 plane stays light. */
export const PREVIEW_MAX_PER_AXIS = 60;

export type PlaneCell = { key: string; x: number; y: number; w: number; h: number; fill: string };
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
};

export const PLANE_MARGIN: Margin = { top: 10, right: 12, bottom: 40, left: 56 };

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

export function buildPlanePreview(opts: { width: number; height: number; plane: Plane; contours: PlaneContours | null; ramp: readonly string[]; margin?: Margin }): PlanePreviewGeometry | null {
  const { width, height, plane, contours, ramp } = opts;
  const m = opts.margin ?? PLANE_MARGIN;
  const area = { x: m.left, y: m.top, width: width - m.left - m.right, height: height - m.top - m.bottom };
  if (area.width < 60 || area.height < 60) return null;
  const xs = sortedUnique(plane.x);
  const ys = sortedUnique(plane.y);
  if (!xs.length || !ys.length) return null;
  const xe = edges(xs);
  const ye = edges(ys);
  const xRange: [number, number] = [xe[0]!, xe[xe.length - 1]!];
  const yRange: [number, number] = [ye[0]!, ye[ye.length - 1]!];
  const sx = (v: number) => area.x + ((v - xRange[0]) / (xRange[1] - xRange[0] || 1)) * area.width;
  const sy = (v: number) => area.y + area.height - ((v - yRange[0]) / (yRange[1] - yRange[0] || 1)) * area.height;

  const values = plane.observed ?? plane.expected?.['0'];
  const colouredBy = plane.observed ? 'observed' : plane.expected?.['0'] ? 'expected median' : null;
  const logs = (values ?? []).filter((v) => Number.isFinite(v) && v > 0).map(Math.log);
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
    const t = v !== undefined && v > 0 && hi > lo ? (Math.log(v) - lo) / (hi - lo) : 0.5;
    const x0 = sx(xe[i]!);
    const x1 = sx(xe[Math.min(i + stride, xs.length)]!);
    const y0 = sy(ye[Math.min(j + stride, ys.length)]!);
    const y1 = sy(ye[j]!);
    cells.push({ key: `${i}:${j}`, x: x0, y: y0, w: Math.max(0.5, x1 - x0), h: Math.max(0.5, y1 - y0), fill: rampColour(ramp, t) });
  }
  const lines: PlaneLinePath[] = [];
  if (contours) {
    for (const g of contourGroups(contours)) {
      g.lines.forEach((l, n) => {
        const d = linePath(l, sx, sy);
        if (d) lines.push({ key: `${g.which}:${n}`, which: g.which, d });
      });
    }
  }
  return { width, height, area, cells, lines, xRange, yRange, colourRange, colouredBy, stride };
}
