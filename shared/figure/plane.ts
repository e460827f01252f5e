/**
 * The two-parameter plane (figure kind `plane`): results over two parameters drawn on an x–y
 * plane. The first layer's observed limit is a colour map (cells centred on its grid points,
 * coloured on a LOG scale from the sequential ramp PLANE_SEQUENTIAL, with a colour bar); every
 * layer adds its stored contour lines (the registry's `planeContours`, never recomputed here) in
 * its colour: observed solid, expected median dashed, the expected ±1σ band filled between its two
 * contours for the bands layer (the one region the plane recomputes, from the same grid and with
 * the same vertex placement as the stored lines) and thin dashed ±1σ contours for the others,
 * the observed lines against the theory band's edges thin and solid. The excluded side of each
 * observed line is marked with short hatch ticks (the contours keep it on the LEFT of their
 * direction of travel) or with a light shading of the excluded cells. Cells with no point are left
 * blank, or drawn grey (`forbidden: 'drawn'`).
 *
 * Layout, top to bottom: notes, the legend row (left) beside the energy / CL block (right), the
 * plot with its colour bar to the right, the x axis. `planPlane` is the measurement-free half,
 * `planeLabels` lists its labels for batch typesetting, `buildPlaneScene` lays it out.
 */
import { scaleLinear, scaleLog } from 'd3-scale';
import type { FigureSpec, PlaneOptions } from '../schemas/figures';
import { planeGrid, type PlaneGrid } from '../plane/grid';
import { bandRegionRings, type ContourLine } from '../plane/contours';
import { rampColor } from './color';
import { axisPrimitives, fitMargins, layoutHeader, oversizeCheck, pageMeasures, pathBounds, touches } from './draw';
import { n, rectPath } from './legend';
import { bandColors, drawnLayers, fill, noteHalves, shortNumber, sizePt, type DrawnLayer } from './plan';
import type { ResolvedTheme } from './theme';
import { axisDomain, planAxisTicks, thinLabels, type AxisPlan } from './ticks';
import type { FigureLayerData, LabelRequest, Measure, PlaneLayerData, Primitive, Rect, Scene } from './types';
import { labelKey } from './types';

import { PLANE_FORBIDDEN_FILL, PLANE_SEQUENTIAL } from '../../themes/figure/palette';

/** Colours the map is quantised to (adjacent equal cells of a row are drawn as one rectangle). */
export const PLANE_COLOR_LEVELS = 64;

/** How far (pt) a run of cells reaches into its drawn neighbours, hiding anti-aliasing seams. */
const CELL_OVERLAP = 0.3;

/** Roles of the paths made of grid cells. */
const CELL_ROLES = new Set(['color-map', 'forbidden', 'hole-cover', 'excluded']);

/** Which stored contour a drawn line is, in the CSV's words. */
export type PlaneLineKind = 'observed' | 'expected' | 'expected_minus_1sigma' | 'expected_plus_1sigma' | 'observed_theory_lower' | 'observed_theory_upper';

/**
 * A layer with its plane, and the lines it draws. `band`: the bands layer's ±1σ expected band as a
 * region to fill (even-odd rings in parameter values, and its colour), set by `planPlane`; its two
 * edge lines are then drawn as the region's edges rather than as dashed lines.
 */
export type PlaneLayer = DrawnLayer & { plane: PlaneLayerData; lines: { kind: PlaneLineKind; lines: ContourLine[] }[]; band?: { rings: [number, number][][]; fill: string } | null };

/** Opacity of the page-colour veil that shades excluded cells over a colour map. */
export const PLANE_SHADE_OVER_MAP = 0.45;

/** Opacity of a filled ±1σ band over the colour map (opaque without one), so the map shows through. */
export const PLANE_BAND_OVER_MAP = 0.55;

export type PlaneLegendKey = 'observed' | 'expected' | 'band' | 'theory' | 'excluded-hatch' | 'excluded-shade' | 'forbidden';

export type PlanePlan = {
  theme: ResolvedTheme;
  widthPt: number;
  heightPt: number;
  options: PlaneOptions;
  layers: PlaneLayer[];
  /** The colour map's layer grid and values (the first layer's observed limit), or null for none. */
  map: { grid: PlaneGrid; values: number[]; domain: [number, number]; bar: AxisPlan; title: string } | null;
  /** The first layer's grid (cells, holes), when it has one. */
  grid: PlaneGrid | null;
  x: AxisPlan;
  y: AxisPlan;
  xTitle: string;
  yTitle: string;
  info: { label: string; role: 'energy' | 'cl' | 'explain' }[];
  legend: { label: string; key: PlaneLegendKey; color: string; layer?: number; field: string }[];
  notes: string[];
};

