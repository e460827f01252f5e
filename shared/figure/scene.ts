/**
 * The scene builder: figure spec + layer data + theme → drawing primitives in points. Pure and
 * deterministic; the app's preview and the server's renderers draw its output, so preview and
 * export are the same figure.
 */
import { scaleLinear, scaleLog } from 'd3-scale';
import { area, line } from 'd3-shape';
import type { FigureSpec } from '../schemas/figures';
import { rangesBelow, type ExcludedRange } from '../stats/exclusion';
import { cornerBox, densify, layoutLegend, n, overlaps, placeBoxes, type Corner } from './legend';
import { bandColors, noteHalves, planFigure, planLabels, type DrawnLayer } from './plan';
import { axisPrimitives, fitMargins, oversizeCheck, pageMeasures, pathBounds, touches } from './draw';
import { buildRangesScene, planRanges, rangesLabels } from './ranges';
import { buildPlaneScene, planeLabels, planPlane } from './plane';
import type { ResolvedTheme } from './theme';
import { thinLabels, type AxisPlan } from './ticks';
import type { FigureLayerData, LabelRequest, Measure, Primitive, Rect, Scene, TextMetrics } from './types';

export { pathBounds };

/**
 * Every label `buildScene` will measure for this spec and data (tick labels included), each once,
 * so a caller can typeset them in one batch and then build the scene.
 */
export function collectLabels(spec: FigureSpec, layers: FigureLayerData[], theme: ResolvedTheme): LabelRequest[] {
  if (spec.kind === 'ranges') return rangesLabels(spec, planRanges(spec, layers, theme));
  if (spec.kind === 'plane') return planeLabels(spec, planPlane(spec, layers, theme));
  return planLabels(spec, planFigure(spec, layers, theme));
}

type Pt = [number, number];
type Triple = [number, number, number];

/** ln y at x, linear in x and ln y between the grid points (as `exclusionRanges` interpolates). */
function logInterpolate(pts: readonly Pt[], x: number): number {
  let i = 1;
  while (i < pts.length - 1 && pts[i]![0] < x) i++;
  const [x0, y0] = pts[i - 1]!;
  const [x1, y1] = pts[i]!;
  const t = x1 === x0 ? 0 : (x - x0) / (x1 - x0);
  return Math.exp(Math.log(y0) + t * (Math.log(y1) - Math.log(y0)));
}

/** Points with finite, positive values on a strictly increasing grid (what the log interpolation needs). */
function positiveGrid(xs: readonly number[], ys: readonly number[] | undefined): Pt[] {
  const out: Pt[] = [];
  if (!ys) return out;
  for (let i = 0; i < Math.min(xs.length, ys.length); i++) {
    const x = xs[i]!;
    const y = ys[i]!;
    if (Number.isFinite(x) && Number.isFinite(y) && y > 0 && (out.length === 0 || x > out[out.length - 1]![0])) out.push([x, y]);
  }
  return out;
}

/** Ranges of x where a limit lies below a theory curve, interpolated linearly in x and log σ. */
function excludedRanges(limit: Pt[], theory: Pt[]): ExcludedRange[] {
  if (limit.length < 2 || theory.length < 2) return [];
  return rangesBelow(
    limit.map((p) => p[0]),
    limit.map((p) => p[1]),
    theory.map((p) => p[0]),
    theory.map((p) => p[1]),
  );
}

/**
 * The figure's drawing primitives, back to front: background, excluded shading, expected bands
 * (±2σ under ±1σ, the bands layer only), theory bands, grid, theory lines, expected (dashed) and
 * observed (solid) lines, crossing markers, frame and ticks, tick labels, axis titles, annotations,
 * the legend last. Curves are clipped to the plot. `measure` is called only for labels that
 * `collectLabels` lists.
 */
