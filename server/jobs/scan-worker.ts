import { setImmediate as nextTurn } from 'node:timers/promises';
import {
  computeScan,
  decodeToySamples,
  encodeToySamples,
  fitNuisanceParameters,
  mergeToyChunks,
  planToyPoint,
  StatsInputError,
  ToyChunkRun,
  withSigmaB,
  type ToyPlan,
  type ToyPointOptions,
} from '../../shared/stats';
import type { CountingModelInput } from '../../shared/schemas/counting-model';
import type { ScanOptions } from '../../shared/schemas/scans';
import * as q from '../../db/queries/scans';
import * as tq from '../../db/queries/scan-tasks';
import type { Ctx } from '../context';
import { saveDraft } from '../services/scans';
import { FAIR_SHARE_WINDOW_SECONDS, MAX_ATTEMPTS, type ClaimedTask, type ScanQueue } from './queue';

export type WorkerOptions = {
  /**
   * Least time between two heartbeats of a running chunk (each renews the lease and looks for a
   * cancel). 0: after every grid value of μ.
   */
  heartbeatMs?: number;
  /** Wait when nothing is due. */
  idleMs?: number;
  /** Asked between steps of a chunk: true hands the chunk back to the queue (the worker is stopping). */
  stopping?: () => boolean;
};

const DEFAULT_HEARTBEAT_MS = 500;

type PointFailure = { field: string; reason: string };

/**
 * What became of a task: computed (and stored), stopped part-way (cancelled or taken over; `steps`
 * grid values of μ were sampled), skipped (its point had already finished or its scan was over),
 * or failed (its point failed for good).
 */
export type TaskOutcome = { outcome: 'computed' } | { outcome: 'stopped'; steps: number; of: number } | { outcome: 'skipped' } | { outcome: 'failed' };

/**
 * Options of one point's pseudo-experiments: the scan's, with the point's own seed (scan seed +
 * index) and its own count when it was rerun with more.
 */
function toyOptions(o: ScanOptions, index: number, toys: number | null): ToyPointOptions {
  return { cl: o.cl, asimov: o.asimov, toys: toys ?? o.toys, seed: o.seed + index };
}

/** Fitted nuisance parameters for the diagnostics (the limit stands without them). */
function diagnosticsFit(model: CountingModelInput) {
  try {
    return fitNuisanceParameters(model);
  } catch {
    return null;
  }
}

/** Saves the draft when this outcome finished the scan's last point. */
async function afterPoint(ctx: Ctx, scanId: string, after: Awaited<ReturnType<typeof q.finishPoint>>) {
  if (after && after.state === 'running' && after.donePoints + after.failedPoints === after.totalPoints) {
    await saveDraft(ctx, scanId, 'done');
  }
}

/** Fails a point for good: its other tasks are cancelled, and the scan may be finished by it. */
async function failPoint(ctx: Ctx, task: Pick<ClaimedTask, 'groupId' | 'scanId' | 'pointIndex'>, error: PointFailure, computeMs = 0) {
  const after = await q.finishPoint(ctx.db, { scanId: task.scanId, index: task.pointIndex, state: 'failed', error, computeMs });
  await tq.cancelOpenTasks(ctx.db, task.groupId, task.scanId, task.pointIndex);
  await afterPoint(ctx, task.scanId, after);
}

/**
 * Merges a pseudo-experiment point once all of its chunks are done (called by the worker that
 * finished a chunk, and by the sweep). Safe to run twice: only a point still queued takes the
 * result.
 */
export async function mergePointIfComplete(ctx: Ctx, scanId: string, index: number): Promise<void> {
  const scan = await q.getScanById(ctx.db, scanId);
  if (!scan || scan.options.method !== 'toys') return;
  const point = await q.getPoint(ctx.db, scan.groupId, scanId, index);
  if (!point || point.state !== 'queued') return;
  const done = await tq.listDoneChunks(ctx.db, scanId, index);
  if (done.length < point.chunks || done.some((c) => !c.samples || !c.stats)) return;
  const started = performance.now();
  const model = point.model as CountingModelInput;
  const options = toyOptions(scan.options, index, point.toys);
  const limit = mergeToyChunks(
    planToyPoint(model, options, 'model'),
    done.map((c) => ({ chunk: c.chunk, toys: c.cost, samples: decodeToySamples(c.samples!), fits: c.stats!.fits, failedFits: c.stats!.failed, generated: c.stats!.generated })),
  );
  const result = { ...withSigmaB(limit, point.sigmaNominal ?? undefined), fit: diagnosticsFit(model) };
  const computeMs = done.reduce((s, c) => s + (c.stats!.ms ?? 0), 0) + performance.now() - started;
  const after = await q.finishPoint(ctx.db, { scanId, index, state: 'done', result, computeMs });
  await tq.dropChunkSamples(ctx.db, scanId, index);
  await afterPoint(ctx, scanId, after);
}

