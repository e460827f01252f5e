import { sql } from 'drizzle-orm';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeCrew, makeGroupWithRoles, registryProbe, sampleCsv, sampleCurve, sampleMeta, type Crew, type Person } from '../helpers/factories';

/**
 * `Idempotency-Key` on uploads: a retry with the same key and request gets the first answer (same
 * version, same status) and stores nothing new; the same key with another request is refused
 * naming the header; keys are per group, expire after 24 h, are checked for shape, and concurrent
 * retries never make two versions.
 */

let t: TestApp;
let crew: Crew;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
}, 60_000);
afterAll(async () => t?.close());

type Detail = { field: string; message: string };
const details = (body: { error?: { details?: Detail[] } }) => body.error?.details ?? [];
const storageOf = async (groupId: string) => (await crew.owner.agent.get(`/api/groups/${groupId}`)).body.storageBytes as number;
const versionCount = async (groupId: string) =>
  Number(
    (
      await t.ctx.db.execute<{ n: string }>(
        sql`select count(*) as n from result_versions v join results r on r.id = v.result_id where r.group_id = ${groupId}`,
      )
    ).rows[0]!.n,
  );

function uploadCsv(person: Person, groupId: string, key: string | undefined, csv = sampleCsv(), opts: { path?: string; changeNote?: string; name?: string } = {}) {
  let req = person.agent.post(opts.path ?? `/api/groups/${groupId}/results`);
  if (key !== undefined) req = req.set('Idempotency-Key', key);
  req = req.field('meta', JSON.stringify(sampleMeta()));
  if (opts.changeNote) req = req.field('changeNote', opts.changeNote);
  return req.attach('file', Buffer.from(csv), opts.name ?? 'limits.csv');
}

test('a retry with the same key and file gets the first answer again: same result, same version, nothing stored twice', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const key = 'pipeline-run-0001-a7f3';
  const first = await uploadCsv(crew.analyst, groupId, key);
  expect(first.status).toBe(201);
  expect(first.headers['idempotent-replayed']).toBeUndefined();
  const storage = await storageOf(groupId);

  // A new multipart body (new boundary) with the same contents.
  const again = await uploadCsv(crew.analyst, groupId, key);
  expect(again.status).toBe(201);
  expect(again.headers['idempotent-replayed']).toBe('true');
  expect(again.body).toEqual(first.body);
  expect(await registryProbe.resultCount(t, groupId)).toBe(1);
  expect(await storageOf(groupId)).toBe(storage);

  // Without a key, or with another key, the same file is a new upload.
  expect((await uploadCsv(crew.analyst, groupId, undefined)).status).toBe(201);
  const other = await uploadCsv(crew.analyst, groupId, 'pipeline-run-0002-b811');
  expect(other.status).toBe(201);
  expect(other.body.resultId).not.toBe(first.body.resultId);
  expect(await registryProbe.resultCount(t, groupId)).toBe(3);
});

test('new versions: a retried version upload keeps its number; the next key gets the next one', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const created = await uploadCsv(crew.analyst, groupId, undefined);
  const path = `/api/groups/${groupId}/results/${created.body.resultId}/versions`;
  const a = await uploadCsv(crew.analyst, groupId, 'version-key-0001', sampleCsv({ n: 8 }), { path, changeNote: 'Finer grid' });
  const b = await uploadCsv(crew.analyst, groupId, 'version-key-0001', sampleCsv({ n: 8 }), { path, changeNote: 'Finer grid' });
  expect([a.status, b.status]).toEqual([201, 201]);
  expect(a.body.version).toBe(2);
  expect(b.body.version).toBe(2);
  const c = await uploadCsv(crew.analyst, groupId, 'version-key-0002', sampleCsv({ n: 8 }), { path, changeNote: 'Finer grid' });
  expect(c.body.version).toBe(3);
  expect(await versionCount(groupId)).toBe(3);
});

test('JSON bodies: the same bytes replay; the same key on the other route or with other numbers is refused with 422 naming the header', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const key = '5b0c2c3e-2f3a-4f7e-9d0a-6a1b2c3d4e5f';
  const body = { meta: sampleMeta(), curve: sampleCurve(5).curve };
  const first = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).set('Idempotency-Key', key).send(body);
  const again = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).set('Idempotency-Key', key).send(body);
  expect([first.status, again.status]).toEqual([201, 201]);
  expect(again.body.resultId).toBe(first.body.resultId);

  const changed = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).set('Idempotency-Key', key).send({ ...body, meta: sampleMeta({ title: 'Another result' }) });
  expect(changed.status).toBe(422);
  expect(changed.body.error.code).toBe('idempotency_key_reused');
  expect(details(changed.body)).toEqual([{ field: 'Idempotency-Key', message: expect.stringContaining('different upload') }]);
  expect(changed.body.error.message).toContain('Idempotency-Key');

  const otherFile = await uploadCsv(crew.analyst, groupId, key);
  expect(otherFile.status).toBe(422);
  const asVersion = await crew.analyst.agent
    .post(`/api/groups/${groupId}/results/${first.body.resultId}/versions`)
    .set('Idempotency-Key', key)
    .send({ ...body, changeNote: 'Same key, other route' });
  expect(asVersion.status).toBe(422);
  // Another member sending the same request with the same key does not get the first one's answer.
  const curator = await crew.curator.agent.post(`/api/groups/${groupId}/results`).set('Idempotency-Key', key).send(body);
  expect(curator.status).toBe(422);
  expect(await registryProbe.resultCount(t, groupId)).toBe(1);
});