const LINE_KEYS: { kind: PlaneLineKind; pick: (c: PlaneLayerData['contours']) => ContourLine[] | undefined; show: (l: DrawnLayer) => boolean }[] = [
  { kind: 'expected_minus_1sigma', pick: (c) => c.expected['-1'], show: (l) => l.spec.show.band1 },
  { kind: 'expected_plus_1sigma', pick: (c) => c.expected['1'], show: (l) => l.spec.show.band1 },
  { kind: 'expected', pick: (c) => c.expected['0'], show: (l) => l.spec.show.expected },
  { kind: 'observed_theory_lower', pick: (c) => c.observedTheoryLower, show: (l) => l.spec.show.observed && l.spec.show.theoryBand },
  { kind: 'observed_theory_upper', pick: (c) => c.observedTheoryUpper, show: (l) => l.spec.show.observed && l.spec.show.theoryBand },
  { kind: 'observed', pick: (c) => c.observed, show: (l) => l.spec.show.observed },
];

/** The drawn layers of a plane figure with the contour lines each shows (back to front). */
export function planeLayers(spec: FigureSpec, layers: readonly FigureLayerData[], theme: ResolvedTheme): { layers: PlaneLayer[]; hidden: number; notes: string[] } {
  const { drawn, hidden, unitNotes, refused } = drawnLayers(spec, layers, theme);
  const out: PlaneLayer[] = [];
  for (const l of drawn) {
    const plane = l.data.plane;
    if (!plane) continue;
    const lines = LINE_KEYS.filter((k) => k.show(l)).flatMap((k) => {
      const ls = k.pick(plane.contours);
      return ls && ls.length ? [{ kind: k.kind, lines: ls }] : [];
    });
    out.push({ ...l, plane, lines });
  }
  return { layers: out, hidden, notes: [...refused, ...unitNotes].map((u) => u.text) };
}

const lowerFirst = (s: string) => (/^[A-Z][a-z]/.test(s) ? s[0]!.toLowerCase() + s.slice(1) : s);

/** The grid of a stored plane, or null when it does not form one (stored planes were checked on upload). */
function gridOf(p: PlaneLayerData): PlaneGrid | null {
  try {
    return planeGrid(p.plane.x, p.plane.y);
  } catch {
    return null;
  }
}

/**
 * The lowest and highest usable value of the columns (finite, and positive for a log axis), or
 * nothing: all an axis range needs of 40,000 values, without copying them.
 */
