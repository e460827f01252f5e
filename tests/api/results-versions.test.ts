import { TEST_ORIGIN, startTestApp, type TestApp } from '../helpers/app';
import {
  makeCrew,
  makeGroupWithRoles,
  makeResult,
  makeVersion,
  publishVersion,
  registryProbe,
  sampleCsv,
  sampleCurve,
  sampleMeta,
  type Crew,
} from '../helpers/factories';
import type { ResultDetail, ResultVersion } from '@/shared/schemas/results';

/**
 * Versions: numbering (also under concurrent uploads), publishing (which supersedes the previous
 * published version), retraction with a reason, immutability of anything not a draft, and who may
 * do what.
 */

let t: TestApp;
let crew: Crew;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
}, 60_000);
afterAll(async () => t?.close());

const base = (groupId: string, resultId: string) => `/api/groups/${groupId}/results/${resultId}`;
const detailOf = async (groupId: string, resultId: string) => (await crew.viewer.agent.get(base(groupId, resultId))).body as ResultDetail;
const statesOf = async (groupId: string, resultId: string) =>
  Object.fromEntries((await detailOf(groupId, resultId)).versions.map((v) => [v.version, v.state]));

describe('versions', () => {
  test('a new version gets the next number and its change note; the history lists all, newest first', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    const v2 = await makeVersion(crew.analyst, groupId, v1.resultId, 'Added the 2031 data');
    expect(v2).toMatchObject({ version: 2, state: 'draft', changeNote: 'Added the 2031 data', slug: v1.slug, createdBy: 'Analyst Person' });

    // A new version from a CSV file, with its change note as a form field.
    const v3 = await crew.analyst.agent
      .post(`${base(groupId, v1.resultId)}/versions`)
      .field('meta', JSON.stringify(sampleMeta({ luminosity: 180 })))
      .field('changeNote', 'Full dataset')
      .attach('file', Buffer.from(sampleCsv()), 'full.csv');
    expect(v3.status).toBe(201);
    expect(v3.body).toMatchObject({ version: 3, changeNote: 'Full dataset', meta: { luminosity: 180 }, sourceFile: { name: 'full.csv' } });

    const detail = await detailOf(groupId, v1.resultId);
    expect(detail).toMatchObject({ id: v1.resultId, slug: v1.slug, groupId, isPublic: false });
    expect(detail.versions.map((v) => [v.version, v.state, v.changeNote])).toEqual([
      [3, 'draft', 'Full dataset'],
      [2, 'draft', 'Added the 2031 data'],
      [1, 'draft', ''],
    ]);
  });

  test('a new version needs a change note', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    const json = await crew.analyst.agent.post(`${base(groupId, v1.resultId)}/versions`).send({ meta: sampleMeta(), curve: sampleCurve().curve });
    expect(json.status).toBe(400);
    expect(json.body.error.details).toContainEqual({ field: 'changeNote', message: expect.any(String) });
    const file = await crew.analyst.agent
      .post(`${base(groupId, v1.resultId)}/versions`)
      .field('meta', JSON.stringify(sampleMeta()))
      .attach('file', Buffer.from(sampleCsv()), 'a.csv');
    expect(file.status).toBe(400);
    expect(file.body.error.details).toContainEqual({ field: 'changeNote', message: 'say what changed in this version' });
    expect(await registryProbe.versionCount(t, groupId)).toBe(1);
  });

  test('concurrent uploads to one result get distinct consecutive numbers, none lost', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    const before = await registryProbe.storageBytes(t, groupId);
    const { curve, theory } = sampleCurve();
    const responses = await Promise.all(
      [1, 2, 3, 4, 5].map((i) =>
        (i % 2 ? crew.analyst : crew.curator).agent
          .post(`${base(groupId, v1.resultId)}/versions`)
          .send({ meta: sampleMeta({ notes: `upload ${i}` }), curve, theory, changeNote: `Concurrent upload ${i}` }),
      ),
    );
    expect(responses.map((r) => r.status)).toEqual([201, 201, 201, 201, 201]);
    expect(responses.map((r) => r.body.version).sort()).toEqual([2, 3, 4, 5, 6]);
    const detail = await detailOf(groupId, v1.resultId);
    expect(detail.versions.map((v) => v.version)).toEqual([6, 5, 4, 3, 2, 1]);
    expect(detail.versions.map((v) => v.changeNote).filter(Boolean).sort()).toEqual([1, 2, 3, 4, 5].map((i) => `Concurrent upload ${i}`));
    // Each stored version counted its bytes once.
    let added = 0;
    for (const v of [2, 3, 4, 5, 6]) added += Buffer.byteLength((await crew.viewer.agent.get(`${base(groupId, v1.resultId)}/versions/${v}/export.json`)).text);
    expect((await registryProbe.storageBytes(t, groupId)) - before).toBe(added);
  });
});

