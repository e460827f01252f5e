import { z } from 'zod';
import { CsvFileError, decodeText } from '../../shared/curves/csv';
import { parseScanCsv } from '../../shared/scans/csv';
import { EXPECTED_KEYS } from '../../shared/schemas/counting-model';
import { createScanSchema, DEFAULT_SCAN_THEORY_LABEL, MAX_TOYS_PER_POINT, scanFileSchema, scanMetaSchema, scanOptionsSchema, theoryLabelSchema, type RerunPointInput, type ScanInputPoint, type ScanMeta, type ScanOptions } from '../../shared/schemas/scans';
import type { Curve, Theory, VersionMeta } from '../../shared/schemas/results';
import type { Plane } from '../../shared/schemas/plane';
import { planeGrid } from '../../shared/plane/grid';
import { StatsInputError } from '../../shared/stats/errors';
import type { ScanDetail, ScanPointDetail, ScanSummary } from '../../shared/schemas/scan-views';
import type { CombinationPlan } from '../../shared/schemas/combine';
import { insertVersionInputs } from '../../db/queries/results';
import * as q from '../../db/queries/scans';
import { getRole } from '../../db/queries/groups';
import type { Executor } from '../../db/client';
import type { Ctx } from '../context';
import { AppError, notFound, validationError, type ErrorDetail } from '../lib/errors';
import * as tq from '../../db/queries/scan-tasks';
import { toyChunkSizes } from '../../shared/stats/toy-chunks';
import { estimateSecondsLeft } from '../../shared/scans/progress';
import { addVersion, createResult, getDetail } from './results';
import { assertScanQueueRoom, planOfGroup, planToysPerPoint } from './plans';
import * as storage from './storage';

/**
 * Scans: a grid of counting models queued as one task per point, computed by workers, and turned
 * into a draft result version when the last point finishes (or the scan is cancelled).
 */

/** `combination`: the scan is a joint combination of other results (server/services/combine.ts), recorded with it. */
export type ScanRequest = { points: ScanInputPoint[]; options: ScanOptions; meta: ScanMeta; resultId?: string; theoryLabel: string | null; sourceName: string | null; sourceBytes: number; combination?: CombinationPlan };

function invalid(details: ErrorDetail[]): never {
  const first = details[0]!;
  throw new AppError(400, 'validation_failed', `The scan cannot be started: ${first.field}: ${first.message}`, details.slice(0, 200));
}

/** A JSON body (createScanSchema) as a scan request. */
export function scanFromJson(body: unknown): ScanRequest {
  const parsed = createScanSchema.safeParse(body);
  if (!parsed.success) throw validationError(parsed.error, 'body');
  const { points, options, meta, resultId, theoryLabel } = parsed.data;
  return { points: points as ScanInputPoint[], options, meta, resultId, theoryLabel: theoryLabel || null, sourceName: null, sourceBytes: Buffer.byteLength(JSON.stringify(body)) };
}

