/**
 * The pure part of the quick plot: domains, scales, ticks and SVG path strings for a limit curve
 * with its expected bands and a theory curve. No React here, so it is tested on numbers. Decades
 * are found and written with the figure scene's helpers (shared/figure/ticks.ts), so the quick
 * plot and the figures agree on which decades are written out.
 */
import { scaleLinear, scaleLog } from 'd3-scale';
import { area, line } from 'd3-shape';
import { decade, decadeRange, formatDecade, isPlainDecade, MINUS, roundMultiples, thinLabels } from '@/shared/figure/ticks';
import type { ExpectedKey } from '@/shared/schemas/counting-model';

export type PlotCurve = {
  x: number[];
  observed?: number[];
  expected?: Partial<Record<ExpectedKey, number[]>>;
};
export type PlotTheory = { x: number[]; central: number[]; lower?: number[]; upper?: number[] } | null | undefined;

export type Margin = { top: number; right: number; bottom: number; left: number };
/** A tick: its value, label ('' for an unlabelled mark), position and, when moved to stay inside the drawing, its label's. */
export type Tick = { value: number; label: string; pos: number; labelPos?: number };

export type PlotPaths = {
  band2?: string;
  band1?: string;
  theoryBand?: string;
  expected?: string;
  observed?: string;
  theory?: string;
};

export type QuickPlotGeometry = {
  width: number;
  height: number;
  /** The drawing area inside the axes. */
  area: { x: number; y: number; width: number; height: number };
  logY: boolean;
  xDomain: [number, number];
  yDomain: [number, number];
  xTicks: Tick[];
  yTicks: Tick[];
  paths: PlotPaths;
  /** Screen position of a data point, for callers that draw markers. */
  toScreen: (x: number, y: number) => [number, number];
};

export const DEFAULT_MARGIN: Margin = { top: 12, right: 16, bottom: 44, left: 56 };
/** Below this size there is nothing legible to draw. */
export const MIN_PLOT_SIZE = { width: 120, height: 90 };

const finite = (v: number | undefined): v is number => typeof v === 'number' && Number.isFinite(v);

/** Every limit and theory value of the plot, finite ones only. */
export function plotValues(curve: PlotCurve, theory?: PlotTheory): number[] {
  const out: number[] = [];
  const push = (vs: number[] | undefined) => vs?.forEach((v) => finite(v) && out.push(v));
  push(curve.observed);
  for (const vs of Object.values(curve.expected ?? {})) push(vs);
  if (theory) {
    push(theory.central);
    push(theory.lower);
    push(theory.upper);
  }
  return out;
}

/** [min, max] of the finite values, or null when there are none. */
export function extent(values: number[]): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (!finite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : null;
}

/** Limits span decades, so the y axis is logarithmic whenever every value allows it. */
export function wantsLogY(values: number[]): boolean {
  return values.length > 0 && values.every((v) => v > 0);
}

/** A log domain widened to whole decades around [min, max] (min > 0). */
export function logDomain(min: number, max: number): [number, number] {
  let lo = Math.floor(Math.log10(min));
  let hi = Math.ceil(Math.log10(max));
  if (hi === lo) hi = lo + 1;
  if (hi - lo < 1) lo = hi - 1;
  return [10 ** lo, 10 ** hi];
}

/**
 * Ticks of a log axis: the decades inside [lo, hi]; when fewer than three of them are inside, the
 * 2× and 5× multiples are added so the axis still reads. (Denser than a figure's `logTicks`, which
 * adds them below two decades: the quick plot is small and has no minor ticks.)
 */
export function logTicks(lo: number, hi: number): number[] {
  const [k0, k1] = decadeRange(lo, hi);
  const decades: number[] = [];
  for (let k = k0; k <= k1; k++) decades.push(decade(k));
  if (decades.length >= 3) return decades;
  return roundMultiples([lo, hi], k0 - 1, k1, [1, 2, 5]);
}

/** A tick label: decades from 0.001 to 10000 written out (`isPlainDecade`), beyond that as powers of ten ("10⁻⁴"). */
export function formatTick(v: number): string {
  if (v === 0) return '0';
  const k = Math.log10(Math.abs(v));
  if (Math.abs(k - Math.round(k)) < 1e-9 && !isPlainDecade(k)) return `${v < 0 ? MINUS : ''}${formatDecade(Math.round(k), false, 'unicode')}`;
  const s = Math.abs(v) >= 1e5 || Math.abs(v) < 1e-3 ? v.toExponential(1) : String(Number(v.toPrecision(6)));
  return s.replace('-', MINUS);
}

