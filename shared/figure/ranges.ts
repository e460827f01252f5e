/**
 * The summary of excluded ranges (figure kind `ranges`): one horizontal bar per layer over the
 * parameter axis, its observed excluded range(s) filled and its expected (median) range outlined
 * or marked, under a heading per model, with a note per bar (its luminosity unless the layer
 * gives one). The ranges are the registry's own (`exclusionOrProblem`: the limit against the
 * result's stored theory, interpolated linearly in x and ln σ); a layer with no theory curve is
 * listed with "no theory curve, no range", never left out.
 *
 * Layout, top to bottom: notes, the legend row (left) beside the energy / CL block (right), the
 * bars (labels in a column left of the plot, notes right of it; a model's heading in a row of its
 * own inside the frame), the parameter axis.
 */
import { scaleLinear, scaleLog } from 'd3-scale';
import type { FigureSpec, RangesOptions } from '../schemas/figures';
import { exclusionOrProblem, type ExcludedRange } from '../stats/exclusion';
import { axisPrimitives, fitMargins, layoutHeader, oversizeCheck, pageMeasures, pathBounds, touches } from './draw';
import { n, rectPath } from './legend';
import { drawnLayers, fill, noteHalves, shortNumber, sizePt, type DrawnLayer } from './plan';
import { roughWidth } from './room';
import type { ResolvedTheme } from './theme';
import { axisDomain, planAxisTicks, thinLabels, type AxisPlan } from './ticks';
import type { FigureLayerData, LabelRequest, Measure, Primitive, Rect, Scene } from './types';
import { labelKey } from './types';

/** One bar: a drawn layer with its excluded ranges in the axis units, or why it has none. */
export type RangeBar = {
  layer: DrawnLayer;
  model: string;
  /** Observed and expected-median ranges (null: not shown, or no theory to compare with). */
  observed: ExcludedRange[] | null;
  expected: ExcludedRange[] | null;
  /** `ranges`: something is excluded; `nothing`: compared, nothing excluded; `no-theory`: nothing to compare with. */
  status: 'ranges' | 'nothing' | 'no-theory';
  /** The status text drawn in the bar's row when it has no range ('' when it has). */
  statusText: string;
  /** The note beside the bar ('' for none). */
  note: string;
  /** The first x the computed curve covers and the last (axis units): a thin line under the bar. */
  span: [number, number];
};

export type RangeRow = { kind: 'heading'; label: string } | { kind: 'bar'; bar: RangeBar };

/** What a legend row shows before its label. */
export type RangeKey = 'observed' | 'expected-outline' | 'expected-marker' | 'open';

export type RangesPlan = {
  theme: ResolvedTheme;
  widthPt: number;
  heightPt: number;
  options: RangesOptions;
  bars: RangeBar[];
  rows: RangeRow[];
  x: AxisPlan;
  xTitle: string;
  info: { label: string; role: 'energy' | 'cl' | 'explain' }[];
  legend: { label: string; key: RangeKey }[];
  notes: string[];
};

/** Ranges with their ends in the axis units and inside the computed curve's range. */
function barOf(l: DrawnLayer, spec: FigureSpec, theme: ResolvedTheme): RangeBar {
  const w = theme.words;
  const c = l.data.curve;
  const xs = c.x.filter(Number.isFinite);
  const span: [number, number] = xs.length ? [Math.min(...xs), Math.max(...xs)] : [NaN, NaN];
  const ex = exclusionOrProblem(c, l.data.theory, l.data.meta.quantity);
  const observed = ex.ranges && l.spec.show.observed && c.observed ? (ex.ranges.observed ?? []) : null;
  const expected = ex.ranges && l.spec.show.expected && spec.ranges.expected !== 'none' && c.expected?.['0'] ? (ex.ranges.expected['0'] ?? []) : null;
  const any = (observed?.length ?? 0) + (expected?.length ?? 0) > 0;
  const status: RangeBar['status'] = !ex.ranges ? 'no-theory' : any ? 'ranges' : 'nothing';
  const note = !spec.ranges.notes ? '' : l.spec.note.trim() ? l.spec.note : fill(w.rangesNote, { lumi: shortNumber(l.data.meta.luminosity), sqrtS: shortNumber(l.data.meta.sqrtS) });
  return {
    layer: l,
    model: l.data.meta.model.trim(),
    observed,
    expected,
    status,
    statusText: status === 'no-theory' ? (l.data.theory ? w.rangesIncomparable : w.rangesNoTheory) : status === 'nothing' ? w.rangesNothing : '',
    note,
    span,
  };
}