describe('publishing, superseding and retracting', () => {
  test('publishing makes a version citable; publishing the next supersedes it', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    const p1 = await publishVersion(crew.curator, groupId, v1.resultId, 1);
    expect(p1).toMatchObject({ state: 'published', permalink: `${TEST_ORIGIN}/r/${v1.slug}/v1`, isPublic: false });
    expect(Date.parse(p1.publishedAt!)).toBeGreaterThan(Date.now() - 60_000);

    await makeVersion(crew.analyst, groupId, v1.resultId, 'More data');
    expect(await statesOf(groupId, v1.resultId)).toEqual({ 1: 'published', 2: 'draft' });
    const p2 = await publishVersion(crew.owner, groupId, v1.resultId, 2);
    expect(p2.state).toBe('published');
    expect(await statesOf(groupId, v1.resultId)).toEqual({ 1: 'superseded', 2: 'published' });
    // The superseded version keeps its permanent link.
    const old = await crew.viewer.agent.get(`${base(groupId, v1.resultId)}/versions/1`);
    expect(old.body).toMatchObject({ state: 'superseded', permalink: `${TEST_ORIGIN}/r/${v1.slug}/v1` });
  });

  test('only drafts can be published, and not behind a newer released version', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    await makeVersion(crew.analyst, groupId, v1.resultId);
    await publishVersion(crew.curator, groupId, v1.resultId, 2);
    const again = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/2/publish`).send({});
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe('Version 2 is published; only drafts can be published');
    const older = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/1/publish`).send({});
    expect(older.status).toBe(409);
    expect(older.body.error.message).toMatch(/Version 2 is newer and already published/);
    expect(await statesOf(groupId, v1.resultId)).toEqual({ 1: 'draft', 2: 'published' });
    const missing = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/9/publish`).send({});
    expect(missing.status).toBe(404);
  });

  test('publishing can make the result public; later versions keep its visibility unless told', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    expect((await publishVersion(crew.curator, groupId, v1.resultId, 1, true)).isPublic).toBe(true);
    await makeVersion(crew.analyst, groupId, v1.resultId);
    expect((await publishVersion(crew.curator, groupId, v1.resultId, 2)).isPublic).toBe(true);
    await makeVersion(crew.analyst, groupId, v1.resultId);
    expect((await publishVersion(crew.curator, groupId, v1.resultId, 3, false)).isPublic).toBe(false);

    const toggled = await crew.curator.agent.patch(base(groupId, v1.resultId)).send({ public: true });
    expect(toggled.status).toBe(200);
    expect(toggled.body).toMatchObject({ id: v1.resultId, isPublic: true });
    const bad = await crew.curator.agent.patch(base(groupId, v1.resultId)).send({ public: 'yes' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details).toEqual([{ field: 'public', message: 'must be true or false' }]);
  });

  test('retracting keeps the version readable with its reason; drafts and retracted versions cannot be retracted', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    await publishVersion(crew.curator, groupId, v1.resultId, 1);
    await makeVersion(crew.analyst, groupId, v1.resultId);
    await publishVersion(crew.curator, groupId, v1.resultId, 2);
    const reason = 'The jet energy scale was applied twice; a corrected version follows.';
    const res = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/1/retract`).send({ reason: `  ${reason}  ` });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ version: 1, state: 'retracted', retractionReason: reason });
    expect(res.body.permalink).toBe(`${TEST_ORIGIN}/r/${v1.slug}/v1`);
    expect((await crew.viewer.agent.get(`${base(groupId, v1.resultId)}/versions/1`)).body.retractionReason).toBe(reason);
    expect((await detailOf(groupId, v1.resultId)).versions.find((v) => v.version === 1)).toMatchObject({ state: 'retracted', retractionReason: reason });

    const twice = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/1/retract`).send({ reason });
    expect(twice.status).toBe(409);
    await makeVersion(crew.analyst, groupId, v1.resultId);
    const draft = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/3/retract`).send({ reason });
    expect(draft.status).toBe(409);
    expect(draft.body.error.message).toMatch(/draft.*delete it instead/);
    const short = await crew.curator.agent.post(`${base(groupId, v1.resultId)}/versions/2/retract`).send({ reason: 'bad' });
    expect(short.status).toBe(400);
    expect(short.body.error.details[0].field).toBe('reason');
    expect(await statesOf(groupId, v1.resultId)).toEqual({ 1: 'retracted', 2: 'published', 3: 'draft' });
  });
});

