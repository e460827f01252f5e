import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroup, makePerson, publishVersion, sampleMeta, type Person } from '../helpers/factories';
import type { Curve, ResultVersion } from '@/shared/schemas/results';

/**
 * The best-expected envelope as a registry operation (POST /api/groups/:groupId/envelopes): a
 * draft result in the caller's group whose inputs are recorded and listed on its version, built
 * only from versions the group may build on (the one visibility rule's `pinning` reader).
 */

jest.setTimeout(60_000);

let t: TestApp;
let alice: Person;
let bob: Person;
let groupA: string;
let groupB: string;

/** A curve whose expected median is a·exp(−m/s) on the grid, with ±1σ/±2σ bands around it. */
type FullCurve = Curve & { observed: number[]; expected: Record<'-2' | '-1' | '0' | '1' | '2', number[]> };
function curveOf(x: number[], a: number, s: number): FullCurve {
  const r = (v: number) => Number(v.toPrecision(8));
  const exp = x.map((m) => r(a * Math.exp(-m / s)));
  return {
    x,
    observed: exp.map((e) => r(e * 1.1)),
    expected: { '-2': exp.map((e) => r(e * 0.55)), '-1': exp.map((e) => r(e * 0.75)), '0': exp, '1': exp.map((e) => r(e * 1.4)), '2': exp.map((e) => r(e * 1.9)) },
  };
}

