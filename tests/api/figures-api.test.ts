import request from 'supertest';
import type { FigureDetail, FigureVersionDetail, PublicFigurePage, TypesetResponse } from '@/shared/schemas/figure-views';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import { labelKey, type FigureLayerData } from '@/shared/figure/types';
import { startTestApp, type TestApp } from '../helpers/app';
import { figureSpec, makeFigure } from '../helpers/figures';
import { and, eq } from 'drizzle-orm';
import { memberships } from '@/db/schema';
import { addToGroup, makeGroup, makeGroupWithRoles, makePerson, makeResult, makeVersion, publishVersion, type Crew, type Person } from '../helpers/factories';

/**
 * Figures through the API: versions, the layer rule (a group pins its own results or public
 * published ones), roles, duplicate and outreach copies, house style, hues, the typesetter.
 * Rendering and caching: figures-render.test.ts.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
let other: Person;
let otherGroup: string;
const ids = {} as Record<'own' | 'ownDraft' | 'otherPublic' | 'otherPrivate', string>;

const spec = figureSpec;

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
  other = await makePerson(t, 'Other Group Owner');
  otherGroup = await makeGroup(t, other);

  ids.own = (await makeResult(crew.analyst, groupId, { meta: { title: 'Own dijet search' } })).resultId;
  await publishVersion(crew.curator, groupId, ids.own, 1, false);
  ids.ownDraft = (await makeResult(crew.analyst, groupId, { meta: { title: 'Own preliminary search' } })).resultId;

  ids.otherPublic = (await makeResult(other, otherGroup, { meta: { title: 'Public search of another group' } })).resultId;
  await publishVersion(other, otherGroup, ids.otherPublic, 1, true);
  // A newer draft of the public result: not usable by other groups.
  await makeVersion(other, otherGroup, ids.otherPublic, 'Rework in progress');

  ids.otherPrivate = (await makeResult(other, otherGroup, { meta: { title: 'Private search of another group' } })).resultId;
  await publishVersion(other, otherGroup, ids.otherPrivate, 1, false);
}, 90_000);
afterAll(async () => t?.close());

const create = (person: Person, body: { spec: FigureSpecInput; public?: boolean }) => makeFigure(person, groupId, body.spec, body.public);

describe('create, save and read versions', () => {
  test('an editor creates a figure (version 1) pinning own, own draft and public results of others', async () => {
    const fig = await create(crew.editor, {
      spec: spec([
        { resultId: ids.own, version: 1 },
        { resultId: ids.ownDraft, version: 1 },
        { resultId: ids.otherPublic, version: 1 },
      ]),
    });
    expect(fig).toMatchObject({ groupId, title: 'Dijet V′ limits, one column', theme: 'publication', version: 1, isPublic: false, derivedFrom: null });
    expect(fig.versions.map((v) => v.version)).toEqual([1]);
    // The group sees all three; the public would see only the published public one (the composer warns with this).
    expect(fig.latest.layers.map((l) => [l.title, l.state, l.available, l.publiclyVisible])).toEqual([
      ['Own dijet search', 'published', true, false],
      ['Own preliminary search', 'draft', true, false],
      ['Public search of another group', 'published', true, true],
    ]);
    // Defaults filled in by the spec schema.
    expect(fig.latest.spec.layers[0]!.show).toMatchObject({ observed: true, expected: true, band1: true, band2: true });
    // Each result got its own hue in the group, first come first served.
    expect(new Set(fig.latest.layers.map((l) => l.hue)).size).toBe(3);

    const list = await crew.viewer.agent.get(`/api/groups/${groupId}/figures`);
    expect(list.status).toBe(200);
    expect(list.body.figures).toEqual(expect.arrayContaining([expect.objectContaining({ id: fig.id, title: fig.title, theme: 'publication', version: 1, isPublic: false })]));
  });

  test('saving makes a new version; old versions stay readable as they were', async () => {
    const fig = await create(crew.analyst, { spec: spec([{ resultId: ids.own, version: 1 }]) });
    const saved = await crew.editor.agent
      .put(`/api/groups/${groupId}/figures/${fig.id}`)
      .send({ spec: spec([{ resultId: ids.own, version: 1 }], { title: 'Renamed figure', theme: 'slides', size: { preset: 'slide' } }), note: 'For the plenary talk' });
    expect(saved.status).toBe(200);
    expect(saved.body).toMatchObject({ title: 'Renamed figure', theme: 'slides', version: 2 });
    expect((saved.body as FigureDetail).versions.map((v) => [v.version, v.note])).toEqual([
      [2, 'For the plenary talk'],
      [1, ''],
    ]);
    const v1 = await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}/versions/1`);
    expect(v1.status).toBe(200);
    expect((v1.body as FigureVersionDetail).spec).toMatchObject({ title: 'Dijet V′ limits, one column', theme: 'publication' });
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}/versions/3`)).status).toBe(404);
  });

  test('viewers read but cannot write; outsiders get 404', async () => {
    const fig = await create(crew.editor, { spec: spec([{ resultId: ids.own, version: 1 }]) });
    const body = { spec: spec([{ resultId: ids.own, version: 1 }]) };
    expect((await crew.viewer.agent.post(`/api/groups/${groupId}/figures`).send(body)).status).toBe(403);
    expect((await crew.viewer.agent.put(`/api/groups/${groupId}/figures/${fig.id}`).send(body)).status).toBe(403);
    expect((await crew.viewer.agent.delete(`/api/groups/${groupId}/figures/${fig.id}`)).status).toBe(403);
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).status).toBe(200);
    expect((await other.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).status).toBe(404);
    expect((await request(t.app).get(`/api/groups/${groupId}/figures`)).status).toBe(401);
    // A figure id from another group under this group's path is not found.
    const elsewhere = await other.agent.post(`/api/groups/${otherGroup}/figures`).send({ spec: spec([{ resultId: ids.otherPrivate, version: 1 }]) });
    expect(elsewhere.status).toBe(201);
    expect((await crew.owner.agent.get(`/api/groups/${groupId}/figures/${elsewhere.body.id}`)).status).toBe(404);
  });

  test('a bad spec is refused with every field named', async () => {
    const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({
      spec: { ...spec([{ resultId: ids.own, version: 1 }]), size: { preset: 'custom' }, y: { scale: 'log', min: -1, max: null, label: '' } },
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field).sort()).toEqual(['spec.size', 'spec.y.min']);
  });
});

describe('layers pin result versions the group may use', () => {
  test.each([
    ['another group’s private result', () => ({ resultId: ids.otherPrivate, version: 1 })],
    ['a draft version of another group’s public result', () => ({ resultId: ids.otherPublic, version: 2 })],
    ['a version that does not exist', () => ({ resultId: ids.own, version: 9 })],
  ])('%s → 400 naming spec.layers.1, nothing stored', async (_name, layer) => {
    const before = (await crew.editor.agent.get(`/api/groups/${groupId}/figures`)).body.figures.length;
    const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec([{ resultId: ids.own, version: 1 }, layer()]) });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(res.body.error.details).toEqual([{ field: 'spec.layers.1', message: expect.stringMatching(/cannot be used by this group/) }]);
    expect((await crew.editor.agent.get(`/api/groups/${groupId}/figures`)).body.figures.length).toBe(before);
  });

  test('saving a version with such a layer is refused too, and the figure keeps its version', async () => {
    const fig = await create(crew.editor, { spec: spec([{ resultId: ids.own, version: 1 }]) });
    const res = await crew.editor.agent.put(`/api/groups/${groupId}/figures/${fig.id}`).send({ spec: spec([{ resultId: ids.otherPrivate, version: 1 }]) });
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].field).toBe('spec.layers.0');
    expect((await crew.editor.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).body.version).toBe(1);
  });

  test('units: a TeV/pb result joins a GeV/fb figure converted (the render says so); a limit on μ is refused naming the layer', async () => {
    const inTeV = (await makeResult(crew.analyst, groupId, { meta: { title: 'Own search in TeV', parameterUnit: 'TeV', quantityUnit: 'pb' } })).resultId;
    const onMu = (await makeResult(crew.analyst, groupId, { meta: { title: 'Own search on mu', quantity: 'mu', quantityUnit: '' }, theory: false })).resultId;
    const refused = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: spec([{ resultId: ids.own, version: 1 }, { resultId: onMu, version: 1 }]) });
    expect(refused.status).toBe(400);
    expect(refused.body.error.details).toEqual([{ field: 'spec.layers.1', message: '“Own search on mu” (version 1) cannot share this figure\'s axes: it limits the signal strength μ, the axis shows σ×B' }]);
    const fig = await create(crew.editor, { spec: spec([{ resultId: ids.own, version: 1 }, { resultId: inTeV, version: 1 }]) });
    const svg = await crew.viewer.agent.get(`/api/figures/${fig.id}/render.svg`);
    expect(svg.status).toBe(200);
    expect(JSON.parse(svg.headers['x-figure-notes'] as string)).toEqual(['Own search in TeV: converted to the axis units (TeV → GeV, pb → fb)']);
    const csv = await crew.viewer.agent.get(`/api/figures/${fig.id}/export.csv`);
    const row = csv.text.split('\r\n').find((l) => l.startsWith('Own search in TeV,observed,'))!;
    expect(row.split(',').slice(4)).toEqual(['GeV', 'fb']);
  });

  test('a layer says when a newer published version is available', async () => {
    const r = await makeResult(crew.analyst, groupId, { meta: { title: 'Result that moves on' } });
    await publishVersion(crew.curator, groupId, r.resultId, 1);
    const fig = await create(crew.editor, { spec: spec([{ resultId: r.resultId, version: 1 }]) });
    expect(fig.latest.layers[0]).toMatchObject({ latestPublished: 1, newerPublished: false });
    await makeVersion(crew.analyst, groupId, r.resultId, 'More data');
    await publishVersion(crew.curator, groupId, r.resultId, 2);
    const detail = (await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).body as FigureDetail;
    // v1 is superseded now but still drawn as pinned.
    expect(detail.latest.layers[0]).toMatchObject({ version: 1, state: 'superseded', available: true, latestPublished: 2, newerPublished: true });
  });

  test('a result pinned by a figure cannot be deleted until the figure lets go of it', async () => {
    const r = await makeResult(crew.analyst, groupId, { meta: { title: 'Pinned draft' } });
    const fig = await create(crew.editor, { spec: spec([{ resultId: r.resultId, version: 1 }], { title: 'Figure that pins a draft' }) });
    const refused = await crew.analyst.agent.delete(`/api/groups/${groupId}/results/${r.resultId}`);
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe('in_use');
    expect(refused.body.error.message).toContain('"Figure that pins a draft"');
    expect((await crew.editor.agent.delete(`/api/groups/${groupId}/figures/${fig.id}`)).status).toBe(204);
    expect((await crew.editor.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).status).toBe(404);
    expect((await crew.analyst.agent.delete(`/api/groups/${groupId}/results/${r.resultId}`)).status).toBe(204);
  });

  test("another group's figure pinning a public result blocks its deletion without naming the figure", async () => {
    const r = await makeResult(other, otherGroup, { meta: { title: 'Public result others use' } });
    await publishVersion(other, otherGroup, r.resultId, 1, true);
    await create(crew.editor, { spec: spec([{ resultId: r.resultId, version: 1 }], { title: 'Our secret overlay' }) });
    const refused = await other.agent.delete(`/api/groups/${otherGroup}/results/${r.resultId}`);
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).not.toContain('Our secret overlay');
    expect(refused.body.error.message).toContain("another group's figure");
  });
});

describe("the composer's layer data", () => {
  test('the layer picker lists what the group may pin: its own results in any state, other groups’ public ones at their newest non-draft version', async () => {
    // The editor also belongs to the other group: its own list shows that group's drafts and
    // private results, which this group may not pin.
    await addToGroup(t, otherGroup, crew.editor, 'viewer');
    try {
      const mine = await crew.editor.agent.get('/api/results?pageSize=100');
      const mineById = new Map((mine.body.items as { id: string; version: number }[]).map((r) => [r.id, r.version]));
      expect(mineById.get(ids.otherPublic)).toBe(2);
      expect(mineById.has(ids.otherPrivate)).toBe(true);
      const res = await crew.editor.agent.get(`/api/groups/${groupId}/pinnable-results?pageSize=100`);
      expect(res.status).toBe(200);
      const byId = new Map((res.body.items as { id: string; version: number; state: string }[]).map((r) => [r.id, r]));
      expect(byId.get(ids.own)).toMatchObject({ version: 1, state: 'published' });
      expect(byId.get(ids.ownDraft)).toMatchObject({ version: 1, state: 'draft' });
      expect(byId.get(ids.otherPublic)).toMatchObject({ version: 1, state: 'published' });
      expect(byId.has(ids.otherPrivate)).toBe(false);
      // Each offered version can indeed be pinned.
      const fig = await create(crew.editor, { spec: spec([...byId.values()].filter((r) => [ids.own, ids.ownDraft, ids.otherPublic].includes(r.id)).map((r) => ({ resultId: r.id, version: r.version }))) });
      expect(fig.latest.layers.every((l) => l.available)).toBe(true);
    } finally {
      await t.ctx.db.delete(memberships).where(and(eq(memberships.groupId, otherGroup), eq(memberships.userId, crew.editor.user.id)));
    }
    // Search and bad queries behave as on the group's own list.
    const found = await crew.viewer.agent.get(`/api/groups/${groupId}/pinnable-results?q=${encodeURIComponent('another group')}`);
    expect(found.body.items.map((r: { id: string }) => r.id)).toEqual([ids.otherPublic]);
    const bad = await crew.viewer.agent.get(`/api/groups/${groupId}/pinnable-results?pageSize=0`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('query.pageSize');
    expect((await other.agent.get(`/api/groups/${groupId}/pinnable-results`)).status).toBe(404);
  });


  test('each layer as the group may draw it; the others say only that they are unavailable', async () => {
    const fresh = (await makeResult(crew.analyst, groupId, { meta: { title: 'Result without a hue yet' } })).resultId;
    const res = await crew.viewer.agent.post(`/api/groups/${groupId}/layer-data`).send({
      layers: [
        { resultId: ids.own, version: 1 },
        { resultId: ids.ownDraft, version: 1, hue: 11 },
        { resultId: ids.otherPublic, version: 1 },
        { resultId: ids.otherPrivate, version: 1 },
        { resultId: ids.otherPublic, version: 2 },
        { resultId: fresh, version: 1 },
      ],
    });
    expect(res.status).toBe(200);
    const layers = res.body.layers as FigureLayerData[];
    expect(layers.map((l) => l.available)).toEqual([true, true, true, false, false, true]);
    expect(layers[3]).toEqual({ available: false, resultId: ids.otherPrivate, version: 1 });
    expect(layers[4]).toEqual({ available: false, resultId: ids.otherPublic, version: 2 });
    const [own, draft, pub, , , unhued] = layers as Extract<FigureLayerData, { available: true }>[];
    expect(own!.title).toBe('Own dijet search');
    expect(own!.curve.x.length).toBeGreaterThan(2);
    expect(own!.meta).toMatchObject({ quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18 });
    expect(draft!.hue).toBe(11);
    // A result without a hue gets the one it would get when saved: one nobody in the group uses.
    const detail = (await crew.viewer.agent.get(`/api/groups/${groupId}/figures`)).body;
    expect(detail.figures.length).toBeGreaterThan(0);
    expect([own!.hue, pub!.hue]).not.toContain(unhued!.hue);
  });

  test('outsiders are not found and bad requests name the field', async () => {
    expect((await other.agent.post(`/api/groups/${groupId}/layer-data`).send({ layers: [] })).status).toBe(404);
    expect((await request(t.app).post(`/api/groups/${groupId}/layer-data`).send({ layers: [] })).status).toBe(401);
    const bad = await crew.viewer.agent.post(`/api/groups/${groupId}/layer-data`).send({ layers: [{ resultId: 'x', version: 1 }] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('layers.0.resultId');
  });
});

describe('public flag, duplicate and outreach copies', () => {
  test('PATCH makes a figure public; the public list shows it (with its group name) and finds it by title', async () => {
    const fig = await create(crew.editor, { spec: spec([{ resultId: ids.otherPublic, version: 1 }], { title: 'Kingfisher overlay for everyone' }) });
    const res = await crew.editor.agent.patch(`/api/groups/${groupId}/figures/${fig.id}`).send({ public: true });
    expect(res.status).toBe(200);
    expect(res.body.isPublic).toBe(true);
    const page = (await request(t.app).get('/api/public/figures').query({ q: 'kingfisher' })).body as PublicFigurePage;
    expect(page.items).toEqual([expect.objectContaining({ id: fig.id, title: 'Kingfisher overlay for everyone', theme: 'publication', version: 1 })]);
    expect(page.items[0]!.groupName).toMatch(/Fictional Collider Search/);
    expect((await crew.editor.agent.patch(`/api/groups/${groupId}/figures/${fig.id}`).send({ public: 'yes' })).status).toBe(400);
    await crew.editor.agent.patch(`/api/groups/${groupId}/figures/${fig.id}`).send({ public: false });
    expect(((await request(t.app).get('/api/public/figures').query({ q: 'kingfisher' })).body as PublicFigurePage).items).toEqual([]);
  });

  test('duplicate makes a new private figure with the same spec', async () => {
    const fig = await create(crew.editor, { spec: spec([{ resultId: ids.own, version: 1 }], { title: 'Original figure' }), public: true });
    const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures/${fig.id}/duplicate`).send({});
    expect(res.status).toBe(201);
    const copy = res.body as FigureDetail;
    expect(copy).toMatchObject({ title: 'Copy of Original figure', version: 1, isPublic: false, derivedFrom: fig.id });
    expect(copy.id).not.toBe(fig.id);
    expect(copy.latest.spec.layers).toEqual(fig.latest.spec.layers);
    const named = await crew.editor.agent.post(`/api/groups/${groupId}/figures/${fig.id}/duplicate`).send({ title: 'Named copy' });
    expect(named.body.title).toBe('Named copy');
    expect((await crew.viewer.agent.post(`/api/groups/${groupId}/figures/${fig.id}/duplicate`).send({})).status).toBe(403);
  });

  test('outreach makes a plain-language copy: outreach theme, one band, plain labels, energy label kept', async () => {
    const fig = await create(crew.editor, {
      spec: spec([{ resultId: ids.own, version: 1 }, { resultId: ids.otherPublic, version: 1, label: '$V^{\\prime}$ combined' }], {
        title: 'Paper figure',
        annotations: [{ text: '$\\sqrt{s}$ = 18 TeV', x: 0.05, y: 0.9 }],
      }),
    });
    const res = await crew.editor.agent.post(`/api/groups/${groupId}/figures/${fig.id}/outreach`).send({ size: 'slide' });
    expect(res.status).toBe(201);
    const s = (res.body as FigureDetail).latest.spec;
    expect(res.body).toMatchObject({ title: 'Paper figure (for the public)', theme: 'outreach', derivedFrom: fig.id, isPublic: false });
    expect(s).toMatchObject({ theme: 'outreach', size: { preset: 'slide' }, energyLabel: true, clLabel: false, excludedShading: true, bandsLayer: 0 });
    expect([s.x.label, s.y.label]).toEqual(['', '']);
    expect(s.layers.map((l) => [l.show.band1, l.show.band2])).toEqual([
      [true, false],
      [false, false],
    ]);
    expect(s.layers[1]!.label).toBe('V′ combined');
    expect(s.annotations[0]!.text).toBe('√s = 18 TeV');
    const web = await crew.editor.agent.post(`/api/groups/${groupId}/figures/${fig.id}/outreach`).send({});
    expect(web.body.latest.spec.size).toEqual({ preset: 'web' });
  });
});

describe('house style and hues', () => {
  test('anyone in the group reads the house style; curators and owners change it', async () => {
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/style`)).body).toEqual({ style: {}, updatedAt: null });
    const style = { font: 'sans', palette: ['#112233', '#445566', '#778899'], lineScale: 1.5 };
    expect((await crew.analyst.agent.put(`/api/groups/${groupId}/style`).send({ style })).status).toBe(403);
    const ok = await crew.curator.agent.put(`/api/groups/${groupId}/style`).send({ style });
    expect(ok.status).toBe(200);
    expect(ok.body.style).toEqual(style);
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/style`)).body.style).toEqual(style);
    const bad = await crew.owner.agent.put(`/api/groups/${groupId}/style`).send({ style: { palette: ['red', '#000000'] } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('style.palette.0');
    await crew.owner.agent.put(`/api/groups/${groupId}/style`).send({ style: {} });
  });

  test("an editor sets a result's hue; figures of the group draw it with that hue unless a layer overrides it", async () => {
    const fig = await create(crew.editor, { spec: spec([{ resultId: ids.own, version: 1 }, { resultId: ids.otherPublic, version: 1, hue: 7 }]) });
    const res = await crew.editor.agent.put(`/api/groups/${groupId}/results/${ids.own}/hue`).send({ hue: 9 });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ resultId: ids.own, hue: 9 });
    const detail = (await crew.viewer.agent.get(`/api/groups/${groupId}/figures/${fig.id}`)).body as FigureDetail;
    expect(detail.latest.layers.map((l) => l.hue)).toEqual([9, 7]);

    expect((await crew.viewer.agent.put(`/api/groups/${groupId}/results/${ids.own}/hue`).send({ hue: 2 })).status).toBe(403);
    expect((await crew.editor.agent.put(`/api/groups/${groupId}/results/${ids.own}/hue`).send({ hue: 12 })).status).toBe(400);
    // Another group's public result may get a hue here; its private one is not found.
    expect((await crew.editor.agent.put(`/api/groups/${groupId}/results/${ids.otherPublic}/hue`).send({ hue: 4 })).status).toBe(200);
    expect((await crew.editor.agent.put(`/api/groups/${groupId}/results/${ids.otherPrivate}/hue`).send({ hue: 4 })).status).toBe(404);
  });
});

describe('the typesetter route', () => {
  test('signed-in callers get paths and metrics by label key; TeX errors come back per label', async () => {
    const labels = [
      { label: "$m_{V'}$ [TeV]", size: 8, font: 'serif' as const },
      { label: '$\\frac{$', size: 8, font: 'sans' as const },
    ];
    const res = await crew.viewer.agent.post('/api/typeset').send({ labels });
    expect(res.status).toBe(200);
    const glyphs = (res.body as TypesetResponse).glyphs;
    expect(Object.keys(glyphs).sort()).toEqual(labels.map(labelKey).sort());
    const good = glyphs[labelKey(labels[0]!)]!;
    expect(good.width).toBeGreaterThan(10);
    expect(good.paths.length).toBe(8); // one per glyph: m, V, ′, then [, T, e, V, ]
    expect(good.error).toBeUndefined();
    expect(glyphs[labelKey(labels[1]!)]!.error).toMatch(/TeX error/);
  });

  test('anonymous callers, too many labels, long labels and odd sizes are refused', async () => {
    expect((await request(t.app).post('/api/typeset').send({ labels: [] })).status).toBe(401);
    const many = Array.from({ length: 501 }, (_, i) => ({ label: String(i), size: 8, font: 'sans' }));
    const cases: Array<[unknown, string]> = [
      [many, 'labels'],
      [[{ label: 'x'.repeat(201), size: 8, font: 'sans' }], 'labels.0.label'],
      [[{ label: 'x', size: 2, font: 'sans' }], 'labels.0.size'],
      [Array.from({ length: 101 }, () => ({ label: 'x'.repeat(200), size: 8, font: 'sans' })), 'labels'],
      [[{ label: 'x', size: 8, font: 'comic' }], 'labels.0.font'],
    ];
    for (const [labels, field] of cases) {
      const res = await crew.viewer.agent.post('/api/typeset').send({ labels });
      expect(res.status).toBe(400);
      expect(res.body.error.details[0].field).toBe(field);
    }
  });
});
