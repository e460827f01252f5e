/**
 * Axis ranges, ticks and tick labels. Pure numbers: which values get a tick and what their labels
 * say depends only on the data, the axis spec and the axis length estimated from the figure size,
 * never on measured text, so the labels can be typeset before the layout (`collectLabels`).
 * Measured widths only decide which of these labels are left out to avoid overlaps (`thinLabels`).
 *
 * The decade helpers (`decade`, `decadeRange`, `roundMultiples`, `isPlainDecade`, `formatDecade`,
 * `powerOfTen`) are also the app's: its quick plot (components/plot) ticks and writes decades with
 * them, so both write 0.001…10000 out and powers of ten beyond.
 */
import { scaleLinear } from 'd3-scale';
import type { AxisSpec } from '../schemas/figures';

/** A labelled tick. */
export type MajorTick = {
  value: number;
  /** Text with `$…$` math. */
  label: string;
  /**
   * Position in the tick sequence in units of the tick step (value / step on a linear axis, the
   * exponent for decades): thinning keeps the ticks whose ordinal is a multiple of k, so the kept
   * labels stay round numbers.
   */
  ordinal: number;
};

/** An axis before layout: its range and ticks. */
export type AxisPlan = {
  scale: 'linear' | 'log';
  domain: [number, number];
  major: MajorTick[];
  /** Unlabelled ticks between the majors. */
  minor: number[];
  /** Log axes: decades written as plain numbers (true) or as powers of ten. */
  plainDecades?: boolean;
};

const EPS = 1e-9;

/** Rounds away floating noise (3 * 0.1 = 0.30000000000000004) without losing real digits. */
const clean = (v: number) => Number(v.toPrecision(12));

/** 10^k without the noise of powers of ten (10 ** -3 = 0.0010000000000000002). */
export const decade = (k: number) => clean(10 ** k);

/** The minus sign of labels (U+2212), never the hyphen. */
export const MINUS = '\u2212';

/**
 * Decades written out as plain numbers at most: 10^-3 = 0.001 to 10^4 = 10000. Beyond them a
 * decade is written as a power of ten (a figure's log axis switches as a whole, see `logTicks`).
 */
export const PLAIN_DECADES = { lowest: -3, highest: 4 } as const;

/** Whether decade 10^k is short enough to be written out ("0.001", "10000"). */
export const isPlainDecade = (k: number) => k >= PLAIN_DECADES.lowest && k <= PLAIN_DECADES.highest;

/** Exponents of the first and last decade inside [lo, hi] (lo > 0); the first is above the last when none is. */
export function decadeRange(lo: number, hi: number): [number, number] {
  return [Math.ceil(Math.log10(lo) - EPS), Math.floor(Math.log10(hi) + EPS)];
}

/**
 * The values m × 10^k inside `domain` (with rounding slack) for k from `kFrom` to `kTo` and each
 * mantissa m, in increasing order when the mantissas are; stops before a decade once `limit`
 * values were found.
 */
export function roundMultiples(domain: [number, number], kFrom: number, kTo: number, mantissas: readonly number[], limit = Infinity): number[] {
  const [lo, hi] = domain;
  const out: number[] = [];
  for (let k = kFrom; k <= kTo && out.length < limit; k++) {
    for (const m of mantissas) {
      const v = clean(m * 10 ** k);
      if (v >= lo * (1 - EPS) && v <= hi * (1 + EPS)) out.push(v);
    }
  }
  return out;
}

const SUPERSCRIPT: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' };

/** "10⁻⁴": 10^k in Unicode superscripts, for text that cannot set TeX (the app's plots). */
export function powerOfTen(k: number): string {
  return `10${[...String(k)].map((c) => SUPERSCRIPT[c] ?? c).join('')}`;
}

/** A plain number for a label: the minus sign as U+2212, never "-0". */
function plainNumber(v: number, decimals: number): string {
  const s = v.toFixed(Math.max(0, Math.min(20, decimals)));
  const zero = Number(s) === 0;
  return zero ? s.replace('-', '') : s.replace('-', MINUS);
}

/** Digits after the point that a value needs (up to 12). */
function decimalsOf(v: number): number {
  for (let d = 0; d <= 12; d++) if (Math.abs(Number(v.toFixed(d)) - v) <= Math.abs(v) * EPS) return d;
  return 12;
}