/** A multipart upload: `file` (scan CSV or the project's scan JSON), `meta` and `options` as JSON text, optional `resultId`. */
export function scanFromUpload(file: { name: string; data: Buffer } | undefined, fields: Record<string, unknown>): ScanRequest {
  const details: ErrorDetail[] = [];
  if (!file) invalid([{ field: 'file', message: 'choose a scan file (CSV or JSON)' }]);
  const json = (name: string): unknown => {
    const raw = fields[name];
    if (raw === undefined || raw === '') return undefined;
    try {
      return JSON.parse(String(raw));
    } catch {
      details.push({ field: name, message: 'must be JSON text' });
      return undefined;
    }
  };
  const meta = scanMetaSchema.safeParse(json('meta') ?? {});
  if (!meta.success) details.push(...meta.error.issues.map((i) => ({ field: ['meta', ...i.path].join('.'), message: i.message })));
  const options = scanOptionsSchema.safeParse(json('options'));
  if (!options.success) details.push(...options.error.issues.map((i) => ({ field: ['options', ...i.path].join('.'), message: i.message })));
  const resultId = z.uuid().optional().safeParse(fields.resultId || undefined);
  if (!resultId.success) details.push({ field: 'resultId', message: 'must be a valid id' });
  const theoryLabel = theoryLabelSchema.safeParse(fields.theoryLabel || undefined);
  if (!theoryLabel.success) details.push(...theoryLabel.error.issues.map((i) => ({ field: 'theoryLabel', message: i.message })));

  let points: ScanInputPoint[] = [];
  try {
    const text = decodeText(new Uint8Array(file.data));
    if (/\.json$/i.test(file.name) || text.trimStart().startsWith('{')) {
      let raw: unknown;
      try {
        raw = JSON.parse(text);
      } catch (e) {
        throw new CsvFileError([{ column: 'file', reason: `is not valid JSON (${(e as Error).message})` }]);
      }
      const r = scanFileSchema.safeParse(raw);
      if (!r.success) details.push(...r.error.issues.map((i) => ({ field: ['file', ...i.path].join('.'), message: i.message })));
      else points = r.data.points as ScanInputPoint[];
    } else {
      // The same per-point rules as a JSON file (the σ×B band holds the nominal value).
      points = parseScanCsv(text);
      const r = scanFileSchema.safeParse({ points });
      if (!r.success) details.push(...r.error.issues.map((i) => ({ field: ['file', ...i.path].join('.'), message: i.message })));
    }
  } catch (e) {
    if (!(e instanceof CsvFileError)) throw e;
    details.push(...e.problems.map((p) => ({ field: p.row !== undefined ? `line ${p.row}, ${p.column}` : p.column, message: p.reason })));
  }
  if (details.length) invalid(details);
  return { points, options: options.data!, meta: meta.data!, resultId: resultId.data, theoryLabel: theoryLabel.data || null, sourceName: file.name, sourceBytes: file.data.length };
}

function bins(model: Record<string, unknown>): number {
  return Array.isArray(model.observed) ? model.observed.length : 1;
}

/** What SCAN_COST_LIMIT bounds: points × bins × pseudo-experiments per hypothesis (1 per asymptotic point). */
function scanCost(binsPerPoint: number[], perPoint: number): number {
  return binsPerPoint.reduce((sum, b) => sum + b * perPoint, 0);
}

/**
 * The most pseudo-experiments per hypothesis that one point with `model` may be given when it is
 * computed again: the scan start's rules for a scan of that one point (SCAN_COST_LIMIT, the plan's
 * scanQueueLimit, the options' own maximum).
 */
async function maxRerunToys(ctx: Ctx, db: Executor, groupId: string, model: Record<string, unknown>): Promise<number> {
  const { plan } = await planOfGroup(db, groupId);
  return Math.min(MAX_TOYS_PER_POINT, Math.floor(ctx.env.SCAN_COST_LIMIT / scanCost([bins(model)], 1)), planToysPerPoint(plan, 1));
}

/** A scan over two parameters: its points carry y (all of them; checkScan refuses a mix). */
export const isPlaneScan = (points: readonly { y?: number | null }[]) => points.some((p) => p.y !== undefined && p.y !== null);

/**
 * The grid of a scan over two parameters, checked as a two-parameter result's (`planeGrid`:
 * duplicates, off-grid points, one-row grids, at most 200 × 200, at least half the cells), with the
 * problem named as a scan field (`points.17.x`, `points`).
 */
function planeGridDetails(points: ScanInputPoint[]): ErrorDetail[] {
  try {
    planeGrid(points.map((p) => p.x), points.map((p) => p.y!));
    return [];
  } catch (e) {
    if (!(e instanceof StatsInputError)) throw e;
    const at = /^([xy])\[(\d+)\]$/.exec(e.field);
    return [{ field: at ? `points.${at[2]}.${at[1]}` : 'points', message: at ? e.reason : `${e.field} ${e.reason}` }];
  }
}

