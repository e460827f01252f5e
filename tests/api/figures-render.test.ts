import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { PDFDict, PDFDocument, PDFName } from 'pdf-lib';
import request from 'supertest';
import { figureRenders, groups } from '@/db/schema';
import { layerColor, resolveFigureTheme } from '@/shared/figure';
import type { FigureDetail } from '@/shared/schemas/figure-views';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import type { Curve } from '@/shared/schemas/results';
import { startTestApp, type TestApp } from '../helpers/app';
import { binary, buffer, figureSpec, makeFigure as makeFigureAs, svgGet } from '../helpers/figures';
import { makeGroup, makeGroupWithRoles, makePerson, makeResult, publishVersion, registryProbe, type Crew, type Person } from '../helpers/factories';

/**
 * The render, export and public routes: SVG with labels as paths and nothing executable, PDF of
 * the figure's size with embedded fonts, PNG sized by dpi, refusal of absurd sizes, the render
 * cache and its storage, and visibility (private figures are not found by outsiders; a public
 * figure never shows a layer the public may not see).
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
let outsider: Person;
/** P: public published; Q: group-only published, with numbers nobody else may see. */
const r = {} as Record<'P' | 'Q', string>;
const SECRET_TITLE = 'Heron scalar search, group only';
const SECRET_REFERENCE = 'LF-SECRET-4711';
const SECRET_VALUE = 987654.321;

/** One-column: 8.6 cm × 6.45 cm. */
const W_PT = (8.6 / 2.54) * 72;
const H_PT = (6.45 / 2.54) * 72;

const spec = (layers: FigureSpecInput['layers'], over: Partial<FigureSpecInput> = {}) => figureSpec(layers, { title: 'Overlay for the render tests', ...over });

const makeFigure = (s: FigureSpecInput, isPublic = false) => makeFigureAs(crew.editor, groupId, s, isPublic);


const storage = () => registryProbe.storageBytes(t, groupId);
async function renderRows(figureId: string) {
  return t.ctx.db.select().from(figureRenders).where(eq(figureRenders.figureId, figureId));
}

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  outsider = await makePerson(t, 'Member Elsewhere');
  await makeGroup(t, outsider);
  r.P = (await makeResult(crew.analyst, groupId, { meta: { title: 'Open dijet search', reference: 'LF-OPEN-1' } })).resultId;
  await publishVersion(crew.curator, groupId, r.P, 1, true);
  const secret = await makeResult(crew.analyst, groupId, { meta: { title: SECRET_TITLE, reference: SECRET_REFERENCE } });
  r.Q = secret.resultId;
  // Distinctive numbers: if they leaked, the CSV would show them and the y range would reach them.
  const curve: Curve = { ...secret.curve!, observed: secret.curve!.observed!.map((v, i) => (i === 3 ? SECRET_VALUE : v)) };
  expect((await crew.analyst.agent.patch(`/api/groups/${groupId}/results/${r.Q}/versions/1`).send({ curve })).status).toBe(200);
  await publishVersion(crew.curator, groupId, r.Q, 1, false);
}, 90_000);
afterAll(async () => t?.close());

