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
  const point = await q.claimPoint(ctx.db, task.scanId, task.index);
  if (!point) return;
  const o = point.options;
  const started = performance.now();
  // Each point has its own seed (scan seed + index): points are independent and reproducible.
  const [r] = computeScan(
    [{ x: point.x, sigmaNominal: point.sigmaNominal ?? undefined, model: point.model as CountingModelInput }],
    { cl: o.cl, method: o.method, asimov: o.asimov, toys: o.toys, seed: o.seed + task.index, clsCurve: true },
  );
  let outcome: Parameters<typeof q.finishPoint>[1];
  if (!r || 'error' in r) {
    const error = r && 'error' in r ? r.error : { field: 'model', reason: 'could not be computed' };
    outcome = { scanId: task.scanId, index: task.index, state: 'failed', error, computeMs: performance.now() - started };
  } else {
    let fit: ReturnType<typeof fitNuisanceParameters> | null = null;
    try {
      fit = fitNuisanceParameters(point.model as CountingModelInput);
    } catch {
      fit = null; // diagnostics only: the limit stands without them
    }
    const { x: _x, ...limit } = r;
    outcome = { scanId: task.scanId, index: task.index, state: 'done', result: { ...limit, fit }, computeMs: performance.now() - started };
  }
  const after = await q.finishPoint(ctx.db, outcome);
  if (after && after.state === 'running' && after.donePoints + after.failedPoints === after.totalPoints) {
    await saveDraft(ctx, task.scanId, 'done');
  }
}

/** Saves drafts that a worker died before saving (all points finished, no draft yet). */
export async function sweepUnsavedScans(ctx: Ctx): Promise<void> {
  for (const s of await q.listUnsavedFinishedScans(ctx.db)) {
    await saveDraft(ctx, s.id, s.state === 'cancelled' ? 'cancelled' : 'done');
  }
}

/**
 * Starts `count` worker loops on the scan queue in this process. Each loop takes one task, runs
 * it, and asks for the next at once (waiting 0.5 s only when the queue is empty), so a worker is
 * never idle while points wait and several workers share a scan point by point. The computation is
 * synchronous: more workers means more processes (npm run worker), not more loops in one.
 * Returns a function that stops the loops after their current task.
 */
export async function startScanWorkers(ctx: Ctx, boss: PgBoss, count: number): Promise<() => void> {
  let stopped = false;
  const idle = () => new Promise((r) => setTimeout(r, 500));
  const loop = async () => {
    while (!stopped) {
      let jobs: PgBoss.Job<ScanPointTask>[] = [];
      try {
        jobs = await boss.fetch<ScanPointTask>(SCAN_POINT_QUEUE, { batchSize: 1 });
      } catch (e) {
        if (stopped) return;
        console.error('[worker] cannot fetch a task:', (e as Error).message);
      }
      const job = jobs?.[0];
      if (!job) {
        await idle();
        continue;
      }
      try {
        await runScanPoint(ctx, job.data);
        await boss.complete(SCAN_POINT_QUEUE, job.id);
      } catch (e) {
        // The point stays queued in our tables; pg-boss retries the task (retryLimit on the queue).
        console.error(`[worker] point ${job.data.index} of scan ${job.data.scanId} failed:`, (e as Error).message);
        await boss.fail(SCAN_POINT_QUEUE, job.id, { message: (e as Error).message }).catch(() => undefined);
      }
    }
  };
  for (let i = 0; i < count; i++) void loop();
  await sweepUnsavedScans(ctx).catch((e) => console.error('[worker] sweep failed:', (e as Error).message));
  const timer = setInterval(() => {
    sweepUnsavedScans(ctx).catch((e) => console.error('[worker] sweep failed:', (e as Error).message));
  }, ctx.env.JOB_MAINTENANCE_SECONDS * 1000);
  timer.unref();
  return () => {
    stopped = true;
    clearInterval(timer);
  };
}
