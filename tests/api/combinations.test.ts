import { eq } from 'drizzle-orm';
import { results, scans } from '@/db/schema';
import { startQueue } from '@/server/jobs/queue';
import { startScanWorkers } from '@/server/jobs/scan-worker';
import { concatenateModels, unlinkedName } from '@/shared/combine/joint';
import { countingModelSchema, type CountingModelInput } from '@/shared/schemas/counting-model';
import type { ScanDetail } from '@/shared/schemas/scan-views';
import { computeScan } from '@/shared/stats';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroup, makeGroupWithRoles, makePerson, makeResult, type Crew, type Person } from '../helpers/factories';

/**
 * The joint combination (POST /api/groups/:groupId/combinations): scan-computed results combined
 * as independent channels, computed through the scan queue to a draft that records its inputs.
 * Invented channels of the fictional Halcyon Ring experiment.
 */

jest.setTimeout(120_000);

const META = { title: 'Fictional heavy scalar, jets channel', parameterName: 'm(S)', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic' };
const sigmaAt = (m: number) => 10 * Math.exp(-m / 1000);

/** A channel's grid from `from` in steps of 100 GeV; `flavour` changes its background and systematics. */
function channel(from: number, n: number, flavour: 'jets' | 'leptons', sigma = sigmaAt) {
  return Array.from({ length: n }, (_, k) => {
    const m = from + 100 * k;
    const b = flavour === 'jets' ? [200, 150, 90].map((v) => v * Math.exp(-m / 800)) : [30, 12].map((v) => v * Math.exp(-m / 1500));
    const model: CountingModelInput = {
      observed: b.map((v, i) => Math.round(v * (1 + 0.05 * Math.sin(k + i)))),
      signal: flavour === 'jets' ? [2, 3, 4] : [1.5, 2.5],
      backgrounds: [{ name: flavour === 'jets' ? 'multijet' : 'diboson', yields: b }],
      systematics:
        flavour === 'jets'
          ? [{ name: 'luminosity', effects: { signal: 0.02, multijet: 0.02 } }, { name: 'jet energy', effects: { multijet: 0.08 } }]
          : [{ name: 'luminosity', effects: { signal: 0.02, diboson: 0.02 } }, { name: 'lepton id', effects: { signal: 0.03 } }],
    };
    return { x: m, sigmaNominal: sigma(m), model };
  });
}

let t: TestApp;
let crew: Crew;
let groupId: string;
let bob: Person;
let groupB: string;
let stopWorkers: () => Promise<void>;

async function waitFor(agent: Person['agent'], gid: string, scanId: string, ms = 90_000): Promise<ScanDetail> {
  const until = Date.now() + ms;
  for (;;) {
    const res = await agent.get(`/api/groups/${gid}/scans/${scanId}`);
    if (res.body.state === 'done' && res.body.resultId) return res.body as ScanDetail;
    if (Date.now() > until) throw new Error(`scan did not finish: ${JSON.stringify({ state: res.body.state, done: res.body.donePoints })}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

async function scanResult(agent: Person['agent'], gid: string, points: ReturnType<typeof channel>, title: string) {
  const res = await agent.post(`/api/groups/${gid}/scans`).send({ points, options: {}, meta: { ...META, title } });
  if (res.status !== 201) throw new Error(`scan refused: ${JSON.stringify(res.body)}`);
  const done = await waitFor(agent, gid, res.body.id);
  return { resultId: done.resultId!, version: done.resultVersion!, points };
}

let jets: Awaited<ReturnType<typeof scanResult>>;
let leptons: Awaited<ReturnType<typeof scanResult>>;

beforeAll(async () => {
  t = await startTestApp({ JOB_MAINTENANCE_SECONDS: '1', JOB_EXPIRE_SECONDS: '30' });
  t.ctx.jobs = await startQueue(t.ctx.env);
  stopWorkers = await startScanWorkers(t.ctx, t.ctx.jobs, 1);
  ({ groupId, crew } = await makeGroupWithRoles(t));
  bob = await makePerson(t, 'Other Group Owner');
  groupB = await makeGroup(t, bob);
  jets = await scanResult(crew.analyst.agent, groupId, channel(1000, 6, 'jets'), 'Fictional heavy scalar, jets channel');
  leptons = await scanResult(crew.analyst.agent, groupId, channel(1100, 6, 'leptons'), 'Fictional heavy scalar, lepton channel');
});
afterAll(async () => {
  await stopWorkers?.();
  await t?.close();
});

const url = () => `/api/groups/${groupId}/combinations`;
const pin = (r: { resultId: string; version: number }) => ({ resultId: r.resultId, version: r.version });
const groupScans = async () => (await t.ctx.db.select({ id: scans.id }).from(scans).where(eq(scans.groupId, groupId))).length;
const groupResults = async () => (await t.ctx.db.select({ id: results.id }).from(results).where(eq(results.groupId, groupId))).length;

test('dry run: every nuisance parameter per input, the common grid and the values left out; nothing is stored', async () => {
  const before = [await groupScans(), await groupResults()];
  const res = await crew.analyst.agent.post(url()).send({ inputs: [pin(jets), pin(leptons)], dryRun: true });
  expect(res.status).toBe(200);
  expect(res.body.dryRun).toBe(true);
  const c = res.body.combination;
  expect(c.common).toEqual([1100, 1200, 1300, 1400, 1500]);
  expect(c.inputs.map((i: { missing: number[] }) => i.missing)).toEqual([[1000], [1600]]);
  expect(c.inputs.map((i: { nuisance: string[] }) => i.nuisance)).toEqual([
    ['luminosity', 'jet energy'],
    ['luminosity', 'lepton id'],
  ]);
  expect(c.shared).toEqual(['luminosity']);
  expect(c.quantity).toBe('xsec');
  expect([await groupScans(), await groupResults()]).toEqual(before);
});

test('an asymptotic combination runs through the queue to a draft equal, point by point, to the engine on the concatenated models', async () => {
  const res = await crew.analyst.agent.post(url()).send({ inputs: [pin(jets), pin(leptons)], title: 'Jets + leptons, fictional combination' });
  expect(res.status).toBe(201);
  expect(res.body.totalPoints).toBe(5);
  expect(res.body.combination.unlinked).toEqual([]);
  const done = await waitFor(crew.analyst.agent, groupId, res.body.id);
  const v = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
  expect(v.status).toBe(200);
  expect(v.body.state).toBe('draft');
  expect(v.body.meta.quantity).toBe('xsec');
  expect(v.body.meta.cl).toBe(0.95);
  expect(v.body.meta.notes).toMatch(/Joint combination of 2 inputs/);
  expect(v.body.meta.notes).toMatch(/fully correlated\): luminosity/);
  expect(v.body.inputs.map((i: { resultId: string }) => i.resultId)).toEqual([jets.resultId, leptons.resultId]);
  expect(v.body.fromScan.combination.common).toEqual([1100, 1200, 1300, 1400, 1500]);
  // The engine directly on the concatenated models (the definition of the combination).
  const at = (pts: ReturnType<typeof channel>, x: number) => countingModelSchema.parse(pts.find((p) => p.x === x)!.model);
  const direct = computeScan(v.body.curve.x.map((x: number) => ({ x, sigmaNominal: sigmaAt(x), model: concatenateModels([at(jets.points, x), at(leptons.points, x)]) })), { cl: 0.95 });
  expect(v.body.curve.x).toEqual([1100, 1200, 1300, 1400, 1500]);
  direct.forEach((d, i) => {
    if ('error' in d) throw new Error('engine failed');
    expect(v.body.curve.observed[i]).toBeCloseTo(d.sigmaB!.observed, 8);
    expect(v.body.curve.expected['0'][i]).toBeCloseTo(d.sigmaB!.expected['0'], 8);
  });
  // Stronger than either channel alone at a common point (common practice: adding independent data helps).
  const alone = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${jets.resultId}/versions/${jets.version}`);
  const k = alone.body.curve.x.indexOf(1300);
  expect(v.body.curve.expected['0'][2]).toBeLessThan(alone.body.curve.expected['0'][k]);

  // Unlinked: the choice is stored with the scan and its draft; the limit is the engine's on the renamed model.
  const un = await crew.analyst.agent.post(url()).send({ inputs: [pin(jets), pin(leptons)], unlinked: ['luminosity'] });
  expect(un.status).toBe(201);
  const unDone = await waitFor(crew.analyst.agent, groupId, un.body.id);
  const uv = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${unDone.resultId}/versions/${unDone.resultVersion}`);
  expect(uv.body.fromScan.combination.unlinked).toEqual(['luminosity']);
  expect(uv.body.meta.notes).toMatch(/Unlinked \(one parameter per input\): luminosity/);
  const point = await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${un.body.id}/points/0`);
  expect(point.body.model.systematics.map((s: { name: string }) => s.name)).toEqual([unlinkedName('luminosity', 0), 'jet energy', unlinkedName('luminosity', 1), 'lepton id']);
});