describe('SVG', () => {
  test('labels are paths, there is no <text>, and the figure has the size of its preset', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const res = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^image\/svg\+xml/);
    expect(res.headers['content-security-policy']).toContain("default-src 'none'");
    const svg = res.svg;
    expect(svg.startsWith('<svg') || svg.startsWith('<?xml')).toBe(true);
    expect(svg).toContain('<path');
    expect(svg).not.toMatch(/<text[\s>]/);
    const viewBox = /viewBox="0 0 ([\d.]+) ([\d.]+)"/.exec(svg)!;
    expect(Number(viewBox[1])).toBeCloseTo(W_PT, 1);
    expect(Number(viewBox[2])).toBeCloseTo(H_PT, 1);
  });

  test('hostile labels, titles and annotations leave no script, foreign element or handler in the SVG', async () => {
    const fig = await makeFigure(
      spec([{ resultId: r.P, version: 1, label: '<img src=x onerror=alert(1)>' }], {
        title: '<script>alert("title")</script>',
        x: { scale: 'linear', label: '"/><foreignObject><div>x</div></foreignObject>' },
        y: { scale: 'log', label: '$\\href{javascript:alert(1)}{x}$' },
        annotations: [{ text: '</svg><svg onload=alert(1)>', x: 0.1, y: 0.9 }, { text: "<script>alert('a')</script>", x: 0.1, y: 0.8 }],
      }),
    );
    const svg = (await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`))).svg;
    expect(svg).toContain('<path');
    for (const bad of [/<script/i, /<foreignObject/i, /onload=/i, /onerror=/i, /javascript:/i, /<img/i, /<text[\s>]/, /<div/i]) expect(svg).not.toMatch(bad);
    // Exactly one root element: nothing closed the SVG early.
    expect(svg.match(/<svg[\s>]/g)).toHaveLength(1);
    expect(svg.trim().endsWith('</svg>')).toBe(true);
  });
});

describe('figure style fields', () => {
  test('per-layer colour, line style, theory name and bands on two layers round-trip, older specs still read, and render', async () => {
    const layers = [
      { resultId: r.P, version: 1, color: '#2a8f3c', lineStyle: 'dashdot' as const, theoryLabel: 'Model A (NLO)' },
      { resultId: r.Q, version: 1, hue: 2 },
    ];
    const fig = await makeFigure(spec(layers, { bandsLayers: [0, 1] }));
    const detail = await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`);
    expect(detail.status).toBe(200);
    const saved = (detail.body as FigureDetail).latest.spec;
    expect(saved.bandsLayers).toEqual([0, 1]);
    expect(saved.bandsLayer).toBe(0);
    expect(saved.layers[0]).toMatchObject({ color: '#2a8f3c', lineStyle: 'dashdot', theoryLabel: 'Model A (NLO)' });
    expect(saved.layers[1]).toMatchObject({ hue: 2, color: null, lineStyle: 'solid', theoryLabel: '' });
    const res = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    expect(res.status).toBe(200);
    expect(res.svg).toContain('stroke="#2a8f3c"');
    const dashdot = resolveFigureTheme('publication').dash.observed.dashdot.join(' ');
    expect(res.svg).toContain(`stroke-dasharray="${dashdot}"`);
    for (const format of ['png', 'pdf'] as const) expect((await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.${format}`).query({ dpi: 72 }))).status).toBe(200);
    // A spec without the new fields (as stored before them) still saves and reads with defaults.
    const old = await makeFigure(spec([{ resultId: r.P, version: 1 }], { bandsLayer: 0 }));
    expect(old.latest.spec.bandsLayers).toBeUndefined();
    expect(old.latest.spec.layers[0]).toMatchObject({ color: null, lineStyle: 'solid', theoryLabel: '' });
    // A free colour must be a colour; a bands layer must exist.
    const bad = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec([{ resultId: r.P, version: 1, color: 'red' }], { bandsLayers: [3] }) });
    expect(bad.status).toBe(400);
  });
});

describe('PDF', () => {
  let pdf: Buffer;
  beforeAll(async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const res = await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.pdf`));
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    pdf = binary(res);
    // The first PDF of the file starts a renderer process (it loads jsdom and jsPDF: seconds on a busy machine).
  }, 60_000);

  test('one page whose size equals the figure size', async () => {
    const doc = await PDFDocument.load(pdf);
    expect(doc.getPageCount()).toBe(1);
    const { width, height } = doc.getPage(0).getSize();
    expect(width).toBeCloseTo(W_PT, 1);
    expect(height).toBeCloseTo(H_PT, 1);
  });

  test('every font is embedded (FontFile2 in each font descriptor)', async () => {
    const doc = await PDFDocument.load(pdf);
    let descriptors = 0;
    for (const [, obj] of doc.context.enumerateIndirectObjects()) {
      if (obj instanceof PDFDict && obj.get(PDFName.of('Type'))?.toString() === '/FontDescriptor') {
        descriptors += 1;
        expect(obj.get(PDFName.of('FontFile2'))).toBeDefined();
      }
    }
    expect(descriptors).toBeGreaterThan(0);
  });

  (fs.existsSync('/usr/bin/pdffonts') ? test : test.skip)('pdffonts says "emb yes" for every font', () => {
    const file = path.join(os.tmpdir(), `bw-render-${process.pid}.pdf`);
    fs.writeFileSync(file, pdf);
    try {
      const lines = execFileSync('/usr/bin/pdffonts', [file], { encoding: 'utf8' }).trim().split('\n').slice(2);
      expect(lines.length).toBeGreaterThan(0);
      for (const l of lines) expect(l.split(/\s+/).slice(-5)[0]).toBe('yes');
    } finally {
      fs.rmSync(file, { force: true });
    }
  });
});

