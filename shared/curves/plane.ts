/**
 * Results over two parameters as uploaded: the checks of a plane's numbers (shared by JSON bodies,
 * the project's JSON file and CSV tables), a CSV table with two parameter columns read into a
 * plane, and the downloads (points and contour lines as CSV). The grid itself is checked by
 * shared/plane/grid.ts `planeGrid`, whose refusal names the point; here it is named like every
 * other problem (`plane.x.17` in JSON, `line 19, m_chi` in a file).
 */
import Papa from 'papaparse';
import { EXPECTED_KEYS, type ExpectedKey } from '../schemas/counting-model';
import { PLANE_LIMITS, type Plane, type PlaneContourLine, type PlaneContours } from '../schemas/plane';
import type { Quantity } from '../schemas/results';
import { StatsInputError } from '../stats/errors';
import { planeGrid } from '../plane/grid';
import { BAND_LABELS, ProblemCollector, type CurveProblem } from './check';
import { CsvFileError, readMappedColumns, type ColumnMapping, type ColumnRole, type CsvTable } from './csv';

/**
 * One problem of a plane: `key` is the column's path in the plane (`x`, `observed`,
 * `expected.-1`, `theory.lower`; empty for the plane as a whole), `index` the point (0-based).
 */
export type PlaneProblem = { key: string; index?: number; reason: string };

/** A plane problem as the JSON field it names: `plane.x.17`, `plane.expected.-1.3`, `plane`. */
export const planeField = (p: PlaneProblem): string => ['plane', p.key, p.index].filter((s) => s !== '' && s !== undefined).join('.');

const EXPECTED_KEY_PATH = (k: ExpectedKey) => `expected.${k}`;
const LABELS: Record<string, string> = {
  x: 'first parameter (x)',
  y: 'second parameter (y)',
  observed: 'observed',
  ...Object.fromEntries(EXPECTED_KEYS.map((k) => [EXPECTED_KEY_PATH(k), BAND_LABELS[k]])),
  'theory.central': 'theory',
  'theory.lower': 'theory lower edge',
  'theory.upper': 'theory upper edge',
};

/**
 * A `planeGrid` refusal as a plane problem: its field (`x[17]`, `y`) gives the column and the point;
 * its reason reads after the field ("x[17] and y[17] are off the grid…"), so the field leads it.
 */
function gridProblem(p: { field: string; reason: string }, n: number): PlaneProblem {
  const m = /^([xy])(?:\[(\d+)\])?/.exec(p.field);
  const key = m?.[1] ?? '';
  const index = m?.[2] !== undefined ? Number(m[2]) : undefined;
  const reason = `${p.field} ${p.reason}`;
  return index !== undefined && index < n ? { key, index, reason } : { key, reason };
}

/**
 * Checks a plane as it is stored: every column as long as x, finite coordinates, positive limits,
 * complete bands in order (−2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ), theory only for σ×B limits with
 * lower ≤ central ≤ upper, and — when the numbers are sound — the grid (`planeGrid`: duplicates,
 * points off the grid, one-row grids, axes of fewer than 2 or more than 200 values). Every problem
 * is counted into `into`; the first are returned.
 */