/** Checks that apply to the scan as a whole, before anything is queued. */
function checkScan(ctx: Ctx, req: ScanRequest) {
  const details: ErrorDetail[] = [];
  const seen = new Map<number, number>();
  const plane = isPlaneScan(req.points);
  if (plane && !req.meta.yName) details.push({ field: 'meta.yName', message: 'is required: the points give y, a second parameter, which needs a name' });
  if (!plane && req.meta.yName) details.push({ field: 'points.0.y', message: `is required: meta.yName names a second parameter (${req.meta.yName}), so every point needs a y` });
  req.points.forEach((p, i) => {
    if (plane) {
      if (p.y === undefined) details.push({ field: `points.${i}.y`, message: 'is required: the other points give y (a scan over two parameters needs it at every point)' });
    } else {
      if (seen.has(p.x)) details.push({ field: `points.${i}.x`, message: `repeats x = ${p.x} of point ${seen.get(p.x)! + 1}` });
      seen.set(p.x, i);
    }
    if (req.meta.quantity === 'xsec' && p.sigmaNominal === undefined) {
      details.push({ field: `points.${i}.sigmaNominal`, message: 'is needed for σ×B limits (or choose μ as the limited quantity)' });
    }
  });
  if (req.points.length < 2) details.push({ field: 'points', message: 'a scan needs at least two grid points' });
  if (details.length) invalid(details);
  if (plane) {
    const grid = planeGridDetails(req.points);
    if (grid.length) invalid(grid);
  }
  const perPoint = req.options.method === 'toys' ? req.options.toys : 1;
  const cost = scanCost(req.points.map((p) => bins(p.model as Record<string, unknown>)), perPoint);
  if (cost > ctx.env.SCAN_COST_LIMIT) {
    throw new AppError(
      413,
      'scan_too_large',
      `This scan is too large: ${req.points.length} points × bins × ${perPoint === 1 ? '1' : `${perPoint} pseudo-experiments`} = ${cost.toLocaleString('en')} exceeds the limit of ${ctx.env.SCAN_COST_LIMIT.toLocaleString('en')} (SCAN_COST_LIMIT); split the scan or use fewer pseudo-experiments`,
    );
  }
}

function requireQueue(ctx: Ctx): NonNullable<Ctx['jobs']> {
  if (!ctx.jobs) throw new AppError(503, 'no_queue', 'The job queue is not running on this server');
  return ctx.jobs;
}

/** The tasks of a point: one for an asymptotic point, one per chunk of pseudo-experiments. */
function pointTasks(options: ScanOptions): number[] {
  return options.method === 'toys' ? toyChunkSizes(options.toys) : [1];
}

/**
 * Stores the scan, its points and their tasks in one transaction, so a scan is either fully
 * queued or absent.
 */
export async function startScan(ctx: Ctx, groupId: string, userId: string, req: ScanRequest): Promise<ScanDetail> {
  checkScan(ctx, req);
  requireQueue(ctx);
  if (req.resultId) {
    await getDetail(ctx, groupId, req.resultId); // 404 unless the result is this group's
  }
  const costs = pointTasks(req.options);
  const scanId = await ctx.db.transaction(async (tx) => {
    const storedBytes = req.sourceBytes + Buffer.byteLength(JSON.stringify(req.points));
    // Room for the inputs and for the draft the scan will save (that save is admitted later).
    await storage.reserve(tx, groupId, storedBytes, 'this scan', { headroom: storage.scanDraftAllowance(req.points.length) });
    // The group's queued scan work within its plan (the group row is locked by the reserve above).
    await assertScanQueueRoom(tx, groupId, { points: req.points.length, perPoint: costs.reduce((a, b) => a + b, 0), toys: req.options.method === 'toys' });
    const scan = await q.insertScan(tx, {
      groupId,
      options: req.options,
      meta: req.meta,
      targetResultId: req.resultId ?? null,
      totalPoints: req.points.length,
      sourceName: req.sourceName,
      theoryLabel: req.theoryLabel,
      storedBytes,
      combination: req.combination ?? null,
      createdBy: userId,
    });
    await q.insertScanPoints(
      tx,
      req.points.map((p, index) => ({
        scanId: scan.id,
        index,
        x: p.x,
        y: p.y ?? null,
        sigmaNominal: p.sigmaNominal ?? null,
        sigmaNominalLow: p.sigmaNominalLow ?? null,
        sigmaNominalHigh: p.sigmaNominalHigh ?? null,
        model: p.model as Record<string, unknown>,
        chunks: costs.length,
      })),
    );
    await tq.insertTasks(
      tx,
      req.points.flatMap((_, pointIndex) => costs.map((cost, chunk) => ({ scanId: scan.id, groupId, pointIndex, chunk, cost }))),
    );
    return scan.id;
  });
  return getScan(ctx, groupId, scanId);
}

export async function listScans(ctx: Ctx, groupId: string): Promise<ScanSummary[]> {
  return (await q.listScans(ctx.db, groupId)).map((s) => ({
    ...s,
    title: s.title ?? '',
    createdAt: s.createdAt.toISOString(),
    startedAt: s.startedAt?.toISOString() ?? null,
    finishedAt: s.finishedAt?.toISOString() ?? null,
  }));
}

