import { EXPECTED_KEYS, type ExpectedKey } from '../schemas/counting-model';
import type { Curve, Theory } from '../schemas/results';

/**
 * One problem in a curve: `row` is the 1-based point number (or the file's line number when the
 * caller maps it), `column` the column's name as the user knows it.
 */
export type CurveProblem = { row?: number; column: string; reason: string };

export const BAND_LABELS: Record<ExpectedKey, string> = {
  '-2': 'expected −2σ',
  '-1': 'expected −1σ',
  '0': 'expected median',
  '1': 'expected +1σ',
  '2': 'expected +2σ',
};

/** Names of curve columns as shown to users (and used in problems). */
export const CURVE_COLUMN_LABELS = { x: 'parameter', observed: 'observed', ...BAND_LABELS } as const;

/** Problems kept with their line and column; the rest are only counted. */
export const MAX_PROBLEMS = 100;

/**
 * Problems as they are found: the first `limit` are kept, every one is counted. A file with a
 * million bad cells costs a counter, not a million objects (nor a spread of a million arguments).
 */
export class ProblemCollector<P = CurveProblem> {
  readonly list: P[] = [];
  total = 0;
  constructor(readonly limit = MAX_PROBLEMS) {}
  add(p: P): void {
    this.total++;
    if (this.list.length < this.limit) this.list.push(p);
  }
  /** Problems found and not kept. */
  get hidden(): number {
    return this.total - this.list.length;
  }
}

/** 1250000 → "1,250,000": counts as users read them. */
export function formatCount(n: number): string {
  return n.toLocaleString('en');
}

/**
 * Checks a curve as a physicist would before publishing it: finite numbers, increasing x without
 * duplicates, positive limits, complete bands, and −2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ at every point.
 * Returns the first MAX_PROBLEMS problems, each with its row and column; pass a collector to
 * learn how many there were in all.
 */
export function checkCurve(curve: Curve, theory?: Theory | null, rowLabel: (i: number) => number = (i) => i + 1, into = new ProblemCollector()): CurveProblem[] {
  const problems = into;
  const add = (p: CurveProblem) => problems.add(p);
  const n = curve.x.length;

  curve.x.forEach((v, i) => {
    if (!Number.isFinite(v)) add({ row: rowLabel(i), column: 'parameter', reason: 'must be a finite number' });
    else if (i > 0 && Number.isFinite(curve.x[i - 1]!)) {
      const prev = curve.x[i - 1]!;
      if (v === prev) add({ row: rowLabel(i), column: 'parameter', reason: `duplicates the value of the row before (${v})` });
      else if (v < prev) add({ row: rowLabel(i), column: 'parameter', reason: `is smaller than the row before (${v} after ${prev}); sort the rows by the parameter` });
    }
  });

  const columns: [string, number[] | undefined][] = [
    ['observed', curve.observed],
    ...EXPECTED_KEYS.map((k) => [BAND_LABELS[k], curve.expected?.[k]] as [string, number[] | undefined]),
  ];
  if (!curve.observed && !curve.expected?.['0']) {
    add({ column: 'observed', reason: 'a result needs at least an observed or an expected median limit column' });
  }
  for (const [name, values] of columns) {
    if (!values) continue;
    if (values.length !== n) {
      add({ column: name, reason: `has ${values.length} values but there are ${n} parameter values` });
      continue;
    }
    values.forEach((v, i) => {
      if (!Number.isFinite(v)) add({ row: rowLabel(i), column: name, reason: 'must be a finite number' });
      else if (v <= 0) add({ row: rowLabel(i), column: name, reason: `must be positive (an upper limit of ${v} is impossible)` });
    });
  }
  for (const [lo, hi] of [['-1', '1'], ['-2', '2']] as const) {
    const hasLo = !!curve.expected?.[lo];
    const hasHi = !!curve.expected?.[hi];
    if (hasLo !== hasHi) add({ column: BAND_LABELS[hasLo ? hi : lo], reason: `is missing: a ±${hi}σ band needs both edges` });
    if ((hasLo || hasHi) && !curve.expected?.['0']) add({ column: BAND_LABELS['0'], reason: `is needed when the ±${hi}σ band is given` });
  }
  // Band order at every point, between neighbouring quantities that are present.
  const present = EXPECTED_KEYS.filter((k) => curve.expected?.[k]?.length === n);
  for (let i = 0; i < n; i++) {
    for (let j = 1; j < present.length; j++) {
      const a = present[j - 1]!;
      const b = present[j]!;
      const va = curve.expected![a]![i]!;
      const vb = curve.expected![b]![i]!;
      if (Number.isFinite(va) && Number.isFinite(vb) && va > vb) {
        // Blame the outer edge: a lower edge above its neighbour, or an upper edge below it.
        add({ row: rowLabel(i), column: BAND_LABELS[Number(b) <= 0 ? a : b], reason: `${BAND_LABELS[a]} (${va}) is above ${BAND_LABELS[b]} (${vb}); the band must satisfy −2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ` });
      }
    }
  }

  if (theory) checkTheory(theory, problems);
  return problems.list;
}

/** Theory curve checks (its own grid): increasing x, positive values, lower ≤ central ≤ upper. */
export function checkTheory(theory: Theory, into = new ProblemCollector()): CurveProblem[] {
  const problems = into;
  const n = theory.x.length;
  theory.x.forEach((v, i) => {
    if (!Number.isFinite(v)) problems.add({ row: i + 1, column: 'theory parameter', reason: 'must be a finite number' });
    else if (i > 0 && !(v > theory.x[i - 1]!)) problems.add({ row: i + 1, column: 'theory parameter', reason: 'must increase from row to row' });
  });
  for (const [name, values] of [['theory', theory.central], ['theory lower edge', theory.lower], ['theory upper edge', theory.upper]] as const) {
    if (!values) continue;
    if (values.length !== n) {
      problems.add({ column: name, reason: `has ${values.length} values but the theory grid has ${n}` });
      continue;
    }
    values.forEach((v, i) => {
      if (!Number.isFinite(v) || v <= 0) problems.add({ row: i + 1, column: name, reason: 'must be a positive number' });
    });
  }
  for (let i = 0; i < n; i++) {
    const c = theory.central[i]!;
    if (theory.lower?.[i] !== undefined && theory.lower[i]! > c) problems.add({ row: i + 1, column: 'theory lower edge', reason: 'is above the central theory value' });
    if (theory.upper?.[i] !== undefined && theory.upper[i]! < c) problems.add({ row: i + 1, column: 'theory upper edge', reason: 'is below the central theory value' });
  }
  return problems.list;
}
