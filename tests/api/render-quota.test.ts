import fs from 'node:fs';
import path from 'node:path';
import { eq, sql } from 'drizzle-orm';
import request from 'supertest';
import * as storageQueries from '@/db/queries/storage';
import { figureRenders, groups } from '@/db/schema';
import { FREE_PLAN } from '@/shared/plans';
import { OFFERED_DPIS } from '@/shared/schemas/figures';
import { startTestApp, type TestApp } from '../helpers/app';
import { figureSpec, makeFigure } from '../helpers/figures';
import { makeGroupWithRoles, makeResult, publishVersion, registryProbe, sampleCurve, sampleMeta, type Crew } from '../helpers/factories';

/**
 * Anonymous visitors cannot fill a group's storage with renders: cached renders never count
 * toward what a group stores (they are bounded by the plan's render cache instead), the public
 * may only ask for the sizes a figure offers (400 naming the field otherwise), and renders for
 * callers who are not signed in are rate-limited per address (RENDER_RATE_LIMIT).
 */

jest.setTimeout(120_000);

let t: TestApp;
let crew: Crew;
let groupId: string;
let resultId: string;

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  resultId = (await makeResult(crew.analyst, groupId, { meta: { title: 'Open dijet search' } })).resultId;
  await publishVersion(crew.curator, groupId, resultId, 1, true);
}, 90_000);
afterAll(async () => t?.close());

const storage = () => registryProbe.storageBytes(t, groupId);
const setStorage = (bytes: number) => t.ctx.db.update(groups).set({ storageBytes: bytes }).where(eq(groups.id, groupId));
const upload = () => {
  const { curve, theory } = sampleCurve();
  return crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta({ title: 'Upload at the quota edge' }), curve, theory });
};

describe('renders do not count toward storage', () => {
  test('many anonymous GETs of every offered size leave storage as it was; a member’s upload at the quota edge still fits', async () => {
    // The size of the member's upload, measured on a first one.
    const before = await storage();
    expect((await upload()).status).toBe(201);
    const uploadBytes = (await storage()) - before;
    expect(uploadBytes).toBeGreaterThan(0);
    // Room for one more such upload, and 1 MB that renders could fill if they counted.
    const slack = 1024 * 1024;
    const start = FREE_PLAN.quotaBytes - uploadBytes - slack;
    await setStorage(start);

    const figures = await Promise.all([1, 2, 3].map((i) => makeFigure(crew.editor, groupId, figureSpec([{ resultId, version: 1 }], { title: `Public figure ${i}`, size: { preset: i === 3 ? 'slide' : 'one-column' } }), true)));
    const urls = figures.flatMap((f) => [
      `/api/public/figures/${f.id}/render.svg`,
      `/api/public/figures/${f.id}/render.pdf`,
      ...OFFERED_DPIS.map((dpi) => `/api/public/figures/${f.id}/render.png?dpi=${dpi}`),
      ...OFFERED_DPIS.map((dpi) => `/api/figures/${f.id}/render.png?dpi=${dpi}`),
      `/api/public/figures/${f.id}/render.png?version=1&dpi=300`,
    ]);
    let got = 0;
    for (let round = 0; round < 3; round++) {
      for (const url of urls) {
        const res = await request(t.app).get(url).buffer(true);
        expect({ url, status: res.status }).toEqual({ url, status: 200 });
        got++;
      }
    }
    expect(got).toBeGreaterThanOrEqual(84);
    // The renders are cached (not drawn anew each time) but are not the group's stored bytes.
    const cached = await t.ctx.db.select({ bytes: figureRenders.byteLength }).from(figureRenders);
    expect(cached.length).toBeGreaterThan(0);
    expect(await storage()).toBe(start);
    // More than the room there was: had they counted, the upload below would be refused.
    const rendersBytes = cached.reduce((n, r) => n + r.bytes, 0);
    expect(rendersBytes).toBeGreaterThan(slack);
    const plan = (await crew.viewer.agent.get(`/api/groups/${groupId}/plan`)).body;
    expect(plan.usage.totalBytes).toBe(start);
    expect(plan.usage.rendersBytes).toBe(rendersBytes);
    // The member's upload still fits.
    expect((await upload()).status).toBe(201);
    expect(await storage()).toBe(start + uploadBytes);
    // The quota itself is untouched: at the very edge the same upload is refused.
    await setStorage(FREE_PLAN.quotaBytes - uploadBytes + 1);
    expect((await upload()).status).toBe(413);
    await setStorage(before);
  });

  test('the render cache is bounded by the plan: beyond its bytes the least recently used renders go', async () => {
    const fig = await makeFigure(crew.editor, groupId, figureSpec([{ resultId, version: 1 }], { title: 'Cache bound' }), true);
    for (const f of ['svg', 'pdf', 'png?dpi=72']) expect((await request(t.app).get(`/api/public/figures/${fig.id}/render.${f}`).buffer(true)).status).toBe(200);
    const rows = await t.ctx.db.select().from(figureRenders).where(eq(figureRenders.figureId, fig.id));
    expect(rows).toHaveLength(3);
    // Oldest use first: svg, then pdf, then png.
    const order = ['svg', 'pdf', 'png'];
    for (const row of rows) await t.ctx.db.execute(sql`update figure_renders set last_used_at = now() + make_interval(secs => ${order.indexOf(row.format)}) where id = ${row.id}`);
    const byFormat = Object.fromEntries(rows.map((row) => [row.format, row.byteLength]));
    // Room for the two most recent of this figure (other figures' renders are older and go first).
    const freed = await t.ctx.db.transaction((tx) => storageQueries.evictRenders(tx, groupId, { maxRenders: 100, maxBytes: byFormat.png! + byFormat.pdf!, maxAgeDays: 7 }));
    expect(freed).toBeGreaterThanOrEqual(byFormat.svg!);
    const left = (await t.ctx.db.select({ format: figureRenders.format }).from(figureRenders).where(eq(figureRenders.figureId, fig.id))).map((r) => r.format).sort();
    expect(left).toEqual(['pdf', 'png']);
  });

  test('the migration takes the cached renders’ bytes out of a counter that held them', async () => {
    const file = fs.readdirSync(path.resolve(__dirname, '../../db/migrations')).find((f) => f.endsWith('_renders-not-counted.sql'))!;
    const text = fs.readFileSync(path.resolve(__dirname, '../../db/migrations', file), 'utf8');
    const renders = Number((await t.ctx.db.execute<{ n: string }>(sql`select coalesce(sum(fr.byte_length), 0) as n from figure_renders fr join figures f on f.id = fr.figure_id where f.group_id = ${groupId}`)).rows[0]!.n);
    expect(renders).toBeGreaterThan(0);
    const now = await storage();
    await setStorage(now + renders);
    await t.ctx.db.execute(sql.raw(text));
    expect(await storage()).toBe(now);
  });
});