test('keys belong to a group: the same key in another group is a new upload there', async () => {
  const a = await makeGroupWithRoles(t, { crew });
  const b = await makeGroupWithRoles(t, { crew });
  const key = 'shared-key-across-groups';
  const inA = await uploadCsv(crew.analyst, a.groupId, key);
  const inB = await uploadCsv(crew.analyst, b.groupId, key);
  expect([inA.status, inB.status]).toEqual([201, 201]);
  expect(inB.headers['idempotent-replayed']).toBeUndefined();
  expect(inB.body.groupId).toBe(b.groupId);
});

test('a refused upload does not use up its key: the fixed file goes through with it', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const key = 'retry-after-fixing-01';
  const bad = await uploadCsv(crew.analyst, groupId, key, 'mass,obs\n1000,abc\n2000,1\n');
  expect(bad.status).toBe(400);
  const good = await uploadCsv(crew.analyst, groupId, key);
  expect(good.status).toBe(201);
  expect(good.headers['idempotent-replayed']).toBeUndefined();
});

test('keys expire after 24 hours: then the same key and file make a new result', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const key = 'expiring-key-000001';
  const first = await uploadCsv(crew.analyst, groupId, key);
  const row = await t.ctx.db.execute<{ hours: number }>(
    sql`select extract(epoch from expires_at - created_at) / 3600 as hours from upload_idempotency where group_id = ${groupId} and key = ${key}`,
  );
  expect(Number(row.rows[0]!.hours)).toBe(24);
  await t.ctx.db.execute(sql`update upload_idempotency set expires_at = now() - interval '1 second' where group_id = ${groupId} and key = ${key}`);
  const later = await uploadCsv(crew.analyst, groupId, key);
  expect(later.status).toBe(201);
  expect(later.headers['idempotent-replayed']).toBeUndefined();
  expect(later.body.resultId).not.toBe(first.body.resultId);
  // The expired row was replaced by the new upload's.
  const rows = await t.ctx.db.execute<{ result_id: string }>(sql`select result_id from upload_idempotency where group_id = ${groupId}`);
  expect(rows.rows.map((r) => r.result_id)).toEqual([later.body.resultId]);
});

test.each([
  ['too short', 'abc'],
  ['spaces', 'run 42 of the pipeline'],
  ['too long', 'k'.repeat(129)],
  ['non-ASCII', 'lauf-größe-0001'],
  ['empty', ''],
])('a malformed key (%s) is refused with 400 naming the header, and nothing is stored', async (_name, key) => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const res = await crew.analyst.agent
    .post(`/api/groups/${groupId}/results`)
    .set('Idempotency-Key', Buffer.from(key, 'utf8').toString('latin1'))
    .send({ meta: sampleMeta(), curve: sampleCurve(3).curve });
  expect(res.status).toBe(400);
  expect(details(res.body)).toEqual([{ field: 'Idempotency-Key', message: expect.stringContaining('8 to 128') }]);
  expect(await registryProbe.resultCount(t, groupId)).toBe(0);
});

test('the key is checked after the role: a viewer with a key still gets 403', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const res = await uploadCsv(crew.viewer, groupId, 'viewer-key-00000001');
  expect(res.status).toBe(403);
});

test('concurrent retries with one key make one result; every answer names it', async () => {
  const { groupId } = await makeGroupWithRoles(t, { crew });
  const key = 'parallel-retries-0001';
  const answers = await Promise.all(Array.from({ length: 6 }, () => uploadCsv(crew.analyst, groupId, key)));
  expect(answers.map((a) => a.status)).toEqual(Array(6).fill(201));
  expect(new Set(answers.map((a) => a.body.resultId)).size).toBe(1);
  expect(answers.filter((a) => a.headers['idempotent-replayed'] === undefined)).toHaveLength(1);
  expect(await registryProbe.resultCount(t, groupId)).toBe(1);

  // And for versions of one result.
  const path = `/api/groups/${groupId}/results/${answers[0]!.body.resultId}/versions`;
  const versions = await Promise.all(
    Array.from({ length: 6 }, () => uploadCsv(crew.analyst, groupId, 'parallel-versions-01', sampleCsv({ n: 7 }), { path, changeNote: 'Parallel retry' })),
  );
  expect(versions.map((v) => v.status)).toEqual(Array(6).fill(201));
  expect(new Set(versions.map((v) => v.body.version))).toEqual(new Set([2]));
  expect(await versionCount(groupId)).toBe(2);
}, 60_000);
