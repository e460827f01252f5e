/**
 * CSV limit tables: decoding, parsing (comma, semicolon or tab; decimal commas in semicolon and tab
 * files), auto-detection of which column holds what, and conversion to a curve with every problem
 * named by line and column. Used by the app (preview before upload) and the server (the authority).
 */
import Papa from 'papaparse';
import { MAX_CURVE_POINTS, type Curve, type Theory } from '../schemas/results';
import { checkCurve, formatCount, ProblemCollector, type CurveProblem } from './check';

export const COLUMN_ROLES = [
  'x',
  /** The second parameter: a file with it holds a result over two parameters (a plane, shared/curves/plane.ts). */
  'y',
  'observed',
  'expected',
  'expectedMinus2',
  'expectedMinus1',
  'expectedPlus1',
  'expectedPlus2',
  'theory',
  'theoryLower',
  'theoryUpper',
] as const;
export type ColumnRole = (typeof COLUMN_ROLES)[number];

export const ROLE_TITLES: Record<ColumnRole, string> = {
  x: 'Parameter (x)',
  y: 'Second parameter (y)',
  observed: 'Observed limit',
  expected: 'Expected median',
  expectedMinus2: 'Expected −2σ',
  expectedMinus1: 'Expected −1σ',
  expectedPlus1: 'Expected +1σ',
  expectedPlus2: 'Expected +2σ',
  theory: 'Theory',
  theoryLower: 'Theory lower edge',
  theoryUpper: 'Theory upper edge',
};

/** Column index per role; a role absent from the map is not in the file. */
export type ColumnMapping = Partial<Record<ColumnRole, number>>;

export type CsvTable = { headers: string[]; rows: string[][]; delimiter: ',' | ';' | '\t'; /** file line of each data row */ lines: number[] };

/** A file that cannot be used: the first problems (at most MAX_PROBLEMS) and how many there are in all. */
export class CsvFileError extends Error {
  readonly total: number;
  constructor(
    readonly problems: CurveProblem[],
    total?: number,
  ) {
    super(problems[0] ? `${problems[0].row ? `line ${problems[0].row}, ` : ''}${problems[0].column}: ${problems[0].reason}` : 'invalid file');
    this.total = Math.max(total ?? problems.length, problems.length);
  }

  static of(c: ProblemCollector): CsvFileError {
    return new CsvFileError(c.list, c.total);
  }
}

/**
 * Bytes → text. UTF-8 (with or without BOM) and UTF-16 with BOM are accepted; anything else is
 * refused with a message that says how to fix it, rather than guessed.
 */
export function decodeText(bytes: Uint8Array): string {
  if (bytes.length >= 2 && bytes[0] === 0xff && bytes[1] === 0xfe) return new TextDecoder('utf-16le').decode(bytes.subarray(2));
  if (bytes.length >= 2 && bytes[0] === 0xfe && bytes[1] === 0xff) return new TextDecoder('utf-16be').decode(bytes.subarray(2));
  try {
    const text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  } catch {
    throw new CsvFileError([{ column: 'file', reason: 'is not UTF-8 text; save it as "CSV UTF-8" and upload again' }]);
  }
}