function xTickCount(width: number): number {
  return Math.max(2, Math.min(10, Math.floor(width / 80)));
}

/** Tick labels' type size (px) and tick mark length, shared by every quick plot's axes. */
export const TICK_FONT_SIZE = 11;
export const TICK_LENGTH = 4;

/**
 * A tick label's estimated width in px: Inter's digits and the minus sign are ≈ 0.6 em wide (the
 * point and comma narrower, so this errs on the wide side). Estimated, not measured, so the
 * geometry stays pure; it only decides which labels are left out and how wide a margin is.
 */
export const tickLabelWidth = (label: string, size = TICK_FONT_SIZE) => Math.ceil(label.length * size * 0.6);

/**
 * Round ticks of a linear axis over `domain`, drawn from pixel `from` (at domain[0]) to `to`:
 * d3's `ticks()` — about one every 80 px across, 40 px up — labelled with `formatTick`. Labels
 * that would overlap (estimated widths across, the type size up, with a gap) are left empty, every
 * k-th kept so the kept ones stay round (`thinLabels`); the marks stay. Across, a label is kept
 * inside `[bounds[0], bounds[1]]` (the drawing's edges) by moving its anchor (`labelPos`).
 */
export function linearAxisTicks(domain: [number, number], from: number, to: number, opts: { horizontal: boolean; bounds?: [number, number]; count?: number }): Tick[] {
  const length = Math.abs(to - from);
  const count = opts.count ?? Math.max(2, Math.min(10, Math.floor(length / (opts.horizontal ? 80 : 40))));
  const s = scaleLinear().domain(domain).range([from, to]);
  const values = s.ticks(count);
  if (!values.length) return [];
  const step = values.length > 1 ? values[1]! - values[0]! : 1;
  const ticks: Tick[] = values.map((v) => {
    const label = formatTick(Number(v.toPrecision(12)));
    const pos = s(v);
    if (!opts.horizontal || !opts.bounds) return { value: v, label, pos };
    const half = tickLabelWidth(label) / 2;
    const labelPos = Math.min(Math.max(pos, opts.bounds[0] + half), opts.bounds[1] - half);
    return { value: v, label, pos, ...(labelPos !== pos ? { labelPos } : {}) };
  });
  const spans = ticks.map((t, index) => {
    const c = t.labelPos ?? t.pos;
    const half = opts.horizontal ? tickLabelWidth(t.label) / 2 : TICK_FONT_SIZE / 2;
    return { index, ordinal: Math.round(t.value / step), from: c - half, to: c + half };
  });
  const kept = new Set(thinLabels(spans, opts.horizontal ? 8 : 4));
  return ticks.map((t, i) => (kept.has(i) ? t : { ...t, label: '' }));
}

/** [x, y] pairs of two parallel arrays; points where either is missing stay undefined-free. */
function pairs(xs: number[], ys: number[]): [number, number][] {
  const n = Math.min(xs.length, ys.length);
  const out: [number, number][] = [];
  for (let i = 0; i < n; i++) out.push([xs[i]!, ys[i]!]);
  return out;
}

/**
 * Everything the quick plot draws, for a box of `width` × `height` pixels; null when the box is
 * too small or there is nothing to draw.
 */
