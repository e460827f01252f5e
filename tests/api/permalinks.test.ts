import request from 'supertest';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeCrew, makeGroupWithRoles, makeResult, makeVersion, publishVersion, type Crew } from '../helpers/factories';
import { figureSpec, makeFigure } from '../helpers/figures';
import type { PublicFigureDetail } from '@/shared/schemas/figure-views';
import type { ResultPage, ResultVersion } from '@/shared/schemas/results';

/**
 * Permanent links (`/r/<slug>` → the current version; a superseded version names the newer one),
 * the public figure page, search that reads Z′/Z'/Zprime and tt̄/ttbar alike, and the public
 * list's filters.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
const r = {} as Record<'zprime' | 'ttbar' | 'draftOnly' | 'retracted' | 'hidden', ResultVersion>;

beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
  ({ groupId } = await makeGroupWithRoles(t, { crew }));
  // v1 published then superseded by v2; v3 a draft on top.
  r.zprime = await makeResult(crew.analyst, groupId, { meta: { title: 'Halcyon Ring Z′ → ee search', parameterName: 'm(Z′)', sqrtS: 18, method: 'asymptotic' } });
  await publishVersion(crew.curator, groupId, r.zprime.resultId, 1, true);
  await makeVersion(crew.analyst, groupId, r.zprime.resultId, 'Full data', { title: 'Halcyon Ring Z′ → ee search', parameterName: 'm(Z′)', sqrtS: 18, method: 'asymptotic' });
  await publishVersion(crew.curator, groupId, r.zprime.resultId, 2);
  await makeVersion(crew.analyst, groupId, r.zprime.resultId, 'Rework', { title: 'Halcyon Ring Z′ → ee search', parameterName: 'm(Z′)', sqrtS: 18, method: 'asymptotic' });

  r.ttbar = await makeResult(crew.analyst, groupId, { meta: { title: 'Lanternfish tt̄ resonance search', model: 'Sequential \\mu-philic boson', parameterName: 'm(X)', sqrtS: 24, method: 'toys' } });
  await publishVersion(crew.curator, groupId, r.ttbar.resultId, 1, true);

  r.draftOnly = await makeResult(crew.analyst, groupId, { meta: { title: 'Osprey preliminary' } });
  expect((await crew.curator.agent.patch(`/api/groups/${groupId}/results/${r.draftOnly.resultId}`).send({ public: true })).status).toBe(200);

  r.retracted = await makeResult(crew.analyst, groupId, { meta: { title: 'Plover withdrawn' } });
  await publishVersion(crew.curator, groupId, r.retracted.resultId, 1, true);
  expect((await crew.curator.agent.post(`/api/groups/${groupId}/results/${r.retracted.resultId}/versions/1/retract`).send({ reason: 'Wrong luminosity block' })).status).toBe(200);

  r.hidden = await makeResult(crew.analyst, groupId, { meta: { title: 'Heron group-only Zprime' } });
  await publishVersion(crew.curator, groupId, r.hidden.resultId, 1, false);
}, 90_000);
afterAll(async () => t?.close());

const anon = () => request.agent(t.app);

describe('/r/<slug>: the current version', () => {
  test('the newest published version, for the public and for members (not the draft on top)', async () => {
    for (const url of [`/api/public/results/${r.zprime.slug}/latest`, `/api/results/${r.zprime.slug}/latest`]) {
      const res = await anon().get(url);
      expect([url, res.status]).toEqual([url, 200]);
      expect((res.body as ResultVersion).version).toBe(2);
      expect((res.body as ResultVersion).newerVersion).toBeNull();
    }
    const member = await crew.viewer.agent.get(`/api/results/${r.zprime.slug}/latest`);
    expect(member.body.version).toBe(2);
  });

  test('a group-only result: members get it, the public a plain 404', async () => {
    expect((await crew.viewer.agent.get(`/api/results/${r.hidden.slug}/latest`)).body.version).toBe(1);
    for (const url of [`/api/results/${r.hidden.slug}/latest`, `/api/public/results/${r.hidden.slug}/latest`]) {
      const res = await anon().get(url);
      expect([url, res.status, res.body.error.code]).toEqual([url, 404, 'not_found']);
      expect(res.text).not.toMatch(/Heron/);
    }
  });

  test('no published version: members and readers of a retracted one are told so; drafts stay unseen', async () => {
    const member = await crew.viewer.agent.get(`/api/results/${r.draftOnly.slug}/latest`);
    expect([member.status, member.body.error.code]).toEqual([404, 'not_published']);
    expect(member.body.error.message).toMatch(/no published version/);
    const outsider = await anon().get(`/api/public/results/${r.draftOnly.slug}/latest`);
    expect([outsider.status, outsider.body.error.code]).toEqual([404, 'not_found']);
    const retracted = await anon().get(`/api/public/results/${r.retracted.slug}/latest`);
    expect([retracted.status, retracted.body.error.code]).toEqual([404, 'not_published']);
  });

  test('bad and unknown slugs', async () => {
    const bad = await anon().get('/api/public/results/NOT%20A%20SLUG/latest');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('params.slug');
    expect((await anon().get('/api/results/no-such-result-zz999/latest')).status).toBe(404);
  });

  test('a superseded version names the newer published one; the newest names none', async () => {
    const v1 = await anon().get(`/api/public/results/${r.zprime.slug}/v1`);
    expect([v1.body.state, v1.body.newerVersion]).toEqual(['superseded', 2]);
    const v1Member = await crew.viewer.agent.get(`/api/results/${r.zprime.slug}/v1`);
    // The member also sees the v3 draft, which is not published: the newer version stays 2.
    expect(v1Member.body.newerVersion).toBe(2);
    expect((await anon().get(`/api/public/results/${r.zprime.slug}/v2`)).body.newerVersion).toBeNull();
  });
});

describe('search reads primes, bars and Greek names alike', () => {
  const titles = (page: ResultPage) => page.items.map((i) => i.title).sort();

  test.each([["Z'"], ['Z′'], ['Zprime'], ['z prime'], ['Z^{\\prime}']])('%s finds the Z′ result, on the public and the signed-in list', async (q) => {
    const pub = (await anon().get('/api/public/results').query({ q })).body as ResultPage;
    expect(titles(pub)).toEqual(['Halcyon Ring Z′ → ee search']);
    const mine = (await crew.viewer.agent.get('/api/results').query({ q })).body as ResultPage;
    expect(titles(mine)).toEqual(['Halcyon Ring Z′ → ee search', 'Heron group-only Zprime']);
  });

  test.each([['ttbar'], ['tt̄'], ['t\\bar{t}'], ['TTBAR'], ['mu-philic'], ['μ-philic']])('%s finds the tt̄ result', async (q) => {
    const pub = (await anon().get('/api/public/results').query({ q })).body as ResultPage;
    expect(titles(pub)).toEqual(['Lanternfish tt̄ resonance search']);
  });

  test('the search text is written with every version (and refreshed by a draft edit)', async () => {
    const draft = await makeResult(crew.analyst, groupId, { meta: { title: 'Kestrel draft' } });
    let list = (await crew.viewer.agent.get(`/api/groups/${groupId}/results`).query({ q: 'Wprime' })).body as ResultPage;
    expect(list.total).toBe(0);
    const edit = await crew.analyst.agent.patch(`/api/groups/${groupId}/results/${draft.resultId}/versions/1`).send({ meta: { ...draft.meta, title: "Kestrel W' draft" } });
    expect(edit.status).toBe(200);
    list = (await crew.viewer.agent.get(`/api/groups/${groupId}/results`).query({ q: 'Wprime' })).body as ResultPage;
    expect(list.items.map((i) => i.title)).toEqual(["Kestrel W' draft"]);
  });
});

describe('the public list has the signed-in list\'s filters', () => {
  test('parameter, √s, method and sort; published public results only', async () => {
    const get = async (query: Record<string, string>) => ((await anon().get('/api/public/results').query(query)).body as ResultPage).items.map((i) => i.title);
    expect(await get({ parameter: 'm(z′)' })).toEqual(['Halcyon Ring Z′ → ee search']);
    expect(await get({ sqrtS: '24' })).toEqual(['Lanternfish tt̄ resonance search']);
    expect(await get({ method: 'toys' })).toEqual(['Lanternfish tt̄ resonance search']);
    expect(await get({ sort: 'sqrtS' })).toEqual(['Lanternfish tt̄ resonance search', 'Halcyon Ring Z′ → ee search', 'Plover withdrawn']);
    expect(await get({ sort: 'title' })).toEqual(['Halcyon Ring Z′ → ee search', 'Lanternfish tt̄ resonance search', 'Plover withdrawn']);
  });

  test('bad filter values are a 400 naming the field; group and state are not public filters', async () => {
    for (const [key, value] of [['sqrtS', '-1'], ['method', 'guess'], ['sort', 'random']] as const) {
      const res = await anon().get('/api/public/results').query({ [key]: value });
      expect([key, res.status, res.body.error.details[0].field]).toEqual([key, 400, `query.${key}`]);
    }
    // Unknown keys are ignored as before: a state filter cannot reach drafts.
    const drafts = (await anon().get('/api/public/results').query({ state: 'draft' })).body as ResultPage;
    expect(drafts.items.every((i) => i.state !== 'draft')).toBe(true);
  });
});

describe('the public figure page', () => {
  test('title, group, caption and the public pins with their permanent links; private pins left out', async () => {
    const fig = await makeFigure(
      crew.editor,
      groupId,
      figureSpec([
        { resultId: r.zprime.resultId, version: 2 },
        { resultId: r.hidden.resultId, version: 1 },
      ], { title: 'Z′ limits <script>alert(1)</script>' }),
      true,
    );
    const res = await anon().get(`/api/public/figures/${fig.id}`);
    expect(res.status).toBe(200);
    const d = res.body as PublicFigureDetail;
    expect(d.title).toBe('Z′ limits <script>alert(1)</script>');
    expect(d.version).toBe(1);
    expect(d.permalink).toMatch(new RegExp(`/f/${fig.id}$`));
    expect(d.pins).toEqual([{ slug: r.zprime.slug, version: 2, title: 'Halcyon Ring Z′ → ee search', state: 'published', permalink: expect.stringMatching(new RegExp(`/r/${r.zprime.slug}/v2$`)) }]);
    expect(d.hiddenLayers).toBe(1);
    expect(d.caption).toMatch(/Halcyon Ring/);
    expect(res.text).not.toMatch(/Heron/);
  });

  test('a private figure and an unknown id are 404; a bad id a 400 naming it', async () => {
    const fig = await makeFigure(crew.editor, groupId, figureSpec([{ resultId: r.zprime.resultId, version: 2 }]), false);
    expect((await anon().get(`/api/public/figures/${fig.id}`)).status).toBe(404);
    expect((await crew.viewer.agent.get(`/api/public/figures/${fig.id}`)).status).toBe(404);
    expect((await anon().get('/api/public/figures/00000000-0000-4000-8000-000000000000')).status).toBe(404);
    const bad = await anon().get('/api/public/figures/not-a-uuid');
    expect([bad.status, bad.body.error.details[0].field]).toEqual([400, 'params.figureId']);
  });
});
