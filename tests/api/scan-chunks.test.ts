/**
 * Pseudo-experiment points in chunks, through the queue on real PostgreSQL: several workers take
 * the chunks of one point, the merged limit equals the unchunked computation with the same seed,
 * and a cancel stops a running chunk between grid values of μ. The tests claim and run tasks
 * themselves (no worker loop), so the order of events is theirs.
 */
import { and, eq } from 'drizzle-orm';
import * as tq from '@/db/queries/scan-tasks';
import { scanPoints, scanTasks } from '@/db/schema/scans';
import { startQueue, type ScanQueue } from '@/server/jobs/queue';
import { runNextTask, runScanTask, startScanWorkers, sweepUnsavedScans } from '@/server/jobs/scan-worker';
import { cancelScan } from '@/server/services/scans';
import type { CountingModelInput } from '@/shared/schemas/counting-model';
import { computeToyPoint, encodeToySamples, planToyPoint, TOY_CHUNK_SIZE, TOY_GRID_POINTS, ToyChunkRun, withSigmaB } from '@/shared/stats';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, type Crew } from '../helpers/factories';

jest.setTimeout(120_000);

const META = { title: 'Fictional vector-like quark scan', parameterName: 'm(Q)', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'toys' };

function model(k: number, bins: number, systematics: number): CountingModelInput {
  const b = Array.from({ length: bins }, (_, i) => 30 * Math.exp(-(k + i) / 6) + 2);
  const all: { name: string; effects: Record<string, number | number[]> }[] = [
    { name: 'luminosity', effects: { signal: 0.02, continuum: 0.02 } },
    { name: 'continuum shape', effects: { continuum: b.map((_, i) => 0.04 + 0.01 * i) } },
    { name: 'fake rate', effects: { fakes: 0.3 } },
  ];
  return {
    observed: b.map((v, i) => Math.round(1.1 * v * (1 + 0.1 * Math.sin(k + i)))),
    signal: b.map((_, i) => 2 + 0.5 * i),
    backgrounds: [
      { name: 'continuum', yields: b.map((v) => 0.9 * v) },
      { name: 'fakes', yields: b.map((v) => 0.1 * v) },
    ],
    systematics: all.slice(0, systematics),
  };
}
const grid = (n: number, bins: number, systematics: number) => Array.from({ length: n }, (_, k) => ({ x: 900 + 100 * k, sigmaNominal: 4 * Math.exp(-k / 3), model: model(k, bins, systematics) }));

let t: TestApp;
let queue: ScanQueue;
let groupId: string;
let crew: Crew;

beforeAll(async () => {
  t = await startTestApp({ JOB_EXPIRE_SECONDS: '30' });
  t.ctx.jobs = await startQueue(t.ctx.env);
  queue = t.ctx.jobs;
  ({ groupId, crew } = await makeGroupWithRoles(t));
});
afterAll(async () => t?.close());

async function start(points: ReturnType<typeof grid>, toys: number, seed: number): Promise<string> {
  const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points, options: { method: 'toys', toys, seed }, meta: META });
  if (res.status !== 201) throw new Error(JSON.stringify(res.body));
  return res.body.id as string;
}

const tasksOf = (scanId: string) => t.ctx.db.select().from(scanTasks).where(eq(scanTasks.scanId, scanId)).orderBy(scanTasks.pointIndex, scanTasks.chunk);

