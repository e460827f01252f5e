import request from 'supertest';
import { eq } from 'drizzle-orm';
import { DEMO_ENVELOPES } from '@/server/seed/seed-envelopes';
import { DEMO_RESULTS } from '@/server/seed/demo-results';
import { DEMO_GROUPS, DEMO_PASSWORD, DEMO_USERS, seedDemo } from '@/server/seed/seed';
import { devMail, figures, groups, results, resultVersions, user } from '@/db/schema';
import { startTestApp, TEST_ORIGIN, type TestApp } from '../helpers/app';
import type { ResultPage, ResultVersion } from '@/shared/schemas/results';

/**
 * The demo seed: invented results in every state for the demo groups, added once, also to a
 * database seeded before the registry existed (users and groups, no results).
 */

let t: TestApp;
let firstRun: { created: boolean };
beforeAll(async () => {
  t = await startTestApp();
  firstRun = await seedDemo(t.ctx);
}, 60_000);
afterAll(async () => t?.close());

async function signIn(email: string) {
  const agent = request.agent(t.app).set('Origin', TEST_ORIGIN);
  const res = await agent.post('/api/auth/sign-in/email').send({ email, password: DEMO_PASSWORD });
  expect(res.status).toBe(200);
  return agent;
}
const counts = async () => ({
  users: (await t.ctx.db.select().from(user)).length,
  groups: (await t.ctx.db.select().from(groups)).length,
  results: (await t.ctx.db.select().from(results)).length,
  storage: (await t.ctx.db.select({ b: groups.storageBytes }).from(groups)).map((g) => g.b).sort(),
});

test('the seed adds the demo world once; a second run changes nothing', async () => {
  expect(firstRun).toEqual({ created: true });
  const first = await counts();
  expect(first).toMatchObject({ users: DEMO_USERS.length, groups: DEMO_GROUPS.length, results: DEMO_RESULTS.length + DEMO_ENVELOPES.length });
  expect(await seedDemo(t.ctx)).toEqual({ created: false });
  expect(await counts()).toEqual(first);
});

test('the demo people have verified addresses (they may accept invitations at once) and were sent no verification mail', async () => {
  const people = await t.ctx.db.select({ email: user.email, verified: user.emailVerified }).from(user);
  expect(people.map((p) => p.email).sort()).toEqual(DEMO_USERS.map((u) => u.email).sort());
  expect(people.every((p) => p.verified)).toBe(true);
  expect((await t.ctx.db.select().from(devMail)).filter((m) => m.kind === 'verification')).toEqual([]);
  const me = await (await signIn(DEMO_USERS[0].email)).get('/api/me');
  expect(me.body.user).toMatchObject({ email: DEMO_USERS[0].email, emailVerified: true });
});

test('the demo results cover every state, with bands, theory and derived exclusions', async () => {
  const analyst = await signIn('anouk@lanternfish.example');
  const mine = (await analyst.get('/api/results?pageSize=50')).body as ResultPage;
  // The envelope of the combination board is the second draft.
  expect(mine.items.map((i) => i.state).sort()).toEqual(['draft', 'draft', 'published', 'published', 'published', 'published', 'retracted']);

  const vprime = mine.items.find((i) => i.title.startsWith('Search for a heavy vector boson'))!;
  const detail = (await analyst.get(`/api/groups/${vprime.groupId}/results/${vprime.id}`)).body;
  expect(detail.versions.map((v: { state: string }) => v.state)).toEqual(['published', 'superseded']);
  expect(detail.versions[0].changeNote).toMatch(/96\.5 fb⁻¹/);
  const v2 = (await analyst.get(`/api/groups/${vprime.groupId}/results/${vprime.id}/versions/2`)).body as ResultVersion;
  expect(v2.curve!.x).toHaveLength(30);
  expect(Object.keys(v2.curve!.expected!).sort()).toEqual(['-1', '-2', '0', '1', '2']);
  expect(v2.theory?.lower).toHaveLength(30);
  // More data, stronger exclusion: the observed range of v2 ends beyond that of v1.
  const v1 = (await analyst.get(`/api/groups/${vprime.groupId}/results/${vprime.id}/versions/1`)).body as ResultVersion;
  const end = (v: ResultVersion) => v.exclusion.ranges!.observed!.at(-1)!.to;
  expect(end(v1)).toBeGreaterThan(3);
  expect(end(v2)).toBeGreaterThan(end(v1));
  expect(end(v2)).toBeLessThan(6.8);
  expect(v2.sourceFile?.name).toBe('vprime-dijet-18tev-lf7q2-v2.csv');

  // The μ result without theory says why there is no exclusion.
  const scalar = mine.items.find((i) => i.quantity === 'mu' && !i.isPublic)!;
  const s1 = (await analyst.get(`/api/groups/${scalar.groupId}/results/${scalar.id}/versions/1`)).body as ResultVersion;
  expect(s1.exclusion).toEqual({ ranges: null, problem: expect.stringContaining('No theory curve') });

  // Anyone sees the public ones, with the retraction reason; never the draft or the group-only result.
  const open = (await request(t.app).get('/api/public/results')).body as ResultPage;
  expect(open.items.map((i) => i.title).sort()).toEqual([
    'Combined limits on the V′ benchmark from dijet and dilepton searches',
    'Search for a heavy charged boson W* → tb',
    'Search for a heavy vector boson V′ → two jets',
    'Summary of signal-strength limits on the Heron portal scalar',
  ]);
  const retracted = await request(t.app).get('/api/public/results/charged-boson-tb-18tev-lf5w1/v1');
  expect(retracted.body.retractionReason).toMatch(/applied twice/);
  expect((await request(t.app).get('/api/public/results/vprime-dijet-18tev-lf7q2/v2')).status).toBe(200);
});

test('a database seeded before the registry (users and groups, no results) gets the results once', async () => {
  // Nor figures (they pin results, which cannot be deleted under them).
  await t.ctx.db.delete(figures);
  await t.ctx.db.delete(results);
  await t.ctx.db.update(groups).set({ storageBytes: 0 });
  const before = await counts();
  expect(before.results).toBe(0);
  expect(await seedDemo(t.ctx)).toEqual({ created: true });
  const after = await counts();
  expect(after).toMatchObject({ users: before.users, groups: before.groups, results: DEMO_RESULTS.length + DEMO_ENVELOPES.length });
  expect(after.storage.some((b) => b > 0)).toBe(true);
  expect(await seedDemo(t.ctx)).toEqual({ created: false });
  expect((await t.ctx.db.select().from(results).where(eq(results.slug, DEMO_RESULTS[0]!.slug))).length).toBe(1);
});

test('the combination board holds a best-expected envelope of the dijet search (another group\'s public result) and its own combination, with the inputs recorded', async () => {
  const agent = await signIn('anouk@lanternfish.example');
  const [row] = await t.ctx.db.select({ id: results.id, groupId: results.groupId }).from(results).innerJoin(resultVersions, eq(resultVersions.resultId, results.id)).where(eq(resultVersions.title, DEMO_ENVELOPES[0].title));
  expect(row).toBeDefined();
  const v = await agent.get(`/api/groups/${row!.groupId}/results/${row!.id}/versions/1`);
  expect(v.status).toBe(200);
  expect(v.body.state).toBe('draft');
  expect(v.body.inputs.map((i: { slug: string }) => i.slug)).toEqual([...DEMO_ENVELOPES[0].inputs]);
  expect(v.body.meta.notes).toMatch(/^Best expected of 2 inputs/);
});