export async function getScan(ctx: Ctx, groupId: string, scanId: string): Promise<ScanDetail> {
  const s = await q.getScan(ctx.db, groupId, scanId);
  if (!s) throw notFound('Scan');
  const [points, tasks] = await Promise.all([q.listPointSummaries(ctx.db, groupId, scanId), tq.taskProgress(ctx.db, groupId, scanId)]);
  const byPoint = new Map(tasks.map((x) => [x.pointIndex, x]));
  const now = tasks[0]?.now ?? new Date();
  const active = s.state === 'queued' || s.state === 'running';
  const end = s.finishedAt ?? now;
  const elapsed = s.startedAt ? Math.max(0, (end.getTime() - s.startedAt.getTime()) / 1000) : 0;
  // Retries count only for points still to compute (a finished point's stray tasks do not).
  const retries = active ? points.flatMap((p) => (p.state === 'queued' && byPoint.get(p.index)?.retryAt ? [byPoint.get(p.index)!.retryAt!] : [])) : [];
  const eta = active
    ? estimateSecondsLeft({
        elapsedSeconds: elapsed,
        tasks: tasks.reduce((n, x) => n + x.tasks, 0),
        openTasks: tasks.reduce((n, x) => n + x.open, 0),
        retryDueInSeconds: retries.map((d) => (d.getTime() - now.getTime()) / 1000),
      })
    : null;
  const lastRetry = retries.length ? new Date(Math.max(...retries.map((d) => d.getTime()))) : null;
  return {
    id: s.id,
    groupId: s.groupId,
    state: s.state,
    title: s.meta.title,
    meta: s.meta,
    options: s.options,
    totalPoints: s.totalPoints,
    donePoints: s.donePoints,
    failedPoints: s.failedPoints,
    elapsedSeconds: elapsed,
    etaSeconds: eta,
    retryAt: lastRetry?.toISOString() ?? null,
    now: now.toISOString(),
    resultId: s.resultId,
    resultVersion: s.resultVersion,
    error: s.error,
    sourceName: s.sourceName,
    createdAt: s.createdAt.toISOString(),
    startedAt: s.startedAt?.toISOString() ?? null,
    finishedAt: s.finishedAt?.toISOString() ?? null,
    points: points.map((p) => {
      const t = byPoint.get(p.index);
      const retryAt = active && p.state === 'queued' && t?.retryAt ? t.retryAt.toISOString() : null;
      return { ...p, sigmaNominal: p.sigmaNominal ?? null, tasks: { done: t?.done ?? 0, total: t?.tasks ?? 0, running: t?.running ?? 0 }, retryAt };
    }),
  };
}

export async function getPointDetail(ctx: Ctx, groupId: string, scanId: string, index: number): Promise<ScanPointDetail> {
  const s = await q.getScan(ctx.db, groupId, scanId);
  if (!s) throw notFound('Scan');
  const p = await q.getPoint(ctx.db, groupId, scanId, index);
  if (!p) throw notFound('Grid point');
  const rerun = s.options.method === 'toys' ? { toys: p.toys ?? s.options.toys, maxToys: await maxRerunToys(ctx, ctx.db, groupId, p.model) } : null;
  return { index: p.index, x: p.x, y: p.y, sigmaNominal: p.sigmaNominal, state: p.state, model: p.model, result: p.result as ScanPointDetail['result'], error: p.error, attempts: p.attempts, computeMs: p.computeMs, rerun };
}

/**
 * Reruns one point of an ended pseudo-experiment scan with more pseudo-experiments: a new scan of
 * the same inputs and options, aimed at the same result, in which every other point the old scan
 * computed (done or failed) is copied with its stored outcome and only the chosen point is queued,
 * with `toys` per hypothesis (its seed stays the scan seed + index, so the first chunks repeat the
 * old ones and the rest add to them). Points the old scan never computed (cancelled) are left out,
 * as they are left out of its draft. When the point finishes, the draft is a new version of the
 * result ("Point x = … rerun with N pseudo-experiments"); the old version stays.
 */
