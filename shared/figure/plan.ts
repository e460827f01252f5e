/**
 * The measurement-free half of the scene builder: which layers are drawn and in which colours,
 * the axis ranges and ticks, and every label's text. `collectLabels` lists these labels for batch
 * typesetting; `buildScene` lays them out with the measured sizes.
 */
import { bandsLayersOf, figureSizeCm, isPlaneKind, type FigureKind, type FigureSpec, type LayerSpec } from '../schemas/figures';
import type { EnvelopeSources } from '../schemas/combine';
import type { Curve, Theory, VersionMeta } from '../schemas/results';
import { tint } from './color';
import { layerColor, type ResolvedTheme } from './theme';
import { LEGEND_CORNERS, type Corner } from './legend';
import { roomForBoxes, roughInfoSize, roughLegendSize, roughWidth } from './room';
import { axisDomain, axisUnit, planAxisTicks, type AxisPlan } from './ticks';
import { conversionTo, convertCurve, convertTheory, describeConversion, isIdentity, parameterConversionTo, type LimitUnits, type UnitConversion } from '../units';
import type { ContourLine } from '../plane/contours';
import type { FigureLayerData, LabelRequest, PlaneLayerData } from './types';

/** Layer data the viewer may see. */
export type AvailableLayer = Extract<FigureLayerData, { available: true }>;

/** A layer that is drawn: its spec, data, legend name and colour. */
export type DrawnLayer = {
  /** Index in `spec.layers`. */
  index: number;
  spec: LayerSpec;
  data: AvailableLayer;
  name: string;
  /** The name in the legend: with the layer's luminosity when the layers' luminosities differ. */
  heading: string;
  color: string;
  /** Dash pattern of the observed line (null = solid), from the layer's `lineStyle`. */
  dash: number[] | null;
  /** Which expected bands this layer draws (only layers in `bandsLayers` draw any). */
  band1: boolean;
  band2: boolean;
  theory: Theory | null;
  /**
   * An envelope layer drawn by input: each stretch of x where the envelope takes one input, with
   * that input's title and colour (null: the observed line in the layer's colour).
   */
  sources: { input: number; title: string; color: string; from: number; to: number }[] | null;
};

/** A distinct theory curve (layers sharing the same prediction draw it once). */
export type TheoryLine = {
  theory: Theory;
  layer: number;
  label: string;
  dash: number[];
  band: boolean;
  /** The spec field that names it: a layer's `theoryLabel`, or else what turns it on. */
  field: string;
};

/** What a legend entry shows before its label: a line sample or a filled swatch (with a line on it). */
export type LegendKey =
  | { kind: 'line'; color: string; width: number; dash: number[] | null }
  | { kind: 'fill'; color: string; line?: { color: string; width: number; dash: number[] | null } };
/**
 * One legend row. `field` names the part of the spec that decides its text (a layer's label, or
 * what turns the row on), for the error when a label is larger than the page.
 */
export type LegendEntry = { label: string; key: LegendKey; layer?: number; field: string };

/** A figure before layout: layers, axes and every label's text (see `planFigure`). */
export type FigurePlan = {
  theme: ResolvedTheme;
  widthPt: number;
  heightPt: number;
  layers: DrawnLayer[];
  hidden: number;
  theories: TheoryLine[];
  x: AxisPlan;
  y: AxisPlan;
  xTitle: string;
  yTitle: string;
  /** Lines of the energy / confidence-level block (and the plain-language explanation), top to bottom. */
  info: { label: string; role: 'energy' | 'cl' | 'explain' }[];
  legend: LegendEntry[];
  /** The legend's columns: the spec's, or one when two would not fit inside the plot. */
  legendColumns: 1 | 2;
  notes: string[];
  /** The layer whose observed limit is compared with its theory for the shading, if any. */
  shadingLayer: DrawnLayer | null;
};

const CM_TO_PT = 72 / 2.54;

/**
 * The page size of a spec in points (1 cm = 72/2.54 pt), from `figureSizeCm`. Sizes that are not
 * finite or below the schema's minimum are raised to it, so no layout ever divides by zero.
 */
