/**
 * The best-expected envelope of several limit results: at every parameter value, the input with
 * the lowest expected median limit there, with that input's observed limit and expected band.
 * Choosing by the expected (not the observed) limit keeps the choice free of the data's
 * fluctuations (common practice of combination teams).
 *
 * Inputs are interpolated between their own grid points linearly in x and in ln(limit), as the
 * excluded-range crossings are (shared/stats/exclusion.ts), and used inside their own x range only.
 * The envelope's grid is the union of the inputs' grids; between two neighbouring union points
 * every input is linear in ln(limit), so where the choice switches between two inputs that both
 * cover the interval, the switch is placed exactly at the crossing of their expected medians.
 */
import { EXPECTED_KEYS, type ExpectedKey } from '../schemas/counting-model';
import type { Curve } from '../schemas/results';
import { StatsInputError } from '../stats/errors';
import { conversionTo, convertCurve, describeConversion, isIdentity, type LimitUnits } from '../units';

export const ENVELOPE_MIN_INPUTS = 2;
export const ENVELOPE_MAX_INPUTS = 20;

/** One input: a name for messages (its title and version), its units and its limit curve. */
export type EnvelopeInput = { name: string; units: LimitUnits; curve: Curve };

/** Where one input is the envelope: from `from` to `to` (a switch at a crossing or a grid point). */
export type EnvelopeSegment = { input: number; from: number; to: number };

export type Envelope = {
  /** The envelope as a limit curve in the first input's units. */
  curve: Curve;
  /** Per point of `curve.x`: the index of the input chosen there. */
  chosen: number[];
  /** Per point: true where the point is a switch placed at the crossing of two expected medians. */
  crossing: boolean[];
  /** Consecutive stretches of one input, in x order. */
  segments: EnvelopeSegment[];
  units: LimitUnits;
  /** Inputs drawn from other units ("GeV → TeV"), by index. */
  converted: { input: number; change: string }[];
  /** Expected bands left out because not every input gives them. */
  missingBands: ExpectedKey[];
};

type Prepared = { xs: number[]; lo: number; hi: number; logs: Partial<Record<ExpectedKey | 'obs', Float64Array>> };

function positiveLogs(values: number[] | undefined, n: number, field: string): Float64Array | undefined {
  if (!values) return undefined;
  if (values.length !== n) throw new StatsInputError(field, `has ${values.length} values but the grid has ${n}`);
  const out = new Float64Array(n);
  values.forEach((v, i) => {
    if (!(typeof v === 'number' && Number.isFinite(v) && v > 0)) throw new StatsInputError(`${field}[${i}]`, `must be a positive finite number (got ${String(v)}): limits are interpolated in ln(limit)`);
    out[i] = Math.log(v);
  });
  return out;
}

/** ln y at x, linear in x and ln y between the neighbouring grid points (x inside the grid). */
function logAt(xs: number[], logs: Float64Array, x: number): number {
  let lo = 0;
  let hi = xs.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! <= x) lo = mid;
    else hi = mid;
  }
  const x0 = xs[lo]!;
  const x1 = xs[hi]!;
  const t = x1 === x0 ? 0 : (x - x0) / (x1 - x0);
  return logs[lo]! + t * (logs[hi]! - logs[lo]!);
}

/**
 * The envelope of 2 to 20 inputs. Throws StatsInputError naming the input (`inputs.3`) for
 * inputs that cannot be compared (μ with σ×B, unrelated parameter units), lack an expected median,
 * or hold values that are not positive.
 */