describe('a version cannot change once published', () => {
  test('PATCH and DELETE of a published, superseded or retracted version answer 409 and change nothing', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    await publishVersion(crew.curator, groupId, v1.resultId, 1);
    const url = `${base(groupId, v1.resultId)}/versions/1`;
    const before = (await crew.viewer.agent.get(url)).body as ResultVersion;
    const storage = await registryProbe.storageBytes(t, groupId);

    const patch = await crew.owner.agent.patch(url).send({ meta: sampleMeta({ title: 'Quietly changed' }), curve: sampleCurve(3).curve });
    expect(patch.status).toBe(409);
    expect(patch.body.error).toEqual({ code: 'immutable', message: 'Version 1 is published and cannot change; create a new version' });
    const del = await crew.owner.agent.delete(url);
    expect(del.status).toBe(409);
    expect(del.body.error.code).toBe('immutable');
    expect((await crew.viewer.agent.get(url)).body).toEqual(before);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(storage);

    await makeVersion(crew.analyst, groupId, v1.resultId);
    await publishVersion(crew.curator, groupId, v1.resultId, 2);
    const superseded = await crew.owner.agent.patch(url).send({ changeNote: 'typo' });
    expect(superseded.status).toBe(409);
    expect(superseded.body.error.message).toBe('Version 1 is superseded and cannot change; create a new version');
    expect((await crew.viewer.agent.get(url)).body).toEqual({ ...before, state: 'superseded' });
  });

  test('a draft can be edited (storage follows its size) and deleted; numbers are not reused', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    await makeVersion(crew.analyst, groupId, v1.resultId);
    const url = `${base(groupId, v1.resultId)}/versions/2`;
    const storage = await registryProbe.storageBytes(t, groupId);

    const { curve } = sampleCurve(20);
    const edited = await crew.analyst.agent.patch(url).send({ meta: sampleMeta({ title: 'Renamed draft' }), curve, theory: null, changeNote: 'Finer grid' });
    expect(edited.status).toBe(200);
    expect(edited.body).toMatchObject({ version: 2, state: 'draft', changeNote: 'Finer grid', meta: { title: 'Renamed draft' }, curve, theory: null });
    const exported = await crew.viewer.agent.get(`${url}/export.json`);
    const v1Export = await crew.viewer.agent.get(`${base(groupId, v1.resultId)}/versions/1/export.json`);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(Buffer.byteLength(exported.text) + Buffer.byteLength(v1Export.text));
    expect(await registryProbe.storageBytes(t, groupId)).not.toBe(storage);

    const invalid = await crew.analyst.agent.patch(url).send({ curve: { ...curve, observed: curve.observed!.map((v) => -v) } });
    expect(invalid.status).toBe(400);
    expect(invalid.body.error.details[0]).toEqual({ field: 'point 1, observed', message: expect.stringContaining('must be positive') });
    expect((await crew.viewer.agent.get(url)).body.curve).toEqual(curve);

    expect((await crew.analyst.agent.delete(url)).status).toBe(204);
    expect((await crew.viewer.agent.get(url)).status).toBe(404);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(Buffer.byteLength(v1Export.text));
    const v3 = await makeVersion(crew.analyst, groupId, v1.resultId);
    expect(v3.version).toBe(3);
  });

  test('deleting the only version deletes the result', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makeResult(crew.analyst, groupId);
    expect((await crew.analyst.agent.delete(`${base(groupId, v1.resultId)}/versions/1`)).status).toBe(204);
    expect((await crew.viewer.agent.get(base(groupId, v1.resultId))).status).toBe(404);
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(0);
  });
});