export function buildScene(spec: FigureSpec, layers: FigureLayerData[], theme: ResolvedTheme, measure: Measure): Scene {
  if (spec.kind === 'ranges') return buildRangesScene(spec, planRanges(spec, layers, theme), measure);
  if (spec.kind === 'plane') return buildPlaneScene(spec, planPlane(spec, layers, theme), measure);
  const plan = planFigure(spec, layers, theme);
  const W = plan.widthPt;
  const H = plan.heightPt;
  const t = theme.type;
  const s = theme.spacing;
  const font = theme.font;
  const { raw, bounded: m, height, side } = pageMeasures(measure, font, W, H);
  const oversize = oversizeCheck(W, H, raw);

  // Margins from the measured labels.
  const tickOut = theme.ticks.direction === 'out' ? theme.ticks.major : 0;
  const xLabels = plan.x.major.map((tk) => m(tk.label, t.tick));
  const yLabels = plan.y.major.map((tk) => m(tk.label, t.tick));
  const xTitle = plan.xTitle ? m(plan.xTitle, t.axisTitle) : null;
  const yTitle = plan.yTitle ? m(plan.yTitle, t.axisTitle) : null;
  const noteLines = plan.notes.flatMap((note) => {
    // Both halves are measured either way, so the labels measured are exactly those collected.
    const halves = noteHalves(note);
    halves.forEach((h) => m(h, t.note));
    return m(note, t.note).width <= W - 2 * s.edge || halves.length === 0 ? [note] : halves;
  });
  const notes = noteLines.map((line) => m(line, t.note));
  const notesH = notes.reduce((a, x) => a + height(x) + 0.2 * t.note, 0);
  const xLabelAscent = Math.max(0, ...xLabels.map((x) => x.ascent));
  const xLabelH = Math.max(0, ...xLabels.map(height));
  const frac = (ap: AxisPlan, v: number) => {
    const [a, b] = ap.scale === 'log' ? ap.domain.map(Math.log10) : ap.domain;
    const u = ap.scale === 'log' ? Math.log10(v) : v;
    return (u - a!) / (b! - a! || 1);
  };
  // Only labels at the far ends of an axis stick out past the plot.
  const overhang = (ap: AxisPlan, ms: TextMetrics[], along: (x: TextMetrics) => number) => Math.max(0, ...ap.major.map((tk, i) => (frac(ap, tk.value) > 0.95 ? along(ms[i]!) / 2 : 0)));

  const [left, right] = fitMargins(
    s.edge + (yTitle ? height(yTitle) + s.title : 0) + Math.max(0, ...yLabels.map((x) => x.width)) + s.tickLabel + tickOut,
    s.edge + Math.max(theme.lines.frame, overhang(plan.x, xLabels, (x) => x.width)),
    W,
  );
  const [top, bottom] = fitMargins(s.edge + notesH + overhang(plan.y, yLabels, height), s.edge + (xTitle ? height(xTitle) + s.title : 0) + xLabelH + s.tickLabel + tickOut, H);
  const plot: Rect = { x: left, y: top, width: Math.max(1, W - left - right), height: Math.max(1, H - top - bottom) };
  const plotRight = plot.x + plot.width;
  const plotBottom = plot.y + plot.height;

  const xScale = (plan.x.scale === 'log' ? scaleLog() : scaleLinear()).domain(plan.x.domain).range([plot.x, plotRight]);
  const yScale = (plan.y.scale === 'log' ? scaleLog() : scaleLinear()).domain(plan.y.domain).range([plotBottom, plot.y]);
  const okX = (v: number) => Number.isFinite(v) && (plan.x.scale !== 'log' || v > 0);
  const okY = (v: number) => Number.isFinite(v) && (plan.y.scale !== 'log' || v > 0);
  const X = (v: number) => xScale(v);
  const Y = (v: number) => yScale(v);

  const items: Primitive[] = [{ kind: 'rect', x: 0, y: 0, width: W, height: H, fill: theme.colors.background, stroke: null, strokeWidth: 0, role: 'background' }];
  // Every drawn curve's points in plot coordinates, for the legend's corner search.
  const samples: Pt[] = [];
  const sampleStep = Math.max(1, Math.min(plot.width, plot.height) / 60);
  // Only points that a legend or info box could cover count: boxes sit in the plot's corners,
  // and with every label capped to the page side even a two-column legend stays within three
  // page sides of the plot, so points beyond that are skipped (with a fixed axis range far from
  // the data they would be millions of useless points: seconds of work).
  const reach = { x0: plot.x - 3 * side, x1: plotRight + 3 * side, y0: plot.y - 3 * side, y1: plotBottom + 3 * side };
  const within = (p: Pt) => p[0] >= reach.x0 && p[0] <= reach.x1 && p[1] >= reach.y0 && p[1] <= reach.y1;
  const sample = (pts: Pt[]) => {
    for (let i = 0; i < pts.length; i++) {
      const p = pts[i]!;
      const q = pts[i - 1];
      // A segment wholly beyond one side of the reach cannot pass through it.
      const beyond = q && ((p[0] < reach.x0 && q[0] < reach.x0) || (p[0] > reach.x1 && q[0] > reach.x1) || (p[1] < reach.y0 && q[1] < reach.y0) || (p[1] > reach.y1 && q[1] > reach.y1));
      const run = q && !beyond ? densify([q, p], sampleStep).slice(1) : [p];
      for (const d of run) if (Number.isFinite(d[0]) && Number.isFinite(d[1]) && within(d)) samples.push(d);
    }
  };

  const linePath = (xs: readonly number[], ys: readonly number[] | undefined): string | null => {
    if (!ys) return null;
    const pts: Pt[] = [];
    for (let i = 0; i < Math.min(xs.length, ys.length); i++) pts.push([xs[i]!, ys[i]!]);
    const ok = (p: Pt) => okX(p[0]) && okY(p[1]);
    if (pts.filter(ok).length < 2) return null;
    sample(pts.filter(ok).map((p) => [X(p[0]), Y(p[1])]));
    return line<Pt>().defined(ok).x((p) => X(p[0])).y((p) => Y(p[1]))(pts);
  };
  const bandPath = (xs: readonly number[], lo: readonly number[] | undefined, hi: readonly number[] | undefined): string | null => {
    if (!lo || !hi) return null;
    const pts: Triple[] = [];
    for (let i = 0; i < Math.min(xs.length, lo.length, hi.length); i++) pts.push([xs[i]!, lo[i]!, hi[i]!]);
    const ok = (p: Triple) => okX(p[0]) && okY(p[1]) && okY(p[2]);
    const good = pts.filter(ok);
    if (good.length < 2) return null;
    sample(good.map((p) => [X(p[0]), Y(p[1])]));
    sample(good.map((p) => [X(p[0]), Y(p[2])]));
    // A band is data too: sample across it, not only along its edges.
    for (let i = 1; i < good.length; i++) {
      const [a, b] = [good[i - 1]!, good[i]!];
      const [xa, xb] = [X(a[0]), X(b[0])];
      const steps = Math.max(1, Math.ceil(Math.abs(xb - xa) / sampleStep));
      // Only the steps whose x lies within the reach (see `sample`).
      const fa = xb === xa ? 0 : (reach.x0 - xa) / (xb - xa);
      const fb = xb === xa ? 1 : (reach.x1 - xa) / (xb - xa);
      const kFrom = Math.max(0, Math.floor(Math.min(fa, fb) * steps));
      const kTo = Math.min(steps, Math.ceil(Math.max(fa, fb) * steps));
      for (let k = kFrom; k < kTo; k++) {
        const f = k / steps;
        const x = X(a[0]) + f * (X(b[0]) - X(a[0]));
        sample([[x, Y(a[1]) + f * (Y(b[1]) - Y(a[1]))], [x, Y(a[2]) + f * (Y(b[2]) - Y(a[2]))]]);
      }
    }
    return area<Triple>().defined(ok).x((p) => X(p[0])).y0((p) => Y(p[1])).y1((p) => Y(p[2]))(pts);
  };
  const curve = (d: string | null, role: string, layer: number, style: { fill?: string; stroke?: string; width?: number; dash?: number[] | null }) => {
    if (!d) return;
    items.push({ kind: 'path', d, fill: style.fill ?? null, stroke: style.stroke ?? null, strokeWidth: style.width ?? 0, dash: style.dash ?? null, clip: true, role, layer });
  };

  // Excluded shading: over the x ranges where the observed limit is below theory, the region above
  // the observed limit (the σ × B it excludes there) up to the top of the plot. It follows the
  // limit between the grid points as the exclusion does (linear in x and ln σ) and never takes
  // part in the axis range.
  const shading = plan.shadingLayer;
  if (shading) {
    const obs = positiveGrid(shading.data.curve.x, shading.data.curve.observed);
    const ranges = excludedRanges(obs, positiveGrid(shading.data.theory!.x, shading.data.theory!.central));
    // Far outside the plot a coordinate only needs to stay beyond it (the clip does the rest).
    const far = 3 * side;
    const clampX = (v: number) => Math.max(plot.x - far, Math.min(plotRight + far, v));
    const clampY = (v: number) => (Number.isFinite(v) ? Math.max(plot.y - far, Math.min(plotBottom + far, v)) : plotBottom + far);
    for (const r of ranges) {
      if (!okX(r.from) || !okX(r.to) || !(r.to > r.from)) continue;
      const xs = [r.from, ...obs.map((p) => p[0]).filter((x) => x > r.from && x < r.to), r.to].filter(okX);
      const edge = xs.map((x) => [clampX(X(x)), clampY(Y(logInterpolate(obs, x)))] as Pt);
      if (edge.length < 2 || !(edge[edge.length - 1]![0] > edge[0]![0])) continue;
      const top = Math.min(plot.y, ...edge.map((p) => p[1]));
      const d = `M${edge.map((p) => `${n(p[0])},${n(p[1])}`).join('L')}V${n(top)}H${n(edge[0]![0])}Z`;
      items.push({ kind: 'path', d, fill: theme.colors.excluded, stroke: null, strokeWidth: 0, dash: null, clip: true, role: 'excluded', layer: shading.index });
    }
  }

  for (const l of plan.layers) {
    const e = l.data.curve.expected;
    const bands = bandColors(l, theme);
    if (l.band2) curve(bandPath(l.data.curve.x, e?.['-2'], e?.['2']), 'band2', l.index, { fill: bands.band2 });
    if (l.band1) curve(bandPath(l.data.curve.x, e?.['-1'], e?.['1']), 'band1', l.index, { fill: bands.band1 });
  }
  for (const th of plan.theories) if (th.band) curve(bandPath(th.theory.x, th.theory.lower, th.theory.upper), 'theory-band', th.layer, { fill: theme.colors.theoryBand });

  if (theme.grid) {
    const d = [
      ...plan.x.major.filter((tk) => okX(tk.value)).map((tk) => `M${n(X(tk.value))},${n(plot.y)}V${n(plotBottom)}`),
      ...plan.y.major.filter((tk) => okY(tk.value)).map((tk) => `M${n(plot.x)},${n(Y(tk.value))}H${n(plotRight)}`),
    ].join('');
    if (d) items.push({ kind: 'path', d, fill: null, stroke: theme.colors.grid, strokeWidth: theme.lines.grid, dash: null, clip: true, role: 'grid' });
  }

  for (const th of plan.theories) curve(linePath(th.theory.x, th.theory.central), 'theory', th.layer, { stroke: theme.colors.theory, width: theme.lines.theory, dash: th.dash.length ? th.dash : null });
  for (const l of plan.layers) if (l.spec.show.expected) curve(linePath(l.data.curve.x, l.data.curve.expected?.['0']), 'expected', l.index, { stroke: l.color, width: theme.lines.expected, dash: theme.dash.expected });
  for (const l of plan.layers) {
    if (!l.spec.show.observed) continue;
    if (!l.sources) {
      curve(linePath(l.data.curve.x, l.data.curve.observed), 'observed', l.index, { stroke: l.color, width: theme.lines.observed, dash: l.dash });
      continue;
    }
    // An envelope drawn by input: each stretch in its input's colour. The switches are points of
    // the envelope's own grid, so neighbouring stretches share their end point.
    const xs = l.data.curve.x;
    const obs = l.data.curve.observed;
    for (const st of l.sources) {
      const tol = 1e-9 * Math.max(1, Math.abs(st.from), Math.abs(st.to));
      const idx = xs.flatMap((x, i) => (x >= st.from - tol && x <= st.to + tol ? [i] : []));
      if (idx.length < 2 || !obs) continue;
      curve(linePath(idx.map((i) => xs[i]!), idx.map((i) => obs[i]!)), 'observed', l.index, { stroke: st.color, width: theme.lines.observed, dash: l.dash });
    }
  }

  for (const l of plan.layers) items.push(...crossingMarkers(l, theme, X, Y, okX, okY));

  items.push(...axisPrimitives(plan, theme, plot, X, Y, okX, okY));

  // Tick labels, thinned so that none overlap, along an axis or across the corner of the two.
  const xBaseline = plotBottom + tickOut + s.tickLabel + xLabelAscent;
  const xBoxes: Rect[] = [];
  const xSpans = plan.x.major.map((tk, i) => ({ index: i, ordinal: tk.ordinal, from: X(tk.value) - xLabels[i]!.width / 2, to: X(tk.value) + xLabels[i]!.width / 2 }));
  for (const i of thinLabels(xSpans.filter((sp) => okX(plan.x.major[sp.index]!.value)), 0.4 * t.tick)) {
    const tk = plan.x.major[i]!;
    const lm = xLabels[i]!;
    xBoxes.push({ x: X(tk.value) - lm.width / 2, y: xBaseline - lm.ascent, width: lm.width, height: height(lm) });
    items.push({ kind: 'text', x: X(tk.value), y: xBaseline, label: tk.label, size: t.tick, font, anchor: 'middle', color: theme.colors.text, rotate: 0, role: 'tick' });
  }
  const yRight = plot.x - tickOut - s.tickLabel;
  const ySpans = plan.y.major.map((tk, i) => ({ index: i, ordinal: tk.ordinal, from: Y(tk.value) - height(yLabels[i]!) / 2, to: Y(tk.value) + height(yLabels[i]!) / 2 }));
  for (const i of thinLabels(ySpans.filter((sp) => okY(plan.y.major[sp.index]!.value)), 0.25 * t.tick)) {
    const tk = plan.y.major[i]!;
    const lm = yLabels[i]!;
    const box = { x: yRight - lm.width, y: Y(tk.value) - height(lm) / 2, width: lm.width, height: height(lm) };
    // At the origin corner the x axis keeps its label.
    if (xBoxes.some((b) => overlaps(b, box))) continue;
    items.push({ kind: 'text', x: yRight, y: Y(tk.value) + (lm.ascent - lm.descent) / 2, label: tk.label, size: t.tick, font, anchor: 'end', color: theme.colors.text, rotate: 0, role: 'tick' });
  }

  if (xTitle) items.push({ kind: 'text', x: plot.x + plot.width / 2, y: H - s.edge - xTitle.descent, label: plan.xTitle, size: t.axisTitle, font, anchor: 'middle', color: theme.colors.text, rotate: 0, role: 'axis-title' });
  if (yTitle) items.push({ kind: 'text', x: s.edge + yTitle.ascent, y: plot.y + plot.height / 2, label: plan.yTitle, size: t.axisTitle, font, anchor: 'middle', color: theme.colors.text, rotate: -90, role: 'axis-title' });

  // User annotations: (x, y) in axes fractions is the top-left corner of the text, kept inside the plot.
  const obstacles: Rect[] = [];
  for (const a of spec.annotations) {
    const am = m(a.text, t.annotation);
    const x = Math.max(plot.x, Math.min(plotRight - am.width, plot.x + a.x * plot.width));
    const yTop = Math.max(plot.y, Math.min(plotBottom - height(am), plot.y + (1 - a.y) * plot.height));
    obstacles.push({ x, y: yTop, width: am.width, height: height(am) });
    items.push({ kind: 'text', x, y: yTop + am.ascent, label: a.text, size: t.annotation, font, anchor: 'start', color: theme.colors.text, rotate: 0, role: 'annotation' });
  }

  // The energy / CL block and the legend share the corner search.
  const infoMetrics = plan.info.map((i) => m(i.label, t.annotation));
  const infoGap = 0.25 * t.annotation;
  const info = infoMetrics.length ? { w: Math.max(...infoMetrics.map((x) => x.width)), h: infoMetrics.reduce((a, x) => a + height(x), 0) + (infoMetrics.length - 1) * infoGap } : null;
  const legendMetrics = plan.legend.map((e) => m(e.label, t.legend));
  let legend = plan.legend.length ? layoutLegend(plan.legend, legendMetrics, theme, plan.legendColumns) : null;
  // Two measured columns wider than the plot: one column, inside the frame.
  if (legend && plan.legendColumns === 2 && legend.width > plot.width - 2 * s.legendInset) legend = layoutLegend(plan.legend, legendMetrics, theme, 1);
  const position = spec.legend.position;
  const fixed: Corner | null = position === 'auto' || position === 'none' ? null : position;
  const placed = placeBoxes({ plot, inset: s.legendInset, samples, obstacles, legend: legend ? { w: legend.width, h: legend.height, fixed } : null, info });

  if (info && placed.info) {
    const box = cornerBox(plot, placed.info, info.w, info.h, s.legendInset);
    const leftSide = placed.info.endsWith('left');
    let y = box.y;
    plan.info.forEach((line, i) => {
      const im = infoMetrics[i]!;
      items.push({ kind: 'text', x: leftSide ? box.x : box.x + box.width, y: y + im.ascent, label: line.label, size: t.annotation, font, anchor: leftSide ? 'start' : 'end', color: theme.colors.text, rotate: 0, role: line.role });
      y += height(im) + infoGap;
    });
  }

  let y = s.edge;
  noteLines.forEach((note, i) => {
    const nm = notes[i]!;
    items.push({ kind: 'text', x: s.edge, y: y + nm.ascent, label: note, size: t.note, font, anchor: 'start', color: theme.colors.muted, rotate: 0, role: 'note' });
    y += height(nm) + 0.2 * t.note;
  });

  if (legend && placed.legend) {
    const box = cornerBox(plot, placed.legend, legend.width, legend.height, s.legendInset);
    // The legend sits inside the frame, clear of the axes and their tick labels. One wider or
    // taller than the plot (huge type on a small page) starts at the plot's left or top inset, so
    // it never runs over the y tick labels or the notes above the plot, and stays on the page.
    const x = legend.width > plot.width - 2 * s.legendInset ? plot.x + s.legendInset : box.x;
    const y = legend.height > plot.height - 2 * s.legendInset ? plot.y + s.legendInset : box.y;
    const clamp = (v: number, size: number, page: number) => Math.max(0, Math.min(v, page - size));
    items.push(...legend.draw(clamp(x, legend.width, W), clamp(y, legend.height, H)));
  }

  // Labels whose text the figure decides (its own words, or its results' words it chose to show):
  // one whose box no text could have (see `oversizeCheck`) is refused by the server on saving and
  // rendering.
  // Tick labels and notes are the builder's own short words; their boxes are only bounded.
  if (plan.xTitle) oversize.check(plan.xTitle, t.axisTitle, false, 'spec.x.label', spec.x.label.trim() ? 'The x-axis title' : "The automatic x-axis title (from the first layer's result)", 'write a shorter one or choose a larger size');
  if (plan.yTitle) oversize.check(plan.yTitle, t.axisTitle, true, 'spec.y.label', spec.y.label.trim() ? 'The y-axis title' : "The automatic y-axis title (from the first layer's result)", 'write a shorter one or choose a larger size');
  spec.annotations.forEach((a, i) => oversize.check(a.text, t.annotation, false, `spec.annotations.${i}.text`, `Annotation ${i + 1}`, 'shorten it or choose a larger size'));
  const infoField = { energy: ['spec.energyLabel', 'The energy label'], cl: ['spec.clLabel', 'The confidence-level label'], explain: ['spec.theme', 'The explanation line'] } as const;
  plan.info.forEach((line) => oversize.check(line.label, t.annotation, false, infoField[line.role][0], infoField[line.role][1], line.role === 'explain' ? 'choose a larger size' : 'turn it off or choose a larger size'));
  plan.legend.forEach((e) => {
    const fix = e.field.endsWith('.show.theory')
      ? "hide this layer's theory curve or choose a larger size"
      : e.field.endsWith('.theoryLabel')
        ? 'give the theory curve a shorter name or choose a larger size'
        : e.field.endsWith('.label')
          ? 'give the layer a shorter label or choose a larger size'
          : 'turn it off or choose a larger size';
    oversize.check(e.label, t.legend, false, e.field, 'The legend entry', fix);
  });

  return {
    widthPt: W,
    heightPt: H,
    background: theme.colors.background,
    plot,
    // A clipped shape that lies wholly outside the plot draws nothing, and some renderers fail on
    // it (resvg 2.6 aborts on a clipped element entirely off its canvas: crossing markers or curve
    // pieces far outside a fixed axis range were such shapes). They are left out.
    items: items.filter((p) => p.kind !== 'path' || !p.clip || touches(pathBounds(p.d), plot, p.strokeWidth + theme.markerRadius)),
    legendCorner: legend && placed.legend ? placed.legend : 'none',
    notes: [...plan.notes],
    oversizeLabels: oversize.found,
  };
}

