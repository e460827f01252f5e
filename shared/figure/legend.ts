/**
 * The legend box and the corner search: the legend (and the energy / confidence-level block) go
 * to the corners of the plot that cover the fewest points of the drawn curves.
 */
import type { LegendEntry } from './plan';
import type { ResolvedTheme } from './theme';
import type { Primitive, Rect, TextMetrics } from './types';

/** A corner of the plot area. */
export type Corner = 'top-left' | 'top-right' | 'bottom-left' | 'bottom-right';
/** Tie order for the legend: where readers look for it first. */
export const LEGEND_CORNERS: Corner[] = ['top-right', 'top-left', 'bottom-right', 'bottom-left'];
/** Tie order for the energy block: the top corners, left first. */
export const INFO_CORNERS: Corner[] = ['top-left', 'top-right', 'bottom-left', 'bottom-right'];

/** A box of `w` × `h` in `corner` of `plot`, `inset` from its edges. */
export function cornerBox(plot: Rect, corner: Corner, w: number, h: number, inset: number): Rect {
  const left = corner.endsWith('left');
  const top = corner.startsWith('top');
  return {
    x: left ? plot.x + inset : plot.x + plot.width - inset - w,
    y: top ? plot.y + inset : plot.y + plot.height - inset - h,
    width: w,
    height: h,
  };
}

/** Whether two rectangles share any area. */
export function overlaps(a: Rect, b: Rect): boolean {
  return a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;
}

/** How many sample points lie inside `r`. */
export function pointsIn(r: Rect, samples: readonly [number, number][]): number {
  let n = 0;
  for (const [x, y] of samples) if (x >= r.x && x <= r.x + r.width && y >= r.y && y <= r.y + r.height) n++;
  return n;
}

/**
 * Points along a polyline at most `step` apart, so a curve that crosses a box between two
 * far-apart data points still counts there.
 */
export function densify(points: readonly [number, number][], step: number): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i < points.length; i++) {
    const p = points[i]!;
    if (i > 0) {
      const q = points[i - 1]!;
      const n = Math.min(1000, Math.ceil(Math.hypot(p[0] - q[0], p[1] - q[1]) / step));
      for (let k = 1; k < n; k++) out.push([q[0] + ((p[0] - q[0]) * k) / n, q[1] + ((p[1] - q[1]) * k) / n]);
    }
    out.push(p);
  }
  return out;
}

type Placement = { legend: Corner | null; info: Corner | null };

/** Lexicographic comparison of cost tuples. */
function lessThan(a: number[], b: number[]): boolean {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i]! < b[i]!;
  return false;
}

/**
 * Corners for the legend and the info block. A fixed legend corner is kept; 'auto' takes the
 * corner whose box covers the fewest curve points, so the legend never covers data while a free
 * corner exists. The info block then takes the best other corner (a bottom corner only when it
 * covers fewer points than the top ones). Covering an annotation counts as worse than covering
 * any number of points; the two boxes never overlap when any choice avoids it. Ties go by the
 * corner orders above, so the result is deterministic.
 */
export function placeBoxes(opts: {
  plot: Rect;
  inset: number;
  samples: readonly [number, number][];
  obstacles: readonly Rect[];
  legend: { w: number; h: number; fixed: Corner | null } | null;
  info: { w: number; h: number } | null;
}): Placement {
  const { plot, inset, samples, obstacles, legend, info } = opts;
  const cost = (r: Rect | null) => (r ? [obstacles.filter((o) => overlaps(o, r)).length, pointsIn(r, samples)] : [0, 0]);
  const legendChoices = legend ? (legend.fixed ? [legend.fixed] : LEGEND_CORNERS) : [null];
  let best: { score: number[]; p: Placement } | null = null;
  for (const lc of legendChoices) {
    const lBox = legend && lc ? cornerBox(plot, lc, legend.w, legend.h, inset) : null;
    const [lHits, lPoints] = cost(lBox);
    for (const ic of info ? INFO_CORNERS : [null]) {
      if (ic !== null && ic === lc) continue;
      const iBox = info && ic ? cornerBox(plot, ic, info.w, info.h, inset) : null;
      const [iHits, iPoints] = cost(iBox);
      const clash = lBox && iBox && overlaps(lBox, iBox) ? 1 : 0;
      const score = [clash, lHits!, lPoints!, iHits!, iPoints! + (ic?.startsWith('bottom') ? 0.5 : 0)];
      if (!best || lessThan(score, best.score)) best = { score, p: { legend: lc, info: ic } };
    }
  }
  return best?.p ?? { legend: null, info: null };
}

