import path from 'node:path';
import { z } from 'zod';
import { KB } from '../../shared/bytes';
import { checkCurve, formatCount, MAX_PROBLEMS, ProblemCollector } from '../../shared/curves/check';
import { COLUMN_ROLES, type ColumnMapping } from '../../shared/curves/csv';
import { checkPlane, planeField, type PlaneProblem } from '../../shared/curves/plane';
import { planeContours } from '../../shared/plane/contours';
import { EXPECTED_KEYS } from '../../shared/schemas/counting-model';
import { PLANE_LIMITS, planeSchema, type Plane, type PlaneContours } from '../../shared/schemas/plane';
import {
  createPlaneResultSchema,
  createPlaneVersionSchema,
  createResultSchema,
  createVersionSchema,
  LIMIT_FILE_FORMAT,
  MAX_CURVE_POINTS,
  theorySchema,
  versionMetaSchema,
  type Curve,
  type Quantity,
  type Theory,
  type VersionMeta,
} from '../../shared/schemas/results';
import { AppError, validationError, type ErrorDetail } from '../lib/errors';
import { ThreadDied, ThreadPool, ThreadTimeout } from '../lib/thread-pool';
import { boundedZodDetails, canonicalTheory, moreProblems, problemDetail, readLimitFile, type FileJob, type FileReading } from './limit-file';

export { canonicalTheory };

/**
 * Turns an upload (a CSV or project JSON file with form fields, or a JSON body) into one
 * normalized version: provenance, curve, theory and the file as received. Every problem is
 * counted and reported at once (the first MAX_PROBLEMS by name, then "and N more problems");
 * nothing is returned unless all is valid.
 */

type VersionBase = {
  meta: VersionMeta;
  source: { name: string; data: Buffer } | null;
  /** What the upload left out without being wrong (numeric columns without a role): said in the answer. */
  warnings?: ErrorDetail[];
};
/** A version over one parameter: a limit curve, with an optional theory curve. */
export type CurveVersion = VersionBase & { curve: Curve; theory: Theory | null; plane?: null };
/** A version over two parameters: the points of a plane (its theory per point inside it). */
export type PlaneVersion = VersionBase & { curve: null; theory: null; plane: Plane };
export type NormalizedVersion = CurveVersion | PlaneVersion;

/** A multipart upload as the route received it: the file and the text fields. */
export type FileUpload = { file?: { name: string; data: Buffer }; fields: Record<string, unknown> };

/** The `mapping` form field of a multipart upload (also shown in the API reference). */
export const mappingSchema = z
  .object(Object.fromEntries(COLUMN_ROLES.map((r) => [r, z.number({ error: 'must be a column number (0 = first column)' }).int('must be a whole number').min(0, 'must be 0 or more').optional()])))
  .strict() as unknown as z.ZodType<ColumnMapping>;

const changeNoteSchema = createVersionSchema.shape.changeNote;

/**
 * Problems of one request: kept up to MAX_PROBLEMS, all counted (`hidden` are those counted but
 * not kept). Nothing here spreads an unbounded list into arguments.
 */
class Details {
  readonly list: ErrorDetail[] = [];
  hidden = 0;
  add(d: ErrorDetail) {
    if (this.list.length < MAX_PROBLEMS) this.list.push(d);
    else this.hidden++;
  }
  addAll(ds: ErrorDetail[], total = ds.length) {
    for (const d of ds) this.add(d);
    this.hidden += total - ds.length;
  }
  get total() {
    return this.list.length + this.hidden;
  }
}

function fail(code: 'invalid_file' | 'validation_failed', details: Details): never {
  const shown = details.list.slice();
  const total = details.total;
  if (details.hidden > 0) shown.push(moreProblems(details.hidden));
  const first = shown[0]!;
  const more = total > 1 ? ` (${moreProblems(total - 1).message})` : '';
  const what = code === 'invalid_file' ? 'The file cannot be stored' : 'The result cannot be stored';
  throw new AppError(400, code, `${what}: ${first.field}: ${first.message}${more}`, shown);
}

/** A form field holding JSON text, parsed; problems go to `details`. */
function jsonField(fields: Record<string, unknown>, name: string, details: Details): unknown {
  const raw = fields[name];
  if (raw === undefined || raw === '') return undefined;
  if (typeof raw !== 'string') {
    details.add({ field: name, message: 'must be sent once, as JSON text' });
    return undefined;
  }
  try {
    return JSON.parse(raw);
  } catch {
    details.add({ field: name, message: 'is not valid JSON text' });
    return undefined;
  }
}