/** Parses CSV text, detecting the delimiter among comma, semicolon and tab. */
export function parseCsv(text: string): CsvTable {
  if (!text.trim()) throw new CsvFileError([{ column: 'file', reason: 'is empty' }]);
  if (text.includes('\u0000')) throw new CsvFileError([{ column: 'file', reason: 'looks binary, not like a text table' }]);
  const firstLine = text.split(/\r?\n/, 1)[0] ?? '';
  const counts = { ',': 0, ';': 0, '\t': 0 } as Record<',' | ';' | '\t', number>;
  for (const ch of firstLine) if (ch in counts) counts[ch as keyof typeof counts]++;
  const delimiter = (Object.entries(counts).sort((a, b) => b[1] - a[1])[0]![1] > 0
    ? Object.entries(counts).sort((a, b) => b[1] - a[1])[0]![0]
    : ',') as CsvTable['delimiter'];
  // Row by row (papaparse's `step`), trimming in place: a 5 MB file of short rows is a million
  // rows, and building the whole parse before copying it would hold it twice.
  // Keep file line numbers; skip blank lines and comment lines starting with '#'.
  const rows: string[][] = [];
  const lines: number[] = [];
  let index = 0;
  Papa.parse<string[]>(text, {
    delimiter,
    skipEmptyLines: false,
    step: ({ data: cells }) => {
      index++;
      let blank = true;
      for (let c = 0; c < cells.length; c++) {
        const v = cells[c]!.trim();
        cells[c] = v;
        if (v !== '') blank = false;
      }
      if (blank || (cells[0] ?? '').startsWith('#')) return;
      rows.push(cells);
      lines.push(index);
    },
  });
  if (rows.length === 0) throw new CsvFileError([{ column: 'file', reason: 'has no rows' }]);
  const headers = rows[0]!;
  const headerLine = lines[0]!;
  const headerLooksNumeric = headers.every((c) => parseNumber(c, delimiter) !== null);
  if (headerLooksNumeric) throw new CsvFileError([{ row: headerLine, column: 'header', reason: 'the first row must name the columns (e.g. mass, observed, expected)' }]);
  if (headers.length < 2) {
    throw new CsvFileError([{ row: headerLine, column: 'header', reason: 'has one column only; use commas, semicolons or tabs between columns' }]);
  }
  rows.shift();
  lines.shift();
  if (rows.length === 0) throw new CsvFileError([{ column: 'file', reason: 'has a header but no data rows' }]);
  return { headers, rows, lines, delimiter };
}

/** A cell as a number, or null. Semicolon and tab files may use a decimal comma ("1,25"). */
export function parseNumber(cell: string, delimiter: CsvTable['delimiter']): number | null {
  let s = cell.trim().replace(/\u2212/g, '-');
  if (delimiter !== ',' && /^[-+]?\d+,\d+([eE][-+]?\d+)?$/.test(s)) s = s.replace(',', '.');
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(s)) return null;
  const v = Number(s);
  return Number.isFinite(v) ? v : null;
}

/** Lower-cased header with σ, minus signs, spaces and separators normalised for matching. */
function norm(h: string): string {
  return h
    .toLowerCase()
    .replace(/σ/g, 'sigma')
    .replace(/[\u2212\u2013]/g, '-')
    .replace(/[\s_.:()[\]]+/g, '');
}

const SIGMA_WORDS = new Set(['sigma', 'sig', 's', 'sd', 'std']);
const UP_WORDS = new Set(['up', 'upper', 'hi', 'high', 'plus', 'max']);
const DOWN_WORDS = new Set(['down', 'dn', 'lo', 'low', 'lower', 'minus', 'min']);
const EXPECTED_WORDS = new Set(['exp', 'expd', 'expect', 'expected', 'expectation', 'median', 'med']);
/** What may follow "exp" glued to it ("expm1", "expUp", "explimit"). */
const EXP_GLUED = new Set([...UP_WORDS, ...DOWN_WORDS, 'p', 'm', 'limit', 'lim', 'median']);

/**
 * A header as words and numbers: lower case, σ as "sigma", any minus sign as "-", units and
 * brackets dropped as separators. A sign stays on the number after it ("exp -1sig" → exp, -1, sig;
 * "exp+1s" → exp, +1, s), and "exp" glued to a band word is split ("expm2s" → exp, m, 2, s).
 */
export function headerTokens(raw: string): string[] {
  const s = raw
    .toLowerCase()
    .replace(/σ/g, ' sigma ')
    .replace(/[\u2212\u2010-\u2015\ufe63\uff0d]/g, '-')
    .replace(/\uff0b/g, '+')
    .replace(/±/g, ' pm ');
  const out: string[] = [];
  for (const [t] of s.matchAll(/[+-]?\d+(?:\.\d+)?|[a-z]+/g)) {
    const glued = /^(expected|expect|exp)([a-z]+)$/.exec(t);
    if (glued && EXP_GLUED.has(glued[2]!)) out.push(glued[1]!, glued[2]!);
    else out.push(t);
  }
  return out;
}

type Direction = 'up' | 'down' | 'both' | null;

/**
 * The band a header names: its width (1 or 2 σ; 68 % and 95 % too) and its side (a sign on the
 * number, plus/minus, up/down, hi/lo, and — after an "exp" word — p/m as in "exp_p1", "exp_m2s").
 * Both sides at once ("±1σ", "up/down") is no side.
 */
