/**
 * The scan job queue at the claim level, on real PostgreSQL: claims are fair between groups, never
 * hand one task to two workers, take back the task of a worker that died, and hold a retry until
 * it is due; and the plan bounds what a group may have queued. No worker runs here: the tests
 * claim and finish tasks themselves.
 */
import { eq, sql } from 'drizzle-orm';
import * as tq from '@/db/queries/scan-tasks';
import { ensureBillingAccount } from '@/db/queries/billing';
import { billingAccounts } from '@/db/schema/billing';
import { scanGroupTurns, scanTasks } from '@/db/schema/scans';
import { ScanQueue, startQueue } from '@/server/jobs/queue';
import { recordTaskFailure, runNextTask, sweepUnsavedScans } from '@/server/jobs/scan-worker';
import { retryNotice } from '@/shared/scans/progress';
import type { ScanDetail } from '@/shared/schemas/scan-views';
import { FREE_PLAN, INSTITUTIONAL_PLAN } from '@/shared/plans';
import type { CountingModelInput } from '@/shared/schemas/counting-model';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, type Crew } from '../helpers/factories';

jest.setTimeout(60_000);

const META = { title: 'Fictional resonance scan', parameterName: 'm(R)', parameterUnit: 'GeV', quantity: 'mu', sqrtS: 18, luminosity: 140, method: 'asymptotic' };

function grid(n: number) {
  return Array.from({ length: n }, (_, k) => {
    const b = 40 * Math.exp(-k / 5);
    const model: CountingModelInput = { observed: [Math.round(b)], signal: [3], backgrounds: [{ name: 'flat', yields: [b] }] };
    return { x: 500 + 50 * k, model };
  });
}

let t: TestApp;
let queue: ScanQueue;
let a: { groupId: string; crew: Crew };
let b: { groupId: string; crew: Crew };
let c: { groupId: string; crew: Crew };

beforeAll(async () => {
  t = await startTestApp({ JOB_EXPIRE_SECONDS: '30', JOB_RETRY_SECONDS: '60' });
  t.ctx.jobs = await startQueue(t.ctx.env);
  queue = t.ctx.jobs;
  [a, b, c] = await Promise.all([makeGroupWithRoles(t), makeGroupWithRoles(t), makeGroupWithRoles(t)]);
});
afterAll(async () => t?.close());

async function startScan(who: { groupId: string; crew: Crew }, points: number): Promise<string> {
  const res = await who.crew.analyst.agent.post(`/api/groups/${who.groupId}/scans`).send({ points: grid(points), options: {}, meta: META });
  if (res.status !== 201) throw new Error(JSON.stringify(res.body));
  return res.body.id as string;
}

/** Claims the next task and names its group ("A", "B", …), or null when none is due. */
async function claimGroup(names: Record<string, string>) {
  const task = await queue.claim();
  return task ? { task, group: names[task.groupId] ?? task.groupId } : null;
}

async function emptyQueue() {
  await t.ctx.db.update(scanTasks).set({ state: 'cancelled' }).where(sql`${scanTasks.state} in ('queued', 'running')`);
}

test("a group's later task is claimed before another group's earlier backlog: fewest running first, then least recently served", async () => {
  await emptyQueue();
  const names = { [a.groupId]: 'A', [b.groupId]: 'B' };
  await startScan(a, 6);
  // One worker takes A's first task and is still busy with it when B queues its scan.
  const first = await claimGroup(names);
  expect(first?.group).toBe('A');
  await startScan(b, 2);
  // A has a task running, B none: B's first task goes next, ahead of A's five older ones.
  const second = await claimGroup(names);
  expect(second).toMatchObject({ group: 'B', task: { pointIndex: 0 } });
  // One running each: the group served longer ago (A) is next.
  const third = await claimGroup(names);
  expect(third).toMatchObject({ group: 'A', task: { pointIndex: 1 } });
  for (const r of [first, second, third]) await tq.finishTask(t.ctx.db, r!.task.id, { state: 'done' });
  const rest: string[] = [];
  for (let r = await claimGroup(names); r; r = await claimGroup(names)) {
    rest.push(`${r.group}${r.task.pointIndex}`);
    await tq.finishTask(t.ctx.db, r.task.id, { state: 'done' });
  }
  expect(rest).toEqual(['B1', 'A2', 'A3', 'A4', 'A5']);
});