test('channels giving different nominal σ×B: the limit is on μ only, said in words', async () => {
  const other = await scanResult(crew.analyst.agent, groupId, channel(1100, 3, 'leptons', (m) => 2 * sigmaAt(m)), 'Fictional lepton channel, other benchmark');
  const res = await crew.analyst.agent.post(url()).send({ inputs: [pin(jets), pin(other)], dryRun: true });
  expect(res.status).toBe(200);
  expect(res.body.combination.quantity).toBe('mu');
  expect(res.body.combination.quantityNote).toMatch(/signal strength μ only/);
});

test('bad inputs are refused naming the field, and nothing is stored', async () => {
  const uploaded = await makeResult(crew.analyst, groupId, { meta: { title: 'Uploaded curve without counting models' } });
  const theirs = await scanResult(bob.agent, groupB, channel(1100, 3, 'jets'), "Another group's draft scan");
  const far = await scanResult(crew.analyst.agent, groupId, channel(3000, 3, 'jets'), 'Fictional jets channel far away');
  const before = [await groupScans(), await groupResults()];
  const cases: [object, string, RegExp][] = [
    [{ inputs: [pin(jets)] }, 'inputs', /at least 2/],
    [{ inputs: [pin(jets), { resultId: uploaded.resultId, version: 1 }] }, 'inputs.1', /no stored counting models/],
    [{ inputs: [pin(theirs), pin(jets)] }, 'inputs.0', /cannot be used by this group/],
    [{ inputs: [pin(jets), pin(far)] }, 'inputs', /no value of m\(S\) is in every input/],
    [{ inputs: [pin(jets), pin(leptons)], unlinked: ['no such parameter'] }, 'unlinked.0', /not a nuisance parameter/],
    [{ inputs: [pin(jets), pin(jets)] }, 'inputs.1', /listed twice/],
  ];
  for (const [body, field, message] of cases) {
    const res = await crew.analyst.agent.post(url()).send(body);
    expect([res.status, field]).toEqual([400, field]);
    expect(res.body.error.details).toEqual(expect.arrayContaining([expect.objectContaining({ field, message: expect.stringMatching(message) })]));
  }
  expect([await groupScans(), await groupResults()]).toEqual(before);
});

test("a combination is bounded like any scan: pseudo-experiments beyond the free plan's queue are refused, nothing stored", async () => {
  const before = [await groupScans(), await groupResults()];
  const res = await crew.analyst.agent.post(url()).send({ inputs: [pin(jets), pin(leptons)], options: { method: 'toys', toys: 1_000_000 } });
  expect(res.status).toBe(413);
  expect(res.body.error.code).toBe('scan_over_plan');
  expect(JSON.stringify(res.body.error.details)).toContain('options.toys');
  expect([await groupScans(), await groupResults()]).toEqual(before);
});