/** One asymptotic grid point, computed whole. */
async function runAsymptoticPoint(ctx: Ctx, task: ClaimedTask, point: NonNullable<Awaited<ReturnType<typeof q.claimPoint>>>): Promise<TaskOutcome> {
  const o = point.options;
  const started = performance.now();
  const [r] = computeScan(
    [{ x: point.x, sigmaNominal: point.sigmaNominal ?? undefined, model: point.model as CountingModelInput }],
    { cl: o.cl, method: o.method, asimov: o.asimov, toys: o.toys, seed: o.seed + task.pointIndex, clsCurve: true },
  );
  let after: Awaited<ReturnType<typeof q.finishPoint>>;
  if (!r || 'error' in r) {
    const error = r && 'error' in r ? r.error : { field: 'model', reason: 'could not be computed' };
    after = await q.finishPoint(ctx.db, { scanId: task.scanId, index: task.pointIndex, state: 'failed', error, computeMs: performance.now() - started });
  } else {
    const { x: _x, ...limit } = r;
    const result = { ...limit, fit: diagnosticsFit(point.model as CountingModelInput) };
    after = await q.finishPoint(ctx.db, { scanId: task.scanId, index: task.pointIndex, state: 'done', result, computeMs: performance.now() - started });
  }
  await tq.finishTask(ctx.db, task.id, { state: 'done' });
  await afterPoint(ctx, task.scanId, after);
  return { outcome: 'computed' };
}

/**
 * One chunk of a point's pseudo-experiments, one grid value of μ at a time. Between values (at
 * most every `heartbeatMs`) the lease is renewed; when that finds the task cancelled (the scan was
 * cancelled, or the point failed elsewhere) or taken over, the chunk stops there.
 */
async function runToyChunk(ctx: Ctx, queue: ScanQueue, task: ClaimedTask, point: NonNullable<Awaited<ReturnType<typeof q.claimPoint>>>, opts: WorkerOptions): Promise<TaskOutcome> {
  const started = performance.now();
  let plan: ToyPlan;
  try {
    plan = planToyPoint(point.model, toyOptions(point.options, task.pointIndex, point.toys), 'model');
  } catch (e) {
    if (!(e instanceof StatsInputError)) throw e;
    await tq.finishTask(ctx.db, task.id, { state: 'failed', error: `${e.field}: ${e.reason}` });
    await failPoint(ctx, task, { field: e.field, reason: e.reason }, performance.now() - started);
    return { outcome: 'failed' };
  }
  const run = new ToyChunkRun(plan, task.chunk);
  const heartbeatMs = opts.heartbeatMs ?? DEFAULT_HEARTBEAT_MS;
  let beat = performance.now();
  while (!run.done) {
    run.step();
    if (!run.done && opts.stopping?.()) {
      // Shutting down: the chunk goes back to the queue for another worker, not counted as an attempt.
      await tq.releaseTask(ctx.db, task.id, task.attempts);
      return { outcome: 'stopped', steps: run.stepsDone, of: run.steps };
    }
    if (!run.done && performance.now() - beat >= heartbeatMs) {
      await nextTurn();
      if (!(await tq.heartbeatTask(ctx.db, task.id, task.attempts, queue.leaseSeconds, run.stepsDone))) return { outcome: 'stopped', steps: run.stepsDone, of: run.steps };
      beat = performance.now();
    }
  }
  const r = run.result();
  const stored = await tq.finishTask(ctx.db, task.id, {
    state: 'done',
    samples: Buffer.from(encodeToySamples(r.samples)),
    stats: { fits: r.fits, failed: r.failedFits, generated: r.generated, ms: performance.now() - started },
    steps: run.steps,
  });
  if (!stored) return { outcome: 'stopped', steps: run.steps, of: run.steps };
  await mergePointIfComplete(ctx, task.scanId, task.pointIndex);
  return { outcome: 'computed' };
}

/**
 * Runs one claimed task. Safe to run twice for the same task (a retry after a crash): a point that
 * already finished is skipped, and outcomes are only stored for a point still queued.
 */
export async function runScanTask(ctx: Ctx, queue: ScanQueue, task: ClaimedTask, opts: WorkerOptions = {}): Promise<TaskOutcome> {
  if (task.attempts > MAX_ATTEMPTS) {
    // Claimed again after its lease ran out that often: its workers keep dying on it.
    await tq.finishTask(ctx.db, task.id, { state: 'failed' });
    const why = task.lastError ? `; last error: ${task.lastError}` : ' (the worker computing it stopped each time)';
    await failPoint(ctx, task, { field: 'model', reason: `could not be computed in ${MAX_ATTEMPTS} attempts${why}` });
    return { outcome: 'failed' };
  }
  const point = await q.claimPoint(ctx.db, task.scanId, task.pointIndex, task.attempts);
  if (!point) {
    await tq.finishTask(ctx.db, task.id, { state: 'cancelled' });
    return { outcome: 'skipped' };
  }
  return point.options.method === 'toys' ? runToyChunk(ctx, queue, task, point, opts) : runAsymptoticPoint(ctx, task, point);
}

/**
 * A task that threw (a database error, a bug): retried after the queue's back-off, or, after
 * MAX_ATTEMPTS, its point fails with the error.
 */
