/**
 * The scan CSV layout: one row per grid point and bin.
 *
 *   x, sigma_nominal, bin, observed, signal, background:<name>…, systematic:<name>:<process>…
 *
 * - `x` is the parameter value of the grid point (rows with the same x form one point, in file order);
 * - `y` (optional) the second parameter of a scan over two parameters: then rows with the same
 *   (x, y) form one point, and every row needs a y;
 * - `sigma_nominal` (optional) the nominal σ×B of the point (same on all its rows), for σ×B limits;
 *   it becomes the draft's theory curve; `sigma_nominal_low` / `sigma_nominal_high` (optional,
 *   both or neither) its band;
 * - `bin` a label of the bin (kept for reading; bins are taken in row order);
 * - `observed`, `signal` the observed count and the signal yield at μ = 1;
 * - `background:<name>` the yield of one background process (one column per process);
 * - `systematic:<name>:<process>` the relative effect δ of nuisance parameter <name> on <process>
 *   ("signal" or a background name) in that bin; empty means no effect there.
 * Comma, semicolon or tab separated; lines starting with '#' are comments.
 */
import { RESERVED_PROCESS_NAME, type CountingModelInput } from '../schemas/counting-model';
import type { ScanInputPoint } from '../schemas/scans';
import { CsvFileError, parseCsv, parseNumber } from '../curves/csv';
import type { CurveProblem } from '../curves/check';

type Column =
  | { kind: 'x' | 'y' | SigmaKind | 'bin' | 'observed' | 'signal'; index: number }
  | { kind: 'background'; name: string; index: number }
  | { kind: 'systematic'; name: string; process: string; index: number };

/** The per-point σ×B columns and the point field each fills. */
type SigmaKind = 'sigmaNominal' | 'sigmaNominalLow' | 'sigmaNominalHigh';
const SIGMA_KINDS: readonly SigmaKind[] = ['sigmaNominal', 'sigmaNominalLow', 'sigmaNominalHigh'];

// A Map, not an object literal: a header such as "constructor" must not find Object.prototype's.
const FIXED = new Map<string, Column['kind']>([
  ['x', 'x'],
  ['y', 'y'],
  ['sigma_nominal', 'sigmaNominal'],
  ['sigma_nominal_low', 'sigmaNominalLow'],
  ['sigma_nominal_high', 'sigmaNominalHigh'],
  ['bin', 'bin'],
  ['observed', 'observed'],
  ['signal', 'signal'],
]);

/** The engine refuses "__proto__" as a process name; say so at once, for the column. */
const reservedProblem = (column: string): CurveProblem => ({
  column,
  reason: `"${RESERVED_PROCESS_NAME}" cannot name a process (JavaScript objects cannot hold it as a key); choose another name`,
});

function classify(headers: string[]): { columns: Column[]; problems: CurveProblem[] } {
  const columns: Column[] = [];
  const problems: CurveProblem[] = [];
  headers.forEach((raw, index) => {
    const h = raw.trim();
    const fixed = FIXED.get(h.toLowerCase());
    if (fixed) return void columns.push({ kind: fixed, index } as Column);
    const bg = /^background:(.+)$/i.exec(h);
    if (bg) {
      const name = bg[1]!.trim();
      if (name === RESERVED_PROCESS_NAME) return void problems.push(reservedProblem(h));
      return void columns.push({ kind: 'background', name, index });
    }
    const sy = /^systematic:([^:]+):(.+)$/i.exec(h);
    if (sy) {
      const process = sy[2]!.trim();
      if (process === RESERVED_PROCESS_NAME) return void problems.push(reservedProblem(h));
      return void columns.push({ kind: 'systematic', name: sy[1]!.trim(), process, index });
    }
    problems.push({ column: h || `column ${index + 1}`, reason: 'is not a column of the scan layout (x, y, sigma_nominal, sigma_nominal_low, sigma_nominal_high, bin, observed, signal, background:<name>, systematic:<name>:<process>)' });
  });
  for (const k of ['x', 'observed', 'signal'] as const) {
    if (!columns.some((c) => c.kind === k)) problems.push({ column: k, reason: 'is a required column and is missing' });
  }
  return { columns, problems };
}

/**
 * Scan CSV text → grid points with counting models. Every problem of the layout names the file
 * line and the column; the models themselves are checked by the engine when each point is computed.
 */