export function sizePt(spec: Pick<FigureSpec, 'size'>): { widthPt: number; heightPt: number } {
  let cm: { widthCm: number; heightCm: number };
  try {
    cm = figureSizeCm(spec);
  } catch {
    cm = { widthCm: 3, heightCm: 3 };
  }
  const guard = (v: number) => (Number.isFinite(v) && v >= 3 ? v : 3);
  const r = (v: number) => Math.round(v * CM_TO_PT * 1000) / 1000;
  return { widthPt: r(guard(cm.widthCm)), heightPt: r(guard(cm.heightCm)) };
}

/** Fills `{key}` placeholders. */
export function fill(template: string, values: Record<string, string | number>): string {
  return template.replace(/\{(\w+)\}/g, (m, k: string) => (k in values ? String(values[k]) : m));
}

/** A number for a label: up to four significant digits, no exponent noise. */
export function shortNumber(v: number): string {
  return String(Number(v.toPrecision(4)));
}

/**
 * How a layer's units go onto the axes the first layer sets: a limit plot converts both axes
 * (and refuses μ with σ×B); a summary of excluded ranges shares only the parameter axis, each bar
 * comparing its result with its own theory. The one rule for the scene and for saving a figure.
 */
export function layerConversion(kind: FigureKind, from: LimitUnits & { yUnit?: string }, to: LimitUnits & { yUnit?: string }): UnitConversion {
  if (kind === 'plane') {
    // Contours are where a ratio is 1, in no unit: only the two parameter axes must agree (the
    // colour map is the first layer's own). The second parameter's unit is free text: equal or refused.
    const fy = (from.yUnit ?? '').trim();
    const ty = (to.yUnit ?? '').trim();
    if (fy !== ty) return { ok: false, reason: `its second parameter is in ${fy || 'no unit'}, the figure's in ${ty || 'no unit'}` };
    return parameterConversionTo(from, to);
  }
  return kind === 'ranges' ? parameterConversionTo(from, to) : conversionTo(from, to);
}

/**
 * How many parameters the results a figure of this kind draws are over: a plane figure two, the
 * other kinds one. The one rule behind `layerKindProblem` (saving, drawing) and the composer's
 * layer picker (which lists only results of this sort, `?parameters=`).
 */
export function layerParameters(kind: FigureKind): 1 | 2 {
  return isPlaneKind(kind) ? 2 : 1;
}

/**
 * Why a layer cannot go on a figure of this kind, or null: a plane figure draws results over two
 * parameters only, the other kinds one-parameter results only. The one rule for saving
 * (`spec.layers.N`), for drawing stored figures (the layer is left out with a note) and for the
 * composer (beside a layer that no longer fits after the kind changed).
 */
export function layerKindProblem(kind: FigureKind, twoParameter: boolean): string | null {
  if (layerParameters(kind) === (twoParameter ? 2 : 1)) return null;
  if (kind === 'plane') return 'it is a result over one parameter: a figure of a two-parameter plane draws results over two parameters only';
  return `it is a result over two parameters: a ${kind === 'ranges' ? 'summary of excluded ranges' : 'figure of limit curves'} cannot draw it`;
}

/**
 * What the layer picker says of the results it leaves out for this kind (`count` of them, of the
 * other sort than `layerParameters(kind)`), or null when none is left out.
 */
export function layerPickerNote(kind: FigureKind, count: number): string | null {
  if (count <= 0) return null;
  const what = layerParameters(kind) === 2 ? (count === 1 ? 'one-parameter result is' : 'one-parameter results are') : count === 1 ? 'two-parameter result is' : 'two-parameter results are';
  const why = kind === 'plane' ? 'a plane figure draws results over two parameters' : kind === 'ranges' ? 'a summary of excluded ranges draws curves' : 'a limit plot draws curves';
  return `${count} ${what} not shown: ${why}.`;
}

/** A layer left out because its units cannot go on the figure's axes, or drawn after converting them. */
export type UnitNote = { index: number; name: string; text: string };

/**
 * The drawn layers of a spec: available ones only, with their colours and band choices. The first
 * available layer sets the axes' units; every other layer is converted to them (GeV/TeV/MeV,
 * ab/fb/pb: `conversionTo` in shared/units.ts) or, when its units do not convert (μ against σ×B,
 * unrelated parameter units), left out with a note naming it.
 */