export async function recordTaskFailure(ctx: Ctx, queue: ScanQueue, task: ClaimedTask, e: unknown) {
  const message = e instanceof Error ? e.message : String(e);
  console.error(`[worker] point ${task.pointIndex} (chunk ${task.chunk}) of scan ${task.scanId} failed:`, message);
  if (task.attempts < MAX_ATTEMPTS) {
    await tq.retryTaskLater(ctx.db, task.id, task.attempts, queue.retryDelaySeconds(task.attempts), message);
    return;
  }
  await tq.finishTask(ctx.db, task.id, { state: 'failed', error: message });
  await failPoint(ctx, task, { field: 'model', reason: `could not be computed in ${MAX_ATTEMPTS} attempts; last error: ${message}` });
}

/** Claims and runs one task; false when none was due. */
export async function runNextTask(ctx: Ctx, queue: ScanQueue, opts: WorkerOptions = {}): Promise<boolean> {
  const task = await queue.claim();
  if (!task) return false;
  try {
    await runScanTask(ctx, queue, task, opts);
  } catch (e) {
    await recordTaskFailure(ctx, queue, task, e).catch((err) => console.error('[worker] cannot record the failure:', (err as Error).message));
  }
  return true;
}

/**
 * Runs one scan to its end in this process, task after task, as a worker runs them (claimed from
 * the queue, `runScanTask`, failures recorded the same way), so its points, tasks and draft are
 * what the workers would have left: for a caller that needs the result at once and cannot wait
 * for a worker (the demo seed, server/seed/seed-scans.ts). A task another worker holds is waited
 * for; a task waiting for its retry is run when due. Answers the scan's row once it has ended
 * (done, failed or cancelled); throws after `timeoutMs`.
 */
export async function runScanHere(ctx: Ctx, queue: ScanQueue, scanId: string, opts: WorkerOptions & { timeoutMs?: number } = {}): Promise<q.ScanRow> {
  const until = Date.now() + (opts.timeoutMs ?? 120_000);
  for (;;) {
    const task = await queue.claimOfScan(scanId);
    if (task) {
      try {
        await runScanTask(ctx, queue, task, opts);
      } catch (e) {
        await recordTaskFailure(ctx, queue, task, e);
      }
      continue;
    }
    const scan = await q.getScanById(ctx.db, scanId);
    if (!scan) throw new Error(`scan ${scanId} does not exist`);
    if (scan.state !== 'queued' && scan.state !== 'running') return scan;
    if (Date.now() > until) throw new Error(`scan ${scanId} did not end in time (${scan.donePoints + scan.failedPoints} of ${scan.totalPoints} points)`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

/**
 * Saves drafts and merges points that a worker died before finishing (all their work done), and
 * deletes the tasks of scans that ended longer ago than the fair share looks back.
 */
export async function sweepUnsavedScans(ctx: Ctx): Promise<void> {
  for (const p of await tq.listUnmergedPoints(ctx.db)) await mergePointIfComplete(ctx, p.scanId, p.pointIndex);
  for (const s of await q.listUnsavedFinishedScans(ctx.db)) {
    await saveDraft(ctx, s.id, s.state === 'cancelled' ? 'cancelled' : 'done');
  }
  await tq.deleteOldTasks(ctx.db, FAIR_SHARE_WINDOW_SECONDS);
}

/**
 * Starts `count` worker loops on the scan queue in this process. Each loop claims one task, runs
 * it, and claims the next at once (waiting `idleMs` only when nothing is due), so a worker is
 * never idle while tasks wait and several workers share a scan task by task — the chunks of one
 * point included. The computation is synchronous: more workers means more processes (npm run
 * worker), not more loops in one. Returns a function that stops the loops: an asymptotic point
 * finishes, a running chunk is handed back to the queue at its next step; it resolves when every
 * loop has stopped (so the caller may close the database then).
 */
export async function startScanWorkers(ctx: Ctx, queue: ScanQueue, count: number, opts: WorkerOptions = {}): Promise<() => Promise<void>> {
  let stopped = false;
  let wake: (() => void) | undefined;
  const idle = () =>
    new Promise<void>((r) => {
      const timer = setTimeout(r, opts.idleMs ?? 500);
      wake = () => {
        clearTimeout(timer);
        r();
      };
    });
  const runOpts: WorkerOptions = { ...opts, stopping: () => stopped || (opts.stopping?.() ?? false) };
  const loop = async () => {
    while (!stopped) {
      let ran = false;
      try {
        ran = await runNextTask(ctx, queue, runOpts);
      } catch (e) {
        if (stopped) return;
        console.error('[worker] cannot claim a task:', (e as Error).message);
      }
      if (!ran && !stopped) await idle();
    }
  };
  const loops = Array.from({ length: count }, () => loop());
  await sweepUnsavedScans(ctx).catch((e) => console.error('[worker] sweep failed:', (e as Error).message));
  const timer = setInterval(() => {
    sweepUnsavedScans(ctx).catch((e) => console.error('[worker] sweep failed:', (e as Error).message));
  }, ctx.env.JOB_MAINTENANCE_SECONDS * 1000);
  timer.unref();
  return async () => {
    stopped = true;
    clearInterval(timer);
    wake?.();
    await Promise.all(loops);
  };
}
