import { z } from 'zod';
import { checkCurve, type CurveProblem } from '../../shared/curves/check';
import { COLUMN_ROLES, CsvFileError, decodeText, detectRoles, parseCsv, tableToCurve, type ColumnMapping } from '../../shared/curves/csv';
import { EXPECTED_KEYS } from '../../shared/schemas/counting-model';
import {
  createVersionSchema,
  LIMIT_FILE_FORMAT,
  limitFileSchema,
  versionMetaSchema,
  type Curve,
  type Theory,
  type VersionMeta,
} from '../../shared/schemas/results';
import { AppError, zodDetails, type ErrorDetail } from '../lib/errors';

/**
 * Turns an upload (a CSV or project JSON file with form fields, or a JSON body) into one
 * normalized version: provenance, curve, theory and the file as received. Every problem is
 * collected and reported at once; nothing is returned unless all is valid.
 */

export type NormalizedVersion = {
  meta: VersionMeta;
  curve: Curve;
  theory: Theory | null;
  source: { name: string; data: Buffer } | null;
};

/** A multipart upload as the route received it: the file and the text fields. */
export type FileUpload = { file?: { name: string; data: Buffer }; fields: Record<string, unknown> };

const MAX_DETAILS = 200;

const mappingSchema = z
  .object(Object.fromEntries(COLUMN_ROLES.map((r) => [r, z.number({ error: 'must be a column number (0 = first column)' }).int('must be a whole number').min(0, 'must be 0 or more').optional()])))
  .strict() as unknown as z.ZodType<ColumnMapping>;

const changeNoteSchema = createVersionSchema.shape.changeNote;

/** A curve problem as an error detail: `line 7, obs` for files with lines, `point 3, observed` for JSON curves. */
function problemDetail(p: CurveProblem, rowWord: 'line' | 'point'): ErrorDetail {
  return { field: p.row !== undefined ? `${rowWord} ${p.row}, ${p.column}` : p.column, message: p.reason };
}

function fail(code: 'invalid_file' | 'validation_failed', details: ErrorDetail[]): never {
  const shown = details.slice(0, MAX_DETAILS);
  if (details.length > MAX_DETAILS) shown.push({ field: 'file', message: `and ${details.length - MAX_DETAILS} more problems` });
  const first = shown[0]!;
  const more = details.length > 1 ? ` (and ${details.length - 1} more problem${details.length > 2 ? 's' : ''})` : '';
  const what = code === 'invalid_file' ? 'The file cannot be stored' : 'The result cannot be stored';
  throw new AppError(400, code, `${what}: ${first.field}: ${first.message}${more}`, shown);
}

/** A form field holding JSON text, parsed; problems go to `details`. */
function jsonField(fields: Record<string, unknown>, name: string, details: ErrorDetail[]): unknown {
  const raw = fields[name];
  if (raw === undefined || raw === '') return undefined;
  if (typeof raw !== 'string') {
    details.push({ field: name, message: 'must be sent once, as JSON text' });
    return undefined;
  }
  try {
    return JSON.parse(raw);
  } catch {
    details.push({ field: name, message: 'is not valid JSON text' });
    return undefined;
  }
}

/** `raw` parsed by `schema` (undefined stays undefined); problems go to `details` under `field`. */
function parseWith<T>(schema: z.ZodType<T>, raw: unknown, field: string, details: ErrorDetail[]): T | undefined {
  if (raw === undefined) return undefined;
  const parsed = schema.safeParse(raw);
  if (parsed.success) return parsed.data;
  details.push(...zodDetails(parsed.error, field));
  return undefined;
}

/** The curve in a fixed key order (so that its stored size is the same however it was sent). */
export function canonicalCurve(c: Curve): Curve {
  const out: Curve = { x: c.x };
  if (c.observed) out.observed = c.observed;
  const expected: NonNullable<Curve['expected']> = {};
  for (const k of EXPECTED_KEYS) if (c.expected?.[k]) expected[k] = c.expected[k];
  if (Object.keys(expected).length) out.expected = expected;
  return out;
}

export function canonicalTheory(t: Theory | null | undefined): Theory | null {
  if (!t) return null;
  return { ...(t.label ? { label: t.label } : {}), x: t.x, central: t.central, ...(t.lower ? { lower: t.lower } : {}), ...(t.upper ? { upper: t.upper } : {}) };
}

export function canonicalMeta(m: VersionMeta): VersionMeta {
  return {
    title: m.title,
    model: m.model,
    parameterName: m.parameterName,
    parameterUnit: m.parameterUnit,
    quantity: m.quantity,
    quantityUnit: m.quantityUnit,
    sqrtS: m.sqrtS,
    luminosity: m.luminosity,
    cl: m.cl,
    method: m.method,
    reference: m.reference,
    notes: m.notes,
  };
}