test('one worker alternates between groups with queued work (round robin by last service)', async () => {
  await emptyQueue();
  const names = { [a.groupId]: 'A', [b.groupId]: 'B', [c.groupId]: 'C' };
  await startScan(a, 5);
  const order: string[] = [];
  const runOne = async () => {
    const r = await claimGroup(names);
    if (!r) return false;
    order.push(`${r.group}${r.task.pointIndex}`);
    await tq.finishTask(t.ctx.db, r.task.id, { state: 'done' });
    return true;
  };
  await runOne();
  await startScan(b, 3);
  await runOne();
  await startScan(c, 2);
  while (await runOne());
  // B arrives after A0, C after B0; each claim serves the group served least recently.
  expect(order).toEqual(['A0', 'B0', 'C0', 'A1', 'B1', 'C1', 'A2', 'B2', 'A3', 'A4']);
});

test('a group that kept the workers busy longer waits behind one that used them less, even if served more recently', async () => {
  await emptyQueue();
  const names = { [a.groupId]: 'A', [b.groupId]: 'B' };
  const scanA = await startScan(a, 3);
  await startScan(b, 3);
  // One task each (fewest running first); A's ran for 40 s (a long chunk of pseudo-experiments), B's took no time.
  const first = [(await claimGroup(names))!, (await claimGroup(names))!];
  expect(first.map((r) => r.group).sort()).toEqual(['A', 'B']);
  for (const r of first) await tq.finishTask(t.ctx.db, r.task.id, { state: 'done' });
  const a0 = first.find((r) => r.group === 'A')!;
  await t.ctx.db.update(scanTasks).set({ claimedAt: sql`${scanTasks.finishedAt} - interval '40 seconds'` }).where(eq(scanTasks.id, a0.task.id));
  // A was served longer ago than B…
  await t.ctx.db.update(scanGroupTurns).set({ lastClaimedAt: sql`now() - interval '1 minute'` }).where(eq(scanGroupTurns.groupId, a.groupId));
  // …but B has used the workers less: B's remaining tasks go first.
  const order: string[] = [];
  for (let r = await claimGroup(names); r; r = await claimGroup(names)) {
    order.push(`${r.group}${r.task.pointIndex}`);
    await tq.finishTask(t.ctx.db, r.task.id, { state: 'done' });
  }
  expect(order).toEqual(['B1', 'B2', 'A1', 'A2']);
  expect(scanA).toBeTruthy();
});

test('concurrent claims never hand out the same task', async () => {
  await emptyQueue();
  await startScan(a, 4);
  await startScan(b, 4);
  const claims = await Promise.all(Array.from({ length: 10 }, () => queue.claim()));
  const got = claims.filter((x) => x !== undefined);
  expect(got).toHaveLength(8);
  expect(new Set(got.map((x) => x!.id)).size).toBe(8);
  // Four each: the fairness holds under concurrency too.
  expect(got.filter((x) => x!.groupId === a.groupId)).toHaveLength(4);
});