/** The furthest observed reach of a bar (its highest excluded x), −∞ for none. */
const reachOf = (b: RangeBar) => Math.max(-Infinity, ...(b.observed ?? []).map((r) => r.to));

/** Bars in the spec's order, grouped by model (first appearance) when asked, each group sorted. */
function arrange(bars: RangeBar[], o: RangesOptions, theme: ResolvedTheme): RangeRow[] {
  const sorted = (group: RangeBar[]) => {
    const out = [...group];
    if (o.sort === 'reach') out.sort((a, b) => reachOf(b) - reachOf(a) || a.layer.index - b.layer.index);
    else if (o.sort === 'title') out.sort((a, b) => a.layer.name.localeCompare(b.layer.name, 'en', { sensitivity: 'base' }) || a.layer.index - b.layer.index);
    return out;
  };
  const models = [...new Set(bars.map((b) => b.model))];
  // No heading when nothing names a model: a lone "No model given" heading says nothing.
  if (!o.groupByModel || (models.length === 1 && models[0] === '')) return sorted(bars).map((bar) => ({ kind: 'bar', bar }));
  // Bars of no model go last, under their own heading.
  const order = [...models.filter((m) => m !== ''), ...models.filter((m) => m === '')];
  return order.flatMap((m) => [{ kind: 'heading', label: m || theme.words.rangesNoModel } as RangeRow, ...sorted(bars.filter((b) => b.model === m)).map((bar) => ({ kind: 'bar', bar }) as RangeRow)]);
}

/** The energy (and luminosity) lines and the confidence-level line of the bars. */
function infoLines(spec: FigureSpec, bars: RangeBar[], theme: ResolvedTheme): RangesPlan['info'] {
  const out: RangesPlan['info'] = [];
  const metas = bars.map((b) => b.layer.data.meta);
  if (spec.energyLabel) {
    const energies = [...new Set(metas.map((m) => shortNumber(m.sqrtS)))];
    const lumis = [...new Set(metas.map((m) => shortNumber(m.luminosity)))];
    // The luminosity goes here only when every bar has the same one and no bar says its own.
    const one = lumis.length === 1 && !spec.ranges.notes;
    for (const sqrtS of energies) out.push({ label: one ? fill(theme.words.energy, { sqrtS, lumi: lumis[0]! }) : fill(theme.words.energyOnly, { sqrtS }), role: 'energy' });
  }
  if (spec.clLabel && metas.length) out.push({ label: [...new Set(metas.map((m) => shortNumber(m.cl * 100)))].map((cl) => fill(theme.words.cl, { cl })).join(', '), role: 'cl' });
  return out;
}

/** The page's estimated plot width before measuring (ticks must not depend on measured text). */
function estimatedPlotWidth(theme: ResolvedTheme, W: number, rows: RangeRow[]): number {
  const t = theme.type;
  const s = theme.spacing;
  const labelW = Math.max(0, ...rows.map((r) => roughWidth(r.kind === 'bar' ? r.bar.layer.name : '', t.legend)));
  const noteW = Math.max(0, ...rows.map((r) => (r.kind === 'bar' ? roughWidth(r.bar.note, t.note) : 0)));
  const [left, right] = fitMargins(s.edge + labelW + s.tickLabel, s.edge + (noteW ? noteW + s.tickLabel : t.tick), W);
  return Math.max(1, W - left - right);
}

