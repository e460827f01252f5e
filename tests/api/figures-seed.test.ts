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
  // The publication theme three times: the combination board's limit plot and its summary of
  // excluded ranges, and the dijet team's two-parameter plane.
  expect(page.items.map((i) => i.theme).sort()).toEqual(['outreach', 'publication', 'publication', 'publication', 'slides']);
  expect(page.items.map((i) => i.groupName).sort()).toEqual(['Lanternfish Combination Board', 'Lanternfish Combination Board', 'Lanternfish Dijet Resonances', 'Lanternfish Dijet Resonances', 'Lanternfish Outreach Office']);

  await seedDemo(t.ctx);
  expect(await t.ctx.db.select().from(figures)).toHaveLength(DEMO_FIGURES.length);
});

test('the public demo figures render whole for anyone; the group-only one is not found', async () => {
  const page = (await request(t.app).get('/api/public/figures')).body as PublicFigurePage;
  for (const item of page.items) {
    const res = await request(t.app).get(`/api/public/figures/${item.id}/render.svg`).buffer(true);
    expect(res.status).toBe(200);
    // Whole: no layer left out (a unit conversion is said on the figure, and is all a note may say).
    const notes = JSON.parse((res.headers['x-figure-notes'] as string | undefined) ?? '[]') as string[];
    expect(notes.filter((n) => !n.includes('converted to the axis units'))).toEqual([]);
  }
  // The summary of excluded ranges has a bar for the μ result without theory (read against μ = 1,
  // from the grid's lower edge at 0.3 TeV up to where its limit reaches 1).
  const summary = page.items.find((i) => i.title === 'Excluded masses of the Lanternfish searches, 2031 data')!;
  const csv = await request(t.app).get(`/api/figures/${summary.id}/export.csv`);
  expect(csv.status).toBe(200);
  expect(csv.text).toMatch(/\r\n"Portal scalar, best channel","Heron portal scalar, mixing angle sin θ = 0\.1",observed,0\.3,0\.9\d*,yes,no,TeV,/);
  expect(csv.text).not.toContain('no theory curve');
  expect(csv.text).toMatch(/\r\nDijet search,Sequential V\S* benchmark[^,]*,observed,/);
  const internal = (await t.ctx.db.select().from(figures)).find((f) => !f.isPublic)!;
  expect((await request(t.app).get(`/api/public/figures/${internal.id}/render.svg`)).status).toBe(404);
  expect((await request(t.app).get(`/api/figures/${internal.id}/render.svg`)).status).toBe(404);
});
