import { and, asc, desc, eq, inArray, or, sql } from 'drizzle-orm';
import type { ExpectedLimits } from '../../shared/schemas/counting-model';
import type { ScanOptions } from '../../shared/schemas/scans';
import type { Executor } from '../client';
import { results, resultVersions } from '../schema/results';
import { scanPoints, scans } from '../schema/scans';
import { versionVisibleSql, type Viewer } from './visibility';

export type ScanRow = typeof scans.$inferSelect;
export type ScanPointRow = typeof scanPoints.$inferSelect;

export async function insertScan(db: Executor, scan: typeof scans.$inferInsert) {
  const [row] = await db.insert(scans).values(scan).returning();
  return row!;
}

export async function insertScanPoints(db: Executor, points: (typeof scanPoints.$inferInsert)[]) {
  // Large grids go in slices to stay under PostgreSQL's bind-parameter limit.
  for (let i = 0; i < points.length; i += 500) await db.insert(scanPoints).values(points.slice(i, i + 500));
}

export async function listScans(db: Executor, groupId: string, limit = 50) {
  return db
    .select({
      id: scans.id,
      state: scans.state,
      title: sql<string>`${scans.meta}->>'title'`,
      totalPoints: scans.totalPoints,
      donePoints: scans.donePoints,
      failedPoints: scans.failedPoints,
      resultId: scans.resultId,
      resultVersion: scans.resultVersion,
      createdAt: scans.createdAt,
      startedAt: scans.startedAt,
      finishedAt: scans.finishedAt,
    })
    .from(scans)
    .where(eq(scans.groupId, groupId))
    .orderBy(desc(scans.createdAt))
    .limit(limit);
}

/** A scan of a group (undefined when it is another group's or does not exist). */
export async function getScan(db: Executor, groupId: string, scanId: string, lock = false) {
  const q = db.select().from(scans).where(and(eq(scans.id, scanId), eq(scans.groupId, groupId)));
  const rows = lock ? await q.for('update') : await q;
  return rows[0];
}

/** The scan behind a queued task, for the worker (tasks carry only ids). */
export async function getScanById(db: Executor, scanId: string, lock = false) {
  const q = db.select().from(scans).where(eq(scans.id, scanId));
  const rows = lock ? await q.for('update') : await q;
  return rows[0];
}

/** The scan `scanId` if it belongs to `groupId`: the scope of the request path's point reads and writes. */
const scanOfGroup = (db: Executor, groupId: string, scanId: string) =>
  db.select({ id: scans.id }).from(scans).where(and(eq(scans.id, scanId), eq(scans.groupId, groupId)));

/** Points of a scan without their models and diagnostics (for progress views). */
export async function listPointSummaries(db: Executor, groupId: string, scanId: string) {
  return db
    .select({
      index: scanPoints.index,
      x: scanPoints.x,
      y: scanPoints.y,
      sigmaNominal: scanPoints.sigmaNominal,
      state: scanPoints.state,
      observed: sql<number | null>`(${scanPoints.result}->>'observed')::float8`,
      expected: sql<ExpectedLimits | null>`${scanPoints.result}->'expected'`,
      sigmaB: sql<{ observed: number; expected: ExpectedLimits } | null>`${scanPoints.result}->'sigmaB'`,
      warnings: sql<string[] | null>`${scanPoints.result}->'warnings'`,
      error: scanPoints.error,
      computeMs: scanPoints.computeMs,
    })
    .from(scanPoints)
    .where(inArray(scanPoints.scanId, scanOfGroup(db, groupId, scanId)))
    .orderBy(asc(scanPoints.index));
}

export async function getPoint(db: Executor, groupId: string, scanId: string, index: number) {
  const rows = await db.select().from(scanPoints).where(and(inArray(scanPoints.scanId, scanOfGroup(db, groupId, scanId)), eq(scanPoints.index, index)));
  return rows[0];
}

/** Every point of a scan with its input and outcome, for a rerun that copies them. */
export async function listPointsForCopy(db: Executor, groupId: string, scanId: string) {
  return db.select().from(scanPoints).where(inArray(scanPoints.scanId, scanOfGroup(db, groupId, scanId))).orderBy(asc(scanPoints.index));
}

