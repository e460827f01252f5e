import { count, eq } from 'drizzle-orm';
import { JSDOM } from 'jsdom';
import request from 'supertest';
import { figures } from '@/db/schema';
import type { FigureDetail } from '@/shared/schemas/figure-views';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import { startTestApp, type TestApp } from '../helpers/app';
import { binary, buffer, makeFigure, svgGet } from '../helpers/figures';
import { makeGroupWithRoles, makeResult, publishVersion, type Crew } from '../helpers/factories';

/**
 * The summary of excluded ranges through the API: saved, rendered (SVG, PDF, PNG, cached),
 * exported (CSV, caption), offered to the public and in plain words; μ and σ×B results share
 * it (only the parameter axis must convert); bad kinds and options are refused naming the field,
 * nothing stored.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
const ids: Record<'withTheory' | 'noTheory' | 'mu', string> = { withTheory: '', noTheory: '', mu: '' };

const spec = (over: Partial<FigureSpecInput> = {}): FigureSpecInput => ({
  title: 'Summary of the V′ searches',
  kind: 'ranges',
  theme: 'publication',
  size: { preset: 'two-column' },
  layers: [
    { resultId: ids.withTheory, version: 1 },
    { resultId: ids.noTheory, version: 1 },
    { resultId: ids.mu, version: 1, note: '<b>2031</b> & "µ" data' },
  ],
  ...over,
});
const texts = (svg: string) => [...new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document.querySelectorAll('text')].map((x) => x.textContent);
const figureCount = async () => (await t.ctx.db.select({ n: count() }).from(figures).where(eq(figures.groupId, groupId)))[0]!.n;

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  ids.withTheory = (await makeResult(crew.analyst, groupId, { meta: { title: 'Dijet search', model: 'Vee-prime A' } })).resultId;
  ids.noTheory = (await makeResult(crew.analyst, groupId, { meta: { title: 'Dilepton search', model: 'Vee-prime A' }, theory: false })).resultId;
  ids.mu = (await makeResult(crew.analyst, groupId, { meta: { title: 'Diphoton search on mu', quantity: 'mu', quantityUnit: '' }, theory: false })).resultId;
  for (const id of Object.values(ids)) await publishVersion(crew.curator, groupId, id, 1, true);
}, 90_000);
afterAll(async () => t?.close());

test('saved with μ and σ×B results (a limit plot refuses that mix, naming the layer); drawn as bars with escaped notes', async () => {
  const limits = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec({ kind: 'limits' }) });
  expect(limits.status).toBe(400);
  expect(limits.body.error.details.map((d: { field: string }) => d.field)).toEqual(['spec.layers.2']);

  const fig = await makeFigure(crew.editor, groupId, spec(), true);
  expect(fig.latest.spec).toMatchObject({ kind: 'ranges', ranges: { sort: 'listed', groupByModel: true, expected: 'outline', notes: true } });
  const url = `/api/figures/${fig.id}/render.svg`;
  const editable = await svgGet(crew.viewer.agent.get(`${url}?text=editable`));
  expect(editable.status).toBe(200);
  const labels = texts(editable.svg);
  expect(labels).toEqual(expect.arrayContaining(['Vee-prime A', 'Dijet search', 'Dilepton search', 'Diphoton search on mu', 'no theory curve, no range', 'Observed exclusion', '<b>2031</b> & "µ" data']));
  expect(editable.svg).toContain('&lt;b&gt;2031&lt;/b&gt; &amp; &quot;µ&quot; data');
  expect(editable.svg).not.toContain('<b>');

  const first = await svgGet(crew.viewer.agent.get(url));
  const again = await svgGet(crew.viewer.agent.get(url));
  expect(again.headers['x-render-cache']).toBe('hit');
  expect(again.svg).toBe(first.svg);
  const pdf = binary(await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.pdf`)));
  expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
  const png = binary(await buffer(request(t.app).get(`/api/public/figures/${fig.id}/render.png?dpi=150`)));
  expect(png.subarray(1, 4).toString()).toBe('PNG');
});

test('CSV and caption list every bar, the one without theory saying why', async () => {
  const fig = await makeFigure(crew.editor, groupId, spec(), false);
  const csv = await crew.viewer.agent.get(`/api/figures/${fig.id}/export.csv`);
  expect(csv.status).toBe(200);
  const rows = csv.text.trimEnd().split('\r\n');
  expect(rows[0]).toBe('analysis,model,range,from,to,open_low,open_high,x_unit,note');
  expect(rows.some((r) => r.startsWith('Dijet search,Vee-prime A,observed,'))).toBe(true);
  expect(rows.some((r) => r.startsWith('Dilepton search,Vee-prime A,no theory curve,,'))).toBe(true);
  const caption = await crew.viewer.agent.get(`/api/figures/${fig.id}/caption.txt`);
  expect(caption.text).toContain('Dilepton search (version 1): no theory curve, so no range.');
});

test('the plain-words copy for the public keeps the kind and speaks plainly', async () => {
  const fig = await makeFigure(crew.editor, groupId, spec(), false);
  const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures/${fig.id}/outreach`).send({});
  expect(res.status).toBe(201);
  const copy = res.body as FigureDetail;
  expect(copy.latest.spec.kind).toBe('ranges');
  expect(copy.latest.spec.layers[2]!.note).toBe('<b>2031</b> & "µ" data');
  const svg = await svgGet(crew.viewer.agent.get(`/api/figures/${copy.id}/render.svg?text=editable`));
  expect(texts(svg.svg)).toEqual(expect.arrayContaining(['Ruled out', 'no prediction to compare with']));
});

test('bad kinds, options and notes are refused naming the field; nothing is stored', async () => {
  const before = await figureCount();
  const cases: [Record<string, unknown>, string][] = [
    [{ kind: 'pie' }, 'spec.kind'],
    [{ ranges: { sort: 'random' } }, 'spec.ranges.sort'],
    [{ ranges: { expected: 'glow' } }, 'spec.ranges.expected'],
    [{ ranges: { groupByModel: 'yes' } }, 'spec.ranges.groupByModel'],
    [{ layers: [{ resultId: ids.withTheory, version: 1, note: 'x'.repeat(201) }] }, 'spec.layers.0.note'],
    [{ layers: [{ resultId: ids.withTheory, version: 1, note: 'a\u0000b' }] }, 'spec.layers.0.note'],
  ];
  for (const [over, field] of cases) {
    const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: { ...spec(), ...over } });
    expect(res.status).toBe(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field)).toContain(field);
  }
  expect(await figureCount()).toBe(before);
});