export function buildQuickPlot(opts: { width: number; height: number; curve: PlotCurve; theory?: PlotTheory; margin?: Margin }): QuickPlotGeometry | null {
  const { width, height, curve, theory } = opts;
  const m = opts.margin ?? DEFAULT_MARGIN;
  if (!(width >= MIN_PLOT_SIZE.width && height >= MIN_PLOT_SIZE.height)) return null;
  const values = plotValues(curve, theory);
  const xs = [...curve.x, ...(theory?.x ?? [])].filter(finite);
  const xExt = extent(xs);
  const yExt = extent(values);
  if (!xExt || !yExt) return null;

  const plotArea = { x: m.left, y: m.top, width: width - m.left - m.right, height: height - m.top - m.bottom };
  const logY = wantsLogY(values);
  const xDomain: [number, number] = xExt[0] === xExt[1] ? [xExt[0] - 1, xExt[1] + 1] : xExt;
  const x = scaleLinear().domain(xDomain).range([plotArea.x, plotArea.x + plotArea.width]);

  let yDomain: [number, number];
  let yTickValues: number[];
  let y: (v: number) => number;
  if (logY) {
    yDomain = logDomain(yExt[0], yExt[1]);
    const s = scaleLog().domain(yDomain).range([plotArea.y + plotArea.height, plotArea.y]);
    yTickValues = logTicks(yDomain[0], yDomain[1]);
    y = (v) => s(v);
  } else {
    const s = scaleLinear()
      .domain(yExt[0] === yExt[1] ? [yExt[0] - 1, yExt[1] + 1] : [Math.min(0, yExt[0]), yExt[1]])
      .range([plotArea.y + plotArea.height, plotArea.y])
      .nice();
    yDomain = s.domain() as [number, number];
    yTickValues = s.ticks(Math.max(2, Math.floor(plotArea.height / 40)));
    y = (v) => s(v);
  }

  const usable = ([px, py]: [number, number]) => finite(px) && finite(py) && (!logY || py > 0);
  const linePath = (xsIn: number[], ys: number[] | undefined) => {
    if (!ys) return undefined;
    const pts = pairs(xsIn, ys);
    if (!pts.some(usable)) return undefined;
    return (
      line<[number, number]>()
        .defined(usable)
        .x((p) => x(p[0]))
        .y((p) => y(p[1]))(pts) ?? undefined
    );
  };
  const bandPath = (xsIn: number[], lo: number[] | undefined, hi: number[] | undefined) => {
    if (!lo || !hi) return undefined;
    const n = Math.min(xsIn.length, lo.length, hi.length);
    const pts: [number, number, number][] = [];
    for (let i = 0; i < n; i++) pts.push([xsIn[i]!, lo[i]!, hi[i]!]);
    const ok = (p: [number, number, number]) => usable([p[0], p[1]]) && usable([p[0], p[2]]);
    if (!pts.some(ok)) return undefined;
    return (
      area<[number, number, number]>()
        .defined(ok)
        .x((p) => x(p[0]))
        .y0((p) => y(p[1]))
        .y1((p) => y(p[2]))(pts) ?? undefined
    );
  };

  const paths: PlotPaths = {
    band2: bandPath(curve.x, curve.expected?.['-2'], curve.expected?.['2']),
    band1: bandPath(curve.x, curve.expected?.['-1'], curve.expected?.['1']),
    expected: linePath(curve.x, curve.expected?.['0']),
    observed: linePath(curve.x, curve.observed),
    theory: theory ? linePath(theory.x, theory.central) : undefined,
    theoryBand: theory ? bandPath(theory.x, theory.lower, theory.upper) : undefined,
  };
  for (const k of Object.keys(paths) as (keyof PlotPaths)[]) if (paths[k] === undefined) delete paths[k];

  return {
    width,
    height,
    area: plotArea,
    logY,
    xDomain,
    yDomain,
    xTicks: linearAxisTicks(xDomain, plotArea.x, plotArea.x + plotArea.width, { horizontal: true, count: xTickCount(plotArea.width) }),
    yTicks: yTickValues.map((v) => ({ value: v, label: formatTick(v), pos: y(v) })),
    paths,
    toScreen: (px, py) => [x(px), y(py)],
  };
}

/** Short number for spoken summaries and tables: three significant digits, no exponent noise. */
export function formatValue(v: number): string {
  if (!Number.isFinite(v)) return '–';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-3) return v.toExponential(2).replace('-', '−');
  if (a >= 1000) return String(Math.round(v));
  return String(Number(v.toPrecision(3))).replace('-', '−');
}

/**
 * What the plot shows, in one sentence for screen readers (the plot is an image to them):
 * which curves, the parameter range and the range of the observed (or expected) limit.
 */
export function describePlot(curve: PlotCurve, theory: PlotTheory, labels: { x: string; y: string }): string {
  const xs = extent(curve.x);
  const shown = [
    curve.observed ? 'observed' : null,
    curve.expected?.['0'] ? 'expected median' : null,
    curve.expected?.['-1'] && curve.expected?.['1'] ? '±1σ band' : null,
    curve.expected?.['-2'] && curve.expected?.['2'] ? '±2σ band' : null,
    theory ? 'theory' : null,
  ].filter((s): s is string => !!s);
  const main = curve.observed ?? curve.expected?.['0'];
  const mainExt = main ? extent(main) : null;
  const parts = [`Plot of ${shown.join(', ') || 'no curves'} for ${labels.y} against ${labels.x}`];
  if (xs) parts.push(`${curve.x.length} points from ${formatValue(xs[0])} to ${formatValue(xs[1])}`);
  if (mainExt) parts.push(`${curve.observed ? 'observed' : 'expected'} limit between ${formatValue(mainExt[0])} and ${formatValue(mainExt[1])}`);
  return `${parts.join('; ')}.`;
}