export type LegendLayout = {
  width: number;
  height: number;
  /** The legend's primitives with its box at (x, y). */
  draw: (x: number, y: number) => Primitive[];
};

/**
 * Lays the legend out in one or two columns (filled top to bottom, then left to right): a key
 * (line sample or filled swatch) then the label, rows as high as the tallest label.
 */
export function layoutLegend(entries: readonly LegendEntry[], metrics: readonly TextMetrics[], theme: ResolvedTheme, columns: 1 | 2): LegendLayout {
  const size = theme.type.legend;
  const s = theme.spacing;
  const cols = Math.max(1, Math.min(columns, entries.length));
  const rows = Math.ceil(entries.length / cols);
  const rowH = Math.max(size, ...metrics.map((m) => m.ascent + m.descent));
  const keyGap = 0.4 * size;
  const colW: number[] = [];
  for (let c = 0; c < cols; c++) {
    const widths = metrics.slice(c * rows, (c + 1) * rows).map((m) => m.width);
    colW.push(s.legendKey + keyGap + Math.max(0, ...widths));
  }
  const width = 2 * s.legendPad + colW.reduce((a, b) => a + b, 0) + (cols - 1) * s.legendColumn;
  const height = entries.length === 0 ? 0 : 2 * s.legendPad + rows * rowH + (rows - 1) * s.legendRow;

  const draw = (x: number, y: number): Primitive[] => {
    const out: Primitive[] = [
      { kind: 'rect', x, y, width, height, fill: theme.colors.legendFill, stroke: theme.colors.legendStroke, strokeWidth: theme.colors.legendStroke ? theme.lines.legendFrame : 0, opacity: theme.legendOpacity, role: 'legend' },
    ];
    entries.forEach((e, i) => {
      const c = Math.floor(i / rows);
      const r = i % rows;
      const x0 = x + s.legendPad + colW.slice(0, c).reduce((a, b) => a + b, 0) + c * s.legendColumn;
      const top = y + s.legendPad + r * (rowH + s.legendRow);
      const cy = top + rowH / 2;
      const x1 = x0 + s.legendKey;
      const k = e.key;
      if (k.kind === 'fill') {
        const h = 0.75 * rowH;
        out.push({ kind: 'path', d: rectPath(x0, cy - h / 2, s.legendKey, h), fill: k.color, stroke: null, strokeWidth: 0, dash: null, clip: false, role: 'legend-key', layer: e.layer });
        if (k.line) out.push({ kind: 'path', d: `M${n(x0)},${n(cy)}H${n(x1)}`, fill: null, stroke: k.line.color, strokeWidth: k.line.width, dash: k.line.dash, clip: false, role: 'legend-key', layer: e.layer });
      } else {
        out.push({ kind: 'path', d: `M${n(x0)},${n(cy)}H${n(x1)}`, fill: null, stroke: k.color, strokeWidth: k.width, dash: k.dash, clip: false, role: 'legend-key', layer: e.layer });
      }
      const m = metrics[i]!;
      out.push({ kind: 'text', x: x1 + keyGap, y: cy + (m.ascent - m.descent) / 2, label: e.label, size, font: theme.font, anchor: 'start', color: theme.colors.text, rotate: 0, role: 'legend' });
    });
    return out;
  };
  return { width, height, draw };
}

/** A number for path data: three decimals at most, no "-0". */
export function n(v: number): string {
  const r = Math.round(v * 1000) / 1000;
  return String(Object.is(r, -0) ? 0 : r);
}

/** A closed rectangle as path data. */
export function rectPath(x: number, y: number, w: number, h: number): string {
  return `M${n(x)},${n(y)}H${n(x + w)}V${n(y + h)}H${n(x)}Z`;
}
