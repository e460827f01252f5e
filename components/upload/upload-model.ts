/**
 * The upload's pure steps: size check, decoding, CSV or project-JSON recognition, column roles,
 * the curve with every problem named, a lenient preview, the provenance form and the multipart
 * body. The screen only wires these to controls; the server checks everything again.
 */
import { DEFAULT_UPLOAD_LIMIT_BYTES, formatBytes } from '@/shared/bytes';
import { ApiError } from '@/shared/api-client';
import type { CurveProblem } from '@/shared/curves/check';
import { checkCurve, ProblemCollector } from '@/shared/curves/check';
import {
  COLUMN_ROLES,
  CsvFileError,
  decodeText,
  detectRoles,
  parseCsv,
  parseNumber,
  ROLE_TITLES,
  tableToCurve,
  type ColumnMapping,
  type ColumnRole,
  type CsvTable,
} from '@/shared/curves/csv';
import { checkPlane, tableToPlane, type PlaneProblem } from '@/shared/curves/plane';
import type { Plane } from '@/shared/schemas/plane';
import {
  LIMIT_FILE_FORMAT,
  limitFileSchema,
  planeFileSchema,
  type Curve,
  type Quantity,
  type ResultMethod,
  type Theory,
  type VersionMeta,
  type XsecUnit,
} from '@/shared/schemas/results';

export type Problem = CurveProblem;


/** What the document picker may offer (CSV, TSV, plain text and the project's JSON). */
export const PICKER_TYPES = ['text/csv', 'text/comma-separated-values', 'text/tab-separated-values', 'text/plain', 'application/json'];

/** A file too large to read, named with its size and the limit. */
export function sizeProblem(bytes: number, limit = DEFAULT_UPLOAD_LIMIT_BYTES): Problem | null {
  if (bytes <= limit) return null;
  const size = formatBytes(bytes);
  const max = formatBytes(limit);
  return { column: 'file', reason: size === max ? `is just over the limit of ${max}` : `is ${size}; the limit is ${max}` };
}

/** The problems of a refused file: the first ones (at most MAX_PROBLEMS) and how many there are in all. */
const problemsOf = (e: unknown): { problems: Problem[]; total: number } => {
  if (e instanceof CsvFileError) return { problems: e.problems, total: e.total };
  throw e;
};

/**
 * A file as read: a CSV table to map, the project's JSON with its numbers, or the reasons it is
 * unusable. `total` counts every problem; `problems` holds the first of them.
 */
export type Analysed =
  | { kind: 'csv'; table: CsvTable; mapping: ColumnMapping }
  | { kind: 'json'; meta: VersionMeta; curve: Curve; theory: Theory | null; plane?: undefined; problems: Problem[]; total?: number }
  | { kind: 'json'; meta: VersionMeta; curve?: undefined; theory: null; plane: Plane; problems: Problem[]; total?: number }
  | { kind: 'invalid'; problems: Problem[]; total?: number };

function looksLikeJson(name: string, text: string): boolean {
  return /\.json$/i.test(name) || text.trimStart().startsWith('{');
}

/** Bytes of a picked file → what it holds. Never throws for a bad file; problems say why. */
export function analyseFile(name: string, bytes: Uint8Array, limit = DEFAULT_UPLOAD_LIMIT_BYTES): Analysed {
  const size = sizeProblem(bytes.length, limit);
  if (size) return { kind: 'invalid', problems: [size] };
  let text: string;
  try {
    text = decodeText(bytes);
  } catch (e) {
    return { kind: 'invalid', ...problemsOf(e) };
  }
  if (looksLikeJson(name, text)) return analyseJson(text);
  try {
    const table = parseCsv(text);
    return { kind: 'csv', table, mapping: detectRoles(table.headers) };
  } catch (e) {
    return { kind: 'invalid', ...problemsOf(e) };
  }
}

