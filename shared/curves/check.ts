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

const MAX_PROBLEMS = 200;

/**
 * Checks a curve as a physicist would before publishing it: finite numbers, increasing x without
 * duplicates, positive limits, complete bands, and −2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ at every point.
 * Returns every problem (up to 200), each with its row and column.
 */
export function checkCurve(curve: Curve, theory?: Theory | null, rowLabel: (i: number) => number = (i) => i + 1): CurveProblem[] {
  const problems: CurveProblem[] = [];
  const add = (p: CurveProblem) => problems.length < MAX_PROBLEMS && problems.push(p);
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

  if (theory) problems.push(...checkTheory(theory).slice(0, Math.max(0, MAX_PROBLEMS - problems.length)));
  return problems;
}

/** Theory curve checks (its own grid): increasing x, positive values, lower ≤ central ≤ upper. */
export function checkTheory(theory: Theory): CurveProblem[] {
  const problems: CurveProblem[] = [];
  const n = theory.x.length;
  theory.x.forEach((v, i) => {
    if (!Number.isFinite(v)) problems.push({ row: i + 1, column: 'theory parameter', reason: 'must be a finite number' });
    else if (i > 0 && !(v > theory.x[i - 1]!)) problems.push({ row: i + 1, column: 'theory parameter', reason: 'must increase from row to row' });
  });
  for (const [name, values] of [['theory', theory.central], ['theory lower edge', theory.lower], ['theory upper edge', theory.upper]] as const) {
    if (!values) continue;
    if (values.length !== n) {
      problems.push({ column: name, reason: `has ${values.length} values but the theory grid has ${n}` });
      continue;
    }
    values.forEach((v, i) => {
      if (!Number.isFinite(v) || v <= 0) problems.push({ row: i + 1, column: name, reason: 'must be a positive number' });
    });
  }
  for (let i = 0; i < n; i++) {
    const c = theory.central[i]!;
    if (theory.lower?.[i] !== undefined && theory.lower[i]! > c) problems.push({ row: i + 1, column: 'theory lower edge', reason: 'is above the central theory value' });
    if (theory.upper?.[i] !== undefined && theory.upper[i]! < c) problems.push({ row: i + 1, column: 'theory upper edge', reason: 'is below the central theory value' });
  }
  return problems.slice(0, MAX_PROBLEMS);
}