export function drawnLayers(
  spec: FigureSpec,
  layers: readonly FigureLayerData[],
  theme: ResolvedTheme,
): { drawn: DrawnLayer[]; hidden: number; unitNotes: UnitNote[]; refused: UnitNote[] } {
  const drawn: DrawnLayer[] = [];
  const unitNotes: UnitNote[] = [];
  const refused: UnitNote[] = [];
  let hidden = 0;
  let axisUnits: (LimitUnits & { yUnit?: string }) | null = null;
  const bandLayers = new Set(bandsLayersOf(spec));
  spec.layers.forEach((ls, i) => {
    const d = layers[i];
    let data = d && d.available === true ? d : null;
    if (!data) {
      hidden++;
      return;
    }
    const name = ls.label.trim() || data.title;
    const kindProblem = layerKindProblem(spec.kind, !!data.plane);
    if (kindProblem) {
      refused.push({ index: i, name, text: fill(theme.words.unitsRefused, { layer: name, reason: kindProblem }) });
      return;
    }
    let xFactor = 1;
    const units = { parameterUnit: data.meta.parameterUnit, quantity: data.meta.quantity, quantityUnit: data.meta.quantityUnit, yUnit: data.plane?.plane.yUnit };
    if (!axisUnits) axisUnits = units;
    else {
      const c = layerConversion(spec.kind, units, axisUnits);
      if (!c.ok) {
        refused.push({ index: i, name, text: fill(theme.words.unitsRefused, { layer: name, reason: c.reason }) });
        return;
      }
      if (!isIdentity(c)) {
        xFactor = c.x;
        const target = spec.kind === 'ranges' ? { ...axisUnits, quantity: units.quantity, quantityUnit: units.quantityUnit } : axisUnits;
        unitNotes.push({ index: i, name, text: fill(theme.words.unitsConverted, { layer: name, change: describeConversion(units, target) }) });
        data = {
          ...data,
          curve: convertCurve(data.curve, c),
          theory: data.theory ? convertTheory(data.theory, c) : data.theory,
          plane: data.plane ? convertPlaneX(data.plane, c.x) : data.plane,
          meta: { ...data.meta, parameterUnit: target.parameterUnit, quantityUnit: target.quantityUnit as typeof data.meta.quantityUnit },
        };
      }
    }
    const isBands = bandLayers.has(i);
    const style = ls.lineStyle ?? 'solid';
    const color = ls.color ? ls.color.toLowerCase() : layerColor(theme, ls.hue ?? data.hue);
    drawn.push({
      index: i,
      spec: ls,
      data,
      name,
      heading: name,
      color,
      dash: style === 'solid' ? null : (theme.dash.observed[style] ?? null),
      band1: isBands && ls.show.band1,
      band2: isBands && ls.show.band2 && theme.maxBands >= 2,
      theory: ls.show.theory && data.theory ? data.theory : null,
      sources: ls.observedColors === 'input' && data.sources?.segments.length ? sourceStretches(data.sources, color, theme, xFactor) : null,
    });
  });
  // Layers of one energy with different luminosities: each names its own in the legend.
  const ambiguous = ambiguousEnergies(drawn.map((l) => l.data.meta));
  for (const l of drawn) {
    const lumi = shortNumber(l.data.meta.luminosity);
    // A name that already says its luminosity ("2031, 140 fb$^{-1}$") is not told it twice.
    const says = new RegExp(`(^|[^\\d.])${lumi.replace('.', '\\.')}\\s*(fb|/fb)`).test(l.name);
    if (ambiguous.has(shortNumber(l.data.meta.sqrtS)) && !says) l.heading = fill(theme.words.layerLumi, { layer: l.name, lumi });
  }
  return { drawn, hidden, unitNotes, refused };
}

/** A plane layer's points and contours with the first parameter multiplied by `f` (a unit change). */
function convertPlaneX(p: PlaneLayerData, f: number): PlaneLayerData {
  if (f === 1) return p;
  const lines = (ls: ContourLine[] | undefined) => ls?.map((l) => ({ ...l, points: l.points.map(([x, y]) => [x * f, y] as [number, number]) }));
  const c = p.contours;
  return {
    plane: { ...p.plane, x: p.plane.x.map((x) => x * f) },
    contours: {
      ...c,
      observed: lines(c.observed),
      expected: Object.fromEntries(Object.entries(c.expected).map(([k, v]) => [k, lines(v)])),
      observedTheoryLower: lines(c.observedTheoryLower),
      observedTheoryUpper: lines(c.observedTheoryUpper),
    },
  };
}

