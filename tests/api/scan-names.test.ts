/**
 * The scan input path (JSON body and CSV upload → queue → worker → draft) with process and
 * systematic names that are also properties of JavaScript objects: "constructor" and "toString"
 * are ordinary names, "__proto__" is refused by name (a scan CSV at upload, a JSON model when its
 * point is computed, as every model problem is).
 */
import { startQueue } from '@/server/jobs/queue';
import { startScanWorkers } from '@/server/jobs/scan-worker';
import type { CountingModelInput } from '@/shared/schemas/counting-model';
import type { ScanDetail } from '@/shared/schemas/scan-views';
import { computeScan } from '@/shared/stats';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, type Crew } from '../helpers/factories';

jest.setTimeout(120_000);

const META = { title: 'Fictional scan with awkward names', parameterName: 'm(S)', parameterUnit: 'GeV', quantity: 'mu', sqrtS: 18, luminosity: 140, method: 'asymptotic' };

/** Two grid points whose processes and systematics carry the given names. */
function points(bg: [string, string], syst: [string, string]) {
  return [1000, 1200].map((x, k) => {
    const model: CountingModelInput = {
      observed: [12 + k, 5],
      signal: [2, 1],
      backgrounds: [
        { name: bg[0], yields: [10.5, 4.1] },
        { name: bg[1], yields: [1.2, 0.6] },
      ],
      systematics: [
        { name: syst[0], effects: { [bg[0]]: [0.05, 0.1], signal: 0.02 } },
        { name: syst[1], effects: { [bg[1]]: 0.3 } },
      ],
    };
    return { x, model };
  });
}

describe('scan inputs with names like object properties', () => {
  let t: TestApp;
  let crew: Crew;
  let groupId: string;
  let stop: () => void;
  beforeAll(async () => {
    t = await startTestApp({ JOB_MAINTENANCE_SECONDS: '1' });
    t.ctx.jobs = await startQueue(t.ctx.env);
    stop = await startScanWorkers(t.ctx, t.ctx.jobs, 1);
    ({ groupId, crew } = await makeGroupWithRoles(t));
  });
  afterAll(async () => {
    stop?.();
    await t?.close();
  });

  async function finished(scanId: string): Promise<ScanDetail> {
    const until = Date.now() + 60_000;
    for (;;) {
      const res = await crew.analyst.agent.get(`/api/groups/${groupId}/scans/${scanId}`);
      if (res.body.state === 'done' || res.body.state === 'failed') return res.body as ScanDetail;
      if (Date.now() > until) throw new Error(`scan not finished: ${res.body.state}`);
      await new Promise((r) => setTimeout(r, 200));
    }
  }

  test('"constructor", "toString", "__proto__" (a systematic) are ordinary names: the draft has the limits of plain names', async () => {
    const odd = points(['constructor', 'toString'], ['__proto__', 'hasOwnProperty']);
    // Sent as JSON text so that "__proto__" arrives as an own key, as from any client.
    const res = await crew.analyst.agent
      .post(`/api/groups/${groupId}/scans`)
      .set('Content-Type', 'application/json')
      .send(JSON.stringify({ points: odd, options: {}, meta: META }));
    expect(res.status).toBe(201);
    const done = await finished(res.body.id);
    expect(done.failedPoints).toBe(0);
    const version = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${done.resultId}/versions/${done.resultVersion}`);
    // exact: renaming processes and systematics does not change a limit
    const plain = computeScan(points(['dijet', 'fakes'], ['shape', 'rate']));
    version.body.curve.observed.forEach((v: number, i: number) => {
      const p = plain[i]!;
      if ('error' in p) throw new Error('engine failed');
      expect(v).toBeCloseTo(p.observed, 10);
    });
    const point = await crew.analyst.agent.get(`/api/groups/${groupId}/scans/${done.id}/points/0`);
    expect(point.body.result.fit.pulls.map((p: { name: string }) => p.name)).toEqual(['__proto__', 'hasOwnProperty']);
  });

  test('an effect on "__proto__" in a JSON scan fails its point with the engine naming the field (never silently dropped)', async () => {
    const body = `{"points":[{"x":1000,"model":{"observed":[5],"signal":[1],"backgrounds":[{"name":"flat","yields":[4]}],"systematics":[{"name":"norm","effects":{"flat":0.1,"__proto__":[0.5]}}]}},
      {"x":1100,"model":{"observed":[5],"signal":[1],"backgrounds":[{"name":"flat","yields":[4]}]}},
      {"x":1200,"model":{"observed":[6],"signal":[1],"backgrounds":[{"name":"flat","yields":[4]}]}}],"options":{},"meta":${JSON.stringify(META)}}`;
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).set('Content-Type', 'application/json').send(body);
    expect(res.status).toBe(201);
    const done = await finished(res.body.id);
    const bad = done.points.find((p) => p.index === 0)!;
    expect(bad.state).toBe('failed');
    expect(bad.error).toEqual({ field: 'model.systematics[0].effects.__proto__', reason: expect.stringMatching(/"__proto__" cannot name a process/) });
    expect(done.state).toBe('done');
    expect(done.points.filter((p) => p.state === 'done').map((p) => p.index)).toEqual([1, 2]);
  });

  test('a scan CSV: "constructor" as a process is accepted; "__proto__" is refused at upload, naming the column', async () => {
    const ok = 'x,bin,observed,signal,background:constructor,systematic:toString:constructor\n1000,1,5,1,4,0.1\n1100,1,6,1,4.2,0.1\n';
    const a = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).attach('file', Buffer.from(ok), 'scan.csv').field('meta', JSON.stringify(META));
    expect(a.status).toBe(201);
    expect((await finished(a.body.id)).failedPoints).toBe(0);
    const bad = ok.replace(/constructor/g, '__proto__');
    const b = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).attach('file', Buffer.from(bad), 'scan.csv').field('meta', JSON.stringify(META));
    expect(b.status).toBe(400);
    expect(b.body.error.details).toEqual(
      expect.arrayContaining([{ field: 'background:__proto__', message: expect.stringMatching(/"__proto__" cannot name a process/) }]),
    );
  });
});
