import { and, eq } from 'drizzle-orm';
import request from 'supertest';
import { figureVersions } from '@/db/schema';
import type { FigureDetail } from '@/shared/schemas/figure-views';
import { figureSpecSchema, type FigureSpecInput } from '@/shared/schemas/figures';
import { startTestApp, type TestApp } from '../helpers/app';
import { figureSpec, makeFigure } from '../helpers/figures';
import { makeGroupWithRoles, makeResult, publishVersion, type Crew } from '../helpers/factories';

/**
 * A label cannot take the server down: TeX whose box no text could have (a 100 em tall rule, a
 * million em of space) is refused on saving with the field named, and a figure stored with one
 * (before that check) is refused at render time, before any renderer sees it. The renderers'
 * own crash containment is in render-pool.test.ts (unit) and below (a renderer killed mid-render).
 */

// The first labels wake the typesetter (MathJax) up.
jest.setTimeout(60_000);

let t: TestApp;
let crew: Crew;
let groupId: string;
let resultId: string;

const TALL = '$\\rule{1em}{100em}$';
const WIDE = '$\\hspace{1000000em}x$';

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  resultId = (await makeResult(crew.analyst, groupId, { meta: { title: 'Open dijet search' } })).resultId;
  await publishVersion(crew.curator, groupId, resultId, 1, true);
}, 90_000);
afterAll(async () => t?.close());

const layers = () => [{ resultId, version: 1 }];
const fields = (res: request.Response) => (res.body.error?.details ?? []).map((d: { field: string }) => d.field);

describe('labels larger than the page', () => {
  test('creating, saving, duplicating: refused with 400 naming the field', async () => {
    const cases: [Partial<FigureSpecInput>, string][] = [
      [{ y: { scale: 'log', label: TALL } }, 'spec.y.label'],
      [{ x: { scale: 'linear', label: WIDE } }, 'spec.x.label'],
      [{ annotations: [{ text: TALL, x: 0.2, y: 0.8 }] }, 'spec.annotations.0.text'],
    ];
    for (const [over, field] of cases) {
      const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: figureSpec(layers(), over), public: true });
      expect({ field, status: res.status }).toEqual({ field, status: 400 });
      expect(fields(res)).toEqual([field]);
      expect(res.body.error.message).toMatch(/when typeset/);
    }
    // Text PostgreSQL cannot store (found by the fuzz test: it was a 500) is refused by the schema.
    for (const [over, field] of [
      [{ x: { scale: 'linear', label: 'a\u0000b' } }, 'spec.x.label'],
      [{ title: 'Broken \ud800 half' }, 'spec.title'],
    ] as [Partial<FigureSpecInput>, string][]) {
      const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: figureSpec(layers(), over) });
      expect({ field, status: res.status }).toEqual({ field, status: 400 });
      expect(fields(res)).toEqual([field]);
      expect(res.body.error.details[0].message).toMatch(/control characters/);
    }
    const fig = await makeFigure(crew.editor, groupId, figureSpec(layers()));
    const legend = await crew.editor.agent.put(`/api/groups/${groupId}/figures/${fig.id}`).send({ spec: figureSpec([{ resultId, version: 1, label: WIDE }]) });
    expect(legend.status).toBe(400);
    expect(fields(legend)).toEqual(['spec.layers.0.label']);
    // The figure kept its version.
    expect(((await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).body as FigureDetail).version).toBe(1);
    // An ordinary long label is fine (it only sticks out; the composer warns).
    const long = await crew.editor.agent.put(`/api/groups/${groupId}/figures/${fig.id}`).send({ spec: figureSpec(layers(), { x: { scale: 'linear', label: 'A rather long axis title that is wider than a single journal column, in plain words' } }) });
    expect(long.status).toBe(200);
  });

  test('a figure stored with such a label is refused at render time (422, field named); the server goes on', async () => {
    const fig = await makeFigure(crew.editor, groupId, figureSpec(layers()), true);
    // As it would have been stored before the check existed.
    const hostile = figureSpecSchema.parse(figureSpec(layers(), { y: { scale: 'log', label: TALL } }));
    await t.ctx.db.update(figureVersions).set({ spec: hostile }).where(and(eq(figureVersions.figureId, fig.id), eq(figureVersions.version, 1)));
    for (const url of [`/api/public/figures/${fig.id}/render.png`, `/api/public/figures/${fig.id}/render.pdf`, `/api/public/figures/${fig.id}/render.svg`, `/api/figures/${fig.id}/render.png?dpi=150`]) {
      const res = await request(t.app).get(url);
      expect({ url, status: res.status }).toEqual({ url, status: 422 });
      expect(res.body.error.code).toBe('label_too_large');
      expect(fields(res)).toEqual(['spec.y.label']);
    }
    const ok = await makeFigure(crew.editor, groupId, figureSpec(layers()), true);
    expect((await request(t.app).get(`/api/public/figures/${ok.id}/render.png?dpi=72`)).status).toBe(200);
  });
});

describe('a renderer that dies mid-render', () => {
  test('the request gets a 500 naming the render; the figure is intact and the next render works', async () => {
    const fig = await makeFigure(crew.editor, groupId, figureSpec(layers(), { title: 'Slide for the crash test' }), true);
    const before = (await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).body as FigureDetail;
    // A large PNG keeps its renderer busy long enough to be caught at it.
    const url = `/api/figures/${fig.id}/render.png?size=slide&dpi=600`;
    const answer = crew.viewer.agent.get(url).then((r) => r);
    let busy: number[] = [];
    for (let i = 0; i < 2000 && busy.length === 0; i++) {
      await new Promise((r) => setTimeout(r, 10));
      busy = t.ctx.renderer.busyPids();
    }
    expect(busy).toHaveLength(1);
    // What a native abort in resvg does to the process it runs in.
    process.kill(busy[0]!, 'SIGABRT');
    const res = await answer;
    expect(res.status).toBe(500);
    expect(res.body.error.code).toBe('render_failed');
    expect(res.body.error.message).toMatch(/^The PNG render of figure “Slide for the crash test” \(version 1, 600 dpi\) failed: the renderer process stopped \(signal SIGABRT\)\. The figure itself is unchanged/);
    // Nothing was stored for it, the figure reads as before, the server answers, and a retry draws it.
    expect((await request(t.app).get('/api/health')).status).toBe(200);
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).body).toEqual(before);
    const retry = await crew.viewer.agent.get(url).buffer(true);
    expect(retry.status).toBe(200);
    expect(retry.headers['content-type']).toBe('image/png');
    expect(t.ctx.renderer.pids()).not.toContain(busy[0]);
  });
});