/** Label of a linear tick: as many decimals as the tick step needs. */
export function formatLinear(v: number, step: number): string {
  const decimals = step > 0 ? Math.max(0, -Math.floor(Math.log10(step) + EPS)) : 0;
  return plainNumber(v, Math.max(decimals, Math.min(decimalsOf(clean(step)), 12)));
}

/**
 * Label of a decade 10^k: "0.01"…"1000" when `plain`, else a power of ten: `$10^{k}$` (TeX, for
 * the figure's typesetter) or "10ᵏ" in Unicode superscripts (`notation: 'unicode'`).
 */
export function formatDecade(k: number, plain: boolean, notation: 'tex' | 'unicode' = 'tex'): string {
  if (plain) return plainNumber(decade(k), Math.max(0, -k));
  return notation === 'tex' ? `$10^{${k}}$` : powerOfTen(k);
}

/** The finite values an axis must show (positive ones only on a log axis). */
function usable(values: readonly number[], log: boolean): number[] {
  return values.filter((v) => Number.isFinite(v) && (!log || v > 0));
}

/** The spec's fixed ends, dropped when they cannot be used (a log axis needs positive ends). */
function fixedEnds(axis: AxisSpec): { min: number | null; max: number | null } {
  const ok = (v: number | null) => (v !== null && Number.isFinite(v) && (axis.scale !== 'log' || v > 0) ? v : null);
  let min = ok(axis.min);
  let max = ok(axis.max);
  if (min !== null && max !== null && !(max > min)) {
    min = null;
    max = null;
  }
  return { min, max };
}

/** A log end rounded outward to 1, 2 or 5 × 10^k. */
function niceLogEnd(v: number, up: boolean): number {
  const k = Math.floor(Math.log10(v) + EPS);
  const steps = up ? [1, 2, 5, 10] : [10, 5, 2, 1];
  for (const m of steps) {
    const c = clean(m * 10 ** k);
    if (up ? c >= v * (1 - EPS) : c <= v * (1 + EPS)) return c;
  }
  return up ? decade(k + 1) : decade(k);
}

/** Position along an axis in its own units: log10 of the value on a log axis. */
export const axisUnit = (scale: 'linear' | 'log', v: number) => (scale === 'log' ? Math.log10(v) : v);

/**
 * The axis range: the spec's fixed ends where given, otherwise the data's extent padded by `pad`
 * of its span, stretched to reach `reach.low` / `reach.high` (axis units, i.e. log10 on a log
 * axis: room the legend asked for) and rounded outward to round values. A linear axis with
 * `fromZero` starts at zero when all its values are positive (limits are).
 *
 * `tight` (the figures' default): a linear end is rounded outward only to the nearest multiple
 * of a fine round step (1, 2 or 5 × 10^k, about a fortieth of the span: where a minor tick
 * could sit), so the range starts and ends on the data or a round value just outside it,
 * instead of up to a whole major step further; log ends go to the 1, 2 or 5 × 10^k just outside.
 */
