import { sql } from 'drizzle-orm';
import { startQueue } from '@/server/jobs/queue';
import { startScanWorkers } from '@/server/jobs/scan-worker';
import { AppError } from '@/server/lib/errors';
import { release, reserve, resize, usage } from '@/server/services/storage';
import { FREE_PLAN } from '@/shared/plans';
import type { ScanDetail } from '@/shared/schemas/scan-views';
import { startTestApp, type TestApp } from '../helpers/app';
import { setStorageBytes } from '../helpers/billing';
import { figureSpec, makeFigure } from '../helpers/figures';
import { makeGroupWithRoles, registryProbe, sampleCsv, sampleCurve, sampleMeta, type Crew } from '../helpers/factories';

/**
 * Storage accounting (server/services/storage.ts): after every kind of write that adds or frees
 * bytes the group's counter equals the bytes its rows hold (summed here in SQL of its own, and by
 * `usage`); cached renders stay outside it; concurrent reservations at the quota edge admit
 * exactly what fits.
 */

jest.setTimeout(120_000);

let t: TestApp;
let crew: Crew;
let stopWorkers: (() => Promise<void>) | undefined;

beforeAll(async () => {
  t = await startTestApp();
  // Scans stay queued until a step starts a worker, so the scan's start and its draft are measured apart.
  t.ctx.jobs = await startQueue(t.ctx.env);
  ({ crew } = await makeGroupWithRoles(t));
});
afterAll(async () => {
  await stopWorkers?.();
  await t?.close();
});

/** The counter and, summed from the rows themselves, what the group stores (uploads and scan inputs). */
async function ledger(groupId: string) {
  const r = await t.ctx.db.execute<{ counter: string; versions: string; scans: string }>(sql`
    select g.storage_bytes as counter,
      coalesce((select sum(v.stored_bytes) from result_versions v join results r on r.id = v.result_id where r.group_id = g.id), 0) as versions,
      coalesce((select sum(s.stored_bytes) from scans s where s.group_id = g.id), 0) as scans
    from groups g where g.id = ${groupId}`);
  const row = r.rows[0]!;
  return { counter: Number(row.counter), stored: Number(row.versions) + Number(row.scans) };
}

async function waitForScan(groupId: string, scanId: string): Promise<ScanDetail> {
  const until = Date.now() + 60_000;
  for (;;) {
    const res = await crew.analyst.agent.get(`/api/groups/${groupId}/scans/${scanId}`);
    if (res.body.state === 'done' && res.body.resultId) return res.body as ScanDetail;
    if (Date.now() > until) throw new Error(`scan did not finish: ${JSON.stringify(res.body)}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

const SCAN = {
  points: [1000, 1500, 2000].map((x, i) => ({ x, model: { observed: [10 + i, 12], signal: [1, 2], backgrounds: [{ name: 'continuum', yields: [10, 11] }] } })),
  options: {},
  meta: { ...sampleMeta({ title: 'Ledger scan' }), quantity: 'mu', quantityUnit: '', method: 'asymptotic' },
};

describe('the counter equals what is stored after every write', () => {
  test('uploads, versions, draft edits, deletions, a scan and its draft, and the render cache', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const a = crew.analyst.agent;
    const base = `/api/groups/${groupId}/results`;
    const ids: Record<string, string> = {};
    const ok = (status: number) => <R extends { status: number; body: unknown }>(res: R): R => {
      if (res.status !== status) throw new Error(`expected ${status}, got ${res.status}: ${JSON.stringify(res.body)}`);
      return res;
    };

    const steps: { step: string; change: 'grows' | 'shrinks' | 'same'; run: () => Promise<void> }[] = [
      {
        step: 'upload (multipart: file and JSON)',
        change: 'grows',
        run: async () => {
          const res = ok(201)(await a.post(base).field('meta', JSON.stringify(sampleMeta({ title: 'Ledger A' }))).attach('file', Buffer.from(sampleCsv()), 'limits.csv'));
          ids.a = res.body.resultId;
        },
      },
      {
        step: 'new version',
        change: 'grows',
        run: async () => void ok(201)(await a.post(`${base}/${ids.a}/versions`).send({ meta: sampleMeta({ title: 'Ledger A' }), curve: sampleCurve().curve, changeNote: 'Second' })),
      },
      {
        step: 'draft edit that grows',
        change: 'grows',
        run: async () => void ok(200)(await a.patch(`${base}/${ids.a}/versions/2`).send({ curve: sampleCurve(20).curve, changeNote: 'Finer grid' })),
      },
      {
        step: 'draft edit that shrinks',
        change: 'shrinks',
        run: async () => void ok(200)(await a.patch(`${base}/${ids.a}/versions/2`).send({ curve: sampleCurve(3).curve })),
      },
      { step: 'version delete', change: 'shrinks', run: async () => void ok(204)(await a.delete(`${base}/${ids.a}/versions/2`)) },
      {
        step: 'upload (JSON)',
        change: 'grows',
        run: async () => {
          const { curve, theory } = sampleCurve();
          ids.b = ok(201)(await a.post(base).send({ meta: sampleMeta({ title: 'Ledger B' }), curve, theory })).body.resultId;
        },
      },
      {
        step: 'scan start (inputs)',
        change: 'grows',
        run: async () => {
          ids.scan = ok(201)(await a.post(`/api/groups/${groupId}/scans`).send(SCAN)).body.id;
        },
      },
      {
        step: "the scan's draft (admitted)",
        change: 'grows',
        run: async () => {
          stopWorkers = await startScanWorkers(t.ctx, t.ctx.jobs!, 1);
          ids.draft = (await waitForScan(groupId, ids.scan!)).resultId!;
          await stopWorkers();
          stopWorkers = undefined;
        },
      },
      {
        step: 'a cached render (outside the counter)',
        change: 'same',
        run: async () => {
          const fig = await makeFigure(crew.editor, groupId, figureSpec([{ resultId: ids.a!, version: 1 }], { title: 'Ledger figure' }));
          const res = ok(200)(await crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`).buffer(true));
          expect(res.headers['x-render-cache']).toBe('miss');
          expect((await usage(t.ctx.db, groupId))!.rendersBytes).toBeGreaterThan(0);
        },
      },
      { step: 'result delete', change: 'shrinks', run: async () => void ok(204)(await a.delete(`${base}/${ids.b}`)) },
      { step: "the scan's draft deleted", change: 'shrinks', run: async () => void ok(204)(await a.delete(`${base}/${ids.draft}`)) },
    ];

    let before = (await ledger(groupId)).counter;
    expect(before).toBe(0);
    for (const { step, change, run } of steps) {
      await run();
      const { counter, stored } = await ledger(groupId);
      const u = (await usage(t.ctx.db, groupId))!;
      // The step's name rides along so that a failure says which write it was.
      expect({ step, counter }).toEqual({ step, counter: stored });
      expect({ step, total: u.totalBytes, kinds: u.uploadsBytes + u.scanInputsBytes }).toEqual({ step, total: counter, kinds: counter });
      expect({ step, change: counter > before ? 'grows' : counter < before ? 'shrinks' : 'same' }).toEqual({ step, change });
      before = counter;
    }
    // What is left: result A's first version and the scan's inputs.
    const u = (await usage(t.ctx.db, groupId))!;
    expect(u.uploadsBytes).toBeGreaterThan(0);
    expect(u.scanInputsBytes).toBeGreaterThan(0);
  });
});

