/**
 * Rerunning one point of an ended pseudo-experiment scan with more pseudo-experiments: a new scan
 * whose other points are copied with their stored outcomes, only the chosen point computed again,
 * its draft a new version of the same result. Tasks are run by the test itself (no worker loop).
 */
import { eq } from 'drizzle-orm';
import { scanPoints, scans, scanTasks } from '@/db/schema/scans';
import { startQueue, type ScanQueue } from '@/server/jobs/queue';
import { runNextTask } from '@/server/jobs/scan-worker';
import type { CountingModelInput } from '@/shared/schemas/counting-model';
import { computeToyPoint, TOY_GRID_POINTS, withSigmaB } from '@/shared/stats';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, type Crew } from '../helpers/factories';

jest.setTimeout(120_000);

const META = { title: 'Fictional heavy scalar scan', parameterName: 'm(S)', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'toys' };
// Two bins a point, so the scan cost limit below allows 12,000 / 2 = 6,000 pseudo-experiments for one point.
const COST_LIMIT = 12_000;

function model(k: number): CountingModelInput {
  const b = [20 * Math.exp(-k / 4) + 3, 12 * Math.exp(-k / 4) + 2];
  return {
    observed: b.map((v, i) => Math.round(v * (1 + 0.15 * Math.cos(k + i)))),
    signal: [2.5, 1.5],
    backgrounds: [{ name: 'continuum', yields: b }],
    systematics: [{ name: 'luminosity', effects: { signal: 0.03, continuum: 0.03 } }],
  };
}
const points = [0, 1, 2].map((k) => ({ x: 700 + 150 * k, sigmaNominal: 3 * Math.exp(-k / 2), model: model(k) }));

let t: TestApp;
let queue: ScanQueue;
let groupId: string;
let crew: Crew;

beforeAll(async () => {
  t = await startTestApp({ SCAN_COST_LIMIT: String(COST_LIMIT) });
  t.ctx.jobs = await startQueue(t.ctx.env);
  queue = t.ctx.jobs;
  ({ groupId, crew } = await makeGroupWithRoles(t));
});
afterAll(async () => t?.close());

const scanUrl = (scanId: string) => `/api/groups/${groupId}/scans/${scanId}`;
const rerunUrl = (scanId: string, index: number) => `${scanUrl(scanId)}/points/${index}/rerun`;

async function start(options: Record<string, unknown>): Promise<string> {
  const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ points, options, meta: META });
  if (res.status !== 201) throw new Error(JSON.stringify(res.body));
  return res.body.id as string;
}
const pointRows = (scanId: string) => t.ctx.db.select().from(scanPoints).where(eq(scanPoints.scanId, scanId)).orderBy(scanPoints.index);

let finished: { id: string; resultId: string; resultVersion: number };

beforeAll(async () => {
  const id = await start({ method: 'toys', toys: 150, seed: 7 });
  while (await runNextTask(t.ctx, queue));
  const scan = (await crew.viewer.agent.get(scanUrl(id))).body;
  expect(scan).toMatchObject({ state: 'done', donePoints: 3 });
  finished = { id, resultId: scan.resultId, resultVersion: scan.resultVersion };
});

