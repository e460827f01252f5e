/**
 * Room for the legend: before any text is measured, the y range is stretched (up, or down on a
 * log axis) just enough that one corner of the plot is free of data for a legend of the
 * estimated size. Estimating from character counts keeps the axis range — and so the tick
 * labels — independent of measured text, which `collectLabels` relies on.
 */
import { INFO_CORNERS, layoutLegend, type Corner } from './legend';
import type { LegendEntry } from './plan';
import type { ResolvedTheme } from './theme';

/** A data point as x in fractions of the x axis and y in axis units (log10 on a log axis). */
export type RoomPoint = { fx: number; u: number };

/** Which ends of the y axis may move (not a fixed end, not below zero on a linear limit axis). */
export type Movable = { low: boolean; high: boolean };

/** Rough width of a label before typesetting: a TeX command counts as one character. */
export function roughWidth(label: string, size: number): number {
  const visible = label.replace(/\\[a-zA-Z]+/g, 'x').replace(/[$\\{}^_]/g, '');
  return 0.5 * size * visible.length;
}

/** The estimated legend box in points (the same layout as the drawn legend, rough widths). */
export function roughLegendSize(entries: readonly LegendEntry[], theme: ResolvedTheme, columns: 1 | 2): { w: number; h: number } {
  const size = theme.type.legend;
  const metrics = entries.map((e) => ({ width: roughWidth(e.label, size), ascent: 0.8 * size, descent: 0.25 * size }));
  const l = layoutLegend(entries, metrics, theme, columns);
  return { w: l.width, h: l.height };
}

/** The estimated energy / CL block in points. */
export function roughInfoSize(labels: readonly string[], theme: ResolvedTheme): { w: number; h: number } {
  const size = theme.type.annotation;
  return { w: Math.max(0, ...labels.map((l) => roughWidth(l, size))), h: labels.length * 1.05 * size + Math.max(0, labels.length - 1) * 0.25 * size };
}

/**
 * The y range [a, b] (axis units) needed so a box covering the fraction `wf` × `hf` of the plot
 * in `corner` holds no point; null when that needs an end that may not move.
 */
export function rangeForCorner(corner: Corner, wf: number, hf: number, pts: readonly RoomPoint[], a: number, b: number, movable: Movable): [number, number] | null {
  const left = corner.endsWith('left');
  const under = pts.filter((p) => (left ? p.fx <= wf : p.fx >= 1 - wf));
  if (under.length === 0) return [a, b];
  // Keep at least 40 % of the axis for the data, whatever the legend's size.
  const h = Math.min(Math.max(hf, 0), 0.6);
  if (corner.startsWith('top')) {
    const top = Math.max(...under.map((p) => p.u));
    // The box covers the top h of [a, b']: every point under it must lie below a + (1 − h)(b' − a).
    const need = a + (top - a) / (1 - h);
    if (need <= b) return [a, b];
    return movable.high ? [a, need] : null;
  }
  const low = Math.min(...under.map((p) => p.u));
  // The box covers the bottom h of [a', b]: points must lie above a' + h(b − a').
  const need = (low - h * b) / (1 - h);
  if (need >= a) return [a, b];
  return movable.low ? [need, b] : null;
}

/**
 * The stretched y range: the legend's corner first (fixed, or the one needing the least
 * stretch, ties in the legend's corner order), then the info block's in another corner.
 */
export function roomForBoxes(opts: {
  pts: readonly RoomPoint[];
  domain: [number, number];
  movable: Movable;
  plot: { width: number; height: number };
  inset: number;
  legend: { w: number; h: number; corners: Corner[] } | null;
  info: { w: number; h: number } | null;
  /** User annotations as boxes in plot fractions measured from the top-left: corners they sit in are avoided. */
  annotations?: readonly { fx: number; fy: number; fw: number; fh: number }[];
}): [number, number] {
  const { pts, movable, plot, inset } = opts;
  let [a, b] = opts.domain;
  const fit = (box: { w: number; h: number }, corners: Corner[]): { corner: Corner; range: [number, number] } | null => {
    const wf = (box.w + inset) / plot.width;
    const hf = (box.h + inset) / plot.height;
    const blocked = (c: Corner) => {
      const x0 = c.endsWith('left') ? 0 : 1 - wf;
      const y0 = c.startsWith('top') ? 0 : 1 - hf;
      return (opts.annotations ?? []).some((n) => n.fx < x0 + wf && x0 < n.fx + n.fw && n.fy < y0 + hf && y0 < n.fy + n.fh);
    };
    const free = corners.filter((c) => !blocked(c));
    let best: { corner: Corner; range: [number, number]; cost: number } | null = null;
    for (const c of free.length ? free : corners) {
      const r = rangeForCorner(c, wf, hf, pts, a, b, movable);
      if (!r) continue;
      const cost = r[1] - r[0];
      if (!best || cost < best.cost - 1e-12) best = { corner: c, range: r, cost };
    }
    return best;
  };
  let legendCorner: Corner | null = null;
  if (opts.legend) {
    const f = fit(opts.legend, opts.legend.corners);
    if (f) [[a, b], legendCorner] = [f.range, f.corner];
  }
  if (opts.info) {
    const f = fit(opts.info, INFO_CORNERS.filter((c) => c !== legendCorner));
    if (f) [a, b] = f.range;
  }
  return [a, b];
}

