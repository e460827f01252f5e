import { eq } from 'drizzle-orm';
import { JSDOM } from 'jsdom';
import request from 'supertest';
import { figureRenders } from '@/db/schema';
import { SVG_FONT_FAMILIES } from '@/shared/figure';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import { startTestApp, type TestApp } from '../helpers/app';
import { buffer, figureSpec, makeFigure as makeFigureAs, svgGet } from '../helpers/figures';
import { makeGroupWithRoles, makeResult, publishVersion, type Crew } from '../helpers/factories';

/**
 * The SVG render's editable-text option (`?text=editable`: labels as <text>, escaped) beside the
 * default outlines, each with its own cache row, ETag and file name; `?download=1` answers every
 * render as an attachment; bad values are refused naming the field.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
let resultId: string;

const spec = (over: Partial<FigureSpecInput> = {}) => figureSpec([{ resultId, version: 1 }], { title: 'Editable text figure', ...over });
const makeFigure = (s: FigureSpecInput, isPublic = false) => makeFigureAs(crew.editor, groupId, s, isPublic);

const texts = (svg: string) => [...new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document.querySelectorAll('text')];

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  resultId = (await makeResult(crew.analyst, groupId, { meta: { title: 'Open dijet search', reference: 'LF-OPEN-1' } })).resultId;
  await publishVersion(crew.curator, groupId, resultId, 1, true);
}, 90_000);
afterAll(async () => t?.close());

test('text=editable draws labels as escaped <text> in the shipped fonts, cached apart from the outlines', async () => {
  const fig = await makeFigure(spec({ annotations: [{ text: '<script>alert(1)</script> & "x"', x: 0.1, y: 0.9 }] }));
  const url = `/api/figures/${fig.id}/render.svg`;
  const outline = await svgGet(crew.viewer.agent.get(url));
  const editable = await svgGet(crew.viewer.agent.get(`${url}?text=editable`));
  expect(editable.status).toBe(200);
  expect(editable.headers['content-type']).toMatch(/^image\/svg\+xml/);
  expect(editable.headers['content-security-policy']).toContain("default-src 'none'");
  expect(editable.headers['x-render-cache']).toBe('miss');
  expect(editable.headers['content-disposition']).toBe('inline; filename="editable-text-figure-v1-editable.svg"');
  // The outline SVG has no text; the editable one has the readable labels and no glyph outlines.
  expect(outline.svg).not.toMatch(/<text[\s>]/);
  const labels = texts(editable.svg);
  expect(labels.map((l) => l.textContent)).toEqual(expect.arrayContaining(['mV′ [TeV]', 'σ × B [fb]', '<script>alert(1)</script> & "x"']));
  expect(labels.every((l) => Object.values(SVG_FONT_FAMILIES).includes(l.getAttribute('font-family')!))).toBe(true);
  expect(editable.svg).not.toMatch(/<script/i);
  expect(editable.svg).toContain('&lt;script&gt;alert(1)&lt;/script&gt; &amp; &quot;x&quot;');
  expect(editable.svg).not.toContain('<use');
  // Two renders, two rows, two ETags; asking again is a hit of the right one.
  expect(editable.headers.etag).not.toBe(outline.headers.etag);
  const rows = await t.ctx.db.select().from(figureRenders).where(eq(figureRenders.figureId, fig.id));
  expect(rows.map((r) => r.sizeKey).sort()).toEqual([expect.stringMatching(/cm$/), expect.stringMatching(/cm@text$/)]);
  const again = await svgGet(crew.viewer.agent.get(`${url}?text=editable`));
  expect(again.headers['x-render-cache']).toBe('hit');
  expect(again.svg).toBe(editable.svg);
  const outlineAgain = await svgGet(crew.viewer.agent.get(`${url}?text=outline`));
  expect(outlineAgain.headers['x-render-cache']).toBe('hit');
  expect(outlineAgain.svg).toBe(outline.svg);
});

test('the public route offers editable text too', async () => {
  const fig = await makeFigure(spec(), true);
  const res = await svgGet(request(t.app).get(`/api/public/figures/${fig.id}/render.svg?text=editable`));
  expect(res.status).toBe(200);
  expect(texts(res.svg).length).toBeGreaterThan(5);
});

test('download=1 answers as an attachment; without it the render is shown inline', async () => {
  const fig = await makeFigure(spec(), true);
  for (const [url, name] of [
    [`/api/figures/${fig.id}/render.svg`, 'editable-text-figure-v1.svg'],
    [`/api/figures/${fig.id}/render.svg?text=editable`, 'editable-text-figure-v1-editable.svg'],
    [`/api/figures/${fig.id}/render.pdf`, 'editable-text-figure-v1.pdf'],
    [`/api/public/figures/${fig.id}/render.png`, 'editable-text-figure-v1.png'],
  ] as const) {
    const sep = url.includes('?') ? '&' : '?';
    const saved = await buffer(crew.viewer.agent.get(`${url}${sep}download=1`));
    expect({ url, status: saved.status, disposition: saved.headers['content-disposition'] }).toEqual({ url, status: 200, disposition: `attachment; filename="${name}"` });
    const shown = await buffer(crew.viewer.agent.get(`${url}${sep}download=0`));
    expect(shown.headers['content-disposition']).toBe(`inline; filename="${name}"`);
  }
  // The first PDF and PNG start a renderer process (1–5 s).
}, 60_000);

test('bad values are refused naming the field', async () => {
  const fig = await makeFigure(spec(), true);
  const cases: [string, string][] = [
    [`/api/figures/${fig.id}/render.svg?text=bold`, 'query.text'],
    [`/api/figures/${fig.id}/render.svg?text=`, 'query.text'],
    [`/api/public/figures/${fig.id}/render.svg?text=EDITABLE`, 'query.text'],
    [`/api/figures/${fig.id}/render.svg?download=yes`, 'query.download'],
    [`/api/public/figures/${fig.id}/render.pdf?download=2`, 'query.download'],
  ];
  for (const [url, field] of cases) {
    const res = await crew.viewer.agent.get(url);
    expect({ url, status: res.status, field: res.body.error?.details?.[0]?.field }).toEqual({ url, status: 400, field });
  }
});