/** `raw` parsed by `schema` (undefined stays undefined); problems go to `details` under `field`. */
function parseWith<T>(schema: z.ZodType<T>, raw: unknown, field: string, details: Details): T | undefined {
  if (raw === undefined) return undefined;
  const parsed = schema.safeParse(raw);
  if (parsed.success) return parsed.data;
  const bounded = boundedZodDetails(parsed.error, field);
  details.addAll(bounded.details, bounded.total);
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

/** The plane in a fixed key order (so that its stored size is the same however it was sent). */
export function canonicalPlane(p: Plane): Plane {
  const out: Plane = { yName: p.yName, yUnit: p.yUnit, x: p.x, y: p.y };
  if (p.observed) out.observed = p.observed;
  const expected: NonNullable<Plane['expected']> = {};
  for (const k of EXPECTED_KEYS) if (p.expected?.[k]) expected[k] = p.expected[k];
  if (Object.keys(expected).length) out.expected = expected;
  if (p.theory) out.theory = { central: p.theory.central, ...(p.theory.lower ? { lower: p.theory.lower } : {}), ...(p.theory.upper ? { upper: p.theory.upper } : {}) };
  return out;
}

/** The project's JSON file of a version: what downloads carry and what counts as its normalized data. */
export function limitFileOf(meta: VersionMeta, curve: Curve, theory: Theory | null) {
  return { format: LIMIT_FILE_FORMAT, meta: canonicalMeta(meta), curve: canonicalCurve(curve), ...(theory ? { theory: canonicalTheory(theory)! } : {}) };
}

/** The same file of a two-parameter version (`plane` in place of `curve` and `theory`). */
export function planeFileOf(meta: VersionMeta, plane: Plane) {
  return { format: LIMIT_FILE_FORMAT, meta: canonicalMeta(meta), plane: canonicalPlane(plane) };
}

/** The contour lines' JSON download of a two-parameter version (its bytes are counted as stored). */
export const PLANE_CONTOURS_FORMAT = 'bandwright-plane-contours/1';
export function contoursFileOf(meta: VersionMeta, plane: Plane, contours: PlaneContours) {
  return {
    format: PLANE_CONTOURS_FORMAT,
    x: { name: meta.parameterName, unit: meta.parameterUnit },
    y: { name: plane.yName, unit: plane.yUnit },
    quantity: meta.quantity,
    contours,
  };
}

/**
 * The contour lines of a plane, computed once when the version is written (shared/plane/contours.ts)
 * and stored with it. A plane that passed `checkPlane` is a grid, so a refusal here is a bug.
 */
export function contoursOf(plane: Plane, quantity: Quantity): PlaneContours {
  return planeContours(plane, quantity);
}

/**
 * Bytes a version counts toward its group's storage: the file as uploaded plus its normalized JSON
 * (the `export.json` download); a two-parameter version also its contour lines (the
 * `contours.json` download), which are stored with it.
 */
export function storedBytesOf(v: { meta: VersionMeta; curve: Curve | null; theory: Theory | null; plane?: Plane | null; planeContours?: PlaneContours | null; sourceBytes: number }): number {
  if (v.plane) {
    const contours = v.planeContours ?? contoursOf(v.plane, v.meta.quantity);
    return v.sourceBytes + Buffer.byteLength(JSON.stringify(planeFileOf(v.meta, v.plane))) + Buffer.byteLength(JSON.stringify(contoursFileOf(v.meta, v.plane, contours)));
  }
  if (!v.curve) throw new Error('a version has a curve or a plane');
  return v.sourceBytes + Buffer.byteLength(JSON.stringify(limitFileOf(v.meta, v.curve, v.theory)));
}

/** A plane's problems (after its schema) as error details naming the body field (`plane.x.17`); throws with every problem. */
export function assertPlaneValid(plane: Plane, quantity: Quantity) {
  const found = new ProblemCollector<PlaneProblem>();
  const problems = checkPlane(plane, quantity, found);
  if (!problems.length) return;
  const details = new Details();
  details.addAll(problems.map((p) => ({ field: planeField(p), message: p.reason })), found.total);
  fail('validation_failed', details);
}

/** Curve checks of a JSON curve (points numbered from 1); throws with every problem. */
export function assertCurveValid(curve: Curve, theory: Theory | null) {
  const found = new ProblemCollector();
  const problems = checkCurve(curve, theory, undefined, found);
  if (!problems.length) return;
  const details = new Details();
  details.addAll(problems.map((p) => problemDetail(p, 'point')), found.total);
  fail('validation_failed', details);
}

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/**
 * A JSON upload body parsed by its schema, with the work bounded first: 5 MB of JSON holds half a
 * million values, and zod would check and describe every bad one on the event loop (a second and
 * a 20 MB answer). So the curve's and theory's arrays are looked at before: one longer than
 * MAX_CURVE_POINTS is refused without reading it, and more than MAX_PROBLEMS values that are not
 * numbers are refused counted. Everything else (and the messages of small mistakes) is zod's.
 */
export function parseJsonUpload<S extends z.ZodType>(schema: S, body: unknown): z.output<S> {
  const details = new Details();
  let tooLong = false;
  const b = isRecord(body) ? body : {};
  const curve = isRecord(b.curve) ? b.curve : {};
  const plane = isRecord(b.plane) ? b.plane : {};
  const groups: [string, unknown, readonly string[], number][] = [
    ['curve', curve, ['x', 'observed'], MAX_CURVE_POINTS],
    ['curve.expected', curve.expected, EXPECTED_KEYS, MAX_CURVE_POINTS],
    ['theory', b.theory, ['x', 'central', 'lower', 'upper'], MAX_CURVE_POINTS],
    ['plane', plane, ['x', 'y', 'observed'], PLANE_LIMITS.maxPoints],
    ['plane.expected', plane.expected, EXPECTED_KEYS, PLANE_LIMITS.maxPoints],
    ['plane.theory', plane.theory, ['central', 'lower', 'upper'], PLANE_LIMITS.maxPoints],
  ];
  for (const [prefix, holder, keys, max] of groups) {
    if (!isRecord(holder)) continue;
    for (const k of keys) {
      const values = holder[k];
      if (!Array.isArray(values)) continue;
      if (values.length > max) {
        tooLong = true;
        details.add({ field: `${prefix}.${k}`, message: `must have at most ${formatCount(max)} points (has ${formatCount(values.length)})` });
        continue;
      }
      for (let i = 0; i < values.length; i++) if (typeof values[i] !== 'number') details.add({ field: `${prefix}.${k}.${i}`, message: 'must be a number' });
    }
  }
  if (tooLong || details.total > MAX_PROBLEMS) fail('validation_failed', details);
  const parsed = schema.safeParse(body ?? {});
  if (!parsed.success) throw validationError(parsed.error, 'body');
  return parsed.data;
}

/** A JSON body (already checked against its zod schema). */
export function fromJsonBody(body: { meta: VersionMeta; curve: Curve; theory?: Theory }): CurveVersion {
  const theory = canonicalTheory(body.theory);
  assertCurveValid(body.curve, theory);
  return { meta: canonicalMeta(body.meta), curve: canonicalCurve(body.curve), theory, source: null };
}

/** A two-parameter JSON body (already checked against its zod schema): the plane's numbers and grid. */
export function fromPlaneBody(body: { meta: VersionMeta; plane: Plane }): PlaneVersion {
  assertPlaneValid(body.plane, body.meta.quantity);
  return { meta: canonicalMeta(body.meta), curve: null, theory: null, plane: canonicalPlane(body.plane), source: null };
}

/**
 * The JSON body of an upload route: one parameter (`curve`, optional `theory`) or two (`plane`),
 * told apart by the `plane` key; `changeNote` for a new version. Both at once is refused naming
 * `curve`, so nothing sent is dropped unsaid.
 */
export function fromJsonUpload(body: unknown, opts: { changeNote: boolean }): NormalizedVersion & { changeNote?: string } {
  const b = isRecord(body) ? body : {};
  if ('plane' in b) {
    if ('curve' in b || 'theory' in b) {
      const field = 'curve' in b ? 'curve' : 'theory';
      throw new AppError(400, 'validation_failed', `Invalid body: ${field} cannot come with plane: send a curve (one parameter) or a plane (two parameters, its theory per point inside it)`, [
        { field, message: 'cannot come with plane: send a curve (one parameter) or a plane (two parameters, its theory per point inside it)' },
      ]);
    }
    if (opts.changeNote) {
      const parsed = parseJsonUpload(createPlaneVersionSchema, body);
      return { ...fromPlaneBody(parsed), changeNote: parsed.changeNote };
    }
    return fromPlaneBody(parseJsonUpload(createPlaneResultSchema, body));
  }
  if (opts.changeNote) {
    const parsed = parseJsonUpload(createVersionSchema, body);
    return { ...fromJsonBody(parsed), changeNote: parsed.changeNote };
  }
  return fromJsonBody(parseJsonUpload(createResultSchema, body));
}

/**
 * Files above this size are read on a worker thread: a 5 MB CSV of short rows is a million rows
 * and takes seconds to parse, which on the event loop would stall every other request. Smaller
 * files (almost every real limit table) are read in place, sparing the round trip.
 */
export const INLINE_READ_BYTES = 64 * KB;
const READ_TIMEOUT_MS = 30_000;

const readers = new ThreadPool<FileJob, FileReading>({
  script: path.join(__dirname, 'limit-file-thread-boot.cjs'),
  name: 'the upload reader',
  // Two threads: a second large upload need not wait for the first; more would only compete for
  // the cores the server itself needs.
  size: 2,
  timeoutMs: READ_TIMEOUT_MS,
  // A 5 MB file of a million rows needs ≈ 350 MB while parsed; a crafted file cannot take more.
  resourceLimits: { maxOldGenerationSizeMb: 1024 },
});

/** Stops the reader threads (tests); a later large upload starts them again. */
export const stopUploadReaders = () => readers.stop();

/** `readLimitFile` in place for small files, on a reader thread for large ones. */
export async function readUploadedFile(job: FileJob): Promise<FileReading> {
  if (job.data.length <= INLINE_READ_BYTES) return readLimitFile(job);
  try {
    // A copy goes to the thread: the route's buffer stays valid for storing the file as received.
    return await readers.run(job);
  } catch (e) {
    const reason =
      e instanceof ThreadTimeout
        ? `could not be read within ${READ_TIMEOUT_MS / 1000} s; split it into smaller files`
        : e instanceof ThreadDied && e.outOfMemory
          ? 'needs more memory to read than an upload may use; split it into smaller files'
          : undefined;
    if (!reason) throw e;
    return { ok: false, kind: 'unknown', details: [{ field: 'file', message: reason }], total: 1 };
  }
}

/**
 * A multipart upload: `file` (CSV, or the project's JSON detected by extension or content),
 * `meta` (JSON text; optional for the project's JSON file, where it replaces the file's own),
 * `mapping` (JSON text, role → column number; detected from the headers when absent) and, for a
 * new version, `changeNote`; `theoryLabel` names the file's theory curve.
 */
export async function fromFileUpload(upload: FileUpload, opts: { changeNote: boolean }): Promise<NormalizedVersion & { changeNote?: string }> {
  const { fields } = upload;
  const details = new Details();

  const metaRaw = jsonField(fields, 'meta', details);
  let meta = parseWith(versionMetaSchema, metaRaw, 'meta', details);
  const mapping = parseWith(mappingSchema, jsonField(fields, 'mapping', details), 'mapping', details);
  const changeNote = opts.changeNote ? parseWith(changeNoteSchema, fields.changeNote ?? '', 'changeNote', details) : undefined;
  // The theory curve's name (the legend's "theory" entry), when the file's theory columns have none.
  const theoryLabel = fields.theoryLabel !== undefined ? parseWith(theorySchema.shape.label, fields.theoryLabel, 'theoryLabel', details) : undefined;
  // The second parameter's name and unit for a CSV with two parameter columns (else read from its header).
  const yName = fields.yName !== undefined ? parseWith(planeSchema.shape.yName, fields.yName, 'yName', details) : undefined;
  const yUnit = fields.yUnit !== undefined ? parseWith(planeSchema.shape.yUnit, fields.yUnit, 'yUnit', details) : undefined;

  const file = upload.file;
  let reading: FileReading | undefined;
  if (!file) {
    details.add({ field: 'file', message: 'is missing: send the CSV or JSON file in the form field "file"' });
  } else {
    reading = await readUploadedFile({
      name: file.name,
      data: file.data,
      mapping,
      metaGiven: metaRaw !== undefined,
      ...(meta ? { quantity: meta.quantity } : {}),
      ...(yName !== undefined || yUnit !== undefined ? { second: { ...(yName !== undefined ? { name: yName } : {}), ...(yUnit !== undefined ? { unit: yUnit } : {}) } } : {}),
    });
    if (reading.kind === 'csv' && metaRaw === undefined && !details.list.some((d) => d.field === 'meta')) {
      details.add({ field: 'meta', message: 'is required with a CSV file: JSON text with title, parameterName, quantity, sqrtS, luminosity and method' });
    }
    if (reading.ok) meta ??= reading.fileMeta;
    else details.addAll(reading.details, reading.total);
  }

  const fileProblem = reading !== undefined && !reading.ok;
  if (details.total || !reading?.ok || !meta) {
    if (!details.total) details.add({ field: 'meta', message: 'is missing' });
    fail(fileProblem ? 'invalid_file' : 'validation_failed', details);
  }
  const common = {
    meta: canonicalMeta(meta),
    source: { name: file!.name, data: file!.data },
    ...(reading.warnings.length ? { warnings: reading.warnings } : {}),
    ...(changeNote !== undefined ? { changeNote } : {}),
  };
  if (reading.plane) {
    return { ...common, curve: null, theory: null, plane: canonicalPlane(reading.plane) };
  }
  return {
    ...common,
    curve: canonicalCurve(reading.curve!),
    theory: reading.theory && theoryLabel ? { ...reading.theory, label: theoryLabel } : reading.theory,
  };
}