export function checkPlane(plane: Plane, quantity: Quantity, into = new ProblemCollector<PlaneProblem>()): PlaneProblem[] {
  const add = (p: PlaneProblem) => into.add(p);
  const n = plane.x.length;
  let coordinatesOk = true;
  if (plane.y.length !== n) {
    add({ key: 'y', reason: `has ${plane.y.length} values but x has ${n}: every point has both` });
    coordinatesOk = false;
  }
  for (const key of ['x', 'y'] as const) {
    plane[key].forEach((v, i) => {
      if (!Number.isFinite(v)) {
        add({ key, index: i, reason: 'must be a finite number' });
        coordinatesOk = false;
      }
    });
  }
  if (!plane.observed && !plane.expected?.['0']) add({ key: '', reason: 'needs at least an observed or an expected median limit per point' });
  const limitColumns: [string, number[] | undefined][] = [['observed', plane.observed], ...EXPECTED_KEYS.map((k) => [EXPECTED_KEY_PATH(k), plane.expected?.[k]] as [string, number[] | undefined])];
  for (const [key, values] of limitColumns) {
    if (!values) continue;
    if (values.length !== n) {
      add({ key, reason: `has ${values.length} values but there are ${n} points` });
      continue;
    }
    values.forEach((v, i) => {
      if (!Number.isFinite(v)) add({ key, index: i, reason: 'must be a finite number' });
      else if (v <= 0) add({ key, index: i, reason: `must be positive (an upper limit of ${v} is impossible)` });
    });
  }
  for (const [lo, hi] of [['-1', '1'], ['-2', '2']] as const) {
    const hasLo = !!plane.expected?.[lo];
    const hasHi = !!plane.expected?.[hi];
    if (hasLo !== hasHi) add({ key: EXPECTED_KEY_PATH(hasLo ? hi : lo), reason: `is missing: a ±${hi}σ band needs both edges` });
    if ((hasLo || hasHi) && !plane.expected?.['0']) add({ key: EXPECTED_KEY_PATH('0'), reason: `is needed when the ±${hi}σ band is given` });
  }
  const present = EXPECTED_KEYS.filter((k) => plane.expected?.[k]?.length === n);
  for (let i = 0; i < n; i++) {
    for (let j = 1; j < present.length; j++) {
      const a = present[j - 1]!;
      const b = present[j]!;
      const va = plane.expected![a]![i]!;
      const vb = plane.expected![b]![i]!;
      if (Number.isFinite(va) && Number.isFinite(vb) && va > vb) {
        // Blame the outer edge, as for curves (shared/curves/check.ts).
        add({ key: EXPECTED_KEY_PATH(Number(b) <= 0 ? a : b), index: i, reason: `${BAND_LABELS[a]} (${va}) is above ${BAND_LABELS[b]} (${vb}); the band must satisfy −2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ` });
      }
    }
  }
  if (plane.theory) {
    if (quantity === 'mu') add({ key: 'theory', reason: 'is for limits on σ×B only: a limit on μ is already the ratio to the theory' });
    const t = plane.theory;
    for (const [key, values] of [['theory.central', t.central], ['theory.lower', t.lower], ['theory.upper', t.upper]] as const) {
      if (!values) continue;
      if (values.length !== n) {
        add({ key, reason: `has ${values.length} values but there are ${n} points` });
        continue;
      }
      values.forEach((v, i) => {
        if (!Number.isFinite(v) || v <= 0) add({ key, index: i, reason: 'must be a positive number' });
      });
    }
    for (let i = 0; i < n; i++) {
      const c = t.central[i]!;
      if (t.lower?.[i] !== undefined && t.lower[i]! > c) add({ key: 'theory.lower', index: i, reason: `is above the central theory value (${t.lower[i]} > ${c})` });
      if (t.upper?.[i] !== undefined && t.upper[i]! < c) add({ key: 'theory.upper', index: i, reason: `is below the central theory value (${t.upper[i]} < ${c})` });
    }
  }
  if (coordinatesOk && into.total === 0) {
    try {
      planeGrid(plane.x, plane.y);
    } catch (e) {
      if (!(e instanceof StatsInputError)) throw e;
      for (const p of e.problems) add(gridProblem(p, n));
    }
  }
  return into.list;
}

const ROLE_KEYS: [ColumnRole, string][] = [
  ['x', 'x'],
  ['y', 'y'],
  ['observed', 'observed'],
  ['expected', 'expected.0'],
  ['expectedMinus2', 'expected.-2'],
  ['expectedMinus1', 'expected.-1'],
  ['expectedPlus1', 'expected.1'],
  ['expectedPlus2', 'expected.2'],
  ['theory', 'theory.central'],
  ['theoryLower', 'theory.lower'],
  ['theoryUpper', 'theory.upper'],
];

/**
 * "m_chi [GeV]" → name "m_chi", unit "GeV" (also "m_chi (GeV)" with a space before the bracket);
 * "m(χ)" stays a name. Else the header as name.
 */
export function nameAndUnit(header: string): { name: string; unit: string } {
  const m = /^(.*?)(?:\s*\[\s*([^\]]{1,20}?)\s*\]|\s+\(\s*([^)]{1,20}?)\s*\))\s*$/.exec(header.trim());
  const name = (m ? m[1]! : header).trim().slice(0, 60);
  return { name: name || 'y', unit: m ? (m[2] ?? m[3] ?? '').trim() : '' };
}

/**
 * A table with two parameter columns (roles x and y) → a plane, with every problem named by file
 * line and the file's own column header. The second parameter's name and unit come from its
 * header ("m_chi [GeV]") unless `second` gives them. Throws `CsvFileError` with every problem.
 */
