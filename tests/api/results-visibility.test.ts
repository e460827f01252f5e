import request from 'supertest';
import { startTestApp, type Agent, type TestApp } from '../helpers/app';
import { makeCrew, makeGroup, makeGroupWithRoles, makePerson, makeResult, makeVersion, publishVersion, type Crew, type Person } from '../helpers/factories';
import type { ResultPage, ResultVersion } from '@/shared/schemas/results';

/**
 * Who sees what, on every read route. The world: one group with a public result (v1 superseded,
 * v2 published, v3 a draft on top), a group-only published result, a draft-only result (even
 * flagged public) and a public retracted result; outsiders are an anonymous caller and a member
 * of another group, who must see the public published versions and nothing else.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
let outsider: Person;
let outsiderGroup: string;
const r = {} as Record<'pub' | 'priv' | 'draft' | 'retracted' | 'outsiders', ResultVersion>;
const REASON = 'The luminosity was taken from the wrong run period; see version 2 of the note.';

beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
  ({ groupId } = await makeGroupWithRoles(t, { crew }));
  outsider = await makePerson(t, 'Member Elsewhere');
  outsiderGroup = await makeGroup(t, outsider);

  r.pub = await makeResult(crew.analyst, groupId, { meta: { title: 'Kestrel resonance search, open', reference: 'LF-PUB-001', method: 'toys', parameterName: 'm(K)' } });
  await publishVersion(crew.curator, groupId, r.pub.resultId, 1, true);
  await makeVersion(crew.analyst, groupId, r.pub.resultId, 'Full data', { title: 'Kestrel resonance search, open', reference: 'LF-PUB-001', method: 'toys', parameterName: 'm(K)' });
  await publishVersion(crew.curator, groupId, r.pub.resultId, 2);
  await makeVersion(crew.analyst, groupId, r.pub.resultId, 'Secret rework', { title: 'Kestrel resonance search, secret rework', reference: 'LF-SECRET-003', method: 'other' });

  r.priv = await makeResult(crew.analyst, groupId, { meta: { title: 'Heron scalar search, group only', model: 'Heron portal model', reference: 'LF-INT-002' } });
  await publishVersion(crew.curator, groupId, r.priv.resultId, 1, false);

  r.draft = await makeResult(crew.analyst, groupId, { meta: { title: 'Osprey excited quark, preliminary', reference: 'LF-DRAFT-004', sqrtS: 14 } });
  expect((await crew.curator.agent.patch(`/api/groups/${groupId}/results/${r.draft.resultId}`).send({ public: true })).status).toBe(200);

  r.retracted = await makeResult(crew.analyst, groupId, { meta: { title: 'Plover dilepton search, withdrawn', reference: 'LF-RET-005' } });
  await publishVersion(crew.curator, groupId, r.retracted.resultId, 1, true);
  expect((await crew.curator.agent.post(`/api/groups/${groupId}/results/${r.retracted.resultId}/versions/1/retract`).send({ reason: REASON })).status).toBe(200);

  // The outsider's own group has a private draft of its own, which they see and nobody else does.
  r.outsiders = await makeResult(outsider, outsiderGroup, { meta: { title: 'Wren search of the other group', reference: 'OTHER-1' } });
}, 90_000);
afterAll(async () => t?.close());

type CallerName = 'anonymous' | 'member of another group';
const outsiders = (): Array<[CallerName, Agent]> => [
  ['anonymous', request.agent(t.app)],
  ['member of another group', outsider.agent],
];
const ids = (page: ResultPage) => page.items.map((i) => i.id).sort();
const PUBLIC_IDS = () => [r.pub.resultId, r.retracted.resultId].sort();

describe('group routes are closed to outsiders', () => {
  const routes = () => {
    const res = `/api/groups/${groupId}/results`;
    return [
      res,
      `${res}?q=Heron`,
      `${res}/${r.priv.resultId}`,
      `${res}/${r.pub.resultId}`,
      ...[r.priv, r.draft, r.pub].flatMap((v) => [`${res}/${v.resultId}/versions/1`, `${res}/${v.resultId}/versions/1/export.csv`, `${res}/${v.resultId}/versions/1/export.json`]),
      `${res}/${r.pub.resultId}/versions/3`,
    ];
  };

  test.each(['anonymous', 'member of another group'] as CallerName[])('%s gets 401/404 with no result data on every group read route', async (name) => {
    const agent = outsiders().find(([n]) => n === name)![1];
    for (const url of routes()) {
      const res = await agent.get(url);
      expect([url, res.status]).toEqual([url, name === 'anonymous' ? 401 : 404]);
      expect(res.text).not.toMatch(/Heron|Osprey|Kestrel|LF-/);
    }
  });

  test('members read everything of their group, drafts included', async () => {
    const list = (await crew.viewer.agent.get(`/api/groups/${groupId}/results`)).body as ResultPage;
    expect(ids(list)).toEqual([r.pub, r.priv, r.draft, r.retracted].map((v) => v.resultId).sort());
    expect(list.items.find((i) => i.id === r.pub.resultId)).toMatchObject({ version: 3, state: 'draft' });
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/results/${r.draft.resultId}/versions/1/export.csv`)).status).toBe(200);
  });
});

describe('the caller-aware list /api/results', () => {
  const queries = ['', '?q=search', '?q=Heron', '?q=Osprey', '?q=secret', '?q=LF-', '?state=draft', '?state=published', '?method=other', '?method=toys', '?sqrtS=14', '?parameter=m(K)', `?groupId=GROUP`, '?sort=title', '?sort=sqrtS&pageSize=1&page=2'];

  test.each(['anonymous', 'member of another group'] as CallerName[])('%s sees only public published results, with or without search and filters', async (name) => {
    const agent = outsiders().find(([n]) => n === name)![1];
    for (const qs of queries) {
      const res = await agent.get(`/api/results${qs.replace('GROUP', groupId)}`);
      expect([qs, res.status]).toEqual([qs, 200]);
      const page = res.body as ResultPage;
      for (const item of page.items) {
        expect([qs, item.id]).not.toEqual([qs, r.priv.resultId]);
        expect([qs, item.id]).not.toEqual([qs, r.draft.resultId]);
        // (The other group's member does see the draft of their own group.)
        if (item.groupId === groupId) expect([qs, item.state]).not.toEqual([qs, 'draft']);
      }
      expect(res.text).not.toMatch(/Heron|Osprey|secret|LF-SECRET|LF-INT|LF-DRAFT/i);
      if (name === 'anonymous') expect(res.text).not.toContain('Wren');
    }
    const all = (await agent.get('/api/results')).body as ResultPage;
    const expected = name === 'anonymous' ? PUBLIC_IDS() : [...PUBLIC_IDS(), r.outsiders.resultId].sort();
    expect(ids(all)).toEqual(expected);
    expect(all.total).toBe(expected.length);
    // The public result shows its newest published version, not the draft on top of it.
    expect(all.items.find((i) => i.id === r.pub.resultId)).toMatchObject({ version: 2, state: 'published', title: 'Kestrel resonance search, open', reference: 'LF-PUB-001' });
    expect(all.items.find((i) => i.id === r.retracted.resultId)).toMatchObject({ version: 1, state: 'retracted' });
    // Searching for a private title finds nothing, and says so in the total.
    expect((await agent.get('/api/results?q=Heron')).body).toMatchObject({ items: [], total: 0 });
    expect((await agent.get('/api/results?state=draft')).body.items.filter((i: { groupId: string }) => i.groupId === groupId)).toEqual([]);
  });

  test('a member sees their group in every state, and other groups only as public', async () => {
    const all = (await crew.viewer.agent.get('/api/results')).body as ResultPage;
    expect(ids(all)).toEqual([r.pub, r.priv, r.draft, r.retracted].map((v) => v.resultId).sort());
    expect(all.items.find((i) => i.id === r.pub.resultId)).toMatchObject({ version: 3, state: 'draft', title: 'Kestrel resonance search, secret rework' });
    expect(ids((await crew.viewer.agent.get('/api/results?q=heron')).body)).toEqual([r.priv.resultId]);
    expect(ids((await crew.viewer.agent.get('/api/results?state=draft')).body)).toEqual([r.pub.resultId, r.draft.resultId].sort());
    expect(ids((await crew.viewer.agent.get(`/api/results?groupId=${outsiderGroup}`)).body)).toEqual([]);
  });

  test('search escapes pattern characters, filters combine, and pages are counted', async () => {
    expect((await crew.viewer.agent.get('/api/results?q=%25')).body.total).toBe(0);
    expect((await crew.viewer.agent.get('/api/results?q=_')).body.total).toBe(0);
    const page1 = (await crew.viewer.agent.get('/api/results?sort=title&pageSize=3')).body as ResultPage;
    const page2 = (await crew.viewer.agent.get('/api/results?sort=title&pageSize=3&page=2')).body as ResultPage;
    expect(page1).toMatchObject({ total: 4, page: 1, pageSize: 3 });
    expect(page1.items.map((i) => i.title)).toEqual(['Heron scalar search, group only', 'Kestrel resonance search, secret rework', 'Osprey excited quark, preliminary']);
    expect(page2.items.map((i) => i.title)).toEqual(['Plover dilepton search, withdrawn']);
    expect(ids((await crew.viewer.agent.get('/api/results?sqrtS=14&state=draft')).body)).toEqual([r.draft.resultId]);
    expect((await crew.viewer.agent.get('/api/results?sqrtS=18&state=draft&q=osprey')).body.total).toBe(0);
    const bad = await crew.viewer.agent.get('/api/results?sort=colour&pageSize=1000');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.map((d: { field: string }) => d.field).sort()).toEqual(['query.pageSize', 'query.sort']);
  });
});

describe('permanent links and public routes', () => {
  const link = (v: ResultVersion, n: number) => `${v.slug}/v${n}`;

  test.each(['anonymous', 'member of another group'] as CallerName[])('%s opens public published versions and nothing else, on /api/results and /api/public', async (name) => {
    const agent = outsiders().find(([n]) => n === name)![1];
    const hidden = [link(r.priv, 1), link(r.draft, 1), link(r.pub, 3), link(r.pub, 9), 'no-such-result/v1'];
    for (const prefix of ['/api/results', '/api/public/results']) {
      for (const l of hidden) {
        for (const suffix of prefix === '/api/public/results' ? ['', '/export.csv', '/export.json'] : ['']) {
          const res = await agent.get(`${prefix}/${l}${suffix}`);
          expect([prefix, l, suffix, res.status]).toEqual([prefix, l, suffix, 404]);
          expect(res.body.error).toEqual({ code: 'not_found', message: 'Result not found' });
        }
      }
      const current = await agent.get(`${prefix}/${link(r.pub, 2)}`);
      expect(current.status).toBe(200);
      expect(current.body).toMatchObject({ version: 2, state: 'published', isPublic: true, meta: { title: 'Kestrel resonance search, open' } });
      expect(current.text).not.toMatch(/secret/i);
      const old = await agent.get(`${prefix}/${link(r.pub, 1)}`);
      expect(old.body).toMatchObject({ version: 1, state: 'superseded' });
      const retracted = await agent.get(`${prefix}/${link(r.retracted, 1)}`);
      expect(retracted.status).toBe(200);
      expect(retracted.body).toMatchObject({ state: 'retracted', retractionReason: REASON });
    }
    const csv = await agent.get(`/api/public/results/${link(r.pub, 2)}/export.csv`);
    expect(csv.status).toBe(200);
    expect(csv.text.split('\n')[0]).toMatch(/^m\(K\) \[GeV\],observed,expected/);
    const json = await agent.get(`/api/public/results/${link(r.pub, 2)}/export.json`);
    expect(json.body).toMatchObject({ format: 'bandwright-limit-result/1', meta: { title: 'Kestrel resonance search, open' } });
  });

  test('a member opens any version of their group by its link on /api/results, but /api/public stays public-only', async () => {
    const draft = await crew.viewer.agent.get(`/api/results/${link(r.pub, 3)}`);
    expect(draft.status).toBe(200);
    expect(draft.body).toMatchObject({ version: 3, state: 'draft', permalink: null });
    expect((await crew.viewer.agent.get(`/api/results/${link(r.priv, 1)}`)).status).toBe(200);
    expect((await crew.viewer.agent.get(`/api/public/results/${link(r.priv, 1)}`)).status).toBe(404);
    expect((await crew.viewer.agent.get(`/api/public/results/${link(r.pub, 3)}`)).status).toBe(404);
    // The other group's member opens their own draft, which the first group cannot.
    expect((await outsider.agent.get(`/api/results/${link(r.outsiders, 1)}`)).status).toBe(200);
    expect((await crew.owner.agent.get(`/api/results/${link(r.outsiders, 1)}`)).status).toBe(404);
  });

  test.each(['anonymous', 'member of another group'] as CallerName[])('%s: the public list and search show public published results only', async (name) => {
    const agent = outsiders().find(([n]) => n === name)![1];
    for (const qs of ['', '?q=search', '?q=Heron', '?q=secret', '?q=Osprey', '?q=withdrawn', '?page=2&pageSize=1']) {
      const res = await agent.get(`/api/public/results${qs}`);
      expect(res.status).toBe(200);
      expect(res.text).not.toMatch(/Heron|Osprey|secret|Wren/i);
    }
    const all = (await agent.get('/api/public/results')).body as ResultPage;
    expect(ids(all)).toEqual(PUBLIC_IDS());
    expect((await agent.get('/api/public/results?q=withdrawn')).body.items).toEqual([expect.objectContaining({ id: r.retracted.resultId, state: 'retracted' })]);
    // Members get the same public view there.
    expect(ids((await crew.owner.agent.get('/api/public/results')).body)).toEqual(PUBLIC_IDS());
  });

  test('making a result group-only hides it from outsiders at once', async () => {
    const res = await makeResult(crew.analyst, groupId, { meta: { title: 'Shrike limits, briefly public' } });
    await publishVersion(crew.curator, groupId, res.resultId, 1, true);
    expect((await request(t.app).get(`/api/public/results/${link(res, 1)}`)).status).toBe(200);
    await crew.curator.agent.patch(`/api/groups/${groupId}/results/${res.resultId}`).send({ public: false });
    expect((await request(t.app).get(`/api/public/results/${link(res, 1)}`)).status).toBe(404);
    expect((await request(t.app).get('/api/public/results?q=shrike')).body.total).toBe(0);
    expect((await outsider.agent.get('/api/results?q=shrike')).body.total).toBe(0);
    await crew.owner.agent.delete(`/api/groups/${groupId}/results/${res.resultId}`);
  });
});