describe('who may do what', () => {
  test('editors and viewers cannot create results or versions; analysts cannot publish, retract or change visibility', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const { curve } = sampleCurve();
    for (const role of ['editor', 'viewer'] as const) {
      const res = await crew[role].agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(), curve });
      expect(res.status).toBe(403);
      expect(res.body.error.message).toContain(`(${role})`);
      const file = await crew[role].agent.post(`/api/groups/${groupId}/results`).field('meta', JSON.stringify(sampleMeta())).attach('file', Buffer.from(sampleCsv()), 'a.csv');
      expect(file.status).toBe(403);
    }
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);

    const v1 = await makeResult(crew.analyst, groupId);
    for (const role of ['editor', 'viewer'] as const) {
      expect((await crew[role].agent.post(`${base(groupId, v1.resultId)}/versions`).send({ meta: sampleMeta(), curve, changeNote: 'x' })).status).toBe(403);
      expect((await crew[role].agent.patch(`${base(groupId, v1.resultId)}/versions/1`).send({ changeNote: 'x' })).status).toBe(403);
      expect((await crew[role].agent.delete(`${base(groupId, v1.resultId)}/versions/1`)).status).toBe(403);
    }
    const publish = await crew.analyst.agent.post(`${base(groupId, v1.resultId)}/versions/1/publish`).send({ public: true });
    expect(publish.status).toBe(403);
    expect(publish.body.error.message).toMatch(/analyst.*curator or above/);
    expect(await statesOf(groupId, v1.resultId)).toEqual({ 1: 'draft' });
    expect((await crew.analyst.agent.patch(base(groupId, v1.resultId)).send({ public: true })).status).toBe(403);
    expect((await detailOf(groupId, v1.resultId)).isPublic).toBe(false);

    await publishVersion(crew.curator, groupId, v1.resultId, 1);
    expect((await crew.analyst.agent.post(`${base(groupId, v1.resultId)}/versions/1/retract`).send({ reason: 'Wrong numbers' })).status).toBe(403);
    expect(await statesOf(groupId, v1.resultId)).toEqual({ 1: 'published' });
    expect((await crew.owner.agent.post(`${base(groupId, v1.resultId)}/versions/1/retract`).send({ reason: 'Wrong numbers' })).status).toBe(200);
  });

  test('analysts delete results that were never published; curators and owners delete any', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const draftOnly = await makeResult(crew.analyst, groupId);
    await makeVersion(crew.analyst, groupId, draftOnly.resultId);
    expect((await crew.viewer.agent.delete(base(groupId, draftOnly.resultId))).status).toBe(403);
    expect((await crew.analyst.agent.delete(base(groupId, draftOnly.resultId))).status).toBe(204);
    expect((await crew.viewer.agent.get(base(groupId, draftOnly.resultId))).status).toBe(404);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(0);

    const published = await makeResult(crew.analyst, groupId);
    await publishVersion(crew.curator, groupId, published.resultId, 1);
    const refused = await crew.analyst.agent.delete(base(groupId, published.resultId));
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toMatch(/never published/);
    expect(await registryProbe.resultCount(t, groupId)).toBe(1);
    expect((await crew.curator.agent.delete(base(groupId, published.resultId))).status).toBe(204);
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(0);
  });

  test("a result of another group cannot be reached through one's own group", async () => {
    const mine = await makeGroupWithRoles(t, { crew });
    const other = await makeGroupWithRoles(t);
    const theirs = await makeResult(other.crew.analyst, other.groupId);
    // The owner of `mine` addresses the foreign result under their own group id.
    expect((await crew.owner.agent.get(base(mine.groupId, theirs.resultId))).status).toBe(404);
    expect((await crew.owner.agent.get(`${base(mine.groupId, theirs.resultId)}/versions/1`)).status).toBe(404);
    expect((await crew.owner.agent.post(`${base(mine.groupId, theirs.resultId)}/versions/1/publish`).send({})).status).toBe(404);
    expect((await crew.owner.agent.delete(base(mine.groupId, theirs.resultId))).status).toBe(404);
    expect((await crew.owner.agent.post(`${base(mine.groupId, theirs.resultId)}/versions`).send({ meta: sampleMeta(), curve: sampleCurve().curve, changeNote: 'x' })).status).toBe(404);
    expect(await registryProbe.resultCount(t, other.groupId)).toBe(1);
    expect((await other.crew.viewer.agent.get(`${base(other.groupId, theirs.resultId)}/versions/1`)).body.state).toBe('draft');
  });
});