/** Energies (as written) whose layers differ in luminosity. */
function ambiguousEnergies(metas: readonly VersionMeta[]): Set<string> {
  const byEnergy = new Map<string, Set<string>>();
  for (const m of metas) {
    const e = shortNumber(m.sqrtS);
    byEnergy.set(e, (byEnergy.get(e) ?? new Set()).add(shortNumber(m.luminosity)));
  }
  return new Set([...byEnergy.entries()].filter(([, lumis]) => lumis.size > 1).map(([e]) => e));
}

/**
 * Every (x, y) point a layer shows, for the axis range and the legend's room. Theory points
 * outside the x range do not count: a prediction often runs wider than the scan and would
 * stretch the axis for nothing.
 */
function shownPoints(l: DrawnLayer, xDomain: [number, number]): [number, number][] {
  const c: Curve = l.data.curve;
  const out: [number, number][] = [];
  const push = (xs: readonly number[], vs: readonly number[] | undefined) => {
    if (!vs) return;
    for (let i = 0; i < Math.min(xs.length, vs.length); i++) if (xs[i]! >= xDomain[0] && xs[i]! <= xDomain[1]) out.push([xs[i]!, vs[i]!]);
  };
  if (l.spec.show.observed) push(c.x, c.observed);
  if (l.spec.show.expected) push(c.x, c.expected?.['0']);
  if (l.band1) {
    push(c.x, c.expected?.['-1']);
    push(c.x, c.expected?.['1']);
  }
  if (l.band2) {
    push(c.x, c.expected?.['-2']);
    push(c.x, c.expected?.['2']);
  }
  if (l.theory) {
    push(l.theory.x, l.theory.central);
    if (l.spec.show.theoryBand) {
      push(l.theory.x, l.theory.lower);
      push(l.theory.x, l.theory.upper);
    }
  }
  return out;
}