/** The project's JSON: its format tag, then the shared schema, then the same curve checks as CSV. */
export function analyseJson(text: string): Analysed {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (e) {
    return { kind: 'invalid', problems: [{ column: 'file', reason: `is not valid JSON (${e instanceof Error ? e.message : 'syntax error'})` }] };
  }
  const format = typeof data === 'object' && data !== null && 'format' in data ? (data as { format: unknown }).format : undefined;
  if (format !== LIMIT_FILE_FORMAT) {
    return { kind: 'invalid', problems: [{ column: 'format', reason: `must be "${LIMIT_FILE_FORMAT}"; other JSON files are not limit results (use CSV for tables)` }] };
  }
  const isPlane = typeof data === 'object' && data !== null && 'plane' in data;
  const parsed = isPlane ? planeFileSchema.safeParse(data) : limitFileSchema.safeParse(data);
  if (!parsed.success) {
    return {
      kind: 'invalid',
      problems: parsed.error.issues.slice(0, 200).map((i) => {
        const index = i.path.findIndex((p) => typeof p === 'number');
        const at = index >= 0 ? (i.path[index] as number) : undefined;
        const column = i.path.filter((p) => typeof p !== 'number').join('.') || 'file';
        return at !== undefined ? { row: at + 1, column, reason: i.message } : { column, reason: i.message };
      }),
    };
  }
  if ('plane' in parsed.data) {
    const { meta, plane } = parsed.data;
    const found = new ProblemCollector<PlaneProblem>();
    const problems = checkPlane(plane, meta.quantity, found).map(planeProblem);
    return { kind: 'json', meta, plane, theory: null, problems, total: found.total };
  }
  const { meta, curve, theory = null } = parsed.data;
  const found = new ProblemCollector();
  const problems = checkCurve(curve, theory, undefined, found);
  return { kind: 'json', meta, curve, theory, problems, total: found.total };
}

/** The curve of a mapped table, or every problem found (lines and columns as in the file). */
export function curveFromTable(
  table: CsvTable,
  mapping: ColumnMapping,
): { curve: Curve; theory: Theory | null; problems: []; total: 0 } | { curve?: undefined; theory?: undefined; problems: Problem[]; total: number } {
  try {
    const { curve, theory } = tableToCurve(table, mapping);
    return { curve, theory, problems: [], total: 0 };
  } catch (e) {
    return problemsOf(e);
  }
}

/** A plane problem as the preview lists it: the point (from 1) and the plane's column. */
const planeProblem = (p: PlaneProblem): Problem => ({ ...(p.index !== undefined ? { row: p.index + 1 } : {}), column: p.key ? `plane.${p.key}` : 'plane', reason: p.reason });

/** The plane of a table mapped with a second parameter (y), or every problem found (lines and columns as in the file). */
export function planeFromTable(table: CsvTable, mapping: ColumnMapping, quantity: Quantity): { plane: Plane; problems: []; total: 0 } | { plane?: undefined; problems: Problem[]; total: number } {
  try {
    return { plane: tableToPlane(table, mapping, quantity), problems: [], total: 0 };
  } catch (e) {
    return problemsOf(e);
  }
}

/**
 * The mapped columns as numbers even when some cells are bad (NaN there), so the preview can plot
 * what is readable while the problems are being fixed.
 */
export function previewCurve(table: CsvTable, mapping: ColumnMapping): { curve: Curve; theory: Theory | null } {
  const col = (role: ColumnRole): number[] | undefined => {
    const idx = mapping[role];
    if (idx === undefined) return undefined;
    return table.rows.map((row) => parseNumber(row[idx] ?? '', table.delimiter) ?? NaN);
  };
  const x = col('x') ?? table.rows.map((_, i) => i + 1);
  const expected: Curve['expected'] = {};
  const keys = [['-2', 'expectedMinus2'], ['-1', 'expectedMinus1'], ['0', 'expected'], ['1', 'expectedPlus1'], ['2', 'expectedPlus2']] as const;
  for (const [k, role] of keys) {
    const v = col(role);
    if (v) expected[k] = v;
  }
  const curve: Curve = { x, ...(col('observed') ? { observed: col('observed') } : {}), ...(Object.keys(expected).length ? { expected } : {}) };
  const central = col('theory');
  const lower = col('theoryLower');
  const upper = col('theoryUpper');
  return { curve, theory: central ? { x, central, ...(lower ? { lower } : {}), ...(upper ? { upper } : {}) } : null };
}