export function axisDomain(axis: AxisSpec, values: readonly number[], opts: { pad: number; fromZero: boolean; tight?: boolean; reach?: { low?: number; high?: number } }): [number, number] {
  const log = axis.scale === 'log';
  const vs = usable(values, log);
  const fixed = fixedEnds(axis);
  const reachLow = (v: number) => (opts.reach?.low !== undefined && Number.isFinite(opts.reach.low) ? Math.min(v, opts.reach.low) : v);
  const reachHigh = (v: number) => (opts.reach?.high !== undefined && Number.isFinite(opts.reach.high) ? Math.max(v, opts.reach.high) : v);
  let lo = vs.length ? Math.min(...vs) : NaN;
  let hi = vs.length ? Math.max(...vs) : NaN;
  if (log) {
    if (!(lo > 0)) [lo, hi] = [0.1, 10];
    let l0 = Math.log10(fixed.min ?? lo);
    let l1 = Math.log10(fixed.max ?? hi);
    if (!(l1 > l0)) [l0, l1] = [l0 - 0.5, l0 + 0.5];
    const span = Math.max(l1 - l0, 1);
    // Padding and the legend's room may reach beyond what a double holds (10^-400 is 0, whose
    // log is −∞): automatic ends stay within 10^±300.
    const a = fixed.min ?? niceLogEnd(10 ** clampExponent(reachLow(l0 - opts.pad * span)), false);
    const b = fixed.max ?? niceLogEnd(10 ** clampExponent(reachHigh(l1 + opts.pad * span)), true);
    return b > a ? [a, b] : [a, a * 10];
  }
  if (!Number.isFinite(lo)) [lo, hi] = [0, 1];
  if (opts.fromZero && lo > 0) lo = 0;
  let a = fixed.min ?? lo;
  let b = fixed.max ?? hi;
  if (!(b > a)) {
    const d = Math.abs(a) > 0 ? Math.abs(a) * 0.1 : 1;
    if (fixed.min === null) a -= d;
    if (fixed.max === null || !(b > a)) b = a + 2 * d;
  }
  const span = b - a;
  if (fixed.min === null && !(opts.fromZero && a === 0)) a = reachLow(a - opts.pad * span);
  if (fixed.max === null) b = reachHigh(b + opts.pad * span);
  const niced = opts.tight ? tightEnds(a, b) : (scaleLinear().domain([a, b]).nice().domain() as [number, number]);
  const out: [number, number] = [fixed.min ?? niced[0], fixed.max ?? niced[1]];
  // Data near the largest doubles overflow when padded (±∞, then NaN): such a range is drawn as
  // the largest finite one around it.
  if (!(Number.isFinite(out[0]) && Number.isFinite(out[1]) && out[1] > out[0])) {
    const lo2 = Number.isFinite(out[0]) ? out[0] : -Number.MAX_VALUE / 2;
    const hi2 = Number.isFinite(out[1]) && out[1] > lo2 ? out[1] : Number.MAX_VALUE / 2;
    return hi2 > lo2 ? [lo2, hi2] : [0, 1];
  }
  return out;
}

/** [a, b] rounded outward to multiples of a round step of about (b − a) / 40 (see `axisDomain`). */
function tightEnds(a: number, b: number): [number, number] {
  if (!(Number.isFinite(a) && Number.isFinite(b) && b > a)) return [a, b];
  const raw = (b - a) / 40;
  const k = Math.floor(Math.log10(raw));
  const m = raw / 10 ** k;
  const mantissa = m <= 1 ? 1 : m <= 2 ? 2 : m <= 5 ? 5 : 10;
  // Steps below 1 as a division by a whole number keep decimals exact (0.1 = 1 / 10).
  const per = k < 0 ? 10 ** -k / mantissa : 0;
  const step = mantissa * 10 ** k;
  const lo = per > 0 ? Math.floor(a * per + EPS) / per : Math.floor(a / step + EPS) * step;
  const hi = per > 0 ? Math.ceil(b * per - EPS) / per : Math.ceil(b / step - EPS) * step;
  return Number.isFinite(lo) && Number.isFinite(hi) && hi > lo ? [clean(lo), clean(hi)] : [a, b];
}

const clampExponent = (k: number) => Math.max(-300, Math.min(300, k));

/** At most this many decades carry a tick: beyond it every n-th decade does (n as small as fits). */
export const MAX_DECADE_TICKS = 60;

/** Ticks of a linear axis: d3's round steps, minor ticks subdividing each step in 4 or 5. */
export function linearTicks(domain: [number, number], count: number): Omit<AxisPlan, 'scale' | 'domain'> {
  const s = scaleLinear().domain(domain);
  const values = s.ticks(Math.max(2, count)).map(clean);
  const step = values.length > 1 ? clean(values[1]! - values[0]!) : Math.abs(domain[1] - domain[0]) || 1;
  const major = values.map((v) => ({ value: v, label: formatLinear(v, step), ordinal: Math.round(v / step) }));
  // A step of 2·10^k divides into 4 (0.5·10^k apart), 1·10^k and 5·10^k into 5.
  const mantissa = Math.round(step / 10 ** Math.floor(Math.log10(step) + EPS));
  const sub = mantissa === 2 ? 4 : 5;
  const minorStep = step / sub;
  const minor: number[] = [];
  const first = Math.ceil(domain[0] / minorStep - EPS);
  const last = Math.floor(domain[1] / minorStep + EPS);
  // Bounded by steps too: past 2^53 `i++` no longer changes i.
  for (let i = first, n = 0; i <= last && minor.length < 500 && n < 1000; i++, n++) {
    if (i % sub === 0) continue;
    minor.push(clean(i * minorStep));
  }
  return { major, minor };
}