const MASS_LIKE = /^(mass\b|m\b|m_|m\(|\$m)/i;

function xTitle(spec: FigureSpec, drawn: DrawnLayer[], theme: ResolvedTheme): string {
  if (spec.x.label.trim()) return spec.x.label;
  const meta = drawn[0]?.data.meta;
  if (!meta) return '';
  const w = theme.words;
  const name = w.massAxis && MASS_LIKE.test(meta.parameterName.trim()) ? w.massAxis : meta.parameterName;
  return fill(meta.parameterUnit ? w.xAxis : w.xAxisNoUnit, { name, unit: meta.parameterUnit });
}

function yTitle(spec: FigureSpec, drawn: DrawnLayer[], theme: ResolvedTheme): string {
  if (spec.y.label.trim()) return spec.y.label;
  const meta = drawn[0]?.data.meta;
  if (!meta) return '';
  return meta.quantity === 'xsec' ? fill(theme.words.yXsec, { unit: meta.quantityUnit }) : theme.words.yMu;
}

/** Distinct values in first-seen order. */
function distinct<T>(xs: T[]): T[] {
  return [...new Set(xs)];
}

/**
 * "√s = 18 TeV, 140 fb⁻¹" lines, one per energy. Luminosities are never joined ("140, 60 fb⁻¹"
 * would not say which is whose): an energy whose layers differ in luminosity is written alone and
 * each layer's luminosity goes into its legend entry (`layerLumi`).
 */
function energyLines(metas: VersionMeta[], theme: ResolvedTheme): string[] {
  const ambiguous = ambiguousEnergies(metas);
  const lines = new Map<string, string>();
  for (const m of metas) {
    const sqrtS = shortNumber(m.sqrtS);
    if (lines.has(sqrtS)) continue;
    lines.set(sqrtS, ambiguous.has(sqrtS) ? fill(theme.words.energyOnly, { sqrtS }) : fill(theme.words.energy, { sqrtS, lumi: shortNumber(m.luminosity) }));
  }
  return [...lines.values()];
}

function theoryLines(drawn: DrawnLayer[], theme: ResolvedTheme): TheoryLine[] {
  const out: TheoryLine[] = [];
  const seen = new Map<string, TheoryLine>();
  for (const l of drawn) {
    if (!l.theory) continue;
    const key = JSON.stringify([l.theory.x, l.theory.central]);
    const own = l.spec.theoryLabel?.trim() ?? '';
    const shared = seen.get(key);
    if (shared) {
      // One curve, one legend row: the first layer that names it names it.
      if (own && !shared.field.endsWith('.theoryLabel')) Object.assign(shared, { label: own, field: `spec.layers.${l.index}.theoryLabel` });
      continue;
    }
    const dash = theme.dash.theory[out.length % theme.dash.theory.length] ?? null;
    const t: TheoryLine = {
      theory: l.theory,
      layer: l.index,
      label: own || l.theory.label?.trim() || theme.words.theory,
      dash: dash ?? [],
      band: l.spec.show.theoryBand && !!l.theory.lower && !!l.theory.upper,
      field: own ? `spec.layers.${l.index}.theoryLabel` : `spec.layers.${l.index}.show.theory`,
    };
    seen.set(key, t);
    out.push(t);
  }
  // Several predictions with the generic word would read alike: name their layer.
  if (out.length > 1) for (const t of out) if (t.label === theme.words.theory) t.label = `${drawn.find((l) => l.index === t.layer)?.name ?? ''}: ${t.label}`;
  return out;
}

/** Whether a layer has a usable observed curve and theory to compare (for shading and crossings). */
export function canCompare(l: DrawnLayer): boolean {
  return !!l.data.curve.observed && !!l.data.theory;
}

/**
 * The stretches of an envelope layer, each in the colour of its input: the theme's palette in
 * order, skipping the layer's own colour (so the first input does not look like the layer), with
 * x in the axis units.
 */
function sourceStretches(sources: EnvelopeSources, layerColour: string, theme: ResolvedTheme, xFactor: number): NonNullable<DrawnLayer['sources']> {
  const palette = theme.palette.filter((c) => c !== layerColour);
  const colours = palette.length ? palette : theme.palette;
  return sources.segments.map((s) => ({ input: s.input, title: sources.titles[s.input] ?? `input ${s.input + 1}`, color: colours[s.input % colours.length]!, from: s.from * xFactor, to: s.to * xFactor }));
}

function legendEntries(spec: FigureSpec, plan: Pick<FigurePlan, 'theme' | 'layers' | 'theories' | 'shadingLayer'>): LegendEntry[] {
  if (spec.legend.position === 'none') return [];
  const { theme } = plan;
  const w = theme.words;
  const prefixed = plan.layers.length > 1 || plan.layers.some((l) => l.spec.label.trim() !== '');
  const out: LegendEntry[] = [];
  for (const l of plan.layers) {
    const c = l.data.curve;
    const field = `spec.layers.${l.index}.label`;
    // Each part in three wordings: alone (one unnamed layer), after the layer's name (the first
    // part of a named layer), or short beneath that row (the name is written once per layer).
    const parts: { plain: string; of: string; part: string; key: LegendKey }[] = [];
    if (l.spec.show.observed && c.observed && l.sources) {
      // One row per input the envelope takes somewhere: "observed, from <input>".
      for (const src of [...new Map(l.sources.map((x) => [x.input, x])).values()].sort((a, b) => a.input - b.input)) {
        const from = fill(w.fromInput, { input: src.title });
        parts.push({ plain: `${w.observed}, ${from}`, of: `${fill(w.observedOf, { layer: l.heading })}, ${from}`, part: `${w.observedPart}, ${from}`, key: { kind: 'line', color: src.color, width: theme.lines.observed, dash: l.dash } });
      }
    } else if (l.spec.show.observed && c.observed) parts.push({ plain: w.observed, of: w.observedOf, part: w.observedPart, key: { kind: 'line', color: l.color, width: theme.lines.observed, dash: l.dash } });
    if (l.spec.show.expected && c.expected?.['0']) parts.push({ plain: w.expected, of: w.expectedOf, part: w.expectedPart, key: { kind: 'line', color: l.color, width: theme.lines.expected, dash: theme.dash.expected } });
    const bands = bandColors(l, theme);
    if (l.band1 && c.expected?.['-1'] && c.expected['1']) parts.push({ plain: w.band1, of: w.band1Of, part: w.band1Part, key: { kind: 'fill', color: bands.band1 } });
    if (l.band2 && c.expected?.['-2'] && c.expected['2']) parts.push({ plain: w.band2, of: w.band2Of, part: w.band2Part, key: { kind: 'fill', color: bands.band2 } });
    if (!prefixed) for (const p of parts) out.push({ label: p.plain, key: p.key, layer: l.index, field });
    else parts.forEach((p, k) => out.push({ label: k === 0 ? fill(p.of, { layer: l.heading }) : p.part, key: p.key, layer: l.index, field }));
  }
  for (const t of plan.theories) {
    const line = { color: theme.colors.theory, width: theme.lines.theory, dash: t.dash.length ? t.dash : null };
    // The name comes from a layer's `theoryLabel`, else the result (or the theme).
    out.push({ label: t.label, key: t.band ? { kind: 'fill', color: theme.colors.theoryBand, line } : { kind: 'line', ...line }, layer: t.layer, field: t.field });
  }
  if (plan.shadingLayer) out.push({ label: w.excluded, key: { kind: 'fill', color: theme.colors.excluded }, field: 'spec.excludedShading' });
  return out;
}


/** The two band fills of a layer: light tints of its colour. */
export function bandColors(l: DrawnLayer, theme: ResolvedTheme): { band1: string; band2: string } {
  return { band1: tint(l.color, theme.bandTint.band1), band2: tint(l.color, theme.bandTint.band2) };
}

/**
 * Rough plot size before any text is measured: the tick count needs an axis length, and it must
 * not depend on measured text (the labels are typeset before the layout).
 */
function estimatedPlotSize(theme: ResolvedTheme, w: number, h: number): { width: number; height: number } {
  const t = theme.type;
  const s = theme.spacing;
  const left = 2 * s.edge + 1.3 * t.axisTitle + s.title + 2.5 * t.tick + s.tickLabel;
  const bottom = 2 * s.edge + 1.3 * t.axisTitle + s.title + 1.3 * t.tick + s.tickLabel;
  return { width: Math.max(1, w - left - s.edge - t.tick), height: Math.max(1, h - bottom - s.edge - t.tick) };
}

/** Everything about a figure that does not need measured text. */
export function planFigure(spec: FigureSpec, layers: readonly FigureLayerData[], theme: ResolvedTheme): FigurePlan {
  const { widthPt, heightPt } = sizePt(spec);
  const { drawn, hidden, unitNotes, refused } = drawnLayers(spec, layers, theme);
  const xScale = spec.x.scale === 'log' ? 'log' : 'linear';
  const yScale = spec.y.scale === 'log' ? 'log' : 'linear';

  const metas = drawn.map((l) => l.data.meta);
  const info: FigurePlan['info'] = [];
  if (spec.energyLabel) for (const line of energyLines(metas, theme)) info.push({ label: line, role: 'energy' });
  if (spec.clLabel && metas.length) {
    const cls = distinct(metas.map((m) => shortNumber(m.cl * 100)));
    info.push({ label: cls.map((cl) => fill(theme.words.cl, { cl })).join(', '), role: 'cl' });
  }
  const shadingLayer = spec.excludedShading ? (drawn.find(canCompare) ?? null) : null;
  // Plain-language themes say in one line what the limit curves mean.
  if (theme.words.explainLimit && drawn.some((l) => l.spec.show.observed && l.data.curve.observed)) info.push({ label: theme.words.explainLimit, role: 'explain' });
  const theories = theoryLines(drawn, theme);
  const legend = legendEntries(spec, { theme, layers: drawn, theories, shadingLayer });

  let xs = drawn.flatMap((l) => l.data.curve.x);
  if (xs.length === 0) xs = drawn.flatMap((l) => l.theory?.x ?? []);
  // Ranges end on the data or on a round value just outside it (`tight`), without padding.
  const xDomain = axisDomain(spec.x, xs, { pad: 0, fromZero: false, tight: true });
  const points = drawn.flatMap((l) => shownPoints(l, xDomain));
  const ys = points.map((p) => p[1]);
  const yOpts = { pad: 0, fromZero: true, tight: true };
  const base = axisDomain(spec.y, ys, yOpts);
  const est = estimatedPlotSize(theme, widthPt, heightPt);

  // Stretch the y range so the legend (and the energy block) get a corner free of data.
  const [x0, x1] = xDomain.map((v) => axisUnit(xScale, v)) as [number, number];
  const roomPts = points
    .filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y) && (xScale === 'linear' || x > 0) && (yScale === 'linear' || y > 0))
    .map(([x, y]) => ({ fx: (axisUnit(xScale, x) - x0) / (x1 - x0 || 1), u: axisUnit(yScale, y) }));
  const position = spec.legend.position;
  const corners: Corner[] = position === 'none' ? [] : position === 'auto' ? LEGEND_CORNERS : [position];
  // Two columns wider than the plot would run over its frame: one column then (the scene checks
  // again with measured text).
  const inset = theme.spacing.legendInset;
  const legendColumns: 1 | 2 = spec.legend.columns === 2 && roughLegendSize(legend, theme, 2).w > est.width - 2 * inset ? 1 : spec.legend.columns;
  const reach = roomForBoxes({
    pts: roomPts,
    domain: base.map((v) => axisUnit(yScale, v)) as [number, number],
    movable: { low: spec.y.min === null && (yScale === 'log' || base[0] < 0), high: spec.y.max === null },
    plot: est,
    inset: theme.spacing.legendInset,
    legend: legend.length && corners.length ? { ...roughLegendSize(legend, theme, legendColumns), corners } : null,
    info: info.length ? roughInfoSize(info.map((i) => i.label), theme) : null,
    annotations: spec.annotations.map((n) => ({ fx: n.x, fy: 1 - n.y, fw: roughWidth(n.text, theme.type.annotation) / est.width, fh: (1.05 * theme.type.annotation) / est.height })),
  });
  const yDomain = axisDomain(spec.y, ys, { ...yOpts, reach: { low: reach[0], high: reach[1] } });

  const x = planAxisTicks(xScale, xDomain, est.width, theme.type.tick, true, theme.ticks.plainDecades);
  const y = planAxisTicks(yScale, yDomain, est.height, theme.type.tick, false, theme.ticks.plainDecades);
  const notes = hidden === 0 ? [] : [hidden === 1 ? theme.words.hiddenOne : fill(theme.words.hiddenMany, { n: hidden })];
  for (const n of [...refused, ...unitNotes]) notes.push(n.text);
  return { theme, widthPt, heightPt, layers: drawn, hidden, theories, x, y, xTitle: xTitle(spec, drawn, theme), yTitle: yTitle(spec, drawn, theme), info, legend, legendColumns, notes, shadingLayer };
}

