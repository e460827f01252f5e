import { JSDOM } from 'jsdom';
import request from 'supertest';
import type { FigureDetail } from '@/shared/schemas/figure-views';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import { startTestApp, type TestApp } from '../helpers/app';
import { binary, buffer, makeFigure, svgGet } from '../helpers/figures';
import { makeGroupWithRoles, makePlaneResult, makeResult, publishVersion, samplePlane, type Crew } from '../helpers/factories';

/**
 * The two-parameter plane figure through the API: a plane result uploaded as JSON, a plane figure
 * saved and drawn (SVG, PDF, PNG), its contours as CSV; a limit plot or a summary refuses a plane
 * layer and a plane figure a one-parameter one, naming `spec.layers.N`; bad options are named;
 * the public copy of a public plane figure leaves out layers the public may not see, and its
 * plain-words (outreach) copy speaks plainly; user text stays text.
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

describe('public and plain-words copies of a plane figure', () => {
  let openId = '';
  const hostile = 'Open <b>X</b> & "chi" <script>alert(1)</script>';
  const secret = 'Draft <i>secret</i> plane layer';
  const twoLayers = (over: Partial<FigureSpecInput> = {}) => spec({
    title: 'Open and draft planes',
    layers: [
      { resultId: openId, version: 1, label: hostile },
      { resultId: planeId, version: 1, label: secret },
    ],
    ...over,
  });
  const allText = (svg: string) => texts(svg).join('\n');

  beforeAll(async () => {
    // A published public plane on the same grid (same units) beside the group's draft one.
    const open = await makePlaneResult(crew.analyst, groupId, { meta: { title: 'Open heavy X to chi pairs' }, plane: samplePlane() });
    openId = open.resultId;
    await publishVersion(crew.curator, groupId, openId, 1, true);
  });

  test("a public plane figure's public copy draws the open layer only, says one is left out, and keeps user text as text", async () => {
    const fig = await makeFigure(crew.editor, groupId, twoLayers(), true);
    // Members see both layers.
    const member = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg?text=editable`));
    expect(member.status).toBe(200);
    expect(allText(member.svg)).toContain(secret);
    expect(allText(member.svg)).toContain(hostile);
    expect(member.svg).toContain('Open &lt;b&gt;X&lt;/b&gt; &amp; &quot;chi&quot; &lt;script&gt;');
    expect(member.svg).not.toContain('<script');

    for (const url of [`/api/public/figures/${fig.id}/render.svg?text=editable`, `/api/figures/${fig.id}/render.svg?text=editable`]) {
      const pub = await svgGet(request(t.app).get(url));
      expect(pub.status).toBe(200);
      expect(pub.headers['content-type']).toContain('image/svg+xml');
      const words = allText(pub.svg);
      // The draft layer, its label and its result's title do not leak into the public copy.
      expect(words).not.toContain('secret');
      expect(pub.svg).not.toContain('secret');
      expect(pub.svg).not.toContain('Heavy X to chi pairs');
      expect(words).toContain('1 layer is not shown: you may not see its result');
      expect(texts(pub.svg)).toEqual(expect.arrayContaining(['m_X [GeV]', 'm_chi [GeV]', 'Observed', 'Expected']));
      // The hostile label is the one layer drawn alone: its legend rows are the parts' words; the
      // label is not markup anywhere in the SVG.
      expect(pub.svg).not.toContain('<script');
      expect(pub.svg).not.toContain('<b>');
    }
    // The outline render (labels as paths) of the public copy is drawn too.
    const outline = await svgGet(request(t.app).get(`/api/public/figures/${fig.id}/render.svg`));
    expect(outline.status).toBe(200);
    expect(outline.svg).toContain('<path');
    expect(outline.svg).not.toContain('secret');
    // The public page lists only the open pin.
    const page = await request(t.app).get(`/api/public/figures/${fig.id}`);
    expect(page.status).toBe(200);
    expect(JSON.stringify(page.body)).not.toContain('secret');
    expect(JSON.stringify(page.body)).not.toContain(planeId);
  });

  test('the plain-words copy keeps the kind and says "ruled out" and "expected reach", escaping the layer names', async () => {
    const fig = await makeFigure(crew.editor, groupId, twoLayers(), false);
    const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures/${fig.id}/outreach`).send({});
    expect(res.status).toBe(201);
    const copy = res.body as FigureDetail;
    expect(copy.latest.spec).toMatchObject({ kind: 'plane', theme: 'outreach', plane: { colorMap: true } });
    const svg = await svgGet(crew.viewer.agent.get(`/api/figures/${copy.id}/render.svg?text=editable`));
    expect(svg.status).toBe(200);
    const labels = texts(svg.svg);
    // Two layers: each legend row names its layer before the plain words (then in lower case).
    expect(labels).toEqual(expect.arrayContaining([`${hostile}: ruled out`, `${hostile}: expected reach`, `${secret}: ruled out`, 'Smallest rate ruled out [fb]', 'Ruled-out side']));
    expect(labels.join('\n')).not.toMatch(/\bObserved\b|95% CL/);
    expect(svg.svg).toContain('Open &lt;b&gt;X&lt;/b&gt; &amp; &quot;chi&quot; &lt;script&gt;alert(1)&lt;/script&gt;: ruled out');
    expect(svg.svg).not.toContain('<script');
    expect(svg.svg).not.toContain('<b>');

    // Made public, its public copy speaks as plainly and leaves the draft layer out.
    const shared = await crew.editor.agent.patch(`/api/groups/${groupId}/figures/${copy.id}`).send({ public: true });
    expect(shared.status).toBe(200);
    const pub = await svgGet(request(t.app).get(`/api/public/figures/${copy.id}/render.svg?text=editable`));
    expect(pub.status).toBe(200);
    const pubLabels = texts(pub.svg);
    expect(pubLabels).toEqual(expect.arrayContaining(['Ruled out', 'Expected reach', '1 result is not shown: you may not see it']));
    expect(pub.svg).not.toContain('secret');
    expect(pub.svg).not.toContain('<script');
  });
});