function bandOf(tokens: string[], shortSides: boolean): { level: 0 | 1 | 2; side: Direction; sigmaWord: boolean } {
  let level: 0 | 1 | 2 = 0;
  let up = false;
  let down = false;
  const isSide = (t: string | undefined) => t !== undefined && (UP_WORDS.has(t) || DOWN_WORDS.has(t) || (shortSides && (t === 'p' || t === 'm')));
  tokens.forEach((t, i) => {
    const num = /^([+-]?)(\d+(?:\.\d+)?)$/.exec(t);
    if (num) {
      const prev = tokens[i - 1];
      const next = tokens[i + 1];
      // "fb-1" is a unit, not a band edge.
      if (prev === 'fb' || prev === 'pb' || prev === 'ab') return;
      const v = Number(num[2]);
      const percent = v === 68 || v === 95;
      const l = v === 1 || v === 68 ? 1 : v === 2 || v === 95 ? 2 : 0;
      // A bare 1 or 2 is a width only beside σ or a side ("1sigma", "p1", "up 1"), or signed:
      // "μ = 1" or "2 fb" are not bands.
      const width = num[1] !== '' || percent || SIGMA_WORDS.has(next ?? '') || isSide(prev) || isSide(next);
      if (!l || !width) return;
      level = l;
      if (num[1] === '+') up = true;
      if (num[1] === '-') down = true;
      return;
    }
    if (UP_WORDS.has(t) || (shortSides && t === 'p')) up = true;
    else if (DOWN_WORDS.has(t) || (shortSides && t === 'm')) down = true;
    else if (t === 'pm') {
      up = true;
      down = true;
    }
  });
  return { level, side: up && down ? 'both' : up ? 'up' : down ? 'down' : null, sigmaWord: tokens.some((t) => SIGMA_WORDS.has(t)) };
}

const EXPECTED_BANDS = { up: { 1: 'expectedPlus1', 2: 'expectedPlus2' }, down: { 1: 'expectedMinus1', 2: 'expectedMinus2' } } as const;

/**
 * The role a header names, or null. Recognised, among others: "mass", "M_Z' [GeV]"; "obs",
 * "Obs. limit (fb)", "obs [pb]"; "expected", "Expected median"; bands as "exp +1sigma", "exp -1sig",
 * "Expected +2σ", "exp (up 1)", "exp_1sigma_down", "expected_plus_1sigma", "expected_p1",
 * "exp_m2s", "exp 68% low" (a band without its width is ±1σ: "exp_up"); "theory", "σ_th NLO",
 * "theory low", "theory +1σ". Headers that say a width but no side ("exp 2σ") or both sides
 * ("exp ±1σ") get no role.
 */
export function headerRole(raw: string): ColumnRole | null {
  const h = norm(raw);
  const tokens = headerTokens(raw);
  if (/^(theo|th$|thxs|prediction|xsecth|sigmath|nominal)/.test(h) || h.includes('theory')) {
    // Band edges are whole words or signed numbers, so that "NLO" or "top-philic" are not edges.
    const { side } = bandOf(tokens, false);
    return side === 'down' ? 'theoryLower' : side === 'up' ? 'theoryUpper' : 'theory';
  }
  if (tokens.some((t) => t.startsWith('obs'))) return 'observed';
  const expectedWord = tokens.some((t) => EXPECTED_WORDS.has(t));
  const band = bandOf(tokens, expectedWord);
  // Without an "exp" word, only a signed or worded side with σ makes a band ("+1σ", "-2 sigma").
  if (expectedWord || (band.sigmaWord && band.level && (band.side === 'up' || band.side === 'down'))) {
    if (band.side === 'both') return null;
    if (!band.side) return band.level ? null : 'expected';
    return EXPECTED_BANDS[band.side][band.level || 1];
  }
  if (/^(y|param2|parameter2|secondparameter)$/.test(h)) return 'y';
  if (/^(x|m|mass|param|parameter)$/.test(h) || /^m[a-z]*$/.test(h) || h.startsWith('mass') || tokens[0] === 'm') return 'x';
  return null;
}