export async function listFinishedPoints(db: Executor, scanId: string) {
  return db
    .select()
    .from(scanPoints)
    .where(and(eq(scanPoints.scanId, scanId), eq(scanPoints.state, 'done')))
    .orderBy(asc(scanPoints.x), asc(scanPoints.y));
}

export async function listPointInputs(db: Executor, groupId: string, scanId: string) {
  return db
    .select({ x: scanPoints.x, y: scanPoints.y, sigmaNominal: scanPoints.sigmaNominal, sigmaNominalLow: scanPoints.sigmaNominalLow, sigmaNominalHigh: scanPoints.sigmaNominalHigh, model: scanPoints.model })
    .from(scanPoints)
    .where(inArray(scanPoints.scanId, scanOfGroup(db, groupId, scanId)))
    .orderBy(asc(scanPoints.index));
}

/**
 * Starts work on one of a point's tasks in a single statement: the scan turns running (first task
 * only), the point's attempts become the task's if higher, and the point's input comes back with
 * the scan's options. Nothing comes back (and nothing changes) when the point already finished or
 * the scan is over.
 */
export async function claimPoint(db: Executor, scanId: string, index: number, attempt = 1) {
  const r = await db.execute<{ x: number; sigma_nominal: number | null; model: Record<string, unknown>; chunks: number; toys: number | null; options: ScanOptions }>(sql`
    with s as (select state, options from ${scans} where id = ${scanId}),
    started as (
      update ${scans} set state = 'running', started_at = coalesce(started_at, now())
      where id = ${scanId} and state = 'queued'
    ),
    p as (
      update ${scanPoints} set attempts = greatest(attempts, ${attempt})
      where scan_id = ${scanId} and index = ${index} and state = 'queued'
        and (select state from s) in ('queued', 'running')
      returning x, sigma_nominal, model, chunks, toys
    )
    select p.x, p.sigma_nominal, p.model, p.chunks, p.toys, s.options from p cross join s`);
  const row = r.rows[0];
  return row ? { x: row.x, sigmaNominal: row.sigma_nominal, model: row.model, chunks: row.chunks, toys: row.toys, options: row.options } : undefined;
}

/**
 * Stores a point's outcome once, in one statement: only a point still queued changes (a task that
 * runs twice, a retry after a worker died, never counts or overwrites a finished point), and the
 * scan's counters move with it. Returns the scan's counts after the change, or undefined when
 * nothing changed.
 */
export async function finishPoint(
  db: Executor,
  p: { scanId: string; index: number; state: 'done' | 'failed'; result?: Record<string, unknown>; error?: { field: string; reason: string }; computeMs: number },
): Promise<{ donePoints: number; failedPoints: number; totalPoints: number; state: string } | undefined> {
  const r = await db.execute<{ done_points: number; failed_points: number; total_points: number; state: string }>(sql`
    with p as (
      update ${scanPoints}
      set state = ${p.state}, result = ${p.result ? JSON.stringify(p.result) : null}::jsonb, error = ${p.error ? JSON.stringify(p.error) : null}::jsonb,
          compute_ms = ${p.computeMs}, finished_at = now()
      where scan_id = ${p.scanId} and index = ${p.index} and state = 'queued'
      returning state
    )
    update ${scans}
    set done_points = done_points + (select count(*) from p where state = 'done'),
        failed_points = failed_points + (select count(*) from p where state = 'failed')
    where id = ${p.scanId} and exists (select 1 from p)
    returning done_points, failed_points, total_points, state`);
  const row = r.rows[0];
  return row ? { donePoints: row.done_points, failedPoints: row.failed_points, totalPoints: row.total_points, state: row.state } : undefined;
}

/**
 * Claims the right to save the scan's draft; true for exactly one caller. A claim older than
 * `staleSeconds` without a saved result (its process died) may be taken again.
 */
export async function claimDraft(db: Executor, scanId: string, staleSeconds = 300): Promise<boolean> {
  const rows = await db
    .update(scans)
    .set({ draftClaimedAt: new Date() })
    .where(
      and(
        eq(scans.id, scanId),
        sql`${scans.resultId} is null`,
        sql`(${scans.draftClaimedAt} is null or ${scans.draftClaimedAt} < now() - make_interval(secs => ${staleSeconds}))`,
      ),
    )
    .returning({ id: scans.id });
  return rows.length > 0;
}