test("a point's pseudo-experiments are chunk tasks that two workers take at once; the merged limit equals the unchunked computation", async () => {
  const points = grid(2, 3, 1);
  const toys = 3 * TOY_CHUNK_SIZE - 30;
  const scanId = await start(points, toys, 40);
  const tasks = await tasksOf(scanId);
  expect(tasks.map((x) => `${x.pointIndex}.${x.chunk}`)).toEqual(['0.0', '0.1', '0.2', '1.0', '1.1', '1.2']);
  expect(tasks.reduce((s, x) => s + (x.pointIndex === 0 ? x.cost : 0), 0)).toBe(toys);
  // Two workers ask for work: both get a chunk of the same point, and compute side by side.
  const [w1, w2] = [await queue.claim(), await queue.claim()];
  expect([w1, w2].map((x) => `${x!.pointIndex}.${x!.chunk}`)).toEqual(['0.0', '0.1']);
  await Promise.all([runScanTask(t.ctx, queue, w1!, { heartbeatMs: 0 }), runScanTask(t.ctx, queue, w2!, { heartbeatMs: 0 })]);
  // Two of three chunks: the point waits for its last one.
  expect((await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${scanId}`)).body.points[0].state).toBe('queued');
  while (await runNextTask(t.ctx, queue));
  const scan = (await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${scanId}`)).body;
  expect(scan).toMatchObject({ state: 'done', donePoints: 2, failedPoints: 0 });
  expect(scan.resultId).toBeTruthy();
  for (const index of [0, 1]) {
    const p = (await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${scanId}/points/${index}`)).body;
    // The same pseudo-experiments in one process (point seed = scan seed + index): the same numbers.
    const whole = withSigmaB(computeToyPoint(points[index]!.model, { cl: 0.95, asimov: 'profiled', toys, seed: 40 + index }, { fieldPrefix: 'model' }), points[index]!.sigmaNominal);
    const { fit: _fit, ...limit } = p.result;
    expect(limit).toEqual(JSON.parse(JSON.stringify(whole)));
    expect(p.result.toys).toEqual({ perHypothesis: toys, total: 2 * toys * TOY_GRID_POINTS, seed: 40 + index });
    expect(p.result.fit.pulls[0].name).toBe('luminosity');
  }
  // The samples are dropped once merged (the limits are in the points).
  expect((await tasksOf(scanId)).every((x) => x.state === 'done' && x.samples === null)).toBe(true);
  const version = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${scan.resultId}/versions/${scan.resultVersion}`);
  expect(version.body.curve.x).toEqual(points.map((p) => p.x));
});

test('a cancel stops the running chunk between grid values of μ; the point’s other chunks never run', async () => {
  // Chunks long enough (4 bins, 3 systematics) that the cancel lands while one is running.
  const scanId = await start(grid(2, 4, 3), 4 * TOY_CHUNK_SIZE, 3);
  const task = (await queue.claim())!;
  expect(task).toMatchObject({ pointIndex: 0, chunk: 0 });
  const running = runScanTask(t.ctx, queue, task, { heartbeatMs: 0 });
  // Wait until the chunk has reported progress (its first heartbeats), then cancel.
  for (let i = 0; ; i++) {
    const [row] = await t.ctx.db.select({ steps: scanTasks.steps }).from(scanTasks).where(eq(scanTasks.id, task.id));
    if ((row?.steps ?? 0) >= 1) break;
    if (i > 2000) throw new Error('the chunk never reported progress');
    await new Promise((r) => setTimeout(r, 5));
  }
  const cancelled = await cancelScan(t.ctx, groupId, scanId);
  expect(cancelled.state).toBe('cancelled');
  // The worker stopped part-way through the chunk's grid of μ, not after computing all of it.
  const outcome = await running;
  expect(outcome).toMatchObject({ outcome: 'stopped', of: TOY_GRID_POINTS });
  if (outcome.outcome !== 'stopped') throw new Error('not stopped');
  expect(outcome.steps).toBeGreaterThanOrEqual(1);
  expect(outcome.steps).toBeLessThan(TOY_GRID_POINTS);
  const tasks = await tasksOf(scanId);
  const stopped = tasks.find((x) => x.id === task.id)!;
  expect(stopped.state).toBe('cancelled');
  expect(stopped.samples).toBeNull();
  expect(stopped.steps).toBeLessThanOrEqual(outcome.steps);
  // Every other chunk was cancelled before any worker took it.
  expect(tasks.filter((x) => x.id !== task.id).every((x) => x.state === 'cancelled' && x.attempts === 0)).toBe(true);
  expect(await queue.claim()).toBeUndefined();
  const [p0] = await t.ctx.db.select().from(scanPoints).where(and(eq(scanPoints.scanId, scanId), eq(scanPoints.index, 0)));
  expect(p0!.state).toBe('cancelled');
});

test('a bad model in a toy point fails that point once with the field named; its other chunks are dropped', async () => {
  const points = grid(3, 2, 1);
  (points[1]!.model as { signal: number[] }).signal = [0, 0];
  const scanId = await start(points, 2 * TOY_CHUNK_SIZE, 5);
  while (await runNextTask(t.ctx, queue, { heartbeatMs: 0 }));
  const scan = (await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${scanId}`)).body;
  expect(scan).toMatchObject({ state: 'done', donePoints: 2, failedPoints: 1 });
  expect(scan.points[1].error.field).toContain('model.signal');
  const bad = (await tasksOf(scanId)).filter((x) => x.pointIndex === 1);
  expect(bad.map((x) => x.state).sort()).toEqual(['cancelled', 'failed']);
});

test('the sweep merges a point whose last chunk was stored by a worker that died before merging', async () => {
  const points = grid(2, 2, 1);
  const scanId = await start(points, TOY_CHUNK_SIZE, 9);
  expect(await runNextTask(t.ctx, queue, { heartbeatMs: 0 })).toBe(true); // point 0, one chunk: done and merged
  // Point 1: a worker computes its chunk and stores it (as runScanTask does), then dies before the merge.
  const task = (await queue.claim())!;
  expect(task).toMatchObject({ pointIndex: 1, chunk: 0 });
  const options = { cl: 0.95, asimov: 'profiled' as const, toys: TOY_CHUNK_SIZE, seed: 10 };
  const r = new ToyChunkRun(planToyPoint(points[1]!.model, options, 'model'), 0).finish();
  const samples = Buffer.from(encodeToySamples(r.samples));
  expect(await tq.finishTask(t.ctx.db, task.id, { state: 'done', samples, stats: { fits: r.fits, failed: r.failedFits, generated: r.generated, ms: 1 } })).toBe(true);
  expect((await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${scanId}`)).body.points[1].state).toBe('queued');
  await sweepUnsavedScans(t.ctx);
  const scan = (await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${scanId}`)).body;
  expect(scan).toMatchObject({ state: 'done', donePoints: 2 });
  expect(scan.resultId).toBeTruthy();
  expect(scan.points[1].observed).toBe(computeToyPoint(points[1]!.model, options).observed);
});

test("with the only worker busy on another group's toy-heavy scan, a small scan is not held behind all of it", async () => {
  const heavy = await start(grid(2, 3, 1), 8 * TOY_CHUNK_SIZE, 21); // 16 chunks
  const other = await makeGroupWithRoles(t);
  const stopWorkers = await startScanWorkers(t.ctx, queue, 1, { idleMs: 50 });
  try {
    // The worker is inside the heavy scan when the other group's small scan arrives.
    for (let i = 0; ; i++) {
      if ((await tasksOf(heavy)).some((x) => x.state === 'running')) break;
      if (i > 2000) throw new Error('the heavy scan never started');
      await new Promise((r) => setTimeout(r, 5));
    }
    const res = await other.crew.analyst.agent.post(`/api/groups/${other.groupId}/scans`).send({ points: grid(3, 2, 1), options: {}, meta: { ...META, method: 'asymptotic' } });
    expect(res.status).toBe(201);
    for (let i = 0; ; i++) {
      const s = (await other.crew.viewer.agent.get(`/api/groups/${other.groupId}/scans/${res.body.id}`)).body;
      if (s.state === 'done') break;
      if (i > 2400) throw new Error('the small scan did not finish');
      await new Promise((r) => setTimeout(r, 50));
    }
    // Its three points went in between the heavy scan's chunks: most of those are still to come.
    const open = (await tasksOf(heavy)).filter((x) => x.state === 'queued' || x.state === 'running').length;
    expect(open).toBeGreaterThanOrEqual(8);
  } finally {
    await cancelScan(t.ctx, groupId, heavy).catch(() => undefined);
    await stopWorkers();
  }
});

test('a stopping worker hands its running chunk back to the queue, without counting an attempt', async () => {
  const scanId = await start(grid(2, 4, 3), 2 * TOY_CHUNK_SIZE, 8);
  const stopWorkers = await startScanWorkers(t.ctx, queue, 1, { heartbeatMs: 0, idleMs: 50 });
  let running: (typeof scanTasks.$inferSelect) | undefined;
  for (let i = 0; !running; i++) {
    running = (await tasksOf(scanId)).find((x) => x.state === 'running' && x.steps >= 1);
    if (i > 2000) throw new Error('no chunk started');
    if (!running) await new Promise((r) => setTimeout(r, 5));
  }
  await stopWorkers();
  const back = (await tasksOf(scanId)).find((x) => x.id === running!.id)!;
  expect(back).toMatchObject({ state: 'queued', attempts: 0, steps: 0, samples: null });
  // Another worker takes it up as a first attempt.
  const again = (await queue.claim())!;
  expect(again).toMatchObject({ id: running.id, attempts: 1 });
  await cancelScan(t.ctx, groupId, scanId);
});