/** The role a column has in the mapping, if any. */
export function roleOfColumn(mapping: ColumnMapping, index: number): ColumnRole | undefined {
  return COLUMN_ROLES.find((r) => mapping[r] === index);
}

/**
 * Gives column `index` the role `role` (or none): the column loses its old role, and the role
 * leaves the column that had it, so no role is ever on two columns.
 */
export function assignRole(mapping: ColumnMapping, index: number, role: ColumnRole | null): ColumnMapping {
  const next: ColumnMapping = {};
  for (const r of COLUMN_ROLES) {
    const i = mapping[r];
    if (i !== undefined && i !== index && r !== role) next[r] = i;
  }
  if (role) next[role] = index;
  return next;
}

/** A column as users know it: “its header” (or “column 3” when the header is empty). */
export function columnLabel(headers: string[], index: number): string {
  return headers[index] ? `column “${headers[index]}”` : `column ${index + 1}`;
}

/**
 * What `assignRole(mapping, index, role)` takes from other columns, said aloud: a role is on one
 * column only, so giving it to a second one moves it ("Observed limit moved from column “obs”
 * to column “obs (rerun)”."), and the column gives up the role it had. Null when nothing moves.
 */
export function roleChangeNotice(headers: string[], mapping: ColumnMapping, index: number, role: ColumnRole | null): string | null {
  if (!role) return null;
  const parts: string[] = [];
  const from = mapping[role];
  if (from !== undefined && from !== index) parts.push(`${ROLE_TITLES[role]} moved from ${columnLabel(headers, from)} to ${columnLabel(headers, index)}.`);
  const previous = roleOfColumn(mapping, index);
  if (previous && previous !== role) parts.push(`${ROLE_TITLES[previous]} is no longer set (it was ${columnLabel(headers, index)}).`);
  return parts.length ? parts.join(' ') : null;
}

/** "Not used: “exp+1s” (column 6), …": the preview's warning about numeric columns without a role. */
export function notUsedMessage(headers: string[], indexes: number[]): string {
  const names = indexes.map((i) => (headers[i] ? `“${headers[i]}” (column ${i + 1})` : `column ${i + 1}`)).join(', ');
  const one = indexes.length === 1;
  return `Not used: ${names}. ${one ? 'It holds' : 'They hold'} numbers but ${one ? 'has' : 'have'} no role, so ${one ? 'it' : 'they'} will not be stored; give ${one ? 'it' : 'them'} a role above if ${one ? 'it belongs' : 'they belong'} to the result.`;
}

/** Problems about the file as a whole or the mapping (no line): shown beside the mapping. */
export const isMappingProblem = (p: Problem) => p.row === undefined;

const BRACKETED = /^(.*?)\s*[[(]\s*([^\])]+?)\s*[\])]\s*$/;

/**
 * Provenance the headers already tell: "M_Z' [TeV]" gives the parameter's name and unit,
 * "Obs. limit (fb)" says the limit is on σ×B in fb, a "μ" or "mu" says it is on μ.
 */
export function guessMeta(headers: string[], mapping: ColumnMapping): Partial<Pick<MetaDraft, 'parameterName' | 'parameterUnit' | 'quantity' | 'quantityUnit'>> {
  const out: Partial<Pick<MetaDraft, 'parameterName' | 'parameterUnit' | 'quantity' | 'quantityUnit'>> = {};
  const xHeader = mapping.x !== undefined ? headers[mapping.x] : undefined;
  if (xHeader) {
    const m = BRACKETED.exec(xHeader);
    out.parameterName = (m ? m[1]! : xHeader).trim().slice(0, 60);
    if (m) out.parameterUnit = m[2]!.trim().slice(0, 20);
  }
  for (const role of ['observed', 'expected'] as const) {
    const h = mapping[role] !== undefined ? headers[mapping[role]!] : undefined;
    if (!h) continue;
    const unit = /[[(]\s*(ab|fb|pb)\s*[\])]/i.exec(h)?.[1]?.toLowerCase() as XsecUnit | undefined;
    if (unit) return { ...out, quantity: 'xsec', quantityUnit: unit };
    if (/(^|[^a-z])(mu|μ|signal strength)([^a-z]|$)/i.test(h)) return { ...out, quantity: 'mu', quantityUnit: '' };
  }
  return out;
}

