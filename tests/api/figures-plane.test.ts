import { JSDOM } from 'jsdom';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import { startTestApp, type TestApp } from '../helpers/app';
import { binary, buffer, makeFigure, svgGet } from '../helpers/figures';
import { makeGroupWithRoles, makePlaneResult, makeResult, type Crew } from '../helpers/factories';

/**
 * The two-parameter plane figure through the API: a plane result uploaded as JSON, a plane figure
 * saved and drawn (SVG, PDF, PNG), its contours as CSV; a limit plot or a summary refuses a plane
 * layer and a plane figure a one-parameter one, naming `spec.layers.N`; bad options are named.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
let planeId = '';
let curveId = '';

const spec = (over: Partial<FigureSpecInput> = {}): FigureSpecInput => ({
  title: 'The m_X–m_chi plane',
  kind: 'plane',
  theme: 'publication',
  size: { preset: 'two-column' },
  y: { scale: 'linear' },
  layers: [{ resultId: planeId, version: 1, label: 'Invented <b>X</b> & "chi"' }],
  ...over,
});
const texts = (svg: string) => [...new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document.querySelectorAll('text')].map((x) => x.textContent);

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  planeId = (await makePlaneResult(crew.analyst, groupId, { meta: { title: 'Heavy X to chi pairs' } })).resultId;
  curveId = (await makeResult(crew.analyst, groupId, { meta: { title: 'Dijet search' } })).resultId;
}, 90_000);
afterAll(async () => t?.close());

test('a plane figure is saved and drawn as SVG, PDF and PNG; its CSV lists the contours', async () => {
  const fig = await makeFigure(crew.editor, groupId, spec(), false);
  expect(fig.latest.spec).toMatchObject({ kind: 'plane', plane: { colorMap: true, forbidden: 'blank', excludedMark: 'hatch' } });
  const editable = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg?text=editable`));
  expect(editable.status).toBe(200);
  expect(texts(editable.svg)).toEqual(expect.arrayContaining(['m_X [GeV]', 'm_chi [GeV]', '95% CL limit on σ × B [fb]', 'Observed', 'Expected']));
  expect(editable.svg).not.toContain('<b>');
  const outline = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
  expect(outline.svg).toContain('<path');
  const pdf = binary(await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.pdf`)));
  expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
  const png = binary(await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.png?dpi=150`)));
  expect(png.subarray(1, 4).toString()).toBe('PNG');
  const csv = await crew.viewer.agent.get(`/api/figures/${fig.id}/export.csv`);
  expect(csv.status).toBe(200);
  const rows = csv.text.trim().split('\r\n');
  expect(rows[0]).toBe('layer,line,piece,x,y,x_unit,y_unit');
  expect(rows.length).toBeGreaterThan(2);
  expect(rows.slice(1).every((r) => /^"Invented <b>X<\/b> & ""chi""",(observed|expected|expected_minus_1sigma|expected_plus_1sigma|observed_theory_lower|observed_theory_upper),\d+,[-\d.e]+,[-\d.e]+,GeV,GeV$/.test(r))).toBe(true);
  const caption = await crew.viewer.agent.get(`/api/figures/${fig.id}/caption.txt`);
  expect(caption.text).toMatch(/exclusion contours in the plane of m_X \(GeV\) and m_chi \(GeV\)/);
}, 120_000);

test('kinds refuse the other sort of layer, naming spec.layers.N; bad options are named', async () => {
  const mixed = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec({ layers: [{ resultId: planeId, version: 1 }, { resultId: curveId, version: 1 }] }) });
  expect(mixed.status).toBe(400);
  expect(mixed.body.error.details).toEqual([expect.objectContaining({ field: 'spec.layers.1', message: expect.stringMatching(/one parameter/) })]);
  for (const kind of ['limits', 'ranges'] as const) {
    const r = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec({ kind, layers: [{ resultId: curveId, version: 1 }, { resultId: planeId, version: 1 }] }) });
    expect(r.status).toBe(400);
    expect(r.body.error.details).toEqual([expect.objectContaining({ field: 'spec.layers.1', message: expect.stringMatching(/two parameters/) })]);
  }
  for (const [plane, field] of [[{ excludedMark: 'glow' }, 'spec.plane.excludedMark'], [{ forbidden: 'maybe' }, 'spec.plane.forbidden'], [{ colorMap: 'yes' }, 'spec.plane.colorMap']] as const) {
    const r = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec({ plane: plane as never }) });
    expect(r.status).toBe(400);
    expect(r.body.error.details.map((d: { field: string }) => d.field)).toContain(field);
  }
});