export async function rerunPoint(ctx: Ctx, groupId: string, userId: string, scanId: string, index: number, body: RerunPointInput): Promise<ScanDetail> {
  requireQueue(ctx);
  const old = await q.getScan(ctx.db, groupId, scanId);
  if (!old) throw notFound('Scan');
  if (old.options.method !== 'toys') throw new AppError(409, 'not_pseudo_experiments', 'Only points of a pseudo-experiment scan can be rerun with more pseudo-experiments');
  if (old.state === 'queued' || old.state === 'running') throw new AppError(409, 'running', 'This scan is still running: rerun a point once it has finished or been cancelled');
  const points = await q.listPointsForCopy(ctx.db, groupId, scanId);
  const target = points.find((p) => p.index === index);
  if (!target) throw notFound('Grid point');
  const current = target.toys ?? old.options.toys;
  const n = (v: number) => v.toLocaleString('en');
  if (body.toys <= current) invalid([{ field: 'toys', message: `must be more than the point's current ${n(current)} pseudo-experiments` }]);
  const most = await maxRerunToys(ctx, ctx.db, groupId, target.model);
  if (body.toys > most) invalid([{ field: 'toys', message: `must be at most ${n(most)} for this point (the scan cost limit and the plan's queue limit)` }]);
  const kept = points.filter((p) => p.index !== index && (p.state === 'done' || p.state === 'failed'));
  const costs = toyChunkSizes(body.toys);
  const inputs = [...kept, target].sort((a, b) => a.index - b.index);
  const newId = await ctx.db.transaction(async (tx) => {
    const storedBytes = Buffer.byteLength(
      JSON.stringify(inputs.map((p) => ({ x: p.x, ...(p.y !== null ? { y: p.y } : {}), sigmaNominal: p.sigmaNominal, sigmaNominalLow: p.sigmaNominalLow, sigmaNominalHigh: p.sigmaNominalHigh, model: p.model }))),
    );
    await storage.reserve(tx, groupId, storedBytes, 'this scan', { headroom: storage.scanDraftAllowance(inputs.length) });
    await assertScanQueueRoom(tx, groupId, { points: 1, perPoint: body.toys, toys: true, field: 'toys' });
    const scan = await q.insertScan(tx, {
      groupId,
      options: old.options,
      meta: old.meta,
      targetResultId: old.resultId ?? old.targetResultId,
      totalPoints: inputs.length,
      donePoints: kept.filter((p) => p.state === 'done').length,
      failedPoints: kept.filter((p) => p.state === 'failed').length,
      sourceName: old.sourceName,
      theoryLabel: old.theoryLabel,
      storedBytes,
      createdBy: userId,
      rerunOf: old.id,
      rerunPoint: index,
    });
    await q.insertScanPoints(
      tx,
      inputs.map((p) =>
        p.index === index
          ? { scanId: scan.id, index, x: p.x, y: p.y, sigmaNominal: p.sigmaNominal, sigmaNominalLow: p.sigmaNominalLow, sigmaNominalHigh: p.sigmaNominalHigh, model: p.model, chunks: costs.length, toys: body.toys }
          : { ...p, scanId: scan.id },
      ),
    );
    await tq.insertTasks(tx, costs.map((cost, chunk) => ({ scanId: scan.id, groupId, pointIndex: index, chunk, cost })));
    return scan.id;
  });
  return getScan(ctx, groupId, newId);
}

export async function scanInputs(ctx: Ctx, groupId: string, scanId: string) {
  const s = await q.getScan(ctx.db, groupId, scanId);
  if (!s) throw notFound('Scan');
  const points = await q.listPointInputs(ctx.db, groupId, scanId);
  const some = <K extends string>(k: K, v: number | null) => (v !== null ? { [k]: v } : {});
  return {
    format: 'bandwright-scan/1',
    options: s.options,
    meta: s.meta,
    ...(s.theoryLabel ? { theoryLabel: s.theoryLabel } : {}),
    points: points.map((p) => ({ x: p.x, ...some('y', p.y), ...some('sigmaNominal', p.sigmaNominal), ...some('sigmaNominalLow', p.sigmaNominalLow), ...some('sigmaNominalHigh', p.sigmaNominalHigh), model: p.model })),
  };
}

