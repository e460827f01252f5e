/**
 * Drawing helpers both scene builders share (the limit plot in scene.ts, the summary of excluded
 * ranges in ranges.ts): safe text metrics, margins that always leave a plot, the oversize-label
 * check, path bounds for dropping shapes off the plot, and the frame with its ticks.
 */
import { n } from './legend';
import type { ResolvedTheme } from './theme';
import type { AxisPlan } from './ticks';
import type { FontRole, Measure, OversizeLabel, Primitive, Rect, TextMetrics } from './types';
import { labelKey } from './types';

/** Metrics with anything non-finite or negative turned into 0 (a broken measure must not break the layout). */
export function safeMetrics(m: TextMetrics | undefined): TextMetrics {
  const f = (v: number | undefined) => (typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : 0);
  return { width: f(m?.width), ascent: f(m?.ascent), descent: f(m?.descent) };
}

/**
 * The bounding box of path data as the builder writes it (absolute M, L, H, V, A and Z, from
 * d3-shape or our own helpers; an arc's box is widened by its radii), or null when it has no
 * finite point (nothing would be drawn).
 */
export function pathBounds(d: string): Rect | null {
  // NaN and Infinity (a number that overflowed on its way to a coordinate) count as no point.
  const tokens = d.match(/[-+]?(?:NaN|Infinity)|[A-Za-z]|[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?/g) ?? [];
  let x0 = Infinity;
  let y0 = Infinity;
  let x1 = -Infinity;
  let y1 = -Infinity;
  let cmd = 'M';
  let x = 0;
  let y = 0;
  const add = (px: number, py: number, pad = 0) => {
    if (!Number.isFinite(px) || !Number.isFinite(py)) return;
    x0 = Math.min(x0, px - pad);
    y0 = Math.min(y0, py - pad);
    x1 = Math.max(x1, px + pad);
    y1 = Math.max(y1, py + pad);
  };
  for (let i = 0; i < tokens.length; ) {
    const t = tokens[i]!;
    if (/[A-Za-z]/.test(t)) {
      cmd = t === 'z' ? 'Z' : t;
      i++;
      if (cmd === 'Z') continue;
    }
    const num = (k: number) => Number(tokens[i + k]);
    if (cmd === 'M' || cmd === 'L') {
      [x, y] = [num(0), num(1)];
      add(x, y);
      i += 2;
    } else if (cmd === 'H') {
      x = num(0);
      add(x, y);
      i += 1;
    } else if (cmd === 'V') {
      y = num(0);
      add(x, y);
      i += 1;
    } else if (cmd === 'A') {
      const r = Math.max(Math.abs(num(0)), Math.abs(num(1)));
      add(x, y, r);
      [x, y] = [num(5), num(6)];
      add(x, y, r);
      i += 7;
    } else {
      // Anything else (relative commands, curves) is not written by the builder: keep the shape,
      // never drop what may show.
      return { x: -Number.MAX_VALUE, y: -Number.MAX_VALUE, width: Infinity, height: Infinity };
    }
  }
  return x0 <= x1 ? { x: x0, y: y0, width: x1 - x0, height: y1 - y0 } : null;
}

export function touches(b: Rect | null, r: Rect, pad: number): boolean {
  return b !== null && b.x <= r.x + r.width + pad && b.x + b.width >= r.x - pad && b.y <= r.y + r.height + pad && b.y + b.height >= r.y - pad;
}

/**
 * Left/right (or top/bottom) margins that leave the plot at least a quarter of the page, however
 * large the labels are: beyond three quarters of the page the two shrink in proportion.
 */
export function fitMargins(a: number, b: number, page: number): [number, number] {
  const room = 0.75 * page;
  return a + b <= room ? [a, b] : [(a * room) / (a + b), (b * room) / (a + b)];
}

const pt = (v: number) => (v >= 100 ? String(Math.round(v)) : v.toFixed(1));
const quote = (label: string) => `“${label.length > 40 ? `${label.slice(0, 39)}…` : label}”`;

/**
 * Finds labels whose typeset box is larger than any text could make it: thicker than the page
 * (taller than it, or for the upright y-axis title wider than it), or longer than the page and
 * longer than one em per character of its source. Words never come near either bound (a glyph is
 * at most about an em wide); TeX boxes can (\rule, \hspace, \kern, tall arrays). Labels that are
 * merely too long for the page are only bounded in the layout (the composer warns that they stick
 * out, see `labelsOffPage`). Each field is reported once.
 */
export function oversizeCheck(W: number, H: number, measure: (label: string, size: number) => TextMetrics) {
  const found: OversizeLabel[] = [];
  return {
    found,
    check(label: string, size: number, upright: boolean, field: string, what: string, fix: string) {
      if (!label || found.some((o) => o.field === field)) return;
      const r = measure(label, size);
      const thick = r.ascent + r.descent;
      const along = upright ? H : W;
      const across = upright ? W : H;
      const longest = Math.max(along, size * [...label].length);
      const page = `the ${pt(W)} × ${pt(H)} pt page`;
      let why: string | null = null;
      if (thick > across + 0.5) why = upright ? `${pt(thick)} pt wide when typeset (drawn upright), wider than ${page}` : `${pt(thick)} pt tall when typeset, taller than ${page}`;
      else if (r.width > longest + 0.5) why = `${pt(r.width)} pt long when typeset, longer than ${page} and than one em for each of its ${[...label].length} characters`;
      if (why) found.push({ field, label, message: `${what} ${quote(label)} is ${why}: ${fix}` });
    },
  };
}

/** The frame (or left and bottom axis lines) and the tick marks, major and minor. */
export function axisPrimitives(plan: { x: AxisPlan; y: AxisPlan }, theme: ResolvedTheme, plot: Rect, X: (v: number) => number, Y: (v: number) => number, okX: (v: number) => boolean, okY: (v: number) => boolean): Primitive[] {
  const out: Primitive[] = [];
  const { major, minor, direction, mirror } = theme.ticks;
  const sign = direction === 'in' ? 1 : -1;
  const right = plot.x + plot.width;
  const bottom = plot.y + plot.height;
  const inside = (v: number, a: number, b: number) => v >= a - 1e-6 && v <= b + 1e-6;
  let d = '';
  const xTick = (v: number, len: number) => {
    if (!okX(v)) return;
    const px = X(v);
    if (!inside(px, plot.x, right)) return;
    d += `M${n(px)},${n(bottom)}V${n(bottom - sign * len)}`;
    if (mirror) d += `M${n(px)},${n(plot.y)}V${n(plot.y + sign * len)}`;
  };
  const yTick = (v: number, len: number) => {
    if (!okY(v)) return;
    const py = Y(v);
    if (!inside(py, plot.y, bottom)) return;
    d += `M${n(plot.x)},${n(py)}H${n(plot.x + sign * len)}`;
    if (mirror) d += `M${n(right)},${n(py)}H${n(right - sign * len)}`;
  };
  for (const tk of plan.x.major) xTick(tk.value, major);
  for (const v of plan.x.minor) xTick(v, minor);
  for (const tk of plan.y.major) yTick(tk.value, major);
  for (const v of plan.y.minor) yTick(v, minor);
  if (mirror) {
    out.push({ kind: 'rect', x: plot.x, y: plot.y, width: plot.width, height: plot.height, fill: null, stroke: theme.colors.frame, strokeWidth: theme.lines.frame, role: 'axis' });
  } else {
    out.push({ kind: 'path', d: `M${n(plot.x)},${n(plot.y)}V${n(bottom)}H${n(right)}`, fill: null, stroke: theme.colors.frame, strokeWidth: theme.lines.frame, dash: null, clip: false, role: 'axis' });
  }
  if (d) out.push({ kind: 'path', d, fill: null, stroke: theme.colors.frame, strokeWidth: theme.lines.tick, dash: null, clip: false, role: 'tick' });
  return out;
}


/**
 * The measures a scene builder lays out with: `raw`, each label measured once (safe metrics);
 * `bounded`, the same with every box bounded by the page — TeX can typeset a box of any size
 * (\rule{1em}{100em}, \hspace{1000000em}), and an unbounded one would push the plot off the page;
 * `height`, ascent plus descent.
 */
export function pageMeasures(measure: Measure, font: FontRole, W: number, H: number) {
  const cache = new Map<string, TextMetrics>();
  const raw = (label: string, size: number): TextMetrics => {
    const key = labelKey({ label, size, font });
    let r = cache.get(key);
    if (!r) {
      r = safeMetrics(measure(label, size, font));
      cache.set(key, r);
    }
    return r;
  };
  const side = Math.max(W, H);
  const bounded = (label: string, size: number): TextMetrics => {
    const r = raw(label, size);
    return { width: Math.min(r.width, side), ascent: Math.min(r.ascent, side), descent: Math.min(r.descent, side) };
  };
  return { raw, bounded, height: (x: TextMetrics) => x.ascent + x.descent, side };
}

/** Header lines of a figure: the notes (muted), the energy / CL block, legend labels. */
type HeaderInput = {
  notes: readonly string[];
  info: readonly { label: string; role: 'energy' | 'cl' | 'explain' }[];
  legend: readonly string[];
  /** Width of a legend key in points. */
  keyWidth: number;
};

/**
 * The header of the figures that keep their legend above the plot (the summary of excluded
 * ranges, the plane): the notes at the top (a long one on two lines, see `noteHalves`), then the
 * legend entries from the left, wrapping onto further rows, beside the energy / CL block on the
 * right — or beneath it when the two do not fit side by side. Returns the text primitives (notes,
 * block, legend labels), where each legend key goes (`keys`: its left end, the row's centre line
 * and height), and `bottom`, where the plot may start.
 */
export function layoutHeader(h: HeaderInput, theme: ResolvedTheme, W: number, m: (label: string, size: number) => TextMetrics, halves: (note: string) => string[]) {
  const t = theme.type;
  const s = theme.spacing;
  const font = theme.font;
  const height = (x: TextMetrics) => x.ascent + x.descent;
  const items: Primitive[] = [];
  const text = (x: number, y: number, label: string, size: number, anchor: 'start' | 'end', color: string, role: Extract<Primitive, { kind: 'text' }>['role']) =>
    items.push({ kind: 'text', x, y, label, size, font, anchor, color, rotate: 0, role });
  const noteLines = h.notes.flatMap((note) => {
    // Both halves are measured either way, so the labels measured are exactly those collected.
    const parts = halves(note);
    parts.forEach((p) => m(p, t.note));
    return m(note, t.note).width <= W - 2 * s.edge || parts.length === 0 ? [note] : parts;
  });
  let top = s.edge;
  for (const line of noteLines) {
    const nm = m(line, t.note);
    text(s.edge, top + nm.ascent, line, t.note, 'start', theme.colors.muted, 'note');
    top += height(nm) + 0.2 * t.note;
  }
  const infoMetrics = h.info.map((i) => m(i.label, t.annotation));
  const infoW = Math.max(0, ...infoMetrics.map((x) => x.width));
  const infoGap = 0.25 * t.annotation;
  const infoH = infoMetrics.reduce((a, x) => a + height(x), 0) + Math.max(0, infoMetrics.length - 1) * infoGap;
  const keyGap = 0.4 * t.legend;
  const legendMetrics = h.legend.map((label) => m(label, t.legend));
  const rowH = Math.max(t.legend, ...legendMetrics.map(height));
  const entryW = legendMetrics.map((x) => h.keyWidth + keyGap + x.width);
  const besideW = W - 2 * s.edge - (infoW ? infoW + s.legendColumn : 0);
  const beside = entryW.length === 0 || Math.max(0, ...entryW) <= besideW;
  const legendWidth = beside ? besideW : W - 2 * s.edge;
  const rows: number[][] = [];
  entryW.forEach((ew, i) => {
    const row = rows[rows.length - 1];
    const used = row ? row.reduce((a, k) => a + entryW[k]! + s.legendColumn, 0) : 0;
    if (row && used + ew <= legendWidth) row.push(i);
    else rows.push([i]);
  });
  const legendH = rows.length ? rows.length * rowH + (rows.length - 1) * s.legendRow : 0;
  const headerTop = top;
  const legendTop = beside ? headerTop : headerTop + infoH + (infoH ? s.legendRow : 0);
  const headerH = beside ? Math.max(infoH, legendH) : infoH + (infoH && legendH ? s.legendRow : 0) + legendH;
  let iy = headerTop;
  h.info.forEach((line, i) => {
    const im = infoMetrics[i]!;
    text(W - s.edge, iy + im.ascent, line.label, t.annotation, 'end', theme.colors.text, line.role);
    iy += height(im) + infoGap;
  });
  const keys: { index: number; x: number; cy: number; rowH: number }[] = [];
  rows.forEach((row, r) => {
    let x = s.edge;
    const cy = legendTop + r * (rowH + s.legendRow) + rowH / 2;
    for (const i of row) {
      const lm = legendMetrics[i]!;
      keys.push({ index: i, x, cy, rowH });
      text(x + h.keyWidth + keyGap, cy + (lm.ascent - lm.descent) / 2, h.legend[i]!, t.legend, 'start', theme.colors.text, 'legend');
      x += entryW[i]! + s.legendColumn;
    }
  });
  return { items, keys, bottom: headerTop + headerH + (headerH ? s.title : 0) };
}
