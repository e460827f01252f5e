import request from 'supertest';
import { eq } from 'drizzle-orm';
import { DEMO_ENVELOPES } from '@/server/seed/seed-envelopes';
import { DEMO_PLANE } from '@/server/seed/seed-planes';
import { DEMO_RESULTS } from '@/server/seed/demo-results';
import { DEMO_COMBINATIONS, DEMO_SCANS } from '@/server/seed/seed-scans';
import { DEMO_GROUPS, DEMO_PASSWORD, DEMO_USERS, seedDemo } from '@/server/seed/seed';
import { devMail, figures, groups, results, resultVersions, scans, user } from '@/db/schema';
import { startTestApp, TEST_ORIGIN, type TestApp } from '../helpers/app';
import type { ResultPage, ResultVersion } from '@/shared/schemas/results';

/**
 * The demo seed: invented results in every state for the demo groups, added once, also to a
 * database seeded before the registry existed (users and groups, no results).
 */

/** Every result the seed adds: uploaded, envelopes, computed by scans, joint combinations. */
// The demo results, the envelope, the scans, the combination and the two-parameter search.
const SEEDED_RESULTS = DEMO_RESULTS.length + DEMO_ENVELOPES.length + DEMO_SCANS.length + DEMO_COMBINATIONS.length + 1;

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
  expect(first).toMatchObject({ users: DEMO_USERS.length, groups: DEMO_GROUPS.length, results: SEEDED_RESULTS });
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

test('the demo holds a public two-parameter search with its forbidden triangle left out and its contours derived', async () => {
  const version = (await request(t.app).get(`/api/public/results/${DEMO_PLANE.slug}/v1`)).body as ResultVersion;
  expect(version.plane).not.toBeNull();
  const plane = version.plane!;
  // No point in the triangle m(χ) > m(Z̃) − 0.1 TeV; a 21 × 21 grid with holes.
  expect(plane.x.every((x, i) => plane.y[i]! <= x - 0.1 + 1e-9)).toBe(true);
  expect(new Set(plane.x).size).toBe(21);
  expect(new Set(plane.y).size).toBe(21);
  // The observed and expected contours where the limit meets the theory exist.
  expect(version.planeContours!.observed!.length).toBeGreaterThan(0);
  expect(version.planeContours!.expected['0']!.length).toBeGreaterThan(0);
});

test('the demo results cover every state, with bands, theory and derived exclusions', async () => {
  const analyst = await signIn('anouk@lanternfish.example');
  const mine = (await analyst.get('/api/results?pageSize=50')).body as ResultPage;
  // The envelope and the joint combination of the combination board are the second and third drafts;
  // the two scan-computed channels and the two-parameter search are published.
  expect(mine.items.map((i) => i.state).sort()).toEqual(['draft', 'draft', 'draft', 'published', 'published', 'published', 'published', 'published', 'published', 'published', 'retracted']);

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

  // The μ result without theory is read against μ = 1: excluded where its limit is below 1
  // (common practice), here from the grid's lower edge up.
  const scalar = mine.items.find((i) => i.quantity === 'mu' && !i.isPublic)!;
  const s1 = (await analyst.get(`/api/groups/${scalar.groupId}/results/${scalar.id}/versions/1`)).body as ResultVersion;
  expect(s1.theory).toBeNull();
  expect(s1.exclusion.problem).toBeNull();
  const observed = s1.exclusion.ranges!.observed!;
  expect(observed).toHaveLength(1);
  const x = s1.curve!.x;
  const mu = s1.curve!.observed!;
  const k = mu.findIndex((v) => v >= 1);
  expect(observed[0]).toMatchObject({ from: x[0], fromOpen: true });
  // The crossing lies between the last grid point below 1 and the first at or above it.
  expect(observed[0]!.to).toBeGreaterThanOrEqual(x[k - 1]!);
  expect(observed[0]!.to).toBeLessThanOrEqual(x[k]!);

  // Anyone sees the public ones, with the retraction reason; never the draft or the group-only result.
  const open = (await request(t.app).get('/api/public/results')).body as ResultPage;
  expect(open.items.map((i) => i.title).sort()).toEqual([
    'Combined limits on the V′ benchmark from dijet and dilepton searches',
    'Search for a heavy axial boson A′ → bb̄, two b-tagged jets',
    'Search for a heavy axial boson A′ → two light jets',
    'Search for a heavy charged boson W* → tb',
    'Search for a heavy partner Z̃ → jets + invisible χ, over the two masses',
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
  expect(after).toMatchObject({ users: before.users, groups: before.groups, results: SEEDED_RESULTS });
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

test('the combination board holds a joint combination of the two scan-computed A′ channels: inputs and correlation choice recorded, stronger than either channel', async () => {
  const demo = DEMO_COMBINATIONS[0];
  const agent = await signIn(demo.author);
  const [row] = await t.ctx.db.select({ id: results.id, groupId: results.groupId }).from(results).innerJoin(resultVersions, eq(resultVersions.resultId, results.id)).where(eq(resultVersions.title, demo.title));
  expect(row).toBeDefined();
  const v = (await agent.get(`/api/groups/${row!.groupId}/results/${row!.id}/versions/1`)).body as ResultVersion;
  // Left a draft, as the board's envelope is.
  expect(v.state).toBe('draft');
  expect(v.meta).toMatchObject({ quantity: 'xsec', quantityUnit: 'fb', method: 'asymptotic', cl: 0.95 });
  expect(v.meta.notes).toMatch(/^Joint combination of 2 inputs/);
  expect(v.meta.notes).toMatch(/fully correlated\): luminosity, jet energy scale/);
  expect(v.meta.notes).toMatch(/Unlinked \(one parameter per input\): multijet background/);

  // Its inputs are the two demo scans' results (published, public, computed by their scans).
  expect(v.inputs!.map((i) => i.title)).toEqual(DEMO_SCANS.map((s) => s.meta.title));
  const inputs = await Promise.all(
    v.inputs!.map(async (i) => {
      const res = await request(t.app).get(`/api/public/results/${i.slug}/v${i.version}`);
      expect(res.status).toBe(200);
      return res.body as ResultVersion;
    }),
  );
  const inputScans = await t.ctx.db.select({ resultId: scans.resultId, state: scans.state }).from(scans);
  for (const [k, input] of v.inputs!.entries()) {
    expect(inputs[k]!.state).toBe('published');
    expect(inputScans).toContainEqual({ resultId: input.resultId, state: 'done' });
  }
  // The plan stored with its scan: inputs, the correlation choice, the common grid.
  const plan = v.fromScan!.combination!;
  expect(plan.inputs.map((i) => [i.resultId, i.version])).toEqual(v.inputs!.map((i) => [i.resultId, i.version]));
  expect(plan.unlinked).toEqual([...demo.unlinked]);
  expect(plan.shared).toEqual(expect.arrayContaining(['luminosity', 'jet energy scale']));
  expect(plan.common).toEqual([2, 2.5, 3, 3.5, 4, 4.5]);
  expect(v.curve!.x).toEqual(plan.common);

  // Finite everywhere, and at every common point below each channel's own expected limit (common
  // practice: adding an independent channel strengthens the limit).
  const median = (c: ResultVersion['curve'], x: number) => c!.expected!['0']![c!.x.indexOf(x)]!;
  for (const x of plan.common) {
    const combined = median(v.curve, x);
    expect(Number.isFinite(combined)).toBe(true);
    expect(combined).toBeGreaterThan(0);
    for (const input of inputs) expect(combined).toBeLessThan(median(input.curve, x));
  }
  expect(v.curve!.observed!.every(Number.isFinite)).toBe(true);
});