/** The project's JSON file of a version: what downloads carry and what counts as its normalized data. */
export function limitFileOf(meta: VersionMeta, curve: Curve, theory: Theory | null) {
  return { format: LIMIT_FILE_FORMAT, meta: canonicalMeta(meta), curve: canonicalCurve(curve), ...(theory ? { theory: canonicalTheory(theory)! } : {}) };
}

/** Bytes a version counts toward its group's storage: the file as uploaded plus its normalized JSON. */
export function storedBytesOf(v: { meta: VersionMeta; curve: Curve; theory: Theory | null; sourceBytes: number }): number {
  return v.sourceBytes + Buffer.byteLength(JSON.stringify(limitFileOf(v.meta, v.curve, v.theory)));
}

/** Curve checks of a JSON curve (points numbered from 1); throws with every problem. */
export function assertCurveValid(curve: Curve, theory: Theory | null) {
  const problems = checkCurve(curve, theory);
  if (problems.length) fail('validation_failed', problems.map((p) => problemDetail(p, 'point')));
}

/** A JSON body (already checked against its zod schema). */
export function fromJsonBody(body: { meta: VersionMeta; curve: Curve; theory?: Theory }): NormalizedVersion {
  const theory = canonicalTheory(body.theory);
  assertCurveValid(body.curve, theory);
  return { meta: canonicalMeta(body.meta), curve: canonicalCurve(body.curve), theory, source: null };
}

const looksLikeJson = (name: string, text: string) => /\.json$/i.test(name) || text.trimStart().startsWith('{');

/**
 * A multipart upload: `file` (CSV, or the project's JSON detected by extension or content),
 * `meta` (JSON text; optional for the project's JSON file, where it replaces the file's own),
 * `mapping` (JSON text, role → column number; detected from the headers when absent) and, for a
 * new version, `changeNote`.
 */
export function fromFileUpload(upload: FileUpload, opts: { changeNote: boolean }): NormalizedVersion & { changeNote?: string } {
  const { fields } = upload;
  const details: ErrorDetail[] = [];
  let fileProblem = false;

  const metaRaw = jsonField(fields, 'meta', details);
  let meta = parseWith(versionMetaSchema, metaRaw, 'meta', details);
  const mapping = parseWith(mappingSchema, jsonField(fields, 'mapping', details), 'mapping', details);
  const changeNote = opts.changeNote ? parseWith(changeNoteSchema, fields.changeNote ?? '', 'changeNote', details) : undefined;

  let curve: Curve | undefined;
  let theory: Theory | null = null;
  const file = upload.file;
  if (!file) {
    details.push({ field: 'file', message: 'is missing: send the CSV or JSON file in the form field "file"' });
  } else {
    try {
      const text = decodeText(file.data);
      if (looksLikeJson(file.name, text)) {
        let json: unknown;
        try {
          json = JSON.parse(text);
        } catch (e) {
          throw new CsvFileError([{ column: 'file', reason: `is not valid JSON (${(e as Error).message})` }]);
        }
        const schema = meta || metaRaw !== undefined ? limitFileSchema.extend({ meta: z.unknown().optional() }) : limitFileSchema;
        const parsed = schema.safeParse(json);
        if (!parsed.success) {
          fileProblem = true;
          details.push(...zodDetails(parsed.error));
        } else {
          const fileMeta = parsed.data.meta as VersionMeta | undefined;
          meta ??= metaRaw === undefined ? fileMeta : undefined;
          theory = canonicalTheory(parsed.data.theory);
          const problems = checkCurve(parsed.data.curve, theory);
          if (problems.length) {
            fileProblem = true;
            details.push(...problems.map((p) => problemDetail(p, 'point')));
          } else curve = parsed.data.curve;
        }
      } else {
        if (metaRaw === undefined && !details.some((d) => d.field === 'meta')) {
          details.push({ field: 'meta', message: 'is required with a CSV file: JSON text with title, parameterName, quantity, sqrtS, luminosity and method' });
        }
        const table = parseCsv(text);
        const result = tableToCurve(table, mapping ?? detectRoles(table.headers));
        curve = result.curve;
        theory = result.theory;
      }
    } catch (e) {
      if (!(e instanceof CsvFileError)) throw e;
      fileProblem = true;
      details.push(...e.problems.map((p) => problemDetail(p, 'line')));
    }
  }

  if (details.length || !curve || !meta) fail(fileProblem ? 'invalid_file' : 'validation_failed', details.length ? details : [{ field: 'meta', message: 'is missing' }]);
  return {
    meta: canonicalMeta(meta),
    curve: canonicalCurve(curve),
    theory,
    source: { name: file!.name, data: file!.data },
    ...(changeNote !== undefined ? { changeNote } : {}),
  };
}