test("a task whose worker stopped renewing its lease is claimed again; a retry waits until it is due", async () => {
  await emptyQueue();
  await startScan(c, 2);
  const lost = (await queue.claim())!;
  expect(lost.attempts).toBe(1);
  // The worker died: its lease runs out.
  await t.ctx.db.update(scanTasks).set({ leaseUntil: sql`now() - interval '1 second'` }).where(eq(scanTasks.id, lost.id));
  const again = (await queue.claim())!;
  expect(again.id).toBe(lost.id);
  expect(again.attempts).toBe(2);
  // The old attempt can no longer renew the lease; the new one can.
  expect(await tq.heartbeatTask(t.ctx.db, lost.id, 1, 30, 3)).toBe(false);
  expect(await tq.heartbeatTask(t.ctx.db, again.id, 2, 30, 3)).toBe(true);
  // It fails and is put back for a retry in a minute: the other task is claimed, then nothing.
  expect(await tq.retryTaskLater(t.ctx.db, again.id, 2, queue.retryDelaySeconds(again.attempts), 'connection reset')).toBe(true);
  expect(queue.retryDelaySeconds(2)).toBe(120);
  const other = (await queue.claim())!;
  expect(other.id).not.toBe(lost.id);
  expect(await queue.claim()).toBeUndefined();
  // Once due, the retry is claimed with its last error.
  await t.ctx.db.update(scanTasks).set({ runAfter: sql`now()` }).where(eq(scanTasks.id, lost.id));
  const retried = (await queue.claim())!;
  expect(retried).toMatchObject({ id: lost.id, attempts: 3, lastError: 'connection reset' });
});

describe("the plan bounds the scan work a group may have queued (points × pseudo-experiments)", () => {
  const toyScan = (who: { groupId: string; crew: Crew }, points: number, toys: number) =>
    who.crew.analyst.agent.post(`/api/groups/${who.groupId}/scans`).send({ points: grid(points), options: { method: 'toys', toys }, meta: { ...META, method: 'toys' } });

  test('a scan larger than the Free plan allows is refused with 413, naming options.toys and the limit; nothing is queued', async () => {
    const d = await makeGroupWithRoles(t);
    const res = await toyScan(d, 50, 5000);
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('scan_over_plan');
    expect(res.body.error.message).toContain('50 points × 5,000 pseudo-experiments = 250,000');
    expect(res.body.error.message).toContain(`(${FREE_PLAN.scanQueueLimit.toLocaleString('en')} pseudo-experiments, scanQueueLimit)`);
    expect(res.body.error.details).toEqual([{ field: 'options.toys', message: `at most 4,000 with 50 points: the Free plan's limit is 200,000 queued pseudo-experiments` }]);
    expect((await d.crew.analyst.agent.get(`/api/groups/${d.groupId}/scans`)).body.scans).toHaveLength(0);
    expect(await tq.queuedCost(t.ctx.db, d.groupId)).toBe(0);
  });

  test('queued and running work counts until it finishes: the next scan waits (429) and fits again after a cancel', async () => {
    const e = await makeGroupWithRoles(t);
    const first = await toyScan(e, 20, 5000);
    expect(first.status).toBe(201);
    expect((await toyScan(e, 20, 5000)).status).toBe(201);
    expect(await tq.queuedCost(t.ctx.db, e.groupId)).toBe(FREE_PLAN.scanQueueLimit);
    const full = await toyScan(e, 2, 100);
    expect(full.status).toBe(429);
    expect(full.body.error.code).toBe('scan_queue_full');
    expect(full.body.error.details).toEqual([{ field: 'options.toys', message: 'room for 0 more pseudo-experiments now (limit 200,000 on the Free plan, 200,000 queued)' }]);
    // An asymptotic point counts one, and its field is the points.
    const asym = await e.crew.analyst.agent.post(`/api/groups/${e.groupId}/scans`).send({ points: grid(2), options: {}, meta: META });
    expect(asym.status).toBe(429);
    expect(asym.body.error.details[0].field).toBe('points');
    // Another group is not held back by this one's queue.
    expect((await toyScan(b, 2, 100)).status).toBe(201);
    expect((await e.crew.analyst.agent.post(`/api/groups/${e.groupId}/scans/${first.body.id}/cancel`)).status).toBe(200);
    expect(await tq.queuedCost(t.ctx.db, e.groupId)).toBe(100_000);
    expect((await toyScan(e, 2, 100)).status).toBe(201);
  });

  test('the Institutional plan in force allows more', async () => {
    const f = await makeGroupWithRoles(t);
    await ensureBillingAccount(t.ctx.db, f.groupId);
    await t.ctx.db.update(billingAccounts).set({ plan: 'institutional', status: 'active' }).where(eq(billingAccounts.groupId, f.groupId));
    expect(INSTITUTIONAL_PLAN.scanQueueLimit).toBeGreaterThan(250_000);
    expect((await toyScan(f, 50, 5000)).status).toBe(201);
    // A lapsed plan falls back to the Free plan's limit.
    await t.ctx.db.update(billingAccounts).set({ status: 'past_due' }).where(eq(billingAccounts.groupId, f.groupId));
    const lapsed = await toyScan(f, 2, 100);
    expect(lapsed.status).toBe(429);
    expect(lapsed.body.error.message).toContain('Free plan');
  });
});