export function bestExpectedEnvelope(inputs: EnvelopeInput[]): Envelope {
  if (inputs.length < ENVELOPE_MIN_INPUTS || inputs.length > ENVELOPE_MAX_INPUTS) {
    throw new StatsInputError('inputs', `must hold ${ENVELOPE_MIN_INPUTS} to ${ENVELOPE_MAX_INPUTS} results (got ${inputs.length})`);
  }
  const units = inputs[0]!.units;
  const converted: Envelope['converted'] = [];
  const prepared: Prepared[] = inputs.map((input, i) => {
    const field = `inputs.${i}`;
    const c = conversionTo(input.units, units);
    if (!c.ok) throw new StatsInputError(field, `(${input.name}) cannot be combined with ${inputs[0]!.name}: ${c.reason}`);
    if (!isIdentity(c)) converted.push({ input: i, change: describeConversion(input.units, units) });
    const curve = isIdentity(c) ? input.curve : convertCurve(input.curve, c);
    const xs = curve.x;
    if (!Array.isArray(xs) || xs.length < 2) throw new StatsInputError(`${field}.curve.x`, `(${input.name}) must have at least two points`);
    xs.forEach((v, k) => {
      if (!Number.isFinite(v) || (k > 0 && !(v > xs[k - 1]!))) throw new StatsInputError(`${field}.curve.x[${k}]`, `(${input.name}) must be finite and larger than the value before it`);
    });
    if (!curve.expected?.['0']) throw new StatsInputError(`${field}.curve.expected`, `(${input.name}) has no expected median: the envelope chooses by it`);
    const logs: Prepared['logs'] = {};
    for (const k of EXPECTED_KEYS) logs[k] = positiveLogs(curve.expected?.[k], xs.length, `${field}.curve.expected.${k}`);
    logs.obs = positiveLogs(curve.observed, xs.length, `${field}.curve.observed`);
    return { xs, lo: xs[0]!, hi: xs[xs.length - 1]!, logs };
  });

  const bands = EXPECTED_KEYS.filter((k) => prepared.every((p) => p.logs[k]));
  const missingBands = EXPECTED_KEYS.filter((k) => !bands.includes(k));
  const withObserved = prepared.every((p) => p.logs.obs);

  const grid = [...new Set(prepared.flatMap((p) => p.xs))].sort((a, b) => a - b);
  const covers = (p: Prepared, x: number) => x >= p.lo && x <= p.hi;
  const median = (i: number, x: number) => logAt(prepared[i]!.xs, prepared[i]!.logs['0']!, x);
  const pick = (x: number): number => {
    let best = -1;
    let bestLog = Infinity;
    prepared.forEach((p, i) => {
      if (!covers(p, x)) return;
      const v = median(i, x);
      if (v < bestLog) {
        bestLog = v;
        best = i;
      }
    });
    return best;
  };

  const xsOut: number[] = [];
  const chosen: number[] = [];
  const crossing: boolean[] = [];
  const push = (x: number, input: number, atCrossing: boolean) => {
    xsOut.push(x);
    chosen.push(input);
    crossing.push(atCrossing);
  };
  let prev = -1;
  grid.forEach((x, g) => {
    const c = pick(x);
    if (g > 0 && c !== prev) {
      // Every input covering the whole interval is linear in ln(limit) on it: follow the lowest
      // of these lines from the left end, switching where another one passes below it. (An input
      // whose range starts or ends at x takes over at x itself.)
      const x0 = grid[g - 1]!;
      const lines = prepared.flatMap((p, i) => (covers(p, x0) && covers(p, x) ? [{ i, y0: median(i, x0), y1: median(i, x) }] : []));
      let cur = lines.find((l) => l.i === prev);
      let t = 0;
      for (let guard = 0; cur && guard < lines.length; guard++) {
        let next: { t: number; line: (typeof lines)[number] } | null = null;
        for (const l of lines) {
          if (l === cur) continue;
          const slope = l.y1 - l.y0 - (cur.y1 - cur.y0);
          if (!(slope < 0)) continue; // only a line falling faster can pass below
          const tc = (cur.y0 - l.y0) / (l.y1 - l.y0 - (cur.y1 - cur.y0));
          if (tc > t && tc < 1 && (!next || tc < next.t)) next = { t: tc, line: l };
        }
        if (!next) break;
        push(x0 + next.t * (x - x0), cur.i, true);
        cur = next.line;
        t = next.t;
      }
    }
    push(x, c, false);
    prev = c;
  });

  const value = (key: ExpectedKey | 'obs', i: number, x: number) => Math.exp(logAt(prepared[i]!.xs, prepared[i]!.logs[key]!, x));
  const curve: Curve = { x: xsOut, expected: Object.fromEntries(bands.map((k) => [k, xsOut.map((x, j) => value(k, chosen[j]!, x))])) as Curve['expected'] };
  if (withObserved) curve.observed = xsOut.map((x, j) => value('obs', chosen[j]!, x));

  const segments: EnvelopeSegment[] = [];
  xsOut.forEach((x, j) => {
    const last = segments[segments.length - 1];
    if (last && last.input === chosen[j]) last.to = x;
    else {
      // A switch at a crossing belongs to both stretches: the new one starts where the old ends.
      if (last && crossing[j - 1]) segments.push({ input: chosen[j]!, from: last.to, to: x });
      else segments.push({ input: chosen[j]!, from: x, to: x });
    }
  });
  return { curve, chosen, crossing, segments, units, converted, missingBands };
}