describe('PNG', () => {
  const ihdr = (png: Buffer) => ({ signature: png.subarray(1, 4).toString('latin1'), width: png.readUInt32BE(16), height: png.readUInt32BE(20) });

  test('dimensions follow the dpi (default 300) and the size preset', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const cases: Array<[string, number, number, number]> = [
      ['', 8.6, 6.45, 300],
      ['?dpi=150', 8.6, 6.45, 150],
      ['?size=slide&dpi=72', 25.4, 14.2875, 72],
    ];
    for (const [query, wCm, hCm, dpi] of cases) {
      const [w, h] = [Math.round((wCm / 2.54) * dpi), Math.round((hCm / 2.54) * dpi)];
      const res = await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.png${query}`));
      expect(res.status).toBe(200);
      expect(res.headers['content-type']).toBe('image/png');
      expect(ihdr(binary(res))).toEqual({ signature: 'PNG', width: w, height: h });
    }
  });

  test('absurd sizes and resolutions are refused with the field named', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const poster = await makeFigure(spec([{ resultId: r.P, version: 1 }], { size: { preset: 'custom', widthCm: 60, heightCm: 60 } }));
    const cases: Array<[string, string]> = [
      [`/api/figures/${fig.id}/render.png?dpi=5000`, 'query.dpi'],
      [`/api/figures/${fig.id}/render.png?dpi=10`, 'query.dpi'],
      [`/api/figures/${fig.id}/render.png?dpi=abc`, 'query.dpi'],
      [`/api/figures/${fig.id}/render.svg?size=billboard`, 'query.size'],
      [`/api/figures/${fig.id}/render.svg?size=custom`, 'query.size'],
      [`/api/figures/${fig.id}/render.pdf?version=0`, 'query.version'],
      [`/api/figures/${poster.id}/render.png?dpi=1200`, 'query.dpi'],
    ];
    for (const [url, field] of cases) {
      const res = await crew.viewer.agent.get(url);
      expect({ url, status: res.status }).toEqual({ url, status: 400 });
      expect(res.body.error.details[0].field).toBe(field);
    }
    const huge = await crew.viewer.agent.get(`/api/figures/${poster.id}/render.png?dpi=1200`);
    expect(huge.body.error.message).toMatch(/pixels.*at most \d+ dpi/);
    expect((await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg?version=7`))).status).toBe(404);
  });
});

