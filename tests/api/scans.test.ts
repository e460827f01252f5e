import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { and, eq, inArray } from 'drizzle-orm';
import { scanPoints, scanTasks } from '@/db/schema/scans';
import { startQueue } from '@/server/jobs/queue';
import { runNextTask, startScanWorkers } from '@/server/jobs/scan-worker';
import { startWorkerProcesses, type WorkerProcesses } from '@/server/jobs/worker-processes';
import type { CountingModelInput } from '@/shared/schemas/counting-model';
import type { ScanDetail } from '@/shared/schemas/scan-views';
import { DEFAULT_SCAN_THEORY_LABEL } from '@/shared/schemas/scans';
import { computeScan } from '@/shared/stats';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, type Crew } from '../helpers/factories';

jest.setTimeout(120_000);

const META = { title: 'Fictional heavy scalar scan', parameterName: 'm(S)', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic' };

/** An invented grid: background falling with mass, a small excess or deficit per point. */
function grid(n: number, bins = 3, opts: { syst?: boolean } = {}) {
  return Array.from({ length: n }, (_, k) => {
    const m = 1000 + 100 * k;
    const b = Array.from({ length: bins }, (_, i) => 200 * Math.exp(-(m + 50 * i) / 800));
    const model: CountingModelInput = {
      observed: b.map((v, i) => Math.round(v * (1 + 0.05 * Math.sin(k + i)))),
      signal: b.map((_, i) => 2 + i),
      backgrounds: [{ name: 'continuum', yields: b }],
      systematics: opts.syst === false ? [] : [{ name: 'luminosity', effects: { signal: 0.02, continuum: 0.02 } }],
    };
    return { x: m, sigmaNominal: 10 * Math.exp(-m / 1000), model };
  });
}

async function waitFor(t: TestApp, agent: Crew['analyst']['agent'], groupId: string, scanId: string, done: (s: ScanDetail) => boolean, ms = 60_000) {
  const until = Date.now() + ms;
  for (;;) {
    const res = await agent.get(`/api/groups/${groupId}/scans/${scanId}`);
    if (done(res.body)) return res.body as ScanDetail;
    if (Date.now() > until) throw new Error(`scan did not get there: ${JSON.stringify({ state: res.body.state, done: res.body.donePoints })}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

describe('scans with an in-process worker', () => {
  let t: TestApp;
  let crew: Crew;
  let groupId: string;
  let stopWorkers: () => Promise<void>;
  beforeAll(async () => {
    t = await startTestApp({ JOB_MAINTENANCE_SECONDS: '1', JOB_EXPIRE_SECONDS: '30' });
    t.ctx.jobs = await startQueue(t.ctx.env);
    stopWorkers = await startScanWorkers(t.ctx, t.ctx.jobs, 1);
    ({ groupId, crew } = await makeGroupWithRoles(t));
  });
  afterAll(async () => {
    await stopWorkers?.();
    await t?.close();
  });

  test('submit → progress → a draft result whose limits match the statistics engine', async () => {
    const points = grid(8);
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points, options: { method: 'asymptotic' }, meta: META });
    expect(res.status).toBe(201);
    expect(res.body.totalPoints).toBe(8);
    const done = await waitFor(t, crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    expect(done.donePoints).toBe(8);
    expect(done.etaSeconds).toBeNull();
    expect(done.resultId).toBeTruthy();
    const version = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    expect(version.status).toBe(200);
    expect(version.body.state).toBe('draft');
    expect(version.body.meta.method).toBe('asymptotic');
    expect(version.body.meta.notes).toContain(`scan ${done.id}`);
    // Same numbers as the engine computes directly (σ×B = μ_up × σ_nominal); seeds do not matter here.
    const direct = computeScan(points);
    expect(version.body.curve.x).toEqual(points.map((p) => p.x));
    version.body.curve.observed.forEach((v: number, i: number) => {
      const d = direct[i]!;
      if ('error' in d) throw new Error('engine failed');
      expect(v).toBeCloseTo(d.sigmaB!.observed, 8);
    });
    // Inputs are stored beside the draft and can be downloaded to re-run it.
    const inputs = await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${done.id}/inputs.json`);
    expect(inputs.status).toBe(200);
    expect(inputs.body.points).toHaveLength(8);
    expect(inputs.body.points[3].model).toEqual(points[3]!.model);
  });

  test("the points' nominal σ×B becomes the draft's theory curve, with its band and name; the excluded range follows", async () => {
    const points = grid(6).map((p) => ({ ...p, sigmaNominalLow: p.sigmaNominal * 0.8, sigmaNominalHigh: p.sigmaNominal * 1.25 }));
    const res = await crew.analyst.agent
      .post(`/api/groups/${groupId}/scans`)
      .send({ points, options: {}, meta: META, theoryLabel: 'Heavy scalar, benchmark $g = 1$' });
    expect(res.status).toBe(201);
    const done = await waitFor(t, crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    const v = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    expect(v.body.theory).toEqual({
      label: 'Heavy scalar, benchmark $g = 1$',
      x: points.map((p) => p.x),
      central: points.map((p) => p.sigmaNominal),
      lower: points.map((p) => p.sigmaNominalLow),
      upper: points.map((p) => p.sigmaNominalHigh),
    });
    // The stored inputs give the band and name back, to re-run the scan.
    const inputs = await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${done.id}/inputs.json`);
    expect(inputs.body.theoryLabel).toBe('Heavy scalar, benchmark $g = 1$');
    expect(inputs.body.points[2]).toMatchObject({ sigmaNominal: points[2]!.sigmaNominal, sigmaNominalLow: points[2]!.sigmaNominalLow, sigmaNominalHigh: points[2]!.sigmaNominalHigh });
    // Without a name the curve gets the default one, and without band columns no band.
    const plain = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(3), options: {}, meta: META });
    const plainDone = await waitFor(t, crew.analyst.agent, groupId, plain.body.id, (s) => s.state === 'done');
    const pv = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${plainDone.resultId}/versions/${plainDone.resultVersion}`);
    expect(pv.body.theory.label).toBe(DEFAULT_SCAN_THEORY_LABEL);
    expect(pv.body.theory.lower).toBeUndefined();
    // A limit on μ has no theory curve.
    const mu = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(3), options: {}, meta: { ...META, quantity: 'mu', quantityUnit: '' } });
    const muDone = await waitFor(t, crew.analyst.agent, groupId, mu.body.id, (s) => s.state === 'done');
    expect((await crew.analyst.agent.get(`/api/groups/${groupId}/results/${muDone.resultId}/versions/${muDone.resultVersion}`)).body.theory).toBeNull();
  });

  test('a σ×B band that does not hold the nominal value, or has one edge, is refused naming the point', async () => {
    const points = grid(3);
    const bad = [
      { ...points[0]!, sigmaNominalLow: points[0]!.sigmaNominal * 1.1, sigmaNominalHigh: points[0]!.sigmaNominal * 1.2 },
      { ...points[1]!, sigmaNominalHigh: 3 },
      points[2]!,
    ];
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: bad, options: {}, meta: META, theoryLabel: 'x'.repeat(121) });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ field: 'points.0.sigmaNominalLow', message: expect.stringContaining('must hold sigmaNominal') }),
        expect.objectContaining({ field: 'points.1.sigmaNominalLow', message: 'is required with the other edge of the σ×B band' }),
        expect.objectContaining({ field: 'theoryLabel', message: 'must be at most 120 characters' }),
      ]),
    );
  });

  test('a bad grid point fails alone with the engine error; the others make the draft', async () => {
    const points = grid(4);
    (points[2]!.model as { signal: number[] }).signal = [0, 0, 0];
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points, options: {}, meta: META });
    expect(res.status).toBe(201);
    const done = await waitFor(t, crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    expect(done.failedPoints).toBe(1);
    const bad = done.points.find((p) => p.index === 2)!;
    expect(bad.state).toBe('failed');
    expect(bad.error?.field).toContain('signal');
    const version = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    expect(version.body.curve.x).toEqual([1000, 1100, 1300]);
    expect(version.body.meta.notes).toContain('1 grid point(s) failed');
    // The draft's page links back to the scan and names the point that failed.
    expect(version.body.fromScan.scanId).toBe(done.id);
    expect(version.body.fromScan.points).toEqual(expect.arrayContaining([expect.objectContaining({ index: 2, x: 1200, error: expect.stringContaining('signal') })]));
  });

  test('diagnostics of a point: CLs curve, μ̂ and pulls', async () => {
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(2), options: {}, meta: META });
    const done = await waitFor(t, crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    const p = await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${done.id}/points/0`);
    expect(p.status).toBe(200);
    expect(p.body.result.cls.length).toBeGreaterThan(10);
    expect(p.body.result.fit.pulls[0].name).toBe('luminosity');
    expect(Number.isFinite(p.body.result.muHat)).toBe(true);
  });

  test('bad inputs are refused before queuing, naming the field', async () => {
    const noSigma = grid(3).map(({ sigmaNominal: _s, ...p }) => p);
    const a = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: noSigma, options: {}, meta: META });
    expect(a.status).toBe(400);
    expect(a.body.error.details[0].field).toBe('points.0.sigmaNominal');
    const b = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(3), options: { method: 'toys', toys: 10 }, meta: { ...META, sqrtS: -1 } });
    expect(b.status).toBe(400);
    expect(b.body.error.details.map((d: { field: string }) => d.field)).toEqual(expect.arrayContaining(['options.toys', 'meta.sqrtS']));
    const csv = 'x,bin,observed,signal\n1000,1,5,abc\n';
    const c = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).attach('file', Buffer.from(csv), 'scan.csv').field('meta', JSON.stringify(META));
    expect(c.status).toBe(400);
    expect(c.body.error.details[0]).toEqual({ field: 'line 2, signal', message: '"abc" is not a number' });
  });

  test('roles: analysts and up start and cancel scans; editors and viewers cannot; other groups see nothing', async () => {
    for (const role of ['editor', 'viewer'] as const) {
      const r = await crew[role].agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(2), options: {}, meta: META });
      expect(r.status).toBe(403);
    }
    const started = await crew.curator.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(2), options: {}, meta: META });
    expect(started.status).toBe(201);
    const other = await makeGroupWithRoles(t);
    expect((await other.crew.owner.agent.get(`/api/groups/${groupId}/scans/${started.body.id}`)).status).toBe(404);
    expect((await other.crew.owner.agent.get(`/api/groups/${other.groupId}/scans/${started.body.id}`)).status).toBe(404);
    expect((await crew.viewer.agent.post(`/api/groups/${groupId}/scans/${started.body.id}/cancel`)).status).toBe(403);
  });
});

describe('cancel, and workers that crash', () => {
  let t: TestApp;
  let crew: Crew;
  let groupId: string;
  const children: ChildProcess[] = [];
  const workerEnv = () => ({ ...process.env, DATABASE_URL: t.ctx.env.DATABASE_URL, NODE_ENV: 'test', JOB_EXPIRE_SECONDS: '3', JOB_MAINTENANCE_SECONDS: '1', WORKERS: '1' }) as NodeJS.ProcessEnv;
  const startWorker = () => {
    const c = spawn(process.execPath, ['--import', 'tsx', path.resolve(__dirname, '../../server/worker.ts')], { env: workerEnv(), stdio: 'ignore' });
    children.push(c);
    return c;
  };
  beforeAll(async () => {
    t = await startTestApp({ JOB_MAINTENANCE_SECONDS: '1', JOB_EXPIRE_SECONDS: '3', SCAN_COST_LIMIT: '8000' });
    t.ctx.jobs = await startQueue(t.ctx.env); // the API only queues here; workers are separate processes
    ({ groupId, crew } = await makeGroupWithRoles(t));
  });
  afterAll(async () => {
    for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
    await t?.close();
  });

  test('a scan over the size limit (points × bins × pseudo-experiments) is refused before queuing, naming the limit', async () => {
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(3, 3), options: { method: 'toys', toys: 1000 }, meta: META });
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('scan_too_large');
    expect(res.body.error.message).toContain('9,000 exceeds the limit of 8,000');
    expect((await crew.analyst.agent.get(`/api/groups/${groupId}/scans`)).body.scans).toHaveLength(0);
  });

  test('cancelling keeps the finished points and makes them the draft', async () => {
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(6), options: {}, meta: META });
    // Compute two points by hand (as a worker would: the queue gives them in order), then cancel.
    expect(await runNextTask(t.ctx, t.ctx.jobs!)).toBe(true);
    expect(await runNextTask(t.ctx, t.ctx.jobs!)).toBe(true);
    const cancelled = await crew.analyst.agent.post(`/api/groups/${groupId}/scans/${res.body.id}/cancel`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.state).toBe('cancelled');
    expect(cancelled.body.donePoints).toBe(2);
    expect(cancelled.body.resultId).toBeTruthy();
    const v = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${cancelled.body.resultId}/versions/${cancelled.body.resultVersion}`);
    expect(v.body.curve.x).toEqual([1000, 1100]);
    expect(v.body.meta.notes).toContain('cancelled after 2 of 6 points');
    // The other tasks were cancelled with the scan: nothing is left to run, and nothing changed.
    expect(await runNextTask(t.ctx, t.ctx.jobs!)).toBe(false);
    expect((await crew.analyst.agent.get(`/api/groups/${groupId}/scans/${res.body.id}`)).body.donePoints).toBe(2);
    expect((await crew.analyst.agent.post(`/api/groups/${groupId}/scans/${res.body.id}/cancel`)).status).toBe(409);
  });

  test('a worker killed mid-scan loses no point and computes none twice into the result', async () => {
    // Pseudo-experiments on a multi-bin model with systematics: long enough per point to kill mid-way.
    const points = grid(6, 3);
    const res = await crew.analyst.agent
      .post(`/api/groups/${groupId}/scans`)
      .send({ points, options: { method: 'toys', toys: 400, seed: 7 }, meta: { ...META, method: 'toys' } });
    expect(res.status).toBe(201);
    // Kill a worker while it holds a task (a chunk of a point's pseudo-experiments). A task still
    // marked running after the kill was in the dead worker's hands: the kill came mid-chunk. If the
    // chunk happened to finish between the look and the kill, start another worker and try again.
    const inFlight = () => t.ctx.db.select().from(scanTasks).where(and(eq(scanTasks.scanId, res.body.id), eq(scanTasks.state, 'running')));
    // Computing: the task is claimed and its point taken up (the point's attempts reached the task's).
    const computing = async () => {
      const [tasks, pts] = await Promise.all([inFlight(), t.ctx.db.select().from(scanPoints).where(eq(scanPoints.scanId, res.body.id))]);
      return tasks.filter((task) => (pts.find((p) => p.index === task.pointIndex)?.attempts ?? 0) >= task.attempts);
    };
    let interrupted: number[] = [];
    for (let round = 0; interrupted.length === 0; round++) {
      if (round >= 5) throw new Error('could not kill a worker in the middle of a chunk');
      const worker = startWorker();
      for (let i = 0; (await computing()).length === 0; i++) {
        if (i > 1500) throw new Error('the worker never started a chunk');
        await new Promise((r) => setTimeout(r, 20));
      }
      worker.kill('SIGKILL');
      await new Promise<void>((r) => (worker.exitCode !== null || worker.signalCode !== null ? r() : worker.once('exit', () => r())));
      interrupted = (await inFlight()).map((task) => task.id);
    }
    const afterKill = (await crew.analyst.agent.get(`/api/groups/${groupId}/scans/${res.body.id}`)).body as ScanDetail;
    expect(afterKill.state).toBe('running');
    startWorker();
    const done = await waitFor(t, crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done', 90_000);
    expect(done.donePoints).toBe(6);
    expect(done.failedPoints).toBe(0);
    const rows = await t.ctx.db.select().from(scanPoints).where(eq(scanPoints.scanId, res.body.id));
    expect(rows.every((r) => r.state === 'done')).toBe(true);
    // The chunk that was running when its worker died was claimed again once its lease ran out,
    // and finished by the new worker.
    const tasks = await t.ctx.db.select().from(scanTasks).where(inArray(scanTasks.id, interrupted));
    expect(tasks.length).toBe(interrupted.length);
    for (const task of tasks) {
      expect(task.state).toBe('done');
      expect(task.attempts).toBeGreaterThanOrEqual(2);
    }
    const retriedPoints = new Set(tasks.map((task) => task.pointIndex));
    expect(rows.filter((r) => retriedPoints.has(r.index)).every((r) => r.attempts >= 2)).toBe(true);
    const v = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    expect(v.body.curve.x).toEqual(points.map((p) => p.x));
    expect(v.body.meta.method).toBe('toys');
  });
});