/**
 * Guesses the role of each column from its header (the first column naming a role gets it); the
 * user confirms or changes them. A second column that reads as a parameter ("m_X", then "m_chi")
 * is the second parameter (y): the file is then a result over two parameters.
 */
export function detectRoles(headers: string[]): ColumnMapping {
  const mapping: ColumnMapping = {};
  headers.forEach((raw, i) => {
    let role = headerRole(raw);
    if (role === 'x' && mapping.x !== undefined) role = 'y';
    if (role && mapping[role] === undefined) mapping[role] = i;
  });
  if (mapping.x === undefined) {
    const firstFree = headers.findIndex((_, i) => !Object.values(mapping).includes(i));
    if (firstFree >= 0) mapping.x = firstFree;
  }
  return mapping;
}

/**
 * Columns without a role that hold numbers (most of their filled cells read as numbers): they are
 * named before saving ("Not used: …") and in the upload's answer, never dropped silently.
 */
export function unusedNumericColumns(table: CsvTable, mapping: ColumnMapping): number[] {
  const used = new Set(Object.values(mapping));
  const out: number[] = [];
  for (let c = 0; c < table.headers.length; c++) {
    if (used.has(c)) continue;
    let filled = 0;
    let numbers = 0;
    for (const row of table.rows) {
      const cell = row[c];
      if (cell === undefined || cell === '') continue;
      filled++;
      if (parseNumber(cell, table.delimiter) !== null) numbers++;
    }
    if (numbers > 0 && numbers * 2 >= filled) out.push(c);
  }
  return out;
}

/**
 * The mapped columns of a table as numbers, checked first as a mapping (columns in range, none
 * mapped twice, x and a limit column chosen), then cell by cell; every problem goes to `problems`
 * (and the first mapping problems end the reading, as `CsvFileError`). Shared by curves and planes.
 */
export function readMappedColumns(table: CsvTable, mapping: ColumnMapping, problems: ProblemCollector, limit: { maxRows: number; what: string }): Map<ColumnRole, number[]> {
  const seen = new Map<number, ColumnRole>();
  for (const [role, idx] of Object.entries(mapping) as [ColumnRole, number][]) {
    if (idx < 0 || idx >= table.headers.length) problems.add({ column: ROLE_TITLES[role], reason: `points at column ${idx + 1}, but the file has ${table.headers.length}` });
    else if (seen.has(idx)) problems.add({ column: table.headers[idx] ?? `column ${idx + 1}`, reason: `is mapped twice (${ROLE_TITLES[seen.get(idx)!]} and ${ROLE_TITLES[role]})` });
    else seen.set(idx, role);
  }
  if (mapping.x === undefined) problems.add({ column: 'mapping', reason: 'choose the column that holds the parameter (x)' });
  if (mapping.observed === undefined && mapping.expected === undefined) {
    problems.add({ column: 'mapping', reason: 'choose at least an observed or an expected median column' });
  }
  if (problems.total) throw CsvFileError.of(problems);
  if (table.rows.length > limit.maxRows) {
    problems.add({ column: 'file', reason: `has ${formatCount(table.rows.length)} data rows; ${limit.what} ${formatCount(limit.maxRows)} points` });
  }

  // Row by row, the cells of a row in file order: a list cut at MAX_PROBLEMS then shows the
  // first lines with every bad cell in them, not one column down the whole file.
  const mapped = (Object.entries(mapping) as [ColumnRole, number][]).sort((a, b) => a[1] - b[1]);
  const values = new Map<ColumnRole, number[]>(mapped.map(([role]) => [role, new Array<number>(table.rows.length)]));
  const width = table.headers.length;
  for (let r = 0; r < table.rows.length; r++) {
    const row = table.rows[r]!;
    const line = table.lines[r];
    if (row.length !== width) problems.add({ row: line, column: 'row', reason: `has ${row.length} cells but the header has ${width} (wrong delimiter or a stray separator?)` });
    for (const [role, idx] of mapped) {
      const cell = row[idx];
      let v: number | null = NaN;
      if (cell === undefined || cell === '') problems.add({ row: line, column: table.headers[idx] ?? `column ${idx + 1}`, reason: 'is empty' });
      else {
        v = parseNumber(cell, table.delimiter);
        if (v === null) problems.add({ row: line, column: table.headers[idx] ?? `column ${idx + 1}`, reason: `"${cell.slice(0, 40)}" is not a number` });
      }
      values.get(role)![r] = v ?? NaN;
    }
  }
  return values;
}