/**
 * Ticks of a log axis. Decades 10^k inside the range carry the labels, minor ticks sit at 2…9 ×
 * 10^k (left out when a decade is shorter than `minDecadePt`). Decades are written as plain numbers
 * when the range spans at most `plainSpan` decades (3 unless the theme says otherwise) and stays
 * within 0.001…10000, otherwise all as powers of ten, so one axis never mixes both. When fewer than two decades fall inside the range,
 * the 2× and 5× values are labelled too (plain numbers) so the axis still reads.
 */
export function logTicks(domain: [number, number], lengthPt: number, minDecadePt = 12, plainSpan = 3): Omit<AxisPlan, 'scale' | 'domain'> {
  const [lo, hi] = domain;
  // Nothing to tick on a range that is not a positive finite one (the loops below would not end).
  if (!(lo > 0 && Number.isFinite(hi) && hi > lo)) return { major: [], minor: [], plainDecades: false };
  const [k0, k1] = decadeRange(lo, hi);
  const spanDecades = Math.log10(hi / lo);
  const decadeLength = lengthPt / Math.max(spanDecades, EPS);
  const kLo = Math.floor(Math.log10(lo) + EPS);
  if (k1 - k0 + 1 < 2) {
    const major = roundMultiples(domain, kLo, k1, [1, 2, 5]).map((v, ordinal) => ({ value: v, label: plainNumber(v, decimalsOf(v)), ordinal }));
    return { major, minor: roundMultiples(domain, kLo, k1, [3, 4, 6, 7, 8, 9]), plainDecades: true };
  }
  const plain = spanDecades <= plainSpan + EPS && isPlainDecade(k0) && isPlainDecade(k1);
  const major: MajorTick[] = [];
  // Hundreds of decades (an enormous range) would be hundreds of labels to typeset for nothing.
  const every = Math.ceil((k1 - k0 + 1) / MAX_DECADE_TICKS);
  for (let k = k0; k <= k1; k++) if (k % every === 0) major.push({ value: decade(k), label: formatDecade(k, plain), ordinal: k });
  const minor = decadeLength >= minDecadePt ? roundMultiples(domain, kLo, k1, [2, 3, 4, 5, 6, 7, 8, 9], 500) : [];
  return { major, minor, plainDecades: plain };
}

/** Ticks of an axis of `lengthPt` (an estimate is fine) with labels `typeSize` points high; `plainSpan` as for `logTicks`. */
export function planAxisTicks(scale: 'linear' | 'log', domain: [number, number], lengthPt: number, typeSize: number, horizontal: boolean, plainSpan = 3): AxisPlan {
  if (scale === 'log') return { scale, domain, ...logTicks(domain, lengthPt, 12, plainSpan) };
  // Room per label: numbers a few characters wide side by side, one line high stacked.
  const per = typeSize * (horizontal ? 6 : 3);
  return { scale, domain, ...linearTicks(domain, Math.round(Math.max(1, lengthPt) / per)) };
}

/** A label's extent along its axis, in the axis' own coordinate. */
export type LabelSpan = { index: number; ordinal: number; from: number; to: number };

/**
 * Which labels to keep so that none overlap (with at least `gap` between neighbours): every
 * label if they fit, otherwise every k-th for the smallest k that fits, choosing the ks whose
 * ordinal is a multiple of k (round values) where possible. Returns the kept indices.
 */
export function thinLabels(spans: readonly LabelSpan[], gap: number): number[] {
  if (spans.length === 0) return [];
  const sorted = [...spans].sort((a, b) => a.from - b.from);
  const fits = (kept: LabelSpan[]) => kept.every((s, i) => i === 0 || s.from - kept[i - 1]!.to >= gap);
  for (let k = 1; k <= sorted.length; k++) {
    const byOrdinal = sorted.filter((s) => ((s.ordinal % k) + k) % k === 0);
    if (byOrdinal.length >= Math.min(2, sorted.length) && fits(byOrdinal)) return byOrdinal.map((s) => s.index).sort((a, b) => a - b);
    for (let offset = 0; offset < k; offset++) {
      const byPlace = sorted.filter((_, i) => i % k === offset);
      if (byPlace.length >= Math.min(2, sorted.length) && fits(byPlace)) return byPlace.map((s) => s.index).sort((a, b) => a - b);
    }
  }
  // A single label always fits.
  return [sorted[Math.floor(sorted.length / 2)]!.index];
}