/** Scans whose points have all finished but whose draft was never saved (a worker died at the end). */
export async function listUnsavedFinishedScans(db: Executor, staleSeconds = 300) {
  return db
    .select({ id: scans.id, state: scans.state })
    .from(scans)
    .where(
      and(
        sql`${scans.resultId} is null`,
        sql`${scans.error} is null`,
        sql`(${scans.state} = 'cancelled' or ${scans.donePoints} + ${scans.failedPoints} = ${scans.totalPoints})`,
        sql`(${scans.draftClaimedAt} is null or ${scans.draftClaimedAt} < now() - make_interval(secs => ${staleSeconds}))`,
      ),
    );
}

export async function cancelQueuedPoints(db: Executor, groupId: string, scanId: string) {
  await db.update(scanPoints).set({ state: 'cancelled' }).where(and(inArray(scanPoints.scanId, scanOfGroup(db, groupId, scanId)), eq(scanPoints.state, 'queued')));
}

export async function setScanOutcome(
  db: Executor,
  groupId: string,
  scanId: string,
  outcome: { state: 'done' | 'failed' | 'cancelled'; resultId?: string | null; resultVersion?: number | null; error?: string | null },
) {
  await db
    .update(scans)
    .set({ state: outcome.state, resultId: outcome.resultId ?? null, resultVersion: outcome.resultVersion ?? null, error: outcome.error ?? null, finishedAt: new Date() })
    .where(and(eq(scans.id, scanId), eq(scans.groupId, groupId)));
}

/**
 * The scan that made a result version (its draft), if any, with the points whose computation
 * warned or failed: for the version's page, which links back to the scan's diagnostics.
 */
export async function scanOfVersion(db: Executor, groupId: string, resultId: string, version: number) {
  const [scan] = await db
    .select({ id: scans.id, combination: scans.combination })
    .from(scans)
    .where(and(eq(scans.groupId, groupId), eq(scans.resultId, resultId), eq(scans.resultVersion, version)))
    .limit(1);
  if (!scan) return undefined;
  const points = await db
    .select({
      index: scanPoints.index,
      x: scanPoints.x,
      warnings: sql<string[] | null>`${scanPoints.result}->'warnings'`,
      error: scanPoints.error,
    })
    .from(scanPoints)
    .where(and(eq(scanPoints.scanId, scan.id), sql`(jsonb_array_length(coalesce(${scanPoints.result}->'warnings', '[]'::jsonb)) > 0 or ${scanPoints.state} = 'failed')`))
    .orderBy(asc(scanPoints.index))
    .limit(500);
  return { id: scan.id, combination: scan.combination, points };
}

/**
 * The scans that computed the result versions `pins` name, for the versions `viewer` may see (the
 * one visibility rule, in the statement), each with its finished points' inputs: the counting
 * models a joint combination puts side by side. A version no scan made is absent.
 */
export async function listScanInputsOfVersions(db: Executor, viewer: Viewer, pins: { resultId: string; version: number }[]) {
  if (!pins.length) return [];
  const made = await db
    .select({ resultId: resultVersions.resultId, version: resultVersions.version, scanId: scans.id, options: scans.options, meta: scans.meta, theoryLabel: scans.theoryLabel })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .innerJoin(scans, and(eq(scans.resultId, resultVersions.resultId), eq(scans.resultVersion, resultVersions.version)))
    .where(and(or(...pins.map((p) => and(eq(resultVersions.resultId, p.resultId), eq(resultVersions.version, p.version)))), versionVisibleSql(viewer)));
  if (!made.length) return [];
  const points = await db
    .select({ scanId: scanPoints.scanId, x: scanPoints.x, sigmaNominal: scanPoints.sigmaNominal, model: scanPoints.model })
    .from(scanPoints)
    .where(and(inArray(scanPoints.scanId, made.map((m) => m.scanId)), eq(scanPoints.state, 'done')))
    .orderBy(asc(scanPoints.x));
  return made.map((m) => ({ ...m, points: points.filter((p) => p.scanId === m.scanId) }));
}
