import type PgBoss from 'pg-boss';
import { computeScan, fitNuisanceParameters } from '../../shared/stats';
import type { CountingModelInput } from '../../shared/schemas/counting-model';
import * as q from '../../db/queries/scans';
import type { Ctx } from '../context';
import { saveDraft } from '../services/scans';
import { SCAN_POINT_QUEUE, type ScanPointTask } from './queue';

/**
 * Computes one grid point. Safe to run twice for the same task (a retry after a crash): a point
 * that already finished is skipped, and storing the outcome only succeeds for a queued point.
 */
export async function runScanPoint(ctx: Ctx, task: ScanPointTask): Promise<void> {
  const scan = await q.getScanById(ctx.db, task.scanId);
  if (!scan || (scan.state !== 'queued' && scan.state !== 'running')) return;
  const point = await q.getPoint(ctx.db, task.scanId, task.index);
  if (!point || point.state !== 'queued') return;
  await q.markScanRunning(ctx.db, scan.id);
  await q.countAttempt(ctx.db, scan.id, task.index);

  const o = scan.options;
  const started = performance.now();
  // Each point has its own seed (scan seed + index): points are independent and reproducible.
  const [r] = computeScan(
    [{ x: point.x, sigmaNominal: point.sigmaNominal ?? undefined, model: point.model as CountingModelInput }],
    { cl: o.cl, method: o.method, asimov: o.asimov, toys: o.toys, seed: o.seed + task.index, clsCurve: true },
  );
  let outcome: Parameters<typeof q.finishPoint>[1];
  if (!r || 'error' in r) {
    const error = r && 'error' in r ? r.error : { field: 'model', reason: 'could not be computed' };
    outcome = { scanId: scan.id, index: task.index, state: 'failed', error, computeMs: performance.now() - started };
  } else {
    let fit: ReturnType<typeof fitNuisanceParameters> | null = null;
    try {
      fit = fitNuisanceParameters(point.model as CountingModelInput);
    } catch {
      fit = null; // diagnostics only: the limit stands without them
    }
    const { x: _x, ...limit } = r;
    outcome = { scanId: scan.id, index: task.index, state: 'done', result: { ...limit, fit }, computeMs: performance.now() - started };
  }
  if (!(await q.finishPoint(ctx.db, outcome))) return;
  const after = await q.getScanById(ctx.db, scan.id);
  if (after && after.state === 'running' && after.donePoints + after.failedPoints === after.totalPoints) {
    await saveDraft(ctx, scan.id, 'done');
  }
}

/** Saves drafts that a worker died before saving (all points finished, no draft yet). */
export async function sweepUnsavedScans(ctx: Ctx): Promise<void> {
  for (const s of await q.listUnsavedFinishedScans(ctx.db)) {
    await saveDraft(ctx, s.id, s.state === 'cancelled' ? 'cancelled' : 'done');
  }
}

/**
 * Starts `count` workers on the scan queue in this process. Each takes one task at a time; the
 * computation is synchronous, so more workers means more processes (npm run worker), not more here.
 */
export async function startScanWorkers(ctx: Ctx, boss: PgBoss, count: number): Promise<() => void> {
  for (let i = 0; i < count; i++) {
    await boss.work<ScanPointTask>(SCAN_POINT_QUEUE, { batchSize: 1, pollingIntervalSeconds: 0.5 }, async ([job]) => {
      if (job) await runScanPoint(ctx, job.data);
    });
  }
  await sweepUnsavedScans(ctx).catch((e) => console.error('[worker] sweep failed:', (e as Error).message));
  const timer = setInterval(() => {
    sweepUnsavedScans(ctx).catch((e) => console.error('[worker] sweep failed:', (e as Error).message));
  }, ctx.env.JOB_MAINTENANCE_SECONDS * 1000);
  timer.unref();
  return () => clearInterval(timer);
}