/** Cancels a scan: queued points are dropped, finished ones are kept and become the draft. */
export async function cancelScan(ctx: Ctx, groupId: string, scanId: string): Promise<ScanDetail> {
  const outcome = await ctx.db.transaction(async (tx) => {
    const s = await q.getScan(tx, groupId, scanId, true);
    if (!s) throw notFound('Scan');
    if (s.state !== 'queued' && s.state !== 'running') throw new AppError(409, 'finished', `This scan is already ${s.state}`);
    await q.cancelQueuedPoints(tx, groupId, scanId);
    // A running chunk sees its task cancelled at its next heartbeat and stops there.
    await tq.cancelOpenTasks(tx, groupId, scanId);
    await q.setScanOutcome(tx, groupId, scanId, { state: 'cancelled' });
    return s;
  });
  await saveDraft(ctx, outcome.id, 'cancelled');
  return getScan(ctx, groupId, scanId);
}

/**
 * The scan's finished points as a limit curve: σ×B when the scan's quantity is σ×B (every point
 * then has a nominal cross-section), μ otherwise. Failed points are left out and named in the notes.
 */
export function curveOfPoints(points: q.ScanPointRow[], quantity: VersionMeta['quantity']): Curve {
  const done = points.filter((p) => p.state === 'done' && p.result).sort((a, b) => a.x - b.x);
  const pick = (p: q.ScanPointRow) => {
    const r = p.result as { observed: number; expected: Record<string, number>; sigmaB?: { observed: number; expected: Record<string, number> } };
    return quantity === 'xsec' && r.sigmaB ? r.sigmaB : r;
  };
  return {
    x: done.map((p) => p.x),
    observed: done.map((p) => pick(p).observed),
    expected: Object.fromEntries(EXPECTED_KEYS.map((k) => [k, done.map((p) => pick(p).expected[k]!)])) as Curve['expected'],
  };
}

/**
 * The draft's theory curve: the nominal σ×B the points give (σ×B scans only), at the finished
 * points' x, with its band when every such point gives one; null when the scan limits μ or a point
 * has no nominal σ×B.
 */
export function theoryOfPoints(points: q.ScanPointRow[], quantity: VersionMeta['quantity'], label: string | null): Theory | null {
  if (quantity !== 'xsec') return null;
  const done = points.filter((p) => p.state === 'done' && p.result).sort((a, b) => a.x - b.x);
  if (done.length < 2 || done.some((p) => p.sigmaNominal === null)) return null;
  const band = done.every((p) => p.sigmaNominalLow !== null && p.sigmaNominalHigh !== null);
  return {
    label: label ?? DEFAULT_SCAN_THEORY_LABEL,
    x: done.map((p) => p.x),
    central: done.map((p) => p.sigmaNominal!),
    ...(band ? { lower: done.map((p) => p.sigmaNominalLow!), upper: done.map((p) => p.sigmaNominalHigh!) } : {}),
  };
}

/**
 * The finished points of a scan over two parameters as a plane (shared/schemas/plane.ts): limits
 * on σ×B or μ as `curveOfPoints` picks them, and for σ×B the points' nominal σ×B as the theory
 * per point (its band when every point gives one). Failed and cancelled points are holes. Throws
 * StatsInputError (planeGrid's) when the finished points no longer form a grid.
 */
export function planeOfPoints(points: q.ScanPointRow[], meta: ScanMeta): Plane {
  const done = points.filter((p) => p.state === 'done' && p.result && p.y !== null);
  planeGrid(done.map((p) => p.x), done.map((p) => p.y!));
  const curve = curveOfPoints(done, meta.quantity);
  // curveOfPoints sorts by x (stable), so the rows follow: sort the same way for y and σ×B.
  const rows = [...done].sort((a, b) => a.x - b.x);
  const band = rows.every((p) => p.sigmaNominalLow !== null && p.sigmaNominalHigh !== null);
  const theory =
    meta.quantity === 'xsec' && rows.every((p) => p.sigmaNominal !== null)
      ? { central: rows.map((p) => p.sigmaNominal!), ...(band ? { lower: rows.map((p) => p.sigmaNominalLow!), upper: rows.map((p) => p.sigmaNominalHigh!) } : {}) }
      : undefined;
  return { yName: meta.yName ?? 'y', yUnit: meta.yUnit ?? '', x: curve.x, y: rows.map((p) => p.y!), observed: curve.observed, expected: curve.expected, ...(theory ? { theory } : {}) };
}

/** The change note of a scan's new version: which point a rerun computed again, else the scan. */
function changeNoteOf(scan: q.ScanRow, points: q.ScanPointRow[], combined: boolean): string {
  const point = scan.rerunPoint !== null ? points.find((p) => p.index === scan.rerunPoint) : undefined;
  if (point?.toys) return `Point ${point.y !== null ? `(x, y) = (${point.x}, ${point.y})` : `x = ${point.x}`} rerun with ${point.toys.toLocaleString('en')} pseudo-experiments`;
  return `${combined ? 'Recombined' : 'Recomputed'} by scan ${scan.id.slice(0, 8)}`;
}