export function parseScanCsv(text: string): ScanInputPoint[] {
  const table = parseCsv(text);
  const { columns, problems } = classify(table.headers);
  if (problems.length) throw new CsvFileError(problems);

  type Acc = { x: number; y?: number; sigma: Partial<Record<SigmaKind, { value: number; line: number }>>; rows: number[]; model: Required<Pick<CountingModelInput, 'observed' | 'signal'>> & { backgrounds: { name: string; yields: number[] }[]; systematics: Map<string, Map<string, number[]>> } };
  const points: Acc[] = [];
  const byX = new Map<string, Acc>();
  const yCol = columns.find((c) => c.kind === 'y');
  const bgNames = columns.filter((c): c is Extract<Column, { kind: 'background' }> => c.kind === 'background').map((c) => c.name);

  table.rows.forEach((row, r) => {
    const line = table.lines[r]!;
    const num = (c: Column, required: boolean): number | undefined => {
      const cell = row[c.index] ?? '';
      if (cell === '') {
        if (required) problems.push({ row: line, column: table.headers[c.index]!, reason: 'is empty' });
        return undefined;
      }
      const v = parseNumber(cell, table.delimiter);
      if (v === null) problems.push({ row: line, column: table.headers[c.index]!, reason: `"${cell.slice(0, 40)}" is not a number` });
      return v ?? undefined;
    };
    if (row.length !== table.headers.length) {
      problems.push({ row: line, column: 'row', reason: `has ${row.length} cells but the header has ${table.headers.length}` });
      return;
    }
    const xCol = columns.find((c) => c.kind === 'x')!;
    const x = num(xCol, true);
    const y = yCol ? num(yCol, true) : undefined;
    if (x === undefined || (yCol && y === undefined)) return;
    const key = y === undefined ? String(x) : `${x},${y}`;
    const at = y === undefined ? `x = ${x}` : `(x, y) = (${x}, ${y})`;
    let p = byX.get(key);
    if (!p) {
      p = { x, ...(y === undefined ? {} : { y }), sigma: {}, rows: [], model: { observed: [], signal: [], backgrounds: bgNames.map((name) => ({ name, yields: [] })), systematics: new Map() } };
      byX.set(key, p);
      points.push(p);
    } else if (points[points.length - 1] !== p) {
      problems.push({ row: line, column: table.headers[xCol.index]!, reason: `${at} appeared earlier and again here; keep the rows of one grid point together` });
    }
    const bin = p.rows.length;
    p.rows.push(line);
    for (const c of columns) {
      if (c.kind === 'observed') p.model.observed.push(num(c, true) ?? NaN);
      else if (c.kind === 'signal') p.model.signal.push(num(c, true) ?? NaN);
      else if (c.kind === 'background') p.model.backgrounds.find((b) => b.name === c.name)!.yields.push(num(c, true) ?? NaN);
      else if (c.kind === 'sigmaNominal' || c.kind === 'sigmaNominalLow' || c.kind === 'sigmaNominalHigh') {
        const s = num(c, false);
        const seen = p.sigma[c.kind];
        if (s !== undefined) {
          if (seen && seen.value !== s) problems.push({ row: line, column: table.headers[c.index]!, reason: `differs from line ${seen.line} of the same grid point (${seen.value})` });
          else if (!seen) p.sigma[c.kind] = { value: s, line };
        }
      } else if (c.kind === 'systematic') {
        // Empty cells mean "no effect in this bin"; a process with no effect at all in a
        // point's bins is left out of that point's model.
        const d = num(c, false);
        const perProcess = p.model.systematics.get(c.name) ?? new Map<string, number[]>();
        p.model.systematics.set(c.name, perProcess);
        if (d !== undefined) {
          const arr = perProcess.get(c.process) ?? [];
          arr[bin] = d;
          perProcess.set(c.process, arr);
        }
      }
    }
  });
  if (problems.length) throw new CsvFileError(problems);

  const result: ScanInputPoint[] = points.map((p) => {
    const bins = p.rows.length;
    const systematics = [...p.model.systematics.entries()]
      .filter(([, per]) => per.size > 0)
      .map(([name, per]) => ({
        name,
        effects: Object.fromEntries([...per.entries()].map(([proc, arr]) => [proc, Array.from({ length: bins }, (_, i) => arr[i] ?? 0)])),
      }));
    const model: CountingModelInput = { observed: p.model.observed, signal: p.model.signal, backgrounds: p.model.backgrounds, systematics };
    const point: ScanInputPoint = { x: p.x, ...(p.y === undefined ? {} : { y: p.y }), model };
    for (const k of SIGMA_KINDS) if (p.sigma[k]) point[k] = p.sigma[k]!.value;
    return point;
  });

  return result;
}

/** Grid points → scan CSV text (the inverse of parseScanCsv, for downloads of stored inputs). */
export function scanToCsv(points: ScanInputPoint[]): string {
  const bgNames = [...new Set(points.flatMap((p) => (p.model.backgrounds ?? []).map((b) => b.name)))];
  const systCols = [...new Set(points.flatMap((p) => (p.model.systematics ?? []).flatMap((s) => Object.keys(s.effects).map((proc) => `${s.name}:${proc}`))))];
  const band = points.some((p) => p.sigmaNominalLow !== undefined || p.sigmaNominalHigh !== undefined);
  const plane = points.some((p) => p.y !== undefined);
  const header = ['x', ...(plane ? ['y'] : []), 'sigma_nominal', ...(band ? ['sigma_nominal_low', 'sigma_nominal_high'] : []), 'bin', 'observed', 'signal', ...bgNames.map((n) => `background:${n}`), ...systCols.map((c) => `systematic:${c}`)];
  const lines = [header.join(',')];
  for (const p of points) {
    p.model.observed.forEach((obs, i) => {
      const cells: (string | number)[] = [p.x, ...(plane ? [p.y ?? ''] : []), p.sigmaNominal ?? '', ...(band ? [p.sigmaNominalLow ?? '', p.sigmaNominalHigh ?? ''] : []), i + 1, obs, p.model.signal[i] ?? ''];
      for (const n of bgNames) cells.push((p.model.backgrounds ?? []).find((b) => b.name === n)?.yields[i] ?? 0);
      for (const c of systCols) {
        const [name, proc] = [c.slice(0, c.indexOf(':')), c.slice(c.indexOf(':') + 1)];
        const effects = (p.model.systematics ?? []).find((s) => s.name === name)?.effects;
        // Own keys only: a process named "constructor" must not read Object.prototype.constructor.
        const eff = effects && Object.prototype.hasOwnProperty.call(effects, proc) ? effects[proc] : undefined;
        cells.push(eff === undefined ? '' : Array.isArray(eff) ? (eff[i] ?? '') : eff);
      }
      lines.push(cells.map((v) => (typeof v === 'string' && /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : String(v))).join(','));
    });
  }
  return lines.join('\n') + '\n';
}