/** Markers where a layer's observed (filled) and expected (open) limits cross its theory curve. */
function crossingMarkers(l: DrawnLayer, theme: ResolvedTheme, X: (v: number) => number, Y: (v: number) => number, okX: (v: number) => boolean, okY: (v: number) => boolean): Primitive[] {
  const theory = l.data.theory;
  if (!l.spec.show.crossings || !theory) return [];
  const central = positiveGrid(theory.x, theory.central);
  const out: Primitive[] = [];
  const r = theme.markerRadius;
  const mark = (limit: readonly number[] | undefined, filled: boolean) => {
    for (const range of excludedRanges(positiveGrid(l.data.curve.x, limit), central)) {
      const ends = [range.fromOpen ? null : range.from, range.toOpen ? null : range.to];
      for (const x of ends) {
        if (x === null || !okX(x)) continue;
        const yv = logInterpolate(central, x);
        if (!okY(yv)) continue;
        const cx = X(x);
        const cy = Y(yv);
        const d = `M${n(cx - r)},${n(cy)}A${n(r)},${n(r)} 0 1,0 ${n(cx + r)},${n(cy)}A${n(r)},${n(r)} 0 1,0 ${n(cx - r)},${n(cy)}Z`;
        out.push({ kind: 'path', d, fill: filled ? l.color : theme.colors.background, stroke: l.color, strokeWidth: theme.lines.marker, dash: null, clip: true, role: 'crossing', layer: l.index });
      }
    }
  };
  if (l.spec.show.observed) mark(l.data.curve.observed, true);
  if (l.spec.show.expected) mark(l.data.curve.expected?.['0'], false);
  return out;
}

/**
 * Labels that stick out of the page (large type on a small page, a long legend entry): the scene
 * never shrinks type, so the composer says which ones, to pick a larger size or shorter words.
 * Horizontal labels only (rotated axis titles are placed inside by construction).
 */
export function labelsOffPage(scene: Scene, measure: Measure): string[] {
  const out = new Set<string>();
  for (const it of scene.items) {
    if (it.kind !== 'text' || it.rotate !== 0) continue;
    const w = measure(it.label, it.size, it.font).width;
    const left = it.anchor === 'start' ? it.x : it.anchor === 'end' ? it.x - w : it.x - w / 2;
    if (left < -0.5 || left + w > scene.widthPt + 0.5) out.add(it.label);
  }
  return [...out];
}