export function tableToPlane(table: CsvTable, mapping: ColumnMapping, quantity: Quantity, second: { name?: string; unit?: string } = {}): Plane {
  const problems = new ProblemCollector();
  if (mapping.y === undefined) {
    problems.add({ column: 'mapping', reason: 'choose the column that holds the second parameter (y)' });
    throw CsvFileError.of(problems);
  }
  const values = readMappedColumns(table, mapping, problems, { maxRows: PLANE_LIMITS.maxPoints, what: `a result over two parameters has at most ${PLANE_LIMITS.maxAxisValues} × ${PLANE_LIMITS.maxAxisValues} =` });
  const col = (role: ColumnRole) => values.get(role);
  const expected: NonNullable<Plane['expected']> = {};
  for (const [role, key] of ROLE_KEYS) if (key.startsWith('expected.') && col(role)) expected[key.slice(9) as ExpectedKey] = col(role)!;
  const header = nameAndUnit(table.headers[mapping.y] ?? 'y');
  const central = col('theory');
  const lower = col('theoryLower');
  const upper = col('theoryUpper');
  if ((lower || upper) && !central) problems.add({ column: 'mapping', reason: 'a theory band needs the central theory column too' });
  const plane: Plane = {
    yName: second.name || header.name,
    yUnit: second.unit ?? header.unit,
    x: col('x')!,
    y: col('y')!,
    ...(col('observed') ? { observed: col('observed') } : {}),
    ...(Object.keys(expected).length ? { expected } : {}),
    ...(central ? { theory: { central, ...(lower ? { lower } : {}), ...(upper ? { upper } : {}) } } : {}),
  };
  if (problems.total) throw CsvFileError.of(problems);

  const headerOfKey = new Map(ROLE_KEYS.flatMap(([role, key]) => (mapping[role] !== undefined ? [[key, table.headers[mapping[role]!] ?? key] as const] : [])));
  const found = new ProblemCollector<PlaneProblem>();
  const list = checkPlane(plane, quantity, found);
  if (list.length) {
    const lineOf = (k: number) => table.lines[k] ?? k + 1;
    // The grid's reasons speak of points (x[17], point 12); a file's reader knows lines and headers.
    const inFileWords = (reason: string) =>
      reason
        .replace(/\b([xy])\[(\d+)\]/g, (_, axis: string, k: string) => `${headerOfKey.get(axis) ?? axis} (line ${lineOf(Number(k))})`)
        .replace(/\bpoint (\d+)/g, (_, k: string) => `line ${lineOf(Number(k))}`);
    throw new CsvFileError(
      list.map((p): CurveProblem => ({ ...(p.index !== undefined ? { row: lineOf(p.index) } : {}), column: headerOfKey.get(p.key) ?? (p.key ? LABELS[p.key] ?? p.key : 'file'), reason: inFileWords(p.reason) })),
      found.total,
    );
  }
  return plane;
}

/** A plane problem named for a point of a JSON file (`point 3, observed`) rather than a body field. */
export function planeProblemAsCurveProblem(p: PlaneProblem): CurveProblem {
  return { ...(p.index !== undefined ? { row: p.index + 1 } : {}), column: p.key ? `plane.${p.key}` : 'plane', reason: p.reason };
}

/** Points → CSV text with plain headers, for downloads (the same columns a CSV upload maps by itself). */
export function planeToCsv(plane: Plane, headers: { x: string; y: string }): string {
  const cols: [string, number[]][] = [
    [headers.x, plane.x],
    [headers.y, plane.y],
  ];
  if (plane.observed) cols.push(['observed', plane.observed]);
  const names: Record<ExpectedKey, string> = { '-2': 'expected_minus_2sigma', '-1': 'expected_minus_1sigma', '0': 'expected', '1': 'expected_plus_1sigma', '2': 'expected_plus_2sigma' };
  for (const k of ['0', '-2', '-1', '1', '2'] as const) if (plane.expected?.[k]) cols.push([names[k], plane.expected[k]!]);
  if (plane.theory) {
    cols.push(['theory', plane.theory.central]);
    if (plane.theory.lower) cols.push(['theory_lower', plane.theory.lower]);
    if (plane.theory.upper) cols.push(['theory_upper', plane.theory.upper]);
  }
  return Papa.unparse({ fields: cols.map((c) => c[0]), data: plane.x.map((_, i) => cols.map((c) => c[1][i])) }, { newline: '\n' }) + '\n';
}

/** The contour lines of a plane in a fixed order, each kind with its name in downloads and on the page. */
export function contourGroups(c: PlaneContours): { which: string; label: string; lines: PlaneContourLine[] }[] {
  const groups: { which: string; label: string; lines: PlaneContourLine[] | undefined }[] = [
    { which: 'observed', label: 'Observed', lines: c.observed },
    { which: 'observed_theory_lower', label: 'Observed, theory −1σ', lines: c.observedTheoryLower },
    { which: 'observed_theory_upper', label: 'Observed, theory +1σ', lines: c.observedTheoryUpper },
    { which: 'expected', label: 'Expected median', lines: c.expected['0'] },
    { which: 'expected_minus_1sigma', label: 'Expected −1σ', lines: c.expected['-1'] },
    { which: 'expected_plus_1sigma', label: 'Expected +1σ', lines: c.expected['1'] },
  ];
  return groups.flatMap((g) => (g.lines?.length ? [{ which: g.which, label: g.label, lines: g.lines }] : []));
}

/**
 * Contour lines → CSV, one row per vertex: `line` (1, 2, … across all lines), `which` (observed,
 * expected, expected_minus_1sigma, …), `closed`, `vertex` (from 1 within its line), x and y under
 * the parameters' own headers.
 */
export function contoursToCsv(c: PlaneContours, headers: { x: string; y: string }): string {
  const data: (string | number)[][] = [];
  let line = 0;
  for (const g of contourGroups(c)) {
    for (const l of g.lines) {
      line++;
      l.points.forEach(([x, y], i) => data.push([line, g.which, l.closed ? 'yes' : 'no', i + 1, x, y]));
    }
  }
  return Papa.unparse({ fields: ['line', 'which', 'closed', 'vertex', headers.x, headers.y], data }, { newline: '\n' }) + '\n';
}