describe('render cache and storage', () => {
  test('the second request is served from the cache; the group’s storage does not change', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const before = await storage();
    const first = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    expect(first.headers['x-render-cache']).toBe('miss');
    expect(await storage()).toBe(before);
    const second = await svgGet(crew.owner.agent.get(`/api/figures/${fig.id}/render.svg`));
    expect(second.headers['x-render-cache']).toBe('hit');
    expect(second.svg).toBe(first.svg);

    // PNG: a kept resolution is cached, an unusual one is rendered each time and not stored.
    const png1 = await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.png?dpi=150`));
    const png2 = await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.png?dpi=150`));
    expect([png1.headers['x-render-cache'], png2.headers['x-render-cache']]).toEqual(['miss', 'hit']);
    expect(binary(png2).equals(binary(png1))).toBe(true);
    const odd = await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.png?dpi=151`));
    expect(odd.headers['x-render-cache']).toBe('uncached');
    expect(await storage()).toBe(before);
    expect((await renderRows(fig.id)).length).toBe(2);
  });

  test('a browser that has the render gets 304; identical requests at once store one render', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const url = `/api/figures/${fig.id}/render.pdf`;
    const answers = await Promise.all([1, 2, 3].map(() => buffer(crew.viewer.agent.get(url))));
    expect(answers.map((a) => a.status)).toEqual([200, 200, 200]);
    expect(await renderRows(fig.id)).toHaveLength(1);
    const etag = answers[0]!.headers.etag as string;
    expect(etag).toMatch(/^"[\w-]+"$/);
    const again = await crew.viewer.agent.get(url).set('If-None-Match', etag);
    expect(again.status).toBe(304);
  });

  test('a new figure version renders anew and drops the old version’s renders', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    expect(await renderRows(fig.id)).toHaveLength(1);
    const saved = await crew.editor.agent.put(`/api/groups/${groupId}/figures/${fig.id}`).send({ spec: spec([{ resultId: r.P, version: 1 }], { title: 'Second version' }) });
    expect(saved.status).toBe(200);
    expect(await renderRows(fig.id)).toEqual([]);
    const again = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    expect(again.headers['x-render-cache']).toBe('miss');
    expect((await renderRows(fig.id)).map((row) => row.figureVersion)).toEqual([2]);
  });

  test('a changed hue or house style re-renders and replaces the stale render', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const url = `/api/figures/${fig.id}/render.svg`;
    const a = await svgGet(crew.viewer.agent.get(url));
    expect((await svgGet(crew.viewer.agent.get(url))).headers['x-render-cache']).toBe('hit');
    expect((await crew.editor.agent.put(`/api/groups/${groupId}/results/${r.P}/hue`).send({ hue: 5 })).status).toBe(200);
    const b = await svgGet(crew.viewer.agent.get(url));
    expect(b.headers['x-render-cache']).toBe('miss');
    expect(b.svg).not.toBe(a.svg);
    expect(await renderRows(fig.id)).toHaveLength(1);
    expect((await crew.curator.agent.put(`/api/groups/${groupId}/style`).send({ style: { lineScale: 2 } })).status).toBe(200);
    expect((await svgGet(crew.viewer.agent.get(url))).headers['x-render-cache']).toBe('miss');
    await crew.curator.agent.put(`/api/groups/${groupId}/style`).send({ style: {} });
  });

  test('renders, a save and a delete at the same time all finish, and storage does not move', async () => {
    const before = await storage();
    const a = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const b = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const calls = [
      ...['svg', 'pdf', 'png?dpi=72'].flatMap((f) => [buffer(crew.viewer.agent.get(`/api/figures/${a.id}/render.${f}`)), buffer(crew.viewer.agent.get(`/api/figures/${b.id}/render.${f}`))]),
      crew.editor.agent.put(`/api/groups/${groupId}/figures/${a.id}`).send({ spec: spec([{ resultId: r.P, version: 1 }], { title: 'Saved meanwhile' }) }),
      crew.editor.agent.delete(`/api/groups/${groupId}/figures/${b.id}`),
    ];
    const statuses = (await Promise.all(calls)).map((res) => res.status);
    expect(statuses.slice(-2)).toEqual([200, 204]);
    // A render of the deleted figure may have come before or after the delete.
    for (const s of statuses.slice(0, -2)) expect([200, 404]).toContain(s);
    expect(await storage()).toBe(before);
    expect(await renderRows(b.id)).toEqual([]);
  });

  test('deleting a figure deletes its renders', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.pdf`));
    expect(await renderRows(fig.id)).toHaveLength(2);
    expect((await crew.editor.agent.delete(`/api/groups/${groupId}/figures/${fig.id}`)).status).toBe(204);
    expect(await renderRows(fig.id)).toEqual([]);
  });

  test('renders unused for longer than the plan keeps them are dropped when the cache next grows', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
    await t.ctx.db
      .update(figureRenders)
      .set({ lastUsedAt: sql`now() - interval '400 days'` })
      .where(and(eq(figureRenders.figureId, fig.id), eq(figureRenders.format, 'svg')));
    const pdf = await buffer(crew.viewer.agent.get(`/api/figures/${fig.id}/render.pdf`));
    expect(pdf.headers['x-render-cache']).toBe('miss');
    expect((await renderRows(fig.id)).map((row) => row.format)).toEqual(['pdf']);
  });

  test('a full quota neither fails nor stops the render cache: renders do not count toward it', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]));
    const [g] = await t.ctx.db.select({ bytes: groups.storageBytes }).from(groups).where(eq(groups.id, groupId));
    await t.ctx.db.update(groups).set({ storageBytes: 1024 ** 4 }).where(eq(groups.id, groupId));
    try {
      const res = await svgGet(crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`));
      expect(res.status).toBe(200);
      expect(res.svg).toContain('<path');
      expect(res.headers['x-render-cache']).toBe('miss');
      expect(await renderRows(fig.id)).toHaveLength(1);
      expect(await storage()).toBe(1024 ** 4);
    } finally {
      await t.ctx.db.update(groups).set({ storageBytes: g!.bytes }).where(eq(groups.id, groupId));
    }
  });
});

describe('visibility', () => {
  let priv: FigureDetail;
  let pub: FigureDetail;
  let secretColor: string;
  beforeAll(async () => {
    priv = await makeFigure(spec([{ resultId: r.P, version: 1 }], { title: 'Private overlay' }));
    pub = await makeFigure(spec([{ resultId: r.P, version: 1 }, { resultId: r.Q, version: 1 }], { title: 'Public overlay with a private layer' }), true);
    secretColor = layerColor(resolveFigureTheme('publication'), pub.latest.layers[1]!.hue);
  });

  test('private figures: anonymous callers and other groups get 404 on every route by id', async () => {
    for (const suffix of ['render.svg', 'render.pdf', 'render.png', 'export.csv', 'caption.txt']) {
      for (const agent of [request(t.app), outsider.agent]) {
        const res = await agent.get(`/api/figures/${priv.id}/${suffix}`);
        expect({ suffix, status: res.status }).toEqual({ suffix, status: 404 });
        expect(res.body.error.code).toBe('not_found');
      }
      if (suffix.startsWith('render')) expect((await request(t.app).get(`/api/public/figures/${priv.id}/${suffix}`)).status).toBe(404);
    }
    expect((await svgGet(request(t.app).get('/api/figures/not-a-uuid/render.svg'))).status).toBe(400);
    expect((await request(t.app).get(`/api/figures/${crypto.randomUUID()}/render.svg`)).status).toBe(404);
  });

  test('the public route draws a public figure without the layer the public may not see, and says so', async () => {
    const member = await svgGet(crew.viewer.agent.get(`/api/figures/${pub.id}/render.svg`));
    expect(member.headers['x-figure-notes']).toBeUndefined();
    expect(member.svg).toContain(secretColor);

    const res = await svgGet(request(t.app).get(`/api/public/figures/${pub.id}/render.svg`));
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toMatch(/public/);
    const notes = JSON.parse(res.headers['x-figure-notes'] as string) as string[];
    expect(notes.join(' ')).toMatch(/1 layer is not shown/);
    expect(res.svg).not.toContain(secretColor);
    for (const secret of [SECRET_TITLE, SECRET_REFERENCE, String(SECRET_VALUE), r.Q]) expect(res.svg).not.toContain(secret);
    expect(res.svg).not.toBe(member.svg);

    // The same through the caller-aware route, for anonymous callers and members of other groups.
    for (const agent of [request(t.app), outsider.agent]) {
      const viaId = await svgGet(agent.get(`/api/figures/${pub.id}/render.svg`));
      expect(viaId.status).toBe(200);
      expect(viaId.svg).not.toContain(secretColor);
      expect(viaId.headers['x-figure-notes']).toBeDefined();
    }
    // PDF and PNG of the public variant say so too.
    const pdf = await buffer(request(t.app).get(`/api/public/figures/${pub.id}/render.pdf`));
    expect(pdf.status).toBe(200);
    expect(pdf.headers['x-figure-notes']).toBeDefined();
  });

  test('cached public renders keep saying what is left out', async () => {
    const first = await request(t.app).get(`/api/public/figures/${pub.id}/render.png?dpi=72`);
    const second = await request(t.app).get(`/api/public/figures/${pub.id}/render.png?dpi=72`);
    expect([first.headers['x-render-cache'], second.headers['x-render-cache']]).toEqual(['miss', 'hit']);
    expect(second.headers['x-figure-notes']).toBe(first.headers['x-figure-notes']);
  });

  test('the CSV and the caption leave out what the caller may not see', async () => {
    const memberCsv = await crew.viewer.agent.get(`/api/figures/${pub.id}/export.csv`);
    expect(memberCsv.status).toBe(200);
    expect(memberCsv.headers['content-type']).toMatch(/^text\/csv/);
    expect(memberCsv.text).toContain(String(SECRET_VALUE));
    const publicCsv = await request(t.app).get(`/api/figures/${pub.id}/export.csv`);
    expect(publicCsv.status).toBe(200);
    expect(publicCsv.text.split('\r\n')[0]).toBe('layer,quantity,x,value,x_unit,value_unit');
    expect(publicCsv.text).toContain('Open dijet search');
    for (const secret of [SECRET_TITLE, String(SECRET_VALUE)]) expect(publicCsv.text).not.toContain(secret);

    const memberCaption = await crew.viewer.agent.get(`/api/figures/${pub.id}/caption.txt`);
    expect(memberCaption.text).toContain(SECRET_REFERENCE);
    const publicCaption = await outsider.agent.get(`/api/figures/${pub.id}/caption.txt`);
    expect(publicCaption.status).toBe(200);
    expect(publicCaption.text).toContain('LF-OPEN-1');
    for (const secret of [SECRET_TITLE, SECRET_REFERENCE]) expect(publicCaption.text).not.toContain(secret);
  });

  test('making a figure private again closes the public routes', async () => {
    const fig = await makeFigure(spec([{ resultId: r.P, version: 1 }]), true);
    expect((await svgGet(request(t.app).get(`/api/public/figures/${fig.id}/render.svg`))).status).toBe(200);
    await crew.editor.agent.patch(`/api/groups/${groupId}/figures/${fig.id}`).send({ public: false });
    expect((await svgGet(request(t.app).get(`/api/public/figures/${fig.id}/render.svg`))).status).toBe(404);
    expect((await svgGet(request(t.app).get(`/api/figures/${fig.id}/render.svg`))).status).toBe(404);
  });
});
