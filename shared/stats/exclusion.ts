/**
 * Excluded parameter ranges: where a limit curve (σ×B or μ, as a function of a parameter such as a
 * mass) lies below the theory prediction. Both curves are interpolated linearly in the parameter
 * and in log σ, the usual way for cross-sections that fall roughly exponentially with mass; with
 * that interpolation ln(limit) − ln(theory) is linear between neighbouring grid points of either
 * curve, so each crossing is exact for the interpolated curves.
 */
import { EXPECTED_KEYS, type ExpectedKey } from '../schemas/counting-model';
import { formatPath, StatsInputError } from './errors';

/** A limit curve on a parameter grid; every array has one value per `x`, all values > 0. */
export interface LimitCurve {
  x: number[];
  observed?: number[];
  expected?: Partial<Record<ExpectedKey, number[]>>;
}

/** The theory prediction on its own grid, with an optional band (`lower` ≤ `central` ≤ `upper`). */
export interface TheoryCurve {
  x: number[];
  central: number[];
  lower?: number[];
  upper?: number[];
}

/**
 * One excluded interval of the parameter. `fromOpen`/`toOpen` are true when the exclusion runs
 * into the edge of the common range of the two curves: it may extend beyond what was computed.
 */
export interface ExcludedRange {
  from: number;
  to: number;
  fromOpen?: boolean;
  toOpen?: boolean;
}

/**
 * Excluded ranges for each limit quantity given. `observed`/`expected[key]` compare with the
 * central theory curve; `observedTheoryLower`/`observedTheoryUpper` compare the observed limit with
 * the lower/upper edges of the theory band (present when the band is).
 */
export interface ExclusionRanges {
  observed?: ExcludedRange[];
  expected: Partial<Record<ExpectedKey, ExcludedRange[]>>;
  observedTheoryLower?: ExcludedRange[];
  observedTheoryUpper?: ExcludedRange[];
}

function checkGrid(x: unknown, field: string): number[] {
  if (!Array.isArray(x) || x.length < 2) throw new StatsInputError(field, 'must be a list of at least two parameter values');
  x.forEach((v, i) => {
    if (typeof v !== 'number' || !Number.isFinite(v)) throw new StatsInputError(formatPath([i], field), 'must be a finite number');
    if (i > 0 && !(v > (x[i - 1] as number))) throw new StatsInputError(formatPath([i], field), 'must be larger than the value before it (the grid must increase)');
  });
  return x as number[];
}

function checkValues(values: unknown, length: number, field: string): number[] {
  if (!Array.isArray(values)) throw new StatsInputError(field, 'must be a list of numbers');
  if (values.length !== length) throw new StatsInputError(field, `has ${values.length} values but the grid has ${length}`);
  values.forEach((v, i) => {
    if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) {
      throw new StatsInputError(formatPath([i], field), `must be a positive finite number (got ${String(v)}): the curves are interpolated in log σ`);
    }
  });
  return values as number[];
}

/** ln y at x, interpolated linearly in x and ln y; `logs` holds ln of the values. */
function logInterpolate(xs: number[], logs: Float64Array, x: number): number {
  let lo = 0;
  let hi = xs.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if ((xs[mid] as number) <= x) lo = mid;
    else hi = mid;
  }
  const x0 = xs[lo] as number;
  const x1 = xs[hi] as number;
  const t = x1 === x0 ? 0 : (x - x0) / (x1 - x0);
  return (logs[lo] as number) + t * ((logs[hi] as number) - (logs[lo] as number));
}

/**
 * ln(limit/theory) within this of zero is a touch: the same σ computed two ways (a table and a
 * formula, or interpolated on different grids) agrees only to rounding, and a 1e-12 relative
 * difference is no physical crossing.
 */
const TOUCH = 1e-12;

/** start, the values of both increasing grids strictly between start and end (merged, each once), end. */
function mergedGrid(a: number[], b: number[], start: number, end: number): number[] {
  const out = [start];
  let i = 0;
  let j = 0;
  while (i < a.length && (a[i] as number) <= start) i++;
  while (j < b.length && (b[j] as number) <= start) j++;
  for (;;) {
    const va = i < a.length ? (a[i] as number) : Infinity;
    const vb = j < b.length ? (b[j] as number) : Infinity;
    const v = Math.min(va, vb);
    if (!(v < end)) break;
    if (v > (out[out.length - 1] as number)) out.push(v);
    if (va === v) i++;
    if (vb === v) j++;
  }
  out.push(end);
  return out;
}

/**
 * Ranges of x where the limit (xl, yl) is below the theory (xt, yt). Inputs already checked.
 *
 * A range ends only where the limit crosses above the theory. Where it only touches it (equal at
 * a point, below on both sides) the range goes on: touching is not crossing. Where it stays equal
 * over a stretch and then rises above, the range ends where the equality began.
 */