/**
 * Turns a finished or cancelled scan into a draft result version, at most once: the caller must
 * first win the claim on the scan (another finisher, or a canceller at the same moment, backs off).
 */
export async function saveDraft(ctx: Ctx, scanId: string, why: 'done' | 'cancelled'): Promise<void> {
  if (!(await q.claimDraft(ctx.db, scanId))) return;
  const scan = await q.getScanById(ctx.db, scanId);
  if (!scan || scan.resultId) return;
  const points = await q.listFinishedPoints(ctx.db, scanId);
  const failed = scan.failedPoints;
  if (points.length < 2) {
    if (why === 'done') await q.setScanOutcome(ctx.db, scan.groupId, scanId, { state: 'failed', error: `Only ${points.length} of ${scan.totalPoints} points could be computed; no draft was made` });
    return;
  }
  const role = scan.createdBy ? await getRole(ctx.db, scan.groupId, scan.createdBy) : undefined;
  const actor = { id: scan.createdBy ?? '', role: role ?? 'analyst' };
  const plane = isPlaneScan(points);
  let planeDraft: Plane | null = null;
  if (plane) {
    try {
      planeDraft = planeOfPoints(points, scan.meta);
    } catch (e) {
      if (!(e instanceof StatsInputError)) throw e;
      await q.setScanOutcome(ctx.db, scan.groupId, scanId, { state: 'failed', error: `Only ${points.length} of ${scan.totalPoints} points could be computed and they do not form a grid (${e.field} ${e.reason}); no draft was made` });
      return;
    }
  }
  const opts = scan.options;
  // Points rerun with more pseudo-experiments (here or in the scans this one was copied from).
  const own = points.filter((p) => p.toys !== null && p.toys !== opts.toys).map((p) => `${p.y !== null ? `(x, y) = (${p.x}, ${p.y})` : `x = ${p.x}`} with ${p.toys}`);
  const toys = `${opts.toys} per hypothesis${own.length ? ` (${own.join(', ')})` : ''}, seed ${opts.seed}`;
  const how = `Computed by Bandwright from event counts: ${opts.method === 'toys' ? `pseudo-experiment CLs (${toys})` : `asymptotic CLs (${opts.asimov} Asimov dataset)`}, ${Math.round(opts.cl * 100)}% CL, scan ${scan.id}.`;
  const notes = [scan.meta.notes, how, failed ? `${failed} grid point(s) failed and are not in the ${plane ? 'plane (holes)' : 'curve'}.` : '', why === 'cancelled' ? `The scan was cancelled after ${points.length} of ${scan.totalPoints} points.` : '']
    .filter(Boolean)
    .join('\n');
  const { yName: _yName, yUnit: _yUnit, ...versionMeta } = scan.meta;
  const meta: VersionMeta = { ...versionMeta, method: opts.method, cl: opts.cl, notes: notes.slice(0, 5000) };
  // Two parameters: the plane, whose contour lines the registry derives when it stores the version.
  const input = planeDraft
    ? { meta, curve: null, theory: null, plane: planeDraft, source: null }
    : { meta, curve: curveOfPoints(points, scan.meta.quantity), theory: theoryOfPoints(points, scan.meta.quantity, scan.theoryLabel), source: null };
  // A joint combination's draft lists the result versions it combines (as an envelope's does).
  const combined = scan.combination?.inputs.map((i) => ({ resultId: i.resultId, version: i.version, title: i.title }));
  const hooks = combined ? { after: (tx: Parameters<typeof insertVersionInputs>[0], w: { resultId: string; version: number }) => insertVersionInputs(tx, scan.groupId, w.resultId, w.version, combined) } : undefined;
  const version = scan.targetResultId
    ? await addVersion(ctx, scan.groupId, actor, scan.targetResultId, { ...input, changeNote: changeNoteOf(scan, points, !!combined) }, { admitted: true, hooks })
    : await createResult(ctx, scan.groupId, actor, input, { admitted: true, hooks });
  await q.setScanOutcome(ctx.db, scan.groupId, scanId, { state: why, resultId: version.resultId, resultVersion: version.version });
}
