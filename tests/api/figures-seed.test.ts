import request from 'supertest';
import { figures } from '@/db/schema';
import { seedDemo } from '@/server/seed/seed';
import { DEMO_FIGURES } from '@/server/seed/seed-figures';
import type { PublicFigurePage } from '@/shared/schemas/figure-views';
import { startTestApp, type TestApp } from '../helpers/app';

/** The demo figures: a public one per theme and a group-only one, added once, drawn whole. */

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
  await seedDemo(t.ctx);
}, 90_000);
afterAll(async () => t?.close());

test('the seed adds the demo figures once: public ones in every theme, and a group-only one', async () => {
  const rows = await t.ctx.db.select().from(figures);
  expect(rows).toHaveLength(DEMO_FIGURES.length);
  expect(rows.filter((f) => !f.isPublic).map((f) => f.title)).toEqual(['Scalar S → bb̄: signal-strength limit (internal)']);

  const page = (await request(t.app).get('/api/public/figures')).body as PublicFigurePage;
  expect(page.items.map((i) => i.theme).sort()).toEqual(['outreach', 'publication', 'slides']);
  expect(page.items.map((i) => i.groupName).sort()).toEqual(['Lanternfish Combination Board', 'Lanternfish Dijet Resonances', 'Lanternfish Outreach Office']);

  await seedDemo(t.ctx);
  expect(await t.ctx.db.select().from(figures)).toHaveLength(DEMO_FIGURES.length);
});

test('the public demo figures render whole for anyone; the group-only one is not found', async () => {
  const page = (await request(t.app).get('/api/public/figures')).body as PublicFigurePage;
  for (const item of page.items) {
    const res = await request(t.app).get(`/api/public/figures/${item.id}/render.svg`).buffer(true);
    expect(res.status).toBe(200);
    expect(res.headers['x-figure-notes']).toBeUndefined();
  }
  const internal = (await t.ctx.db.select().from(figures)).find((f) => !f.isPublic)!;
  expect((await request(t.app).get(`/api/public/figures/${internal.id}/render.svg`)).status).toBe(404);
  expect((await request(t.app).get(`/api/figures/${internal.id}/render.svg`)).status).toBe(404);
});