export function rangesBelow(xl: number[], yl: number[], xt: number[], yt: number[]): ExcludedRange[] {
  const start = Math.max(xl[0] as number, xt[0] as number);
  const end = Math.min(xl[xl.length - 1] as number, xt[xt.length - 1] as number);
  if (!(end > start)) return [];
  const grid = mergedGrid(xl, xt, start, end);
  const ll = Float64Array.from(yl, Math.log);
  const lt = Float64Array.from(yt, Math.log);
  const d = grid.map((x) => {
    const v = logInterpolate(xl, ll, x) - logInterpolate(xt, lt, x);
    return Math.abs(v) <= TOUCH ? 0 : v;
  });
  const ranges: ExcludedRange[] = [];
  let open: ExcludedRange | undefined;
  /** Where the limit reached the theory after being below it (undefined: it is below, or no range is open). */
  let touchedAt: number | undefined;
  if ((d[0] as number) < 0) open = { from: start, to: start, fromOpen: true };
  for (let k = 0; k + 1 < grid.length; k++) {
    const d0 = d[k] as number;
    const d1 = d[k + 1] as number;
    const x0 = grid[k] as number;
    const x1 = grid[k + 1] as number;
    const crossing = () => x0 + ((x1 - x0) * d0) / (d0 - d1);
    if (open === undefined) {
      if (d1 < 0) open = { from: d0 > 0 ? crossing() : x0, to: x1 };
    } else if (d1 < 0) {
      touchedAt = undefined;
    } else if (d1 === 0) {
      touchedAt ??= x1;
    } else {
      open.to = d0 < 0 ? crossing() : (touchedAt ?? x0);
      if (open.to > open.from || open.fromOpen) ranges.push(open);
      open = undefined;
      touchedAt = undefined;
    }
  }
  if (open !== undefined) {
    if (touchedAt !== undefined) {
      // Equal to the theory at the end of the common range: the range ends there.
      open.to = touchedAt;
      if (open.to > open.from || open.fromOpen) ranges.push(open);
    } else {
      open.to = end;
      open.toOpen = true;
      ranges.push(open);
    }
  }
  return ranges;
}

/**
 * Excluded parameter ranges of a limit curve against a theory curve, for the observed limit, each
 * expected quantity given, and the observed limit against the theory band edges.
 *
 * @param curve `{ x, observed?, expected?: { "-2"?, "-1"?, "0"?, "1"?, "2"? } }`, one value per x
 * @param theory `{ x, central, lower?, upper? }` on its own grid (interpolated linearly in x and log σ)
 * @throws StatsInputError naming the field for grids that do not increase, mismatched lengths, or
 *   values that are not positive and finite
 */
export function exclusionRanges(curve: LimitCurve, theory: TheoryCurve): ExclusionRanges {
  const xl = checkGrid(curve?.x, 'curve.x');
  const xt = checkGrid(theory?.x, 'theory.x');
  const central = checkValues(theory.central, xt.length, 'theory.central');
  const lower = theory.lower === undefined ? undefined : checkValues(theory.lower, xt.length, 'theory.lower');
  const upper = theory.upper === undefined ? undefined : checkValues(theory.upper, xt.length, 'theory.upper');
  const out: ExclusionRanges = { expected: {} };
  if (curve.observed !== undefined) {
    const obs = checkValues(curve.observed, xl.length, 'curve.observed');
    out.observed = rangesBelow(xl, obs, xt, central);
    if (lower) out.observedTheoryLower = rangesBelow(xl, obs, xt, lower);
    if (upper) out.observedTheoryUpper = rangesBelow(xl, obs, xt, upper);
  }
  for (const key of EXPECTED_KEYS) {
    const values = curve.expected?.[key];
    if (values === undefined) continue;
    out.expected[key] = rangesBelow(xl, checkValues(values, xl.length, `curve.expected["${key}"]`), xt, central);
  }
  return out;
}

/** The excluded ranges of a stored version, or in plain words why there are none. */
export type Exclusion = { ranges: ExclusionRanges | null; problem: string | null };

/**
 * The registry's excluded ranges of a version (its curve against its stored theory, both in the
 * version's own units), or why there are none: no theory curve, or curves that cannot be compared.
 * A limit on the signal strength μ without a theory curve is read against μ = 1, the signal as
 * predicted: excluded where the limit is below 1 (common practice).
 * The one derivation the result pages, the API and the summary figures show.
 */
export function exclusionOrProblem(curve: LimitCurve, theory: TheoryCurve | null | undefined, quantity: 'mu' | 'xsec'): Exclusion {
  // μ = 1 on the limit's own grid (a grid that is not one is refused naming curve.x, checked first).
  if (!theory && quantity === 'mu' && Array.isArray(curve?.x)) theory = { x: curve.x, central: curve.x.map(() => 1) };
  if (!theory) return { ranges: null, problem: 'No theory curve is stored with this version, so no excluded range can be derived' };
  try {
    return { ranges: exclusionRanges(curve, theory), problem: null };
  } catch (e) {
    if (e instanceof StatsInputError) return { ranges: null, problem: `The limit cannot be compared with the theory curve: ${e.message}` };
    throw e;
  }
}