describe('worker processes started by the server', () => {
  let t: TestApp;
  let crew: Crew;
  let groupId: string;
  let workers: WorkerProcesses | undefined;
  beforeAll(async () => {
    t = await startTestApp({ JOB_MAINTENANCE_SECONDS: '1', JOB_EXPIRE_SECONDS: '3' });
    t.ctx.jobs = await startQueue(t.ctx.env); // the API only queues; the children compute
    ({ groupId, crew } = await makeGroupWithRoles(t));
  });
  afterAll(async () => {
    await workers?.stop();
    await t?.close();
  });

  test('a child that dies is started again, the scan completes in the children, and stop() ends them all', async () => {
    const lines: string[] = [];
    const env = { ...process.env, DATABASE_URL: t.ctx.env.DATABASE_URL, NODE_ENV: 'test', JOB_EXPIRE_SECONDS: '3', JOB_MAINTENANCE_SECONDS: '1' } as NodeJS.ProcessEnv;
    workers = startWorkerProcesses(1, env, { restartMs: 100, graceMs: 10_000, log: (l) => lines.push(l) });
    const [first] = workers.pids();
    expect(first).toBeGreaterThan(0);
    process.kill(first!, 'SIGKILL');
    for (let i = 0; workers.pids().length === 0 || workers.pids()[0] === first; i++) {
      if (i > 200) throw new Error('no new worker process was started');
      await new Promise((r) => setTimeout(r, 50));
    }
    const [second] = workers.pids();
    expect(second).not.toBe(first);
    expect(lines.join('\n')).toContain(`scan worker ${first} stopped (SIGKILL)`);

    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points: grid(3), options: {}, meta: META });
    expect(res.status).toBe(201);
    const done = await waitFor(t, crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done', 60_000);
    expect(done.donePoints).toBe(3);

    await workers.stop();
    expect(workers.pids()).toEqual([]);
    expect(() => process.kill(second!, 0)).toThrow();
  });
});