describe('reserve, resize and release', () => {
  const inTx = <T>(fn: (tx: Parameters<Parameters<TestApp['ctx']['db']['transaction']>[0]>[0]) => Promise<T>) => t.ctx.db.transaction(fn);
  const refusal = (e: unknown) => (e instanceof AppError ? { status: e.status, code: e.code } : e);

  test('concurrent reservations at the quota edge admit exactly what fits', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const start = FREE_PLAN.quotaBytes - 3500;
    await setStorageBytes(t, groupId, start);
    const outcomes = await Promise.allSettled(
      Array.from({ length: 6 }, () =>
        inTx(async (tx) => {
          await reserve(tx, groupId, 1000);
          // Hold the reservation a moment, so that the others really wait on the group row.
          await tx.execute(sql`select pg_sleep(0.05)`);
        }),
      ),
    );
    expect(outcomes.filter((o) => o.status === 'fulfilled')).toHaveLength(3);
    const refused = outcomes.flatMap((o) => (o.status === 'rejected' ? [refusal(o.reason)] : []));
    expect(refused).toEqual(Array(3).fill({ status: 413, code: 'quota_exceeded' }));
    expect(await registryProbe.storageBytes(t, groupId)).toBe(start + 3000);
  });

  test('headroom is checked but not counted; admitted bytes are counted unchecked; growth is checked, shrinking never; release stops at 0', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const start = FREE_PLAN.quotaBytes - 2000;
    await setStorageBytes(t, groupId, start);

    await expect(inTx((tx) => reserve(tx, groupId, 1000, 'this scan', { headroom: 1500 }))).rejects.toMatchObject({ status: 413, code: 'quota_exceeded', message: expect.stringMatching(/this scan needs .+ more/) });
    await inTx((tx) => reserve(tx, groupId, 1000, 'this scan', { headroom: 1000 }));
    expect(await registryProbe.storageBytes(t, groupId)).toBe(start + 1000);

    await inTx((tx) => reserve(tx, groupId, 5000, 'this upload', { admitted: true }));
    expect(await registryProbe.storageBytes(t, groupId)).toBe(start + 6000);

    // Over the quota now: growing is refused, shrinking passes.
    await expect(inTx((tx) => resize(tx, groupId, 100, 101, 'this change'))).rejects.toMatchObject({ status: 413, message: expect.stringMatching(/this change needs .+ more/) });
    await inTx((tx) => resize(tx, groupId, 3000, 1000, 'this change'));
    expect(await registryProbe.storageBytes(t, groupId)).toBe(start + 4000);

    await inTx((tx) => release(tx, groupId, 10 * FREE_PLAN.quotaBytes));
    expect(await registryProbe.storageBytes(t, groupId)).toBe(0);
    await expect(inTx((tx) => release(tx, groupId, -1))).rejects.toThrow(/not negative/);
    await expect(inTx((tx) => reserve(tx, '00000000-0000-4000-8000-000000000000', 1))).rejects.toMatchObject({ status: 404 });
  });
});