/** The provenance form as typed: numbers stay text until checked. */
export type MetaDraft = {
  title: string;
  model: string;
  parameterName: string;
  parameterUnit: string;
  quantity: Quantity;
  quantityUnit: '' | XsecUnit;
  sqrtS: string;
  luminosity: string;
  cl: string;
  method: ResultMethod | '';
  reference: string;
  notes: string;
};

export const EMPTY_META: MetaDraft = {
  title: '',
  model: '',
  parameterName: '',
  parameterUnit: '',
  quantity: 'xsec',
  quantityUnit: 'fb',
  sqrtS: '',
  luminosity: '',
  cl: '0.95',
  method: '',
  reference: '',
  notes: '',
};

/** "13,6" and "13.6" both read; empty stays undefined (so "required" is said, not "not a number"). */
export function readNumber(s: string): number | undefined {
  const t = s.trim().replace(',', '.').replace(/\u2212/g, '-');
  if (!t) return undefined;
  return /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t) ? Number(t) : NaN;
}

/** The draft as the shared schema's input (`versionMetaSchema`). */
export function metaInput(d: MetaDraft): Record<string, unknown> {
  return {
    ...d,
    quantityUnit: d.quantity === 'mu' ? '' : d.quantityUnit,
    sqrtS: readNumber(d.sqrtS),
    luminosity: readNumber(d.luminosity),
    cl: readNumber(d.cl),
    method: d.method || undefined,
  };
}

/** A stored version's provenance back into the form (a new version starts from the last one). */
export function draftFromMeta(m: VersionMeta): MetaDraft {
  return {
    title: m.title,
    model: m.model,
    parameterName: m.parameterName,
    parameterUnit: m.parameterUnit,
    quantity: m.quantity,
    quantityUnit: m.quantity === 'mu' ? '' : (m.quantityUnit as '' | XsecUnit),
    sqrtS: String(m.sqrtS),
    luminosity: String(m.luminosity),
    cl: String(m.cl),
    method: m.method,
    reference: m.reference,
    notes: m.notes,
  };
}

/**
 * The multipart body of an upload: the file as picked, the checked provenance and, for CSV, the
 * confirmed column roles (column indexes by role).
 */
export function uploadForm(opts: { file: Blob; fileName: string; meta: VersionMeta; mapping?: ColumnMapping; changeNote?: string; theoryLabel?: string }): FormData {
  const form = new FormData();
  form.append('meta', JSON.stringify(opts.meta));
  if (opts.mapping) form.append('mapping', JSON.stringify(opts.mapping));
  if (opts.theoryLabel?.trim()) form.append('theoryLabel', opts.theoryLabel.trim());
  if (opts.changeNote !== undefined) form.append('changeNote', opts.changeNote);
  form.append('file', opts.file, opts.fileName);
  return form;
}

/**
 * The server's validation details, split like the checks here: `meta.<field>` and `changeNote`
 * go beside their fields; file problems ("line 7, obs", "point 3, observed", "mapping.x") go to
 * the problem list with their line and column.
 */
export function splitServerDetails(error: unknown): { problems: Problem[]; fields: Record<string, string> } {
  const problems: Problem[] = [];
  const fields: Record<string, string> = {};
  if (!(error instanceof ApiError)) return { problems, fields };
  for (const d of error.details) {
    const at = /^(?:line|point) (\d+), (.+)$/.exec(d.field);
    const field = /^meta\.(\w+)/.exec(d.field)?.[1] ?? (d.field === 'changeNote' || d.field === 'theoryLabel' ? d.field : undefined);
    if (at) problems.push({ row: Number(at[1]), column: at[2]!, reason: d.message });
    else if (field) fields[field] ??= d.message.charAt(0).toUpperCase() + d.message.slice(1);
    else problems.push({ column: d.field || 'file', reason: d.message });
  }
  return { problems, fields };
}
