import { z } from 'zod';
import { checkCurve, formatCount, MAX_PROBLEMS, ProblemCollector, type CurveProblem } from '../../shared/curves/check';
import { CsvFileError, decodeText, detectRoles, parseCsv, tableToCurve, unusedNumericColumns, type ColumnMapping } from '../../shared/curves/csv';
import { checkPlane, planeField, tableToPlane, type PlaneProblem } from '../../shared/curves/plane';
import type { Plane } from '../../shared/schemas/plane';
import { limitFileSchema, planeFileSchema, type Curve, type Quantity, type Theory, type VersionMeta } from '../../shared/schemas/results';
import type { ErrorDetail } from '../../shared/errors';

/**
 * Reading one uploaded file (CSV, or the project's JSON detected by extension or content) into a
 * curve: pure and synchronous, so that it can run on a worker thread (result-upload.ts sends large
 * files there). Never throws for a bad file: its problems come back, the first MAX_PROBLEMS of
 * them named by line (or point) and column, with how many there were in all.
 */

export type FileJob = {
  name: string;
  data: Uint8Array;
  /** Role → column number, as sent; detected from the headers when absent. */
  mapping?: ColumnMapping;
  /** A `meta` field came with the file (so a JSON file's own meta is not needed). */
  metaGiven: boolean;
  /** The given meta's quantity (a plane's theory is for σ×B only); a JSON file's own when absent. */
  quantity?: Quantity;
  /** The second parameter's name and unit for a CSV plane (else from the y column's header). */
  second?: { name?: string; unit?: string };
};

/** A file read: a curve (one parameter, `plane` null) or a plane (two, `curve` null). */
export type FileReading =
  | { ok: true; kind: 'csv' | 'json'; curve: Curve | null; theory: Theory | null; plane: Plane | null; fileMeta?: VersionMeta; warnings: ErrorDetail[] }
  | { ok: false; kind: 'csv' | 'json' | 'unknown'; details: ErrorDetail[]; total: number };

/** A curve problem as an error detail: `line 7, obs` for files with lines, `point 3, observed` for JSON curves. */
export function problemDetail(p: CurveProblem, rowWord: 'line' | 'point'): ErrorDetail {
  return { field: p.row !== undefined ? `${rowWord} ${p.row}, ${p.column}` : p.column, message: p.reason };
}

/** The first MAX_PROBLEMS zod issues as details (a file can hold a million bad numbers), with their number. */
export function boundedZodDetails(error: z.ZodError, prefix?: string): { details: ErrorDetail[]; total: number } {
  const details: ErrorDetail[] = [];
  for (const i of error.issues) {
    if (details.length >= MAX_PROBLEMS) break;
    details.push({ field: [prefix, ...i.path.map(String)].filter(Boolean).join('.') || prefix || '(body)', message: i.message });
  }
  return { details, total: error.issues.length };
}

const looksLikeJson = (name: string, text: string) => /\.json$/i.test(name) || text.trimStart().startsWith('{');

/** Numeric columns that no role takes, as warnings of the answer: listed, never dropped silently. */
export function unusedColumnWarnings(headers: string[], indexes: number[]): ErrorDetail[] {
  return indexes.map((i) => ({
    field: `column ${i + 1}, ${headers[i] || `column ${i + 1}`}`,
    message: 'holds numbers but has no role, so it was not stored; send a "mapping" that gives it a role to keep it',
  }));
}

export function readLimitFile(job: FileJob): FileReading {
  let kind: 'csv' | 'json' | 'unknown' = 'unknown';
  const bad = (problems: CurveProblem[], total: number, rowWord: 'line' | 'point'): FileReading => ({
    ok: false,
    kind,
    details: problems.map((p) => problemDetail(p, rowWord)),
    total,
  });
  try {
    const text = decodeText(job.data);
    if (looksLikeJson(job.name, text)) {
      kind = 'json';
      let json: unknown;
      try {
        json = JSON.parse(text);
      } catch (e) {
        return bad([{ column: 'file', reason: `is not valid JSON (${(e as Error).message})` }], 1, 'line');
      }
      if (typeof json === 'object' && json !== null && 'plane' in json) {
        const planeSchema = job.metaGiven ? planeFileSchema.extend({ meta: z.unknown().optional() }) : planeFileSchema;
        const parsedPlane = planeSchema.safeParse(json);
        if (!parsedPlane.success) return { ok: false, kind, ...boundedZodDetails(parsedPlane.error) };
        const fileMeta = job.metaGiven ? undefined : (parsedPlane.data.meta as VersionMeta);
        const found = new ProblemCollector<PlaneProblem>();
        const problems = checkPlane(parsedPlane.data.plane, job.quantity ?? fileMeta?.quantity ?? 'xsec', found);
        if (problems.length) return { ok: false, kind, details: problems.map((p) => ({ field: planeField(p), message: p.reason })), total: found.total };
        return { ok: true, kind, curve: null, theory: null, plane: parsedPlane.data.plane, ...(fileMeta ? { fileMeta } : {}), warnings: [] };
      }
      const schema = job.metaGiven ? limitFileSchema.extend({ meta: z.unknown().optional() }) : limitFileSchema;
      const parsed = schema.safeParse(json);
      if (!parsed.success) return { ok: false, kind, ...boundedZodDetails(parsed.error) };
      const theory = canonicalTheory(parsed.data.theory);
      const found = new ProblemCollector();
      const problems = checkCurve(parsed.data.curve, theory, undefined, found);
      if (problems.length) return bad(problems, found.total, 'point');
      return { ok: true, kind, curve: parsed.data.curve, theory, plane: null, ...(job.metaGiven ? {} : { fileMeta: parsed.data.meta as VersionMeta }), warnings: [] };
    }
    kind = 'csv';
    const table = parseCsv(text);
    const mapping = job.mapping ?? detectRoles(table.headers);
    const warnings = unusedColumnWarnings(table.headers, unusedNumericColumns(table, mapping));
    // A second parameter column (detected or mapped) makes the table a plane.
    if (mapping.y !== undefined) return { ok: true, kind, curve: null, theory: null, plane: tableToPlane(table, mapping, job.quantity ?? 'xsec', job.second), warnings };
    const { curve, theory } = tableToCurve(table, mapping);
    return { ok: true, kind, curve, theory, plane: null, warnings };
  } catch (e) {
    if (!(e instanceof CsvFileError)) throw e;
    return bad(e.problems, e.total, 'line');
  }
}

/** The theory in a fixed key order (so that its stored size is the same however it was sent). */
export function canonicalTheory(t: Theory | null | undefined): Theory | null {
  if (!t) return null;
  return { ...(t.label ? { label: t.label } : {}), x: t.x, central: t.central, ...(t.lower ? { lower: t.lower } : {}), ...(t.upper ? { upper: t.upper } : {}) };
}

/** "and 1,249,900 more problems": the detail that closes a list cut at MAX_PROBLEMS. */
export function moreProblems(hidden: number): ErrorDetail {
  return { field: 'file', message: `and ${formatCount(hidden)} more problem${hidden === 1 ? '' : 's'}` };
}