/** Everything about a summary of excluded ranges that does not need measured text. */
export function planRanges(spec: FigureSpec, layers: readonly FigureLayerData[], theme: ResolvedTheme): RangesPlan {
  const { drawn, hidden, unitNotes, refused } = drawnLayers(spec, layers, theme);
  const { widthPt, heightPt } = sizePt(spec);
  const w = theme.words;
  const bars = drawn.map((l) => barOf(l, spec, theme));
  const rows = arrange(bars, spec.ranges, theme);
  const xScale = spec.x.scale === 'log' ? 'log' : 'linear';
  // The axis covers every bar's computed range (its excluded ranges lie inside it).
  const values = bars.flatMap((b) => b.span.filter(Number.isFinite));
  const domain = axisDomain(spec.x, values, { pad: 0, fromZero: false, tight: true });
  const x = planAxisTicks(xScale, domain, estimatedPlotWidth(theme, widthPt, rows), theme.type.tick, true, theme.ticks.plainDecades);
  const meta = bars[0]?.layer.data.meta;
  const massLike = /^(mass\b|m\b|m_|m\(|\$m)/i;
  const name = meta ? (w.massAxis && massLike.test(meta.parameterName.trim()) ? w.massAxis : meta.parameterName) : '';
  const xTitle = spec.x.label.trim() ? spec.x.label : meta ? fill(meta.parameterUnit ? w.xAxis : w.xAxisNoUnit, { name, unit: meta.parameterUnit }) : '';
  const legend: RangesPlan['legend'] = [];
  if (spec.legend.position !== 'none' && bars.length) {
    if (bars.some((b) => b.observed)) legend.push({ label: w.rangesObserved, key: 'observed' });
    if (bars.some((b) => b.expected)) legend.push({ label: w.rangesExpected, key: spec.ranges.expected === 'marker' ? 'expected-marker' : 'expected-outline' });
    if (bars.some((b) => (b.observed ?? []).some((r) => r.fromOpen || r.toOpen))) legend.push({ label: w.rangesOpen, key: 'open' });
  }
  const info = infoLines(spec, bars, theme);
  if (w.rangesExplain && bars.some((b) => b.observed)) info.push({ label: w.rangesExplain, role: 'explain' });
  const notes = hidden === 0 ? [] : [hidden === 1 ? w.hiddenOne : fill(w.hiddenMany, { n: hidden })];
  for (const u of [...refused, ...unitNotes]) notes.push(u.text);
  // Rows lower than 1.2 lines of their labels' type overlap: say so (the type never shrinks).
  const roughPlot = heightPt - 2 * theme.spacing.edge - 3 * theme.type.tick - 2 * theme.type.axisTitle - (legend.length || info.length ? 1.6 * theme.type.legend * Math.max(1, info.length) : 0);
  if (rows.length && roughPlot / rows.length < 1.2 * theme.type.legend) notes.push(fill(w.rangesCrowded, { n: bars.length }));
  return { theme, widthPt, heightPt, options: spec.ranges, bars, rows, x, xTitle, info, legend, notes };
}

/** Every label of a ranges plan, each once, for batch typesetting. */
export function rangesLabels(spec: FigureSpec, plan: RangesPlan): LabelRequest[] {
  const t = plan.theme.type;
  const font = plan.theme.font;
  const out: LabelRequest[] = [];
  const seen = new Set<string>();
  const add = (label: string, size: number) => {
    if (!label) return;
    const r = { label, size, font };
    if (seen.has(labelKey(r))) return;
    seen.add(labelKey(r));
    out.push(r);
  };
  for (const m of plan.x.major) add(m.label, t.tick);
  add(plan.xTitle, t.axisTitle);
  for (const i of plan.info) add(i.label, t.annotation);
  for (const e of plan.legend) add(e.label, t.legend);
  for (const r of plan.rows) {
    if (r.kind === 'heading') add(r.label, t.legend);
    else {
      add(r.bar.layer.name, t.legend);
      add(r.bar.note, t.note);
      add(r.bar.statusText, t.note);
    }
  }
  for (const a of spec.annotations) add(a.text, t.annotation);
  for (const note of plan.notes) for (const line of [note, ...noteHalves(note)]) add(line, t.note);
  return out;
}

/**
 * The summary's drawing primitives, back to front: background, grid, each bar's computed span
 * (a thin line), observed ranges (filled, open ends marked with a small triangle), expected ranges
 * (an outline around the bar or end markers), status texts, group separators, frame and ticks,
 * labels and notes, the axis title, annotations, the legend row and the energy / CL block.
 */
export function buildRangesScene(spec: FigureSpec, plan: RangesPlan, measure: Measure): Scene {
  const theme = plan.theme;
  const W = plan.widthPt;
  const H = plan.heightPt;
  const t = theme.type;
  const s = theme.spacing;
  const font = theme.font;
  const { raw, bounded: m, height, side } = pageMeasures(measure, font, W, H);
  const oversize = oversizeCheck(W, H, raw);
  const items: Primitive[] = [{ kind: 'rect', x: 0, y: 0, width: W, height: H, fill: theme.colors.background, stroke: null, strokeWidth: 0, role: 'background' }];
  const text = (x: number, y: number, label: string, size: number, anchor: 'start' | 'middle' | 'end', color: string, role: Extract<Primitive, { kind: 'text' }>['role']) =>
    items.push({ kind: 'text', x, y, label, size, font, anchor, color, rotate: 0, role });

  // Notes, the legend row(s) and the energy / CL block above the plot.
  const keyW = 1.6 * t.legend;
  const header = layoutHeader({ notes: plan.notes, info: plan.info, legend: plan.legend.map((e) => e.label), keyWidth: keyW }, theme, W, m, noteHalves);
  const top = header.bottom;

  // Columns: bar labels and group headings left of the plot, notes right of it.
  const tickOut = theme.ticks.direction === 'out' ? theme.ticks.major : 0;
  const labelW = Math.max(0, ...plan.rows.map((r) => (r.kind === 'bar' ? m(r.bar.layer.name, t.legend).width : 0)));
  const noteW = Math.max(0, ...plan.rows.map((r) => (r.kind === 'bar' && r.bar.note ? m(r.bar.note, t.note).width : 0)));
  const xLabels = plan.x.major.map((tk) => m(tk.label, t.tick));
  const xTitle = plan.xTitle ? m(plan.xTitle, t.axisTitle) : null;
  const xLabelH = Math.max(0, ...xLabels.map(height));
  const xLabelAscent = Math.max(0, ...xLabels.map((x) => x.ascent));
  const lastOverhang = xLabels.length ? xLabels[xLabels.length - 1]!.width / 2 : 0;
  const [left, right] = fitMargins(s.edge + Math.max(labelW + s.tickLabel, 0), s.edge + Math.max(noteW ? noteW + s.tickLabel : 0, lastOverhang, theme.lines.frame), W);
  const [, bottom] = fitMargins(top, s.edge + (xTitle ? height(xTitle) + s.title : 0) + xLabelH + s.tickLabel + tickOut, H);
  const plot: Rect = { x: left, y: Math.min(top, H - bottom - 1), width: Math.max(1, W - left - right), height: Math.max(1, H - Math.min(top, H - bottom - 1) - bottom) };
  const plotRight = plot.x + plot.width;
  const plotBottom = plot.y + plot.height;

  const xScale = (plan.x.scale === 'log' ? scaleLog() : scaleLinear()).domain(plan.x.domain).range([plot.x, plotRight]);
  const okX = (v: number) => Number.isFinite(v) && (plan.x.scale !== 'log' || v > 0);
  const far = 3 * side;
  const X = (v: number) => Math.max(plot.x - far, Math.min(plotRight + far, xScale(v)));

  // Rows share the plot's height (up to four lines each, centred beyond that); bars keep the
  // thickness of about a line of type however roomy their rows are.
  const nRows = Math.max(1, plan.rows.length);
  const rowH = Math.min(plot.height / nRows, 4 * t.legend);
  const rowsTop = plot.y + (plot.height - rowH * plan.rows.length) / 2;
  const barH = Math.min(0.45 * rowH, 0.8 * t.legend);
  const outlineH = Math.min(0.75 * rowH, 1.35 * t.legend);

  if (theme.grid) {
    const d = plan.x.major.filter((tk) => okX(tk.value)).map((tk) => `M${n(X(tk.value))},${n(plot.y)}V${n(plotBottom)}`).join('');
    if (d) items.push({ kind: 'path', d, fill: null, stroke: theme.colors.grid, strokeWidth: theme.lines.grid, dash: null, clip: true, role: 'grid' });
  }

  const path = (d: string, style: { fill?: string | null; stroke?: string | null; width?: number; dash?: number[] | null }, role: string, layer?: number) =>
    items.push({ kind: 'path', d, fill: style.fill ?? null, stroke: style.stroke ?? null, strokeWidth: style.width ?? 0, dash: style.dash ?? null, clip: true, role, layer });
  const rangeEnds = (r: ExcludedRange): [number, number] | null => (okX(r.from) && okX(r.to) && r.to >= r.from ? [X(r.from), X(r.to)] : null);

  plan.rows.forEach((row, k) => {
    const cy = rowsTop + (k + 0.5) * rowH;
    if (row.kind === 'heading') {
      const hm = m(row.label, t.legend);
      // Inside the frame, where the heading's row has no bar (a long model name would cross the frame from the label column).
      text(plot.x + s.tickLabel, cy + (hm.ascent - hm.descent) / 2, row.label, t.legend, 'start', theme.colors.text, 'group');
      // A rule across the plot above each group but the first.
      if (k > 0) path(`M${n(plot.x)},${n(rowsTop + k * rowH)}H${n(plotRight)}`, { stroke: theme.colors.grid, width: theme.lines.grid }, 'group-rule');
      return;
    }
    const b = row.bar;
    const i = b.layer.index;
    const lm = m(b.layer.name, t.legend);
    text(plot.x - s.tickLabel, cy + (lm.ascent - lm.descent) / 2, b.layer.name, t.legend, 'end', theme.colors.text, 'bar-label');
    if (b.note) {
      const nm = m(b.note, t.note);
      text(plotRight + s.tickLabel, cy + (nm.ascent - nm.descent) / 2, b.note, t.note, 'start', theme.colors.muted, 'bar-note');
    }
    // The stretch the result was computed over, as a thin line (not under a status text).
    if (!b.statusText && okX(b.span[0]) && okX(b.span[1])) path(`M${n(X(b.span[0]))},${n(cy)}H${n(X(b.span[1]))}`, { stroke: theme.colors.grid, width: theme.lines.frame }, 'bar-span', i);
    for (const r of b.observed ?? []) {
      const e = rangeEnds(r);
      if (!e) continue;
      // A range of one point (the limit touches the theory) still shows as a hairline.
      const [x0, x1] = [e[0], Math.max(e[1], e[0] + theme.lines.observed / 2)];
      // An open end (the range runs into the edge of what was computed) ends in a point at the
      // range's end, inside the bar's extent: the bar may go on beyond it.
      const tip = Math.min(0.5 * barH, (x1 - x0) / 2);
      const [a, b2] = [r.fromOpen ? x0 + tip : x0, r.toOpen ? x1 - tip : x1];
      const y0 = cy - barH / 2;
      const y1 = cy + barH / 2;
      const d = `M${n(a)},${n(y0)}H${n(b2)}${r.toOpen ? `L${n(x1)},${n(cy)}` : `V${n(y1)}`}L${n(b2)},${n(y1)}H${n(a)}${r.fromOpen ? `L${n(x0)},${n(cy)}` : ''}Z`;
      path(d, { fill: b.layer.color }, 'bar-observed', i);
    }
    for (const r of b.expected ?? []) {
      const e = rangeEnds(r);
      if (!e) continue;
      if (plan.options.expected === 'marker') {
        const d = [r.fromOpen ? '' : `M${n(e[0])},${n(cy - outlineH / 2)}V${n(cy + outlineH / 2)}`, r.toOpen ? '' : `M${n(e[1])},${n(cy - outlineH / 2)}V${n(cy + outlineH / 2)}`].join('');
        if (d) path(d, { stroke: b.layer.color, width: theme.lines.expected }, 'bar-expected', i);
      } else {
        path(rectPath(e[0], cy - outlineH / 2, Math.max(e[1] - e[0], theme.lines.expected), outlineH), { stroke: b.layer.color, width: theme.lines.expected, dash: theme.dash.expected }, 'bar-expected', i);
      }
    }
    if (b.statusText) {
      const sm = m(b.statusText, t.note);
      text(plot.x + s.tickLabel, cy + (sm.ascent - sm.descent) / 2, b.statusText, t.note, 'start', theme.colors.muted, 'bar-status');
    }
  });

  items.push(...axisPrimitives({ x: plan.x, y: { scale: 'linear', domain: [0, 1], major: [], minor: [] } }, theme, plot, X, (v) => v, okX, () => false));

  const xBaseline = plotBottom + tickOut + s.tickLabel + xLabelAscent;
  const spans = plan.x.major.map((tk, i) => ({ index: i, ordinal: tk.ordinal, from: X(tk.value) - xLabels[i]!.width / 2, to: X(tk.value) + xLabels[i]!.width / 2 }));
  for (const i of thinLabels(spans.filter((sp) => okX(plan.x.major[sp.index]!.value)), 0.4 * t.tick)) {
    const tk = plan.x.major[i]!;
    text(X(tk.value), xBaseline, tk.label, t.tick, 'middle', theme.colors.text, 'tick');
  }
  if (xTitle) text(plot.x + plot.width / 2, H - s.edge - xTitle.descent, plan.xTitle, t.axisTitle, 'middle', theme.colors.text, 'axis-title');

  for (const a of spec.annotations) {
    const am = m(a.text, t.annotation);
    const x = Math.max(plot.x, Math.min(plotRight - am.width, plot.x + a.x * plot.width));
    const yTop = Math.max(plot.y, Math.min(plotBottom - height(am), plot.y + (1 - a.y) * plot.height));
    text(x, yTop + am.ascent, a.text, t.annotation, 'start', theme.colors.text, 'annotation');
  }

  // The header's text, and the legend keys: neutral (the bars carry their layers' colours).
  items.push(...header.items);
  const keyColor = theme.colors.muted;
  for (const { index, x, cy, rowH: legendRowH } of header.keys) {
    const e = plan.legend[index]!;
    const kh = 0.45 * legendRowH;
    const key = (d: string, style: { fill?: string | null; stroke?: string | null; width?: number; dash?: number[] | null }) =>
      items.push({ kind: 'path', d, fill: style.fill ?? null, stroke: style.stroke ?? null, strokeWidth: style.width ?? 0, dash: style.dash ?? null, clip: false, role: 'legend-key' });
    if (e.key === 'observed') key(rectPath(x, cy - kh / 2, keyW, kh), { fill: keyColor });
    else if (e.key === 'expected-outline') key(rectPath(x, cy - (0.75 * legendRowH) / 2, keyW, 0.75 * legendRowH), { stroke: keyColor, width: theme.lines.expected, dash: theme.dash.expected });
    else if (e.key === 'expected-marker') key(`M${n(x)},${n(cy - 0.375 * legendRowH)}V${n(cy + 0.375 * legendRowH)}M${n(x + keyW)},${n(cy - 0.375 * legendRowH)}V${n(cy + 0.375 * legendRowH)}`, { stroke: keyColor, width: theme.lines.expected });
    else key(`M${n(x + keyW - 0.5 * kh)},${n(cy - kh / 2)}L${n(x + keyW)},${n(cy)}L${n(x + keyW - 0.5 * kh)},${n(cy + kh / 2)}ZM${n(x)},${n(cy - kh / 2)}H${n(x + keyW - 0.5 * kh)}V${n(cy + kh / 2)}H${n(x)}Z`, { fill: keyColor });
  }

  // Labels whose text the figure decides: a box no text could have is refused on saving.
  if (plan.xTitle) oversize.check(plan.xTitle, t.axisTitle, false, 'spec.x.label', spec.x.label.trim() ? 'The x-axis title' : "The automatic x-axis title (from the first layer's result)", 'write a shorter one or choose a larger size');
  for (const r of plan.rows) {
    if (r.kind !== 'bar') continue;
    oversize.check(r.bar.layer.name, t.legend, false, `spec.layers.${r.bar.layer.index}.label`, 'The bar label', 'give the layer a shorter label or choose a larger size');
    if (r.bar.layer.spec.note.trim()) oversize.check(r.bar.note, t.note, false, `spec.layers.${r.bar.layer.index}.note`, 'The bar note', 'write a shorter note or choose a larger size');
  }
  spec.annotations.forEach((a, i) => oversize.check(a.text, t.annotation, false, `spec.annotations.${i}.text`, `Annotation ${i + 1}`, 'shorten it or choose a larger size'));

  return {
    widthPt: W,
    heightPt: H,
    background: theme.colors.background,
    plot,
    items: items.filter((p) => p.kind !== 'path' || !p.clip || touches(pathBounds(p.d), plot, p.strokeWidth + barH)),
    legendCorner: plan.legend.length ? 'top-left' : 'none',
    notes: [...plan.notes],
    oversizeLabels: oversize.found,
  };
}