/** Every label of a plan with its size and font, in drawing order, without repeats. */
export function planLabels(spec: FigureSpec, plan: FigurePlan): LabelRequest[] {
  const { theme } = plan;
  const t = theme.type;
  const font = theme.font;
  const out: LabelRequest[] = [];
  const seen = new Set<string>();
  const add = (label: string, size: number) => {
    if (!label) return;
    const key = `${size}|${label}`;
    if (seen.has(key)) return;
    seen.add(key);
    out.push({ label, size, font });
  };
  for (const m of plan.x.major) add(m.label, t.tick);
  for (const m of plan.y.major) add(m.label, t.tick);
  add(plan.xTitle, t.axisTitle);
  add(plan.yTitle, t.axisTitle);
  for (const i of plan.info) add(i.label, t.annotation);
  for (const a of spec.annotations) add(a.text, t.annotation);
  for (const e of plan.legend) add(e.label, t.legend);
  for (const n of plan.notes) for (const line of [n, ...noteHalves(n)]) add(line, t.note);
  return out;
}

/**
 * A note too wide for its page (large type on a small page) is drawn on two lines, broken after its
 * first colon, or else at the space nearest the middle; both halves are typeset with the rest.
 */
export function noteHalves(note: string): string[] {
  const colon = note.indexOf(': ');
  if (colon > 0) return [note.slice(0, colon + 1), note.slice(colon + 2)];
  const spaces = [...note.matchAll(/ /g)].map((x) => x.index!);
  if (spaces.length === 0) return [];
  const mid = spaces.reduce((best, i) => (Math.abs(i - note.length / 2) < Math.abs(best - note.length / 2) ? i : best));
  return [note.slice(0, mid), note.slice(mid + 1)];
}