describe('the public gets the sizes a figure offers', () => {
  test('other sizes and resolutions are refused with 400 naming the field; members may ask for them', async () => {
    const fig = await makeFigure(crew.editor, groupId, figureSpec([{ resultId, version: 1 }], { title: 'Offered sizes' }), true);
    const refused: [string, string][] = [
      [`/api/public/figures/${fig.id}/render.png?dpi=151`, 'query.dpi'],
      [`/api/public/figures/${fig.id}/render.png?dpi=1200`, 'query.dpi'],
      [`/api/public/figures/${fig.id}/render.svg?size=slide`, 'query.size'],
      [`/api/public/figures/${fig.id}/render.pdf?size=two-column`, 'query.size'],
      [`/api/figures/${fig.id}/render.png?dpi=151`, 'query.dpi'],
      [`/api/figures/${fig.id}/render.svg?size=web`, 'query.size'],
    ];
    for (const [url, field] of refused) {
      const res = await request(t.app).get(url);
      expect({ url, status: res.status }).toEqual({ url, status: 400 });
      expect(res.body.error.details).toEqual([expect.objectContaining({ field })]);
    }
    // The figure's own size, named or not, and an offered dpi are fine.
    expect((await request(t.app).get(`/api/public/figures/${fig.id}/render.svg?size=one-column`)).status).toBe(200);
    // Another group's member is the public too.
    const outsider = await makeGroupWithRoles(t);
    expect((await outsider.crew.owner.agent.get(`/api/figures/${fig.id}/render.png?dpi=151`)).status).toBe(400);
    // Members draw any preset at any resolution (not kept when unusual).
    const member = await crew.viewer.agent.get(`/api/figures/${fig.id}/render.png?size=slide&dpi=151`).buffer(true);
    expect(member.status).toBe(200);
    expect(member.headers['x-render-cache']).toBe('uncached');
  });
});

describe('anonymous renders are rate-limited per address', () => {
  let low: TestApp;
  afterAll(async () => low?.close());

  test('past RENDER_RATE_LIMIT a minute: 429 for anonymous callers; members go on', async () => {
    low = await startTestApp({ RENDER_RATE_LIMIT: '3' });
    const g = await makeGroupWithRoles(low);
    const rid = (await makeResult(g.crew.analyst, g.groupId)).resultId;
    await publishVersion(g.crew.curator, g.groupId, rid, 1, true);
    const fig = await makeFigure(g.crew.editor, g.groupId, figureSpec([{ resultId: rid, version: 1 }]), true);
    const statuses: number[] = [];
    // The public route and the by-id route share one count per address.
    for (const url of [`/api/public/figures/${fig.id}/render.svg`, `/api/figures/${fig.id}/render.svg`, `/api/public/figures/${fig.id}/render.svg`, `/api/figures/${fig.id}/render.svg`]) {
      statuses.push((await request(low.app).get(url)).status);
    }
    expect(statuses).toEqual([200, 200, 200, 429]);
    const limited = await request(low.app).get(`/api/public/figures/${fig.id}/render.png`);
    expect(limited.status).toBe(429);
    expect(limited.body.error.code).toBe('rate_limited');
    // A signed-in member is not limited.
    for (let i = 0; i < 5; i++) expect((await g.crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`)).status).toBe(200);
  });
});