/**
 * Builds the curve (and the theory curve, on the same grid) from a table and a mapping. Every
 * problem is named by file line and column header; nothing is returned unless all is valid.
 */
export function tableToCurve(table: CsvTable, mapping: ColumnMapping): { curve: Curve; theory: Theory | null } {
  const problems = new ProblemCollector();
  const values = readMappedColumns(table, mapping, problems, { maxRows: MAX_CURVE_POINTS, what: 'a curve has at most' });
  const col = (role: ColumnRole): number[] | undefined => values.get(role);
  const x = col('x')!;
  const expected = {
    '-2': col('expectedMinus2'),
    '-1': col('expectedMinus1'),
    '0': col('expected'),
    '1': col('expectedPlus1'),
    '2': col('expectedPlus2'),
  };
  const curve: Curve = { x, observed: col('observed') };
  const exp = Object.fromEntries(Object.entries(expected).filter(([, v]) => v)) as Curve['expected'];
  if (exp && Object.keys(exp).length) curve.expected = exp;
  if (!curve.observed) delete curve.observed;
  const central = col('theory');
  const lower = col('theoryLower');
  const upper = col('theoryUpper');
  if ((lower || upper) && !central) problems.add({ column: 'mapping', reason: 'a theory band needs the central theory column too' });
  const theory: Theory | null = central ? { x: [...x], central, ...(lower ? { lower } : {}), ...(upper ? { upper } : {}) } : null;
  if (problems.total) throw CsvFileError.of(problems);

  // Semantic checks, reported with file lines and the user's own column names.
  const headerOf = (role: ColumnRole) => (mapping[role] !== undefined ? table.headers[mapping[role]!] : undefined);
  const columnNames: Record<string, string | undefined> = {
    parameter: headerOf('x'),
    observed: headerOf('observed'),
    'expected median': headerOf('expected'),
    'expected −2σ': headerOf('expectedMinus2'),
    'expected −1σ': headerOf('expectedMinus1'),
    'expected +1σ': headerOf('expectedPlus1'),
    'expected +2σ': headerOf('expectedPlus2'),
    theory: headerOf('theory'),
    'theory lower edge': headerOf('theoryLower'),
    'theory upper edge': headerOf('theoryUpper'),
    'theory parameter': headerOf('x'),
  };
  const semanticProblems = new ProblemCollector();
  const semantic = checkCurve(curve, theory, (i) => table.lines[i] ?? i + 1, semanticProblems).map((p) => ({
    ...p,
    column: columnNames[p.column] ?? p.column,
    // Theory rows share the table's grid: map their point number to the file line too.
    row: p.column.startsWith('theory') && p.row !== undefined ? table.lines[p.row - 1] : p.row,
  }));
  if (semantic.length) throw new CsvFileError(semantic, semanticProblems.total);
  return { curve, theory };
}

/** Curve (and theory on the same grid) → CSV text with plain headers, for downloads. */
export function curveToCsv(curve: Curve, theory: Theory | null, headers: { x: string }): string {
  const cols: [string, number[]][] = [[headers.x, curve.x]];
  if (curve.observed) cols.push(['observed', curve.observed]);
  const names: Record<string, string> = { '-2': 'expected_minus_2sigma', '-1': 'expected_minus_1sigma', '0': 'expected', '1': 'expected_plus_1sigma', '2': 'expected_plus_2sigma' };
  for (const k of ['0', '-2', '-1', '1', '2'] as const) if (curve.expected?.[k]) cols.push([names[k]!, curve.expected[k]!]);
  const sameGrid = theory && theory.x.length === curve.x.length && theory.x.every((v, i) => v === curve.x[i]);
  if (theory && sameGrid) {
    cols.push(['theory', theory.central]);
    if (theory.lower) cols.push(['theory_lower', theory.lower]);
    if (theory.upper) cols.push(['theory_upper', theory.upper]);
  }
  return Papa.unparse({ fields: cols.map((c) => c[0]), data: curve.x.map((_, i) => cols.map((c) => c[1][i])) }, { newline: '\n' }) + '\n';
}