test("a rerun copies the other points' outcomes, computes the chosen one with the new count, and its draft is a new version with the note", async () => {
  const before = (await crew.viewer.agent.get(`${scanUrl(finished.id)}/points/1`)).body;
  // 150 pseudo-experiments per hypothesis: the engine warns that the tails hold too few.
  expect(before.result.warnings.some((w: string) => w.includes('pseudo-experiments'))).toBe(true);
  expect(before.rerun).toEqual({ toys: 150, maxToys: COST_LIMIT / 2 });

  const res = await crew.analyst.agent.post(rerunUrl(finished.id, 1)).send({ toys: 600 });
  expect(res.status).toBe(201);
  const rerunId = res.body.id as string;
  expect(rerunId).not.toBe(finished.id);
  // Only the chosen point is queued: its chunks carry the new count; the others are done already.
  expect(res.body).toMatchObject({ state: 'queued', totalPoints: 3, donePoints: 2, failedPoints: 0 });
  expect(res.body.points.map((p: { state: string }) => p.state)).toEqual(['done', 'queued', 'done']);
  const tasks = await t.ctx.db.select().from(scanTasks).where(eq(scanTasks.scanId, rerunId));
  expect(new Set(tasks.map((x) => x.pointIndex))).toEqual(new Set([1]));
  expect(tasks.reduce((s, x) => s + x.cost, 0)).toBe(600);
  const [row] = await t.ctx.db.select().from(scans).where(eq(scans.id, rerunId));
  expect(row).toMatchObject({ rerunOf: finished.id, rerunPoint: 1, targetResultId: finished.resultId });

  while (await runNextTask(t.ctx, queue));
  const scan = (await crew.viewer.agent.get(scanUrl(rerunId))).body;
  expect(scan).toMatchObject({ state: 'done', donePoints: 3, resultId: finished.resultId, resultVersion: finished.resultVersion + 1 });

  // The other points are the old ones exactly (outcome, timing, attempts); no task computed them.
  const [oldRows, newRows] = [await pointRows(finished.id), await pointRows(rerunId)];
  for (const i of [0, 2]) {
    const { scanId: _a, ...o } = oldRows[i]!;
    const { scanId: _b, ...n } = newRows[i]!;
    expect(n).toEqual(o);
  }
  // The rerun point used 600 per hypothesis with its own seed (scan seed + index): the same
  // numbers as computing it whole in one process.
  const p = (await crew.viewer.agent.get(`${scanUrl(rerunId)}/points/1`)).body;
  expect(p.rerun).toEqual({ toys: 600, maxToys: COST_LIMIT / 2 });
  expect(p.result.toys).toEqual({ perHypothesis: 600, total: 2 * 600 * TOY_GRID_POINTS, seed: 8 });
  const whole = withSigmaB(computeToyPoint(points[1]!.model, { cl: 0.95, asimov: 'profiled', toys: 600, seed: 8 }, { fieldPrefix: 'model' }), points[1]!.sigmaNominal);
  const { fit: _fit, ...limit } = p.result;
  expect(limit).toEqual(JSON.parse(JSON.stringify(whole)));

  // A new draft version with the note; the old version stays as it was.
  const result = (await crew.viewer.agent.get(`/api/groups/${groupId}/results/${finished.resultId}`)).body;
  const versions = result.versions as { version: number; changeNote: string | null }[];
  expect(versions.map((v) => v.version).sort()).toEqual([finished.resultVersion, finished.resultVersion + 1]);
  expect(versions.find((v) => v.version === finished.resultVersion + 1)?.changeNote).toBe(`Point x = ${points[1]!.x} rerun with 600 pseudo-experiments`);
  const [oldV, newV] = await Promise.all(
    [finished.resultVersion, finished.resultVersion + 1].map(async (v) => (await crew.viewer.agent.get(`/api/groups/${groupId}/results/${finished.resultId}/versions/${v}`)).body),
  );
  expect(newV.curve.observed[0]).toBe(oldV.curve.observed[0]);
  expect(newV.curve.observed[2]).toBe(oldV.curve.observed[2]);
  expect(newV.curve.observed[1]).toBe(p.result.sigmaB.observed);
  expect(newV.meta.notes).toContain(`150 per hypothesis (x = ${points[1]!.x} with 600)`);

  // Rerunning the rerun: the point's current count is now 600.
  const again = await crew.analyst.agent.post(rerunUrl(rerunId, 1)).send({ toys: 600 });
  expect(again.status).toBe(400);
  expect(again.body.error.details[0]).toMatchObject({ field: 'toys' });
  expect(again.body.error.details[0].message).toContain('600');
});

test('bad counts are 400 naming toys; a running scan 409; an asymptotic scan 409; another group 404; viewers 403', async () => {
  const cases: [unknown, string][] = [
    [{ toys: 150 }, 'more than'],
    [{ toys: 100 }, 'more than'],
    [{ toys: COST_LIMIT / 2 + 1 }, 'at most 6,000'],
    [{ toys: 1.5 }, 'whole number'],
    [{ toys: 'many' }, 'number'],
    [{}, ''],
  ];
  for (const [body, words] of cases) {
    const res = await crew.analyst.agent.post(rerunUrl(finished.id, 0)).send(body as object);
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].field).toBe('toys');
    expect(res.body.error.details[0].message).toContain(words);
  }
  // The bound itself is allowed.
  expect((await crew.analyst.agent.post(rerunUrl(finished.id, 0)).send({ toys: COST_LIMIT / 2 })).status).toBe(201);

  expect((await crew.analyst.agent.post(rerunUrl(finished.id, 9)).send({ toys: 300 })).status).toBe(404);
  expect((await crew.viewer.agent.post(rerunUrl(finished.id, 0)).send({ toys: 300 })).status).toBe(403);

  const running = await start({ method: 'toys', toys: 150, seed: 3 });
  const busy = await crew.analyst.agent.post(rerunUrl(running, 0)).send({ toys: 300 });
  expect(busy.status).toBe(409);
  expect(busy.body.error.code).toBe('running');
  await crew.analyst.agent.post(`${scanUrl(running)}/cancel`).send({});
  // Once cancelled it may be rerun; its points never computed are left out.
  const fromCancelled = await crew.analyst.agent.post(rerunUrl(running, 2)).send({ toys: 300 });
  expect(fromCancelled.status).toBe(201);
  expect(fromCancelled.body.points.map((p: { index: number }) => p.index)).toEqual([2]);

  const asymptotic = await start({ method: 'asymptotic' });
  while (await runNextTask(t.ctx, queue));
  expect((await crew.viewer.agent.get(`${scanUrl(asymptotic)}/points/0`)).body.rerun).toBeNull();
  const notToys = await crew.analyst.agent.post(rerunUrl(asymptotic, 0)).send({ toys: 300 });
  expect(notToys.status).toBe(409);
  expect(notToys.body.error.code).toBe('not_pseudo_experiments');

  const other = await makeGroupWithRoles(t);
  expect((await other.crew.analyst.agent.post(`/api/groups/${other.groupId}/scans/${finished.id}/points/0/rerun`).send({ toys: 300 })).status).toBe(404);
});