function extent(columns: readonly (readonly number[])[], log: boolean): number[] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const col of columns) {
    for (const v of col) {
      if (!Number.isFinite(v) || (log && !(v > 0))) continue;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return lo <= hi ? [lo, hi] : [];
}

/** Everything about a plane figure that does not need measured text. */
export function planPlane(spec: FigureSpec, layers: readonly FigureLayerData[], theme: ResolvedTheme): PlanePlan {
  const { layers: drawn, hidden, notes: layerNotes } = planeLayers(spec, layers, theme);
  const { widthPt, heightPt } = sizePt(spec);
  const w = theme.words;
  const t = theme.type;
  const first = drawn[0] ?? null;
  const grid = first ? gridOf(first.plane) : null;
  const o = spec.plane;
  // The bands layer(s) fill their ±1σ band (the region between the two contours), as limit plots do.
  for (const l of drawn) {
    if (!l.band1 || !l.lines.some((k) => k.kind === 'expected_minus_1sigma' || k.kind === 'expected_plus_1sigma')) continue;
    const g = l === first ? grid : gridOf(l.plane);
    const rings = g ? bandRegionRings(g, l.plane.plane, l.data.meta.quantity) : null;
    l.band = rings && rings.length ? { rings, fill: bandColors(l, theme).band1 } : null;
  }

  // Axis ranges: every layer's grid (the contours lie inside their grids).
  const xDomain = axisDomain(spec.x, extent(drawn.map((l) => l.plane.plane.x), spec.x.scale === 'log'), { pad: 0, fromZero: false, tight: true });
  const yDomain = axisDomain(spec.y, extent(drawn.map((l) => l.plane.plane.y), spec.y.scale === 'log'), { pad: 0, fromZero: false, tight: true });
  const roughPlotW = Math.max(1, widthPt * (o.colorMap ? 0.62 : 0.75));
  const roughPlotH = Math.max(1, heightPt * 0.65);
  const x = planAxisTicks(spec.x.scale, xDomain, roughPlotW, t.tick, true, theme.ticks.plainDecades);
  const y = planAxisTicks(spec.y.scale, yDomain, roughPlotH, t.tick, false, theme.ticks.plainDecades);

  let map: PlanePlan['map'] = null;
  if (o.colorMap && first && grid && first.plane.plane.observed) {
    const values = first.plane.plane.observed;
    const positive = extent([values], true);
    if (positive.length) {
      const domain = axisDomain({ scale: 'log', min: null, max: null, label: '' }, positive, { pad: 0, fromZero: false, tight: true });
      const bar = planAxisTicks('log', domain, roughPlotH, t.tick, false, theme.ticks.plainDecades);
      const meta = first.data.meta;
      const title = fill(meta.quantity === 'xsec' ? w.planeLimitXsec : w.planeLimitMu, { cl: shortNumber(meta.cl * 100), unit: meta.quantityUnit });
      map = { grid, values, domain, bar, title };
    }
  }

  const meta = first?.data.meta;
  const massLike = /^(mass\b|m\b|m_|m\(|\$m)/i;
  const xName = meta ? (w.massAxis && massLike.test(meta.parameterName.trim()) ? w.massAxis : meta.parameterName) : '';
  const xTitle = spec.x.label.trim() ? spec.x.label : meta ? fill(meta.parameterUnit ? w.xAxis : w.xAxisNoUnit, { name: xName, unit: meta.parameterUnit }) : '';
  const yp = first?.plane.plane;
  const yTitle = spec.y.label.trim() ? spec.y.label : yp ? fill(yp.yUnit ? w.xAxis : w.xAxisNoUnit, { name: yp.yName, unit: yp.yUnit }) : '';

  const legend: PlanePlan['legend'] = [];
  if (spec.legend.position !== 'none') {
    const several = drawn.length > 1;
    for (const l of drawn) {
      const kinds = new Set(l.lines.map((k) => k.kind));
      const row = (part: string, key: PlaneLegendKey, field: string) =>
        legend.push({ label: several ? fill(w.planeOf, { layer: l.heading, part: lowerFirst(part) }) : part, key, color: l.color, layer: l.index, field });
      const field = several ? `spec.layers.${l.index}.label` : 'spec.legend';
      if (kinds.has('observed')) row(w.planeObserved, 'observed', field);
      if (kinds.has('expected')) row(w.planeExpected, 'expected', field);
      if (kinds.has('expected_minus_1sigma') || kinds.has('expected_plus_1sigma')) row(w.planeBand, 'band', field);
      if (kinds.has('observed_theory_lower') || kinds.has('observed_theory_upper')) row(w.planeTheory, 'theory', field);
    }
    if (o.excludedMark !== 'none' && drawn.some((l) => l.lines.some((k) => k.kind === 'observed'))) {
      legend.push({ label: w.planeExcludedSide, key: o.excludedMark === 'hatch' ? 'excluded-hatch' : 'excluded-shade', color: theme.colors.muted, field: 'spec.plane.excludedMark' });
    }
    if (o.forbidden === 'drawn' && grid && grid.index.some((k) => k < 0)) legend.push({ label: w.planeForbidden, key: 'forbidden', color: PLANE_FORBIDDEN_FILL, field: 'spec.plane.forbidden' });
  }

  const info: PlanePlan['info'] = [];
  const metas = drawn.map((l) => l.data.meta);
  if (spec.energyLabel && metas.length) {
    const energies = [...new Set(metas.map((m) => shortNumber(m.sqrtS)))];
    const lumis = [...new Set(metas.map((m) => shortNumber(m.luminosity)))];
    for (const sqrtS of energies) info.push({ label: lumis.length === 1 ? fill(w.energy, { sqrtS, lumi: lumis[0]! }) : fill(w.energyOnly, { sqrtS }), role: 'energy' });
  }
  if (spec.clLabel && metas.length) info.push({ label: [...new Set(metas.map((m) => shortNumber(m.cl * 100)))].map((cl) => fill(w.cl, { cl })).join(', '), role: 'cl' });
  if (w.planeExplain && drawn.length) info.push({ label: w.planeExplain, role: 'explain' });

  const notes = hidden === 0 ? [] : [hidden === 1 ? w.hiddenOne : fill(w.hiddenMany, { n: hidden })];
  notes.push(...layerNotes);
  return { theme, widthPt, heightPt, options: o, layers: drawn, map, grid, x, y, xTitle, yTitle, info, legend, notes };
}

/** Every label of a plane plan, each once, for batch typesetting. */
export function planeLabels(spec: FigureSpec, plan: PlanePlan): LabelRequest[] {
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
  for (const m of plan.y.major) add(m.label, t.tick);
  for (const m of plan.map?.bar.major ?? []) add(m.label, t.tick);
  add(plan.xTitle, t.axisTitle);
  add(plan.yTitle, t.axisTitle);
  if (plan.map) add(plan.map.title, t.axisTitle);
  for (const i of plan.info) add(i.label, t.annotation);
  for (const e of plan.legend) add(e.label, t.legend);
  for (const a of spec.annotations) add(a.text, t.annotation);
  for (const note of plan.notes) for (const line of [note, ...noteHalves(note)]) add(line, t.note);
  return out;
}

/** Cell edges of grid lines `v`: halfway between neighbours (geometric mean on a log axis), the outer edges on the first and last line. */
function cellEdges(v: readonly number[], log: boolean): number[] {
  const out = [v[0]!];
  for (let i = 1; i < v.length; i++) out.push(log ? Math.sqrt(v[i - 1]! * v[i]!) : (v[i - 1]! + v[i]!) / 2);
  out.push(v[v.length - 1]!);
  return out;
}

/** A polyline's path data (closed lines end in Z). */
function linePath(l: ContourLine, X: (v: number) => number, Y: (v: number) => number): string {
  if (l.points.length < 2) return '';
  return `${l.points.map(([x, y], i) => `${i ? 'L' : 'M'}${n(X(x))},${n(Y(y))}`).join('')}${l.closed ? 'Z' : ''}`;
}

/**
 * Short ticks on the LEFT of a line's direction of travel (its excluded side), every `gap` points
 * along it on the page, `len` long. On the page y grows downwards, so the left of a step (u, v) is
 * (v, −u); both axes grow up and to the right, so the left on the page is the left in the plane.
 */
export function hatchTicks(pts: readonly [number, number][], closed: boolean, gap: number, len: number): string {
  let d = '';
  let next = gap / 2;
  let walked = 0;
  const m = closed ? pts.length : pts.length - 1;
  for (let i = 0; i < m; i++) {
    const [x0, y0] = pts[i]!;
    const [x1, y1] = pts[(i + 1) % pts.length]!;
    const u = x1 - x0;
    const v = y1 - y0;
    const seg = Math.hypot(u, v);
    if (!(seg > 0)) continue;
    while (next <= walked + seg) {
      const f = (next - walked) / seg;
      const px = x0 + f * u;
      const py = y0 + f * v;
      d += `M${n(px)},${n(py)}l${n((v / seg) * len)},${n((-u / seg) * len)}`;
      next += gap;
    }
    walked += seg;
  }
  return d;
}

/**
 * The plane's drawing primitives, back to front: background, colour map (or the grey of cells with
 * no point), excluded shading, grid, each layer's contours (a thin halo in the page colour under
 * each, so they read on the map) and hatch ticks, frame and ticks, tick labels, axis titles, the
 * colour bar with its ticks and title, annotations, the legend row and the energy / CL block.
 */
export function buildPlaneScene(spec: FigureSpec, plan: PlanePlan, measure: Measure): Scene {
  const theme = plan.theme;
  const W = plan.widthPt;
  const H = plan.heightPt;
  const t = theme.type;
  const s = theme.spacing;
  const font = theme.font;
  const { raw, bounded: m, height, side } = pageMeasures(measure, font, W, H);
  const oversize = oversizeCheck(W, H, raw);
  const items: Primitive[] = [{ kind: 'rect', x: 0, y: 0, width: W, height: H, fill: theme.colors.background, stroke: null, strokeWidth: 0, role: 'background' }];
  const text = (x: number, y: number, label: string, size: number, anchor: 'start' | 'middle' | 'end', color: string, role: Extract<Primitive, { kind: 'text' }>['role'], rotate: 0 | -90 = 0) =>
    items.push({ kind: 'text', x, y, label, size, font, anchor, color, rotate, role });
  const path = (d: string, style: { fill?: string | null; stroke?: string | null; width?: number; dash?: number[] | null; opacity?: number; fillRule?: 'evenodd' }, role: string, layer?: number, clip = true) => {
    if (!d) return;
    const p: Primitive = { kind: 'path', d, fill: style.fill ?? null, stroke: style.stroke ?? null, strokeWidth: style.width ?? 0, dash: style.dash ?? null, clip, role, layer };
    if (style.opacity !== undefined) p.opacity = style.opacity;
    if (style.fillRule) p.fillRule = style.fillRule;
    items.push(p);
  };

  // Notes, the legend row(s) and the energy / CL block above the plot.
  const keyW = 1.8 * t.legend;
  const header = layoutHeader({ notes: plan.notes, info: plan.info, legend: plan.legend.map((e) => e.label), keyWidth: keyW }, theme, W, m, noteHalves);
  const top = header.bottom;

  // Margins: y labels and title left, the colour bar right, x labels and title below.
  const tickOut = theme.ticks.direction === 'out' ? theme.ticks.major : 0;
  const xLabels = plan.x.major.map((tk) => m(tk.label, t.tick));
  const yLabels = plan.y.major.map((tk) => m(tk.label, t.tick));
  const xTitle = plan.xTitle ? m(plan.xTitle, t.axisTitle) : null;
  const yTitle = plan.yTitle ? m(plan.yTitle, t.axisTitle) : null;
  const xLabelH = Math.max(0, ...xLabels.map(height));
  const xLabelAscent = Math.max(0, ...xLabels.map((x) => x.ascent));
  const yLabelW = Math.max(0, ...yLabels.map((x) => x.width));
  const map = plan.map;
  const barLabels = map ? map.bar.major.map((tk) => m(tk.label, t.tick)) : [];
  const barTitle = map ? m(map.title, t.axisTitle) : null;
  const barW = map ? Math.max(4, 0.9 * t.legend) : 0;
  const barGap = map ? 1.2 * t.legend : 0;
  const barRight = map ? barGap + barW + s.tickLabel + Math.max(0, ...barLabels.map((x) => x.width)) + (barTitle ? s.title + height(barTitle) : 0) : 0;
  const lastOverhang = xLabels.length ? xLabels[xLabels.length - 1]!.width / 2 : 0;
  const [left, right] = fitMargins(s.edge + (yTitle ? height(yTitle) + s.title : 0) + yLabelW + s.tickLabel + tickOut, s.edge + Math.max(barRight, lastOverhang, theme.lines.frame), W);
  const [, bottom] = fitMargins(top, s.edge + (xTitle ? height(xTitle) + s.title : 0) + xLabelH + s.tickLabel + tickOut, H);
  const plotTop = Math.min(top, H - bottom - 1);
  const plot: Rect = { x: left, y: plotTop, width: Math.max(1, W - left - right), height: Math.max(1, H - plotTop - bottom) };
  const plotRight = plot.x + plot.width;
  const plotBottom = plot.y + plot.height;

  const far = 3 * side;
  const xScale = (plan.x.scale === 'log' ? scaleLog() : scaleLinear()).domain(plan.x.domain).range([plot.x, plotRight]);
  const yScale = (plan.y.scale === 'log' ? scaleLog() : scaleLinear()).domain(plan.y.domain).range([plotBottom, plot.y]);
  const okX = (v: number) => Number.isFinite(v) && (plan.x.scale !== 'log' || v > 0);
  const okY = (v: number) => Number.isFinite(v) && (plan.y.scale !== 'log' || v > 0);
  const X = (v: number) => Math.max(plot.x - far, Math.min(plotRight + far, xScale(v)));
  const Y = (v: number) => Math.max(plot.y - far, Math.min(plotBottom + far, yScale(v)));

  // The colour map and the cells with no point, one path per colour: each row's run of equal
  // cells is one rectangle.
  const grid = plan.grid;
  let holes = '';
  if (grid && grid.xs.every(okX) && grid.ys.every(okY)) {
    const ex = cellEdges(grid.xs, plan.x.scale === 'log').map(X);
    const ey = cellEdges(grid.ys, plan.y.scale === 'log').map(Y);
    const nx = grid.xs.length;
    const levels: string[] = new Array(PLANE_COLOR_LEVELS).fill('');
    const lo = map ? Math.log(map.domain[0]) : 0;
    const span = map ? Math.log(map.domain[1]) - lo || 1 : 1;
    const levelOf = (c: number): number => {
      const k = grid.index[c]!;
      if (k < 0) return -1;
      if (!map) return -2;
      const v = map.values[k]!;
      if (!(v > 0) || !Number.isFinite(v)) return -2;
      return Math.max(0, Math.min(PLANE_COLOR_LEVELS - 1, Math.round(((Math.log(v) - lo) / span) * (PLANE_COLOR_LEVELS - 1))));
    };
    // Each row's runs of equal cells; a run with the same ends and colour as one in the row below
    // continues it upwards, so a smooth map is drawn with about a third fewer rectangles.
    type Run = { i: number; e: number; level: number; j0: number; j1: number; right: number };
    const ny = grid.ys.length;
    const emit = (r: Run) => {
      // Runs reach a hair into a drawn neighbour on the right and above, so no seam of the page
      // colour shows between abutting anti-aliased edges; never into a hole or past the grid.
      const up = r.j1 + 1 < ny && grid.index[(r.j1 + 1) * nx + r.i]! >= 0 && grid.index[(r.j1 + 1) * nx + r.e - 1]! >= 0 ? CELL_OVERLAP : 0;
      const top = ey[r.j1 + 1]! - up;
      const bottom = ey[r.j0]!;
      // Only cells that reach the plot (a fixed axis range may leave some wholly outside it).
      if (ex[r.e]! < plot.x || ex[r.i]! > plotRight || bottom < plot.y || ey[r.j1 + 1]! > plotBottom) return;
      const d = rectPath(ex[r.i]!, top, ex[r.e]! - ex[r.i]! + r.right, bottom - top);
      if (r.level >= 0) levels[r.level] += d;
      else if (r.level === -1) holes += d;
    };
    let open = new Map<number, Run>();
    for (let j = 0; j < ny; j++) {
      const next = new Map<number, Run>();
      let i = 0;
      while (i < nx) {
        const level = levelOf(j * nx + i);
        let e = i + 1;
        while (e < nx && levelOf(j * nx + e) === level) e++;
        const right = e < nx && grid.index[j * nx + e]! >= 0 ? CELL_OVERLAP : 0;
        const key = i * (nx + 1) + e;
        const below = open.get(key);
        if (below && below.level === level && below.right === right) {
          below.j1 = j;
          open.delete(key);
          next.set(key, below);
        } else next.set(key, { i, e, level, j0: j, j1: j, right });
        i = e;
      }
      for (const r of open.values()) emit(r);
      open = next;
    }
    for (const r of open.values()) emit(r);
    levels.forEach((d, k) => path(d, { fill: rampColor(PLANE_SEQUENTIAL, k / (PLANE_COLOR_LEVELS - 1)) }, 'color-map', plan.layers[0]!.index));
  }

  // A light shading of each layer's excluded cells (observed ratio below 1 at the grid point).
  if (plan.options.excludedMark === 'shade') {
    for (const l of plan.layers) {
      if (!l.lines.some((k) => k.kind === 'observed')) continue;
      const g = gridOf(l.plane);
      const p = l.plane.plane;
      if (!g || !p.observed || !g.xs.every(okX) || !g.ys.every(okY)) continue;
      const ex = cellEdges(g.xs, plan.x.scale === 'log').map(X);
      const ey = cellEdges(g.ys, plan.y.scale === 'log').map(Y);
      const xsec = l.data.meta.quantity === 'xsec';
      let d = '';
      for (let j = 0; j < g.ys.length; j++) {
        for (let i = 0; i < g.xs.length; i++) {
          const k = g.index[j * g.xs.length + i]!;
          if (k < 0) continue;
          const ratio = xsec ? p.observed[k]! / (p.theory?.central[k] ?? NaN) : p.observed[k]!;
          if (ratio < 1 && !(ex[i + 1]! < plot.x || ex[i]! > plotRight || ey[j]! < plot.y || ey[j + 1]! > plotBottom)) d += rectPath(ex[i]!, ey[j + 1]!, ex[i + 1]! - ex[i]!, ey[j]! - ey[j + 1]!);
        }
      }
      // Over a colour map a tint of the layer's colour would vanish in the map's own: a veil of the
      // page colour lightens the excluded cells instead.
      path(d, map ? { fill: theme.colors.background, opacity: PLANE_SHADE_OVER_MAP } : { fill: l.color, opacity: 0.18 }, 'excluded', l.index);
    }
  }

  // The bands layer's ±1σ band: one even-odd path of both edges' rings, in its band tint.
  const bandOpacity = map ? PLANE_BAND_OVER_MAP : undefined;
  for (const l of plan.layers) {
    if (!l.band) continue;
    const d = l.band.rings.map((ring) => `${ring.map(([x, y], i) => `${i ? 'L' : 'M'}${n(X(x))},${n(Y(y))}`).join('')}Z`).join('');
    path(d, { fill: l.band.fill, opacity: bandOpacity, fillRule: 'evenodd' }, 'band1', l.index);
  }
  // The cells with no point, over the band: where its edge runs diagonally past a missing corner
  // (marching squares do) the cell's rectangle covers it, in grey or in the page colour.
  if (plan.options.forbidden === 'drawn') path(holes, { fill: PLANE_FORBIDDEN_FILL }, 'forbidden');
  else if (plan.layers.some((l) => l.band)) path(holes, { fill: theme.colors.background }, 'hole-cover');

  if (theme.grid) {
    const d = [
      ...plan.x.major.filter((tk) => okX(tk.value)).map((tk) => `M${n(X(tk.value))},${n(plot.y)}V${n(plotBottom)}`),
      ...plan.y.major.filter((tk) => okY(tk.value)).map((tk) => `M${n(plot.x)},${n(Y(tk.value))}H${n(plotRight)}`),
    ].join('');
    path(d, { stroke: theme.colors.grid, width: theme.lines.grid }, 'grid');
  }

  // Contours, each layer in its colour over a halo in the page colour.
  const style = (kind: PlaneLineKind, color: string): { stroke: string; width: number; dash: number[] | null } => {
    if (kind === 'observed') return { stroke: color, width: theme.lines.observed, dash: null };
    if (kind === 'expected') return { stroke: color, width: theme.lines.expected, dash: theme.dash.expected };
    if (kind === 'expected_minus_1sigma' || kind === 'expected_plus_1sigma') return { stroke: color, width: 0.6 * theme.lines.expected, dash: theme.dash.expected.map((v) => 0.6 * v) };
    return { stroke: color, width: 0.5 * theme.lines.observed, dash: null };
  };
  const hatchLen = 0.45 * t.legend;
  const hatchGap = 0.8 * t.legend;
  for (const l of plan.layers) {
    for (const group of l.lines) {
      // A filled band's edges are the fill's: not drawn again as dashed lines.
      if (l.band && (group.kind === 'expected_minus_1sigma' || group.kind === 'expected_plus_1sigma')) continue;
      const st = style(group.kind, l.color);
      const d = group.lines.map((line) => linePath(line, X, Y)).join('');
      if (!d) continue;
      path(d, { stroke: theme.colors.background, width: st.width + Math.max(0.6, 0.8 * st.width) }, 'halo', l.index);
      path(d, st, group.kind === 'observed' ? 'observed' : group.kind === 'expected' ? 'expected' : group.kind.startsWith('expected') ? 'band1' : 'theory-band', l.index);
      if (group.kind === 'observed' && plan.options.excludedMark === 'hatch') {
        const ticks = group.lines.map((line) => hatchTicks(line.points.map(([x, y]) => [X(x), Y(y)] as [number, number]), line.closed, hatchGap, hatchLen)).join('');
        path(ticks, { stroke: l.color, width: 0.6 * theme.lines.observed }, 'hatch', l.index);
      }
    }
  }

  items.push(...axisPrimitives({ x: plan.x, y: plan.y }, theme, plot, X, Y, okX, okY));

  // Tick labels and axis titles.
  const xBaseline = plotBottom + tickOut + s.tickLabel + xLabelAscent;
  const xSpans = plan.x.major.map((tk, i) => ({ index: i, ordinal: tk.ordinal, from: X(tk.value) - xLabels[i]!.width / 2, to: X(tk.value) + xLabels[i]!.width / 2 }));
  for (const i of thinLabels(xSpans.filter((sp) => okX(plan.x.major[sp.index]!.value)), 0.4 * t.tick)) {
    const tk = plan.x.major[i]!;
    text(X(tk.value), xBaseline, tk.label, t.tick, 'middle', theme.colors.text, 'tick');
  }
  const yRight = plot.x - tickOut - s.tickLabel;
  const ySpans = plan.y.major.map((tk, i) => ({ index: i, ordinal: tk.ordinal, from: -Y(tk.value) - height(yLabels[i]!) / 2, to: -Y(tk.value) + height(yLabels[i]!) / 2 }));
  for (const i of thinLabels(ySpans.filter((sp) => okY(plan.y.major[sp.index]!.value)), 0.2 * t.tick)) {
    const tk = plan.y.major[i]!;
    const lm = yLabels[i]!;
    text(yRight, Y(tk.value) + (lm.ascent - lm.descent) / 2, tk.label, t.tick, 'end', theme.colors.text, 'tick');
  }
  if (xTitle) text(plot.x + plot.width / 2, H - s.edge - xTitle.descent, plan.xTitle, t.axisTitle, 'middle', theme.colors.text, 'axis-title');
  if (yTitle) text(s.edge + yTitle.ascent, plot.y + plot.height / 2, plan.yTitle, t.axisTitle, 'middle', theme.colors.text, 'axis-title', -90);

  // The colour bar: the ramp in its levels, a frame, ticks and labels on its right, the title upright.
  if (map) {
    const bx = plotRight + barGap;
    const bScale = scaleLog().domain(map.domain).range([plotBottom, plot.y]);
    const step = plot.height / PLANE_COLOR_LEVELS;
    for (let k = 0; k < PLANE_COLOR_LEVELS; k++) {
      path(rectPath(bx, plotBottom - (k + 1) * step, barW, step + (k + 1 < PLANE_COLOR_LEVELS ? 0.05 : 0)), { fill: rampColor(PLANE_SEQUENTIAL, k / (PLANE_COLOR_LEVELS - 1)) }, 'color-bar', undefined, false);
    }
    path(rectPath(bx, plot.y, barW, plot.height), { stroke: theme.colors.frame, width: theme.lines.frame }, 'color-bar-frame', undefined, false);
    let ticks = '';
    for (const tk of map.bar.major) ticks += `M${n(bx + barW)},${n(bScale(tk.value))}h${n(-Math.min(barW / 2, theme.ticks.major))}`;
    for (const v of map.bar.minor) ticks += `M${n(bx + barW)},${n(bScale(v))}h${n(-Math.min(barW / 3, theme.ticks.minor))}`;
    path(ticks, { stroke: theme.colors.frame, width: theme.lines.tick }, 'color-bar-tick', undefined, false);
    const bSpans = map.bar.major.map((tk, i) => ({ index: i, ordinal: tk.ordinal, from: -bScale(tk.value) - height(barLabels[i]!) / 2, to: -bScale(tk.value) + height(barLabels[i]!) / 2 }));
    const labelX = bx + barW + s.tickLabel;
    for (const i of thinLabels(bSpans, 0.2 * t.tick)) {
      const tk = map.bar.major[i]!;
      const lm = barLabels[i]!;
      text(labelX, bScale(tk.value) + (lm.ascent - lm.descent) / 2, tk.label, t.tick, 'start', theme.colors.text, 'tick');
    }
    if (barTitle) text(Math.min(W - s.edge - barTitle.descent, labelX + Math.max(0, ...barLabels.map((x) => x.width)) + s.title + barTitle.ascent), plot.y + plot.height / 2, map.title, t.axisTitle, 'middle', theme.colors.text, 'axis-title', -90);
  }

  for (const a of spec.annotations) {
    const am = m(a.text, t.annotation);
    const x = Math.max(plot.x, Math.min(plotRight - am.width, plot.x + a.x * plot.width));
    const yTop = Math.max(plot.y, Math.min(plotBottom - height(am), plot.y + (1 - a.y) * plot.height));
    text(x, yTop + am.ascent, a.text, t.annotation, 'start', theme.colors.text, 'annotation');
  }

  // The header's text, and the legend keys: a sample of each line in its layer's colour.
  items.push(...header.items);
  for (const { index, x, cy, rowH: legendRowH } of header.keys) {
    const e = plan.legend[index]!;
    const kh = 0.6 * legendRowH;
    const key = (d: string, st: { fill?: string | null; stroke?: string | null; width?: number; dash?: number[] | null; opacity?: number }) => path(d, st, 'legend-key', e.layer, false);
    const lineD = `M${n(x)},${n(cy)}H${n(x + keyW)}`;
    if (e.key === 'observed') key(lineD, style('observed', e.color));
    else if (e.key === 'expected') key(lineD, style('expected', e.color));
    else if (e.key === 'band') {
      const filled = plan.layers.find((l) => l.index === e.layer)?.band;
      if (filled) key(rectPath(x, cy - kh / 2, keyW, kh), { fill: filled.fill, opacity: bandOpacity });
      else key(lineD, style('expected_minus_1sigma', e.color));
    }
    else if (e.key === 'theory') key(lineD, style('observed_theory_lower', e.color));
    else if (e.key === 'excluded-hatch') {
      key(lineD, { stroke: e.color, width: theme.lines.observed });
      key(hatchTicks([[x + keyW, cy], [x, cy]], false, hatchGap / 2, kh / 2), { stroke: e.color, width: 0.6 * theme.lines.observed });
    } else if (e.key === 'excluded-shade' && map) {
      // A sample of the map, its right half under the veil: "lighter here".
      key(rectPath(x, cy - kh / 2, keyW, kh), { fill: rampColor(PLANE_SEQUENTIAL, 0.3) });
      key(rectPath(x + keyW / 2, cy - kh / 2, keyW / 2, kh), { fill: theme.colors.background, opacity: PLANE_SHADE_OVER_MAP });
    } else if (e.key === 'excluded-shade') key(rectPath(x, cy - kh / 2, keyW, kh), { fill: e.color, opacity: 0.18 });
    else key(rectPath(x, cy - kh / 2, keyW, kh), { fill: e.color });
  }

  // Labels whose text the figure decides: a box no text could have is refused on saving.
  if (plan.xTitle) oversize.check(plan.xTitle, t.axisTitle, false, 'spec.x.label', spec.x.label.trim() ? 'The x-axis title' : "The automatic x-axis title (from the first layer's result)", 'write a shorter one or choose a larger size');
  if (plan.yTitle) oversize.check(plan.yTitle, t.axisTitle, true, 'spec.y.label', spec.y.label.trim() ? 'The y-axis title' : "The automatic y-axis title (from the first layer's result)", 'write a shorter one or choose a larger size');
  for (const e of plan.legend) if (e.layer !== undefined && spec.layers[e.layer]?.label.trim()) oversize.check(e.label, t.legend, false, `spec.layers.${e.layer}.label`, 'The legend entry', 'give the layer a shorter label or choose a larger size');
  spec.annotations.forEach((a, i) => oversize.check(a.text, t.annotation, false, `spec.annotations.${i}.text`, `Annotation ${i + 1}`, 'shorten it or choose a larger size'));

  return {
    widthPt: W,
    heightPt: H,
    background: theme.colors.background,
    plot,
    // Cell paths lie within the grid's range on the axes, which the axes cover: not parsed again.
    items: items.filter((p) => p.kind !== 'path' || !p.clip || CELL_ROLES.has(p.role) || touches(pathBounds(p.d), plot, p.strokeWidth + hatchLen)),
    legendCorner: plan.legend.length ? 'top-left' : 'none',
    notes: [...plan.notes],
    oversizeLabels: oversize.found,
  };
}