test('a point waiting for its retry: the status says when it is due, and the time left is not shorter than that wait', async () => {
  await emptyQueue();
  const g = await makeGroupWithRoles(t);
  const scanId = await startScan(g, 3);
  const status = async () => (await g.crew.viewer.agent.get(`/api/groups/${g.groupId}/scans/${scanId}`)).body as ScanDetail;
  expect(await runNextTask(t.ctx, queue)).toBe(true); // point 0 computed
  // Point 1 fails (say its database connection broke): the worker puts it back for a retry in JOB_RETRY_SECONDS.
  const failing = (await queue.claim())!;
  expect(failing.pointIndex).toBe(1);
  await recordTaskFailure(t.ctx, queue, failing, new Error('connection reset by peer'));
  // Point 2's worker died mid-point: its lease has run out, so it is due again at once.
  const lost = (await queue.claim())!;
  expect(lost.pointIndex).toBe(2);
  await t.ctx.db.update(scanTasks).set({ leaseUntil: sql`now() - interval '2 seconds'` }).where(eq(scanTasks.id, lost.id));

  const s = await status();
  const now = Date.parse(s.now);
  const due = Date.parse(s.points[1]!.retryAt!);
  expect((due - now) / 1000).toBeGreaterThan(55);
  expect((due - now) / 1000).toBeLessThanOrEqual(60);
  expect(Date.parse(s.points[2]!.retryAt!)).toBeLessThanOrEqual(now);
  expect(s.points[0]!.retryAt).toBeNull();
  expect(s.retryAt).toBe(s.points[1]!.retryAt);
  // One point of three took well under a second, yet the scan cannot end before point 1's retry.
  expect(s.etaSeconds).toBeGreaterThanOrEqual((due - now) / 1000);
  expect(s.points[1]).toMatchObject({ state: 'queued', tasks: { done: 0, total: 1, running: 0 } });
  expect(retryNotice(s.points, new Date(now))).toMatch(/^2 points wait for a retry .* in \d+ s\./);

  // Once both have run, nothing waits and nothing is left.
  await t.ctx.db.update(scanTasks).set({ runAfter: sql`now()` }).where(eq(scanTasks.id, failing.id));
  while (await runNextTask(t.ctx, queue));
  const done = await status();
  expect(done).toMatchObject({ state: 'done', donePoints: 3, retryAt: null, etaSeconds: null });
});

test('the sweep deletes the tasks of scans that ended longer ago than the fair share looks back, and only those', async () => {
  await emptyQueue();
  const h = await makeGroupWithRoles(t);
  const old = await startScan(h, 2);
  while (await runNextTask(t.ctx, queue));
  const active = await startScan(h, 2);
  await t.ctx.db.execute(sql`update scans set finished_at = now() - interval '11 minutes' where id = ${old}`);
  await sweepUnsavedScans(t.ctx);
  const left = await t.ctx.db.select({ scanId: scanTasks.scanId }).from(scanTasks).where(eq(scanTasks.groupId, h.groupId));
  expect(left.map((r) => r.scanId)).toEqual([active, active]);
  // The finished scan still reads whole, from its points.
  expect((await h.crew.viewer.agent.get(`/api/groups/${h.groupId}/scans/${old}`)).body).toMatchObject({ state: 'done', donePoints: 2 });
});