async function upload(person: Person, groupId: string, curve: Curve, meta: Parameters<typeof sampleMeta>[0] = {}): Promise<ResultVersion> {
  const res = await person.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(meta), curve });
  if (res.status !== 201) throw new Error(`upload failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as ResultVersion;
}

const grid = (from: number, step: number, n: number) => Array.from({ length: n }, (_, i) => from + step * i);

beforeAll(async () => {
  t = await startTestApp();
  alice = await makePerson(t, 'Envelope Builder');
  bob = await makePerson(t, 'Other Group Owner');
  groupA = await makeGroup(t, alice);
  groupB = await makeGroup(t, bob);
});
afterAll(async () => t?.close());

test('two crossing inputs: each point names the input chosen, the switch sits at the crossing of the expected medians, inputs are listed on the version', async () => {
  // Expected medians 40·e^(−m/1500) and 80·e^(−m/1000) cross where m = 1000·1500/500·ln 2 = 3000 ln 2 ≈ 2079.4.
  const falling = await upload(alice, groupA, curveOf(grid(1000, 500, 7), 40, 1500), { title: 'Slowly falling search' });
  const steep = await upload(alice, groupA, curveOf(grid(1000, 500, 7), 80, 1000), { title: 'Steeply falling search' });
  const res = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({
    inputs: [
      { resultId: falling.resultId, version: 1 },
      { resultId: steep.resultId, version: 1 },
    ],
  });
  expect(res.status).toBe(201);
  const v = res.body as ResultVersion & { choice: { chosen: number[]; crossing: boolean[]; segments: { input: number; from: number; to: number }[] } };
  expect(v.state).toBe('draft');
  expect(v.meta.method).toBe('other');
  expect(v.meta.notes).toMatch(/Best expected of 2 inputs/);
  const cross = 3000 * Math.LN2;
  // (The inputs are rounded to 8 digits: the crossing moves by ~1e-8 · 3000 at most.)
  const at = v.curve!.x.findIndex((x) => Math.abs(x - cross) < 1e-3);
  expect(at).toBeGreaterThan(0);
  expect(v.choice.crossing[at]).toBe(true);
  // Below the crossing the slowly falling input is lower; above it the steep one.
  v.curve!.x.forEach((x, i) => {
    if (x < cross - 1e-3) expect(v.choice.chosen[i]).toBe(0);
    if (x > cross + 1e-3) expect(v.choice.chosen[i]).toBe(1);
  });
  expect(v.choice.segments.map((s) => s.input)).toEqual([0, 1]);
  // At an input's own grid point, the envelope reports that input's observed limit and band.
  const i3000 = v.curve!.x.indexOf(3000);
  expect(v.curve!.observed![i3000]).toBeCloseTo(80 * Math.exp(-3) * 1.1, 6);
  expect(v.curve!.expected!['1']![i3000]).toBeCloseTo(80 * Math.exp(-3) * 1.4, 6);

  const page = await alice.agent.get(`/api/groups/${groupA}/results/${v.resultId}/versions/1`);
  expect(page.status).toBe(200);
  expect(page.body.inputs).toEqual([
    expect.objectContaining({ position: 0, resultId: falling.resultId, version: 1, title: 'Slowly falling search', slug: falling.slug, latestPublished: null }),
    expect.objectContaining({ position: 1, resultId: steep.resultId, version: 1, title: 'Steeply falling search', slug: steep.slug }),
  ]);
});

test('another group\'s public published version may be an input; its draft, its group-only version and an unknown id are refused naming the input', async () => {
  const own = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 40, 1500));
  const pub = await upload(bob, groupB, curveOf(grid(1000, 500, 5), 60, 1200), { title: 'Public search of the other group' });
  await publishVersion(bob, groupB, pub.resultId, 1, true);
  const draft = await upload(bob, groupB, curveOf(grid(1000, 500, 5), 60, 1200));
  const hidden = await upload(bob, groupB, curveOf(grid(1000, 500, 5), 60, 1200));
  await publishVersion(bob, groupB, hidden.resultId, 1, false);

  const ok = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs: [{ resultId: own.resultId, version: 1 }, { resultId: pub.resultId, version: 1 }] });
  expect(ok.status).toBe(201);
  expect(ok.body.groupId ?? groupA).toBe(groupA);

  for (const other of [draft, hidden, { resultId: '00000000-0000-4000-8000-000000000000' }]) {
    const before = await alice.agent.get(`/api/groups/${groupA}/results`);
    const res = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs: [{ resultId: own.resultId, version: 1 }, { resultId: other.resultId, version: 1 }] });
    expect(res.status).toBe(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field)).toEqual(['inputs.1']);
    // The refusal does not say whether the version exists; and nothing was stored.
    expect(res.body.error.details[0].message).toMatch(/cannot be used by this group/);
    const after = await alice.agent.get(`/api/groups/${groupA}/results`);
    expect(after.body.total).toBe(before.body.total);
  }
});

test('units: an input in TeV and pb is converted onto the first input\'s GeV and fb; mixed quantities are refused naming the version', async () => {
  const gev = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 40, 1500), { title: 'In GeV and fb' });
  // The same expected curve in TeV and pb, scaled so that it is lower everywhere (so it is chosen).
  const tevCurve = curveOf(grid(1, 0.5, 5), 40 / 1000, 1.5);
  const scaled: Curve = { ...tevCurve, observed: tevCurve.observed.map((y) => y / 2), expected: Object.fromEntries(Object.entries(tevCurve.expected).map(([k, ys]) => [k, ys.map((y) => y / 2)])) as Curve['expected'] };
  const tev = await upload(alice, groupA, scaled, { title: 'In TeV and pb', parameterUnit: 'TeV', quantityUnit: 'pb' });
  const res = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs: [{ resultId: gev.resultId, version: 1 }, { resultId: tev.resultId, version: 1 }] });
  expect(res.status).toBe(201);
  expect(res.body.meta.parameterUnit).toBe('GeV');
  expect(res.body.meta.quantityUnit).toBe('fb');
  expect(res.body.curve.x).toEqual([1000, 1500, 2000, 2500, 3000]);
  expect(res.body.choice.chosen).toEqual([1, 1, 1, 1, 1]);
  // 1 pb = 1000 fb (common practice): half of the GeV input's expected median.
  res.body.curve.expected['0'].forEach((y: number, i: number) => expect(y).toBeCloseTo(20 * Math.exp(-(1000 + 500 * i) / 1500), 6));
  expect(res.body.meta.notes).toMatch(/Converted/);

  const mu = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 2, 1500), { quantity: 'mu', quantityUnit: '' });
  const mixed = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs: [{ resultId: gev.resultId, version: 1 }, { resultId: mu.resultId, version: 1 }] });
  expect(mixed.status).toBe(400);
  expect(mixed.body.error.details[0].field).toMatch(/^inputs\.1/);
});

test('bad bodies are refused naming the field', async () => {
  const one = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 40, 1500));
  const cases: [unknown, string][] = [
    [{}, 'inputs'],
    [{ inputs: [{ resultId: one.resultId, version: 1 }] }, 'inputs'],
    [{ inputs: Array.from({ length: 21 }, () => ({ resultId: one.resultId, version: 1 })) }, 'inputs'],
    [{ inputs: [{ resultId: one.resultId, version: 1 }, { resultId: 'nope', version: 1 }] }, 'inputs.1.resultId'],
    [{ inputs: [{ resultId: one.resultId, version: 1 }, { resultId: one.resultId, version: 99999999999 }] }, 'inputs.1.version'],
    [{ inputs: [{ resultId: one.resultId, version: 1 }, { resultId: one.resultId, version: 1 }] }, 'inputs.1'],
    [{ inputs: [{ resultId: one.resultId, version: 1 }, { resultId: one.resultId, version: 1 }], title: 'x'.repeat(201) }, 'title'],
  ];
  for (const [body, field] of cases) {
    const res = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send(body as object);
    expect([res.status, res.body.error?.details?.map((d: { field: string }) => d.field)]).toEqual([400, expect.arrayContaining([field])]);
  }
});

test('a newer published version of an input shows on the envelope; rebuilding adds version 2 and keeps version 1', async () => {
  const a = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 40, 1500), { title: 'Input that gets a new version' });
  const b = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 80, 1000));
  const env = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs: [{ resultId: a.resultId, version: 1 }, { resultId: b.resultId, version: 1 }] });
  expect(env.status).toBe(201);
  const v2 = await alice.agent.post(`/api/groups/${groupA}/results/${a.resultId}/versions`).send({ meta: sampleMeta({ title: 'Input that gets a new version' }), curve: curveOf(grid(1000, 500, 5), 30, 1500), changeNote: 'More data' });
  expect(v2.status).toBe(201);
  await publishVersion(alice, groupA, a.resultId, 2, true);
  const page = await alice.agent.get(`/api/groups/${groupA}/results/${env.body.resultId}/versions/1`);
  expect(page.body.inputs[0]).toEqual(expect.objectContaining({ version: 1, latestPublished: 2 }));

  const rebuilt = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ resultId: env.body.resultId, inputs: [{ resultId: a.resultId, version: 2 }, { resultId: b.resultId, version: 1 }] });
  expect(rebuilt.status).toBe(201);
  expect(rebuilt.body.version).toBe(2);
  expect(rebuilt.body.resultId).toBe(env.body.resultId);
  const old = await alice.agent.get(`/api/groups/${groupA}/results/${env.body.resultId}/versions/1`);
  expect(old.status).toBe(200);
  expect(old.body.inputs[0].version).toBe(1);
  const now = await alice.agent.get(`/api/groups/${groupA}/results/${env.body.resultId}/versions/2`);
  expect(now.body.inputs[0]).toEqual(expect.objectContaining({ version: 2, latestPublished: 2 }));
});

test('the envelope cannot be added as a version of another group\'s result', async () => {
  const theirs = await upload(bob, groupB, curveOf(grid(1000, 500, 5), 40, 1500));
  const a = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 40, 1500));
  const b = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 80, 1000));
  const res = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ resultId: theirs.resultId, inputs: [{ resultId: a.resultId, version: 1 }, { resultId: b.resultId, version: 1 }] });
  expect(res.status).toBe(404);
  const list = await bob.agent.get(`/api/groups/${groupB}/results/${theirs.resultId}/versions/2`);
  expect(list.status).toBe(404);
});

test('the preview computes the same envelope as building it, and stores nothing; its refusals are the same', async () => {
  const a = await upload(alice, groupA, curveOf(grid(1000, 500, 7), 40, 1500), { title: 'Preview input A' });
  const b = await upload(alice, groupA, curveOf(grid(1000, 500, 7), 80, 1000), { title: 'Preview input B' });
  const inputs = [{ resultId: a.resultId, version: 1 }, { resultId: b.resultId, version: 1 }];
  const before = (await alice.agent.get(`/api/groups/${groupA}/results`)).body.total;
  const preview = await alice.agent.post(`/api/groups/${groupA}/envelopes/preview`).send({ inputs });
  expect(preview.status).toBe(200);
  expect((await alice.agent.get(`/api/groups/${groupA}/results`)).body.total).toBe(before);
  expect(preview.body.inputs.map((i: { title: string }) => i.title)).toEqual(['Preview input A', 'Preview input B']);
  const built = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs });
  expect(built.status).toBe(201);
  expect(preview.body.curve).toEqual(built.body.curve);
  expect(preview.body.choice).toEqual(built.body.choice);

  const mu = await upload(alice, groupA, curveOf(grid(1000, 500, 5), 2, 1500), { quantity: 'mu', quantityUnit: '' });
  const refused = await alice.agent.post(`/api/groups/${groupA}/envelopes/preview`).send({ inputs: [inputs[0], { resultId: mu.resultId, version: 1 }] });
  expect(refused.status).toBe(400);
  expect(refused.body.error.details[0].field).toMatch(/^inputs\.1/);
  const tooFew = await alice.agent.post(`/api/groups/${groupA}/envelopes/preview`).send({ inputs: [inputs[0]] });
  expect([tooFew.status, tooFew.body.error.details[0].field]).toEqual([400, 'inputs']);
});

test('the envelope keeps which input it takes where; a figure layer draws its observed line by input (SVG and PNG render)', async () => {
  const a = await upload(alice, groupA, curveOf(grid(1000, 500, 7), 40, 1500), { title: 'Slow input for the figure' });
  const b = await upload(alice, groupA, curveOf(grid(1000, 500, 7), 80, 1000), { title: 'Steep input for the figure' });
  const env = await alice.agent.post(`/api/groups/${groupA}/envelopes`).send({ inputs: [{ resultId: a.resultId, version: 1 }, { resultId: b.resultId, version: 1 }] });
  expect(env.status).toBe(201);
  const data = await alice.agent.post(`/api/groups/${groupA}/layer-data`).send({ layers: [{ resultId: env.body.resultId, version: 1, hue: null }] });
  expect(data.status).toBe(200);
  expect(data.body.layers[0].sources).toEqual({ titles: ['Slow input for the figure', 'Steep input for the figure'], segments: env.body.choice.segments });
  const fig = await alice.agent.post(`/api/groups/${groupA}/figures`).send({
    spec: { title: 'Envelope by input', theme: 'publication', size: { preset: 'one-column' }, layers: [{ resultId: env.body.resultId, version: 1, observedColors: 'input' }] },
  });
  expect(fig.status).toBe(201);
  expect(fig.body.latest.spec.layers[0].observedColors).toBe('input');
  for (const format of ['svg', 'png']) {
    const r = await alice.agent.get(`/api/figures/${fig.body.id}/render.${format}`).buffer(true);
    expect([format, r.status]).toEqual([format, 200]);
  }
  const bad = await alice.agent.post(`/api/groups/${groupA}/figures`).send({ spec: { title: 'x', theme: 'publication', size: { preset: 'one-column' }, layers: [{ resultId: env.body.resultId, version: 1, observedColors: 'rainbow' }] } });
  expect(bad.status).toBe(400);
  expect(bad.body.error.details.map((d: { field: string }) => d.field)).toEqual(['spec.layers.0.observedColors']);
});
