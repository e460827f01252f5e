/**
 * Scans over two parameters (issue 15, scans part): a grid of (x, y) points, one task per point on
 * the same queue, the draft a two-parameter version (a plane) whose contour lines the registry
 * derives. Every number is checked against the statistics engine run directly on the same counting
 * models (`computeScan`), the way tests/api/scans.test.ts checks one-parameter scans.
 */
import { startQueue } from '@/server/jobs/queue';
import { startScanWorkers } from '@/server/jobs/scan-worker';
import type { CountingModelInput } from '@/shared/schemas/counting-model';
import type { ScanDetail } from '@/shared/schemas/scan-views';
import { computeScan } from '@/shared/stats';
import { scanToCsv } from '@/shared/scans/csv';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, type Crew } from '../helpers/factories';

jest.setTimeout(180_000);

const META = { title: 'Fictional vector-partner plane', parameterName: 'm(V)', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic', yName: 'm(χ)', yUnit: 'GeV' };

/**
 * An invented plane: the background falls with m(V), the signal falls with m(V) and grows with
 * m(χ), so μ_up crosses 1 inside the grid. `skip` leaves cells out (holes).
 */
function plane(xs: number[], ys: number[], skip: (x: number, y: number) => boolean = () => false) {
  return xs.flatMap((m, k) =>
    ys.flatMap((my) => {
      if (skip(m, my)) return [];
      const b = [0, 1, 2].map((i) => 200 * Math.exp(-(m + 50 * i) / 800));
      const s = 4 * Math.exp(-(m - 1000) / 150) * (my / 200);
      const model: CountingModelInput = {
        observed: b.map((v, i) => Math.round(v * (1 + 0.05 * Math.sin(k + i + my)))),
        signal: b.map((_, i) => (2 + i) * s),
        backgrounds: [{ name: 'continuum', yields: b }],
        systematics: [{ name: 'luminosity', effects: { signal: 0.02, continuum: 0.02 } }],
      };
      return [{ x: m, y: my, sigmaNominal: 10 * Math.exp(-m / 1000), model }];
    }),
  );
}
const XS = [1000, 1100, 1200, 1300];
const YS = [100, 200, 300];

type PlaneBody = { yName: string; yUnit: string; x: number[]; y: number[]; observed: number[]; expected: Record<string, number[]>; theory?: { central: number[] } };

async function waitFor(agent: Crew['analyst']['agent'], groupId: string, scanId: string, done: (s: ScanDetail) => boolean, ms = 90_000) {
  const until = Date.now() + ms;
  for (;;) {
    const res = await agent.get(`/api/groups/${groupId}/scans/${scanId}`);
    if (done(res.body)) return res.body as ScanDetail;
    if (Date.now() > until) throw new Error(`scan did not get there: ${JSON.stringify({ state: res.body.state, done: res.body.donePoints, error: res.body.error })}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

/** Each stored point's observed σ×B limit equals the engine's for the same counting model. */
function expectEngineLimits(body: PlaneBody, points: ReturnType<typeof plane>) {
  const direct = computeScan(points);
  expect(body.x.length).toBe(points.length);
  body.x.forEach((x, k) => {
    const i = points.findIndex((p) => p.x === x && p.y === body.y[k]);
    expect(i).toBeGreaterThanOrEqual(0);
    const d = direct[i]!;
    if ('error' in d) throw new Error('engine failed');
    expect(body.observed[k]).toBeCloseTo(d.sigmaB!.observed, 8);
    expect(body.expected['0']![k]).toBeCloseTo(d.sigmaB!.expected['0']!, 8);
    expect(body.theory!.central[k]).toBeCloseTo(points[i]!.sigmaNominal, 12);
  });
}

describe('scans over two parameters', () => {
  let t: TestApp;
  let crew: Crew;
  let groupId: string;
  let stopWorkers: () => Promise<void>;
  const drafts: { resultId: string; version: number }[] = [];
  const scansUrl = () => `/api/groups/${groupId}/scans`;
  const countScans = async () => (await crew.analyst.agent.get(scansUrl())).body.length as number;

  beforeAll(async () => {
    t = await startTestApp({ JOB_MAINTENANCE_SECONDS: '1', JOB_EXPIRE_SECONDS: '30' });
    t.ctx.jobs = await startQueue(t.ctx.env);
    stopWorkers = await startScanWorkers(t.ctx, t.ctx.jobs, 1);
    ({ groupId, crew } = await makeGroupWithRoles(t));
  });
  afterAll(async () => {
    await stopWorkers?.();
    await t?.close();
  });

  test('JSON: every (x, y) is a task; the draft is a plane with the engine’s limits, theory per point and contour lines', async () => {
    const points = plane(XS, YS);
    // The invented grid is built so that the observed limit crosses the theory inside it.
    const mu = computeScan(points).map((r) => ('error' in r ? NaN : r.observed));
    expect(Math.min(...mu)).toBeLessThan(1);
    expect(Math.max(...mu)).toBeGreaterThan(1);

    const res = await crew.analyst.agent.post(scansUrl()).send({ points, options: { method: 'asymptotic' }, meta: META });
    expect(res.status).toBe(201);
    expect(res.body.totalPoints).toBe(12);
    expect(res.body.meta).toMatchObject({ yName: 'm(χ)', yUnit: 'GeV' });
    expect(res.body.points[5]).toMatchObject({ x: 1100, y: 300 });
    const done = await waitFor(crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    expect(done.donePoints).toBe(12);
    const version = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    expect(version.status).toBe(200);
    expect(version.body.state).toBe('draft');
    expect(version.body.curve).toBeNull();
    expect(version.body.meta.parameterName).toBe('m(V)');
    expect(version.body.meta).not.toHaveProperty('yName');
    const body = version.body.plane as PlaneBody;
    expect(body).toMatchObject({ yName: 'm(χ)', yUnit: 'GeV' });
    expectEngineLimits(body, points);
    expect(version.body.planeContours.observed.length).toBeGreaterThan(0);
    expect(version.body.planeContours.expected['0'].length).toBeGreaterThan(0);
    // The inputs download keeps y.
    const inputs = await crew.viewer.agent.get(`/api/groups/${groupId}/scans/${done.id}/inputs.json`);
    expect(inputs.body.points[0]).toMatchObject({ x: 1000, y: 100 });
    expect(inputs.body.meta.yName).toBe('m(χ)');
    drafts.push({ resultId: done.resultId!, version: done.resultVersion! });
  });

  test('CSV with x and y columns: rows with the same (x, y) are one point; failed points are holes', async () => {
    const points = plane(XS, YS);
    (points[4]!.model as { signal: number[] }).signal = [0, 0, 0]; // (1100, 200) fails in the engine
    const csv = scanToCsv(points);
    expect(csv.split('\n')[0]).toMatch(/^x,y,sigma_nominal,/);
    const res = await crew.analyst.agent
      .post(scansUrl())
      .attach('file', Buffer.from(csv), 'plane.csv')
      .field('meta', JSON.stringify(META))
      .field('options', JSON.stringify({ method: 'asymptotic' }));
    expect(res.status).toBe(201);
    expect(res.body.totalPoints).toBe(12);
    const done = await waitFor(crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    expect(done.failedPoints).toBe(1);
    expect(done.points.find((p) => p.index === 4)).toMatchObject({ x: 1100, y: 200, state: 'failed' });
    const version = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    const body = version.body.plane as PlaneBody;
    expect(body.x.length).toBe(11);
    expect(body.x.some((x, k) => x === 1100 && body.y[k] === 200)).toBe(false);
    expectEngineLimits(body, points.filter((_, i) => i !== 4));
    expect(version.body.meta.notes).toContain('1 grid point(s) failed and are not in the plane (holes)');
    expect(version.body.planeContours.observed).toBeDefined();
    drafts.push({ resultId: done.resultId!, version: done.resultVersion! });
  });

  test('too few points left for a grid: the scan fails with a clear error and no draft', async () => {
    const points = plane([1000, 1100], [100, 200]);
    for (const i of [1, 2]) (points[i]!.model as { signal: number[] }).signal = [0, 0, 0];
    const res = await crew.analyst.agent.post(scansUrl()).send({ points, options: {}, meta: META });
    expect(res.status).toBe(201);
    const end = await waitFor(crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'failed' || s.state === 'done');
    expect(end.state).toBe('failed');
    expect(end.error).toMatch(/Only 2 of 4 points could be computed and they do not form a grid/);
    expect(end.resultId).toBeNull();
  });

  test('grids that are not grids are refused before anything is queued, naming the field or line', async () => {
    const before = await countScans();
    const post = (points: unknown, meta: object = META) => crew.analyst.agent.post(scansUrl()).send({ points, options: {}, meta });
    const field = (r: { status: number; body: { error: { details: { field: string; message: string }[] } } }) => {
      expect(r.status).toBe(400);
      return r.body.error.details[0]!;
    };
    const base = plane(XS, YS);
    // A repeated point.
    expect(field(await post([...base, { ...base[3]! }]))).toMatchObject({ field: 'points.12.x', message: expect.stringContaining('repeat point 3') });
    // Off the grid: a point sharing neither its x nor its y with any other.
    expect(field(await post([...base, { ...base[0]!, x: 1450, y: 450 }]))).toMatchObject({ field: 'points.12.x', message: expect.stringContaining('off the grid') });
    // One row: a single y value is a one-parameter scan.
    expect(field(await post(plane(XS, [100])))).toMatchObject({ field: 'points', message: expect.stringContaining('only one distinct value') });
    // Not a grid: fewer than half of the cells its values span.
    const diagonal = plane([1000, 1100, 1200, 1300, 1400], [100, 200, 300, 400, 500], (x, y) => (x - 1000) / 100 !== (y - 100) / 100 && (x - 1000) / 100 !== (y - 100) / 100 + 1);
    expect(field(await post(diagonal))).toMatchObject({ field: 'points', message: expect.stringContaining('do not form a grid') });
    // More than 200 values on an axis.
    const wide = Array.from({ length: 201 }, (_, k) => k).flatMap((k) => [100, 200].map((y) => ({ x: 1000 + k, y, sigmaNominal: 1, model: base[0]!.model })));
    expect(field(await post(wide))).toMatchObject({ field: 'points', message: expect.stringContaining('at most 200') });
    // Some points with y, some without.
    expect(field(await post([...base.slice(0, 11), { ...base[11]!, y: undefined }]))).toMatchObject({ field: 'points.11.y' });
    // y without a name, and a name without y.
    const { yName: _n, yUnit: _u, ...oneParameterMeta } = META;
    expect(field(await post(base, oneParameterMeta))).toMatchObject({ field: 'meta.yName' });
    expect(field(await post(base.map(({ y: _y, ...p }) => p)))).toMatchObject({ field: 'points.0.y' });
    // A CSV repeating a point after another names the line.
    const csv = scanToCsv(plane([1000, 1100], [100, 200])).trimEnd().split('\n');
    const again = [...csv, csv[1]!].join('\n');
    const c = await crew.analyst.agent.post(scansUrl()).attach('file', Buffer.from(again), 'plane.csv').field('meta', JSON.stringify(META));
    expect(field(c)).toMatchObject({ field: `line ${csv.length + 1}, x`, message: expect.stringContaining('(x, y) = (1000, 100) appeared earlier') });
    expect(await countScans()).toBe(before);
  });

  test('a rerun point of a two-parameter scan is named (x, y) in the change note and the notes', async () => {
    const points = plane([1000, 1100], [100, 200]);
    const res = await crew.analyst.agent.post(scansUrl()).send({ points, options: { method: 'toys', toys: 100, seed: 3 }, meta: { ...META, method: 'toys' } });
    expect(res.status).toBe(201);
    const first = await waitFor(crew.analyst.agent, groupId, res.body.id, (s) => s.state === 'done');
    const again = await crew.analyst.agent.post(`${scansUrl()}/${first.id}/points/1/rerun`).send({ toys: 300 });
    expect(again.status).toBe(201);
    const second = await waitFor(crew.analyst.agent, groupId, again.body.id, (s) => s.state === 'done' && s.resultVersion === first.resultVersion! + 1);
    const version = (await crew.analyst.agent.get(`/api/groups/${groupId}/results/${second.resultId}/versions/${second.resultVersion}`)).body;
    expect(version.changeNote).toBe('Point (x, y) = (1000, 200) rerun with 300 pseudo-experiments');
    expect(version.meta.notes).toContain('100 per hypothesis ((x, y) = (1000, 200) with 300)');
  });

  test('a joint combination of two-parameter scans is refused, naming the input', async () => {
    expect(drafts.length).toBe(2);
    const r = await crew.analyst.agent.post(`/api/groups/${groupId}/combinations`).send({ inputs: drafts });
    expect(r.status).toBe(400);
    expect(r.body.error.details[0]).toMatchObject({ field: 'inputs.0', message: expect.stringContaining('two parameters') });
  });
});
