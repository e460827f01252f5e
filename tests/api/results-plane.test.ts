import request from 'supertest';
import { startTestApp, type TestApp } from '../helpers/app';
import { figureSpec } from '../helpers/figures';
import { makeCrew, makeGroupWithRoles, makePlaneResult, makeResult, publishVersion, registryProbe, sampleMeta, samplePlane, samplePlaneCsv, type Crew, type Person } from '../helpers/factories';
import type { Plane } from '@/shared/schemas/plane';
import type { ResultVersion } from '@/shared/schemas/results';

/**
 * Results over two parameters (a plane of points x[k], y[k]): stored through the same upload
 * routes as curves (JSON with `plane`, a CSV with two parameter columns, the project's JSON file),
 * read back with their contour lines, downloaded as points and as lines, counted as stored bytes;
 * every bad plane is refused naming the field or the file's line and column, storing nothing.
 */

let t: TestApp;
let crew: Crew;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
}, 60_000);
afterAll(async () => t?.close());
const anon = () => request.agent(t.app);

type Detail = { field: string; message: string };
const details = (body: { error?: { details?: Detail[] } }) => body.error?.details ?? [];
const planeMeta = (over: Record<string, unknown> = {}) => sampleMeta({ title: 'Search for an invented scalar X decaying to χχ', parameterName: 'm_X', parameterUnit: 'GeV', ...over });

function uploadFile(person: Person, groupId: string, content: string, name: string, meta: object | null = planeMeta()) {
  let req = person.agent.post(`/api/groups/${groupId}/results`);
  if (meta) req = req.field('meta', JSON.stringify(meta));
  return req.attach('file', Buffer.from(content, 'utf8'), name);
}

const postPlane = (person: Person, groupId: string, plane: unknown, extra: object = {}) =>
  person.agent.post(`/api/groups/${groupId}/results`).send({ meta: planeMeta(), plane, ...extra });

/** The stored state of a group: results and bytes (a refusal must leave both as they were). */
const stateOf = async (groupId: string) => ({ results: await registryProbe.resultCount(t, groupId), bytes: await registryProbe.storageBytes(t, groupId) });

const lineCount = (lines: { points: unknown[] }[] | undefined) => lines?.length ?? 0;

describe('storing and reading a plane', () => {
  test('a JSON body with a plane is stored as draft version 1 with its points and contour lines, and its bytes counted', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const plane = samplePlane();
    const res = await postPlane(crew.analyst, groupId, plane);
    expect(res.status).toBe(201);
    const v = res.body as ResultVersion;
    expect(v).toMatchObject({ version: 1, state: 'draft', curve: null, theory: null });
    expect(v.plane).toEqual(plane);
    expect(v.exclusion.ranges).toBeNull();
    expect(v.exclusion.problem).toMatch(/two parameters/);
    // The theory falls faster than the limits: the observed region ends inside the plane.
    expect(v.planeContours).not.toBeNull();
    expect(lineCount(v.planeContours!.observed)).toBeGreaterThan(0);
    expect(lineCount(v.planeContours!.expected['0'])).toBeGreaterThan(0);
    for (const line of v.planeContours!.observed!) for (const [x, y] of line.points) {
      expect(x).toBeGreaterThanOrEqual(1000);
      expect(x).toBeLessThanOrEqual(3000);
      expect(y).toBeGreaterThanOrEqual(100);
      expect(y).toBeLessThanOrEqual(700);
    }
    // Read back: the same version through the group route.
    const read = (await crew.viewer.agent.get(`/api/groups/${groupId}/results/${v.resultId}/versions/1`)).body as ResultVersion;
    expect(read.plane).toEqual(plane);
    expect(read.planeContours).toEqual(v.planeContours);
    // The one storage rule: its normalized JSON (export.json) and its contour lines (contours.json), no file.
    const points = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${v.resultId}/versions/1/export.json`);
    const lines = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${v.resultId}/versions/1/contours.json`);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(Buffer.byteLength(points.text) + Buffer.byteLength(lines.text));
  });

  test('a CSV with two parameter columns is detected as a plane, named by its headers, its file counted too', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const csv = samplePlaneCsv();
    const res = await uploadFile(crew.analyst, groupId, csv, 'plane.csv');
    expect(res.status).toBe(201);
    const v = res.body as ResultVersion;
    expect(v.plane).toEqual(samplePlane());
    expect(v.plane).toMatchObject({ yName: 'm_chi', yUnit: 'GeV' });
    expect(v.sourceFile).toEqual({ name: 'plane.csv', bytes: Buffer.byteLength(csv) });
    expect((res.body as { warnings: unknown[] }).warnings).toEqual([]);
    const points = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${v.resultId}/versions/1/export.json`);
    const lines = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${v.resultId}/versions/1/contours.json`);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(Buffer.byteLength(csv) + Buffer.byteLength(points.text) + Buffer.byteLength(lines.text));
  });

  test('the second parameter can be named at upload, and an explicit mapping gives the roles', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const csv = samplePlaneCsv(samplePlane(), ['a', 'b', 'obs', 'exp', 'exp_m2', 'exp_m1', 'exp_p1', 'exp_p2', 'theory', 'theory_low', 'theory_up']);
    const mapping = { x: 0, y: 1, observed: 2, expected: 3, expectedMinus2: 4, expectedMinus1: 5, expectedPlus1: 6, expectedPlus2: 7, theory: 8, theoryLower: 9, theoryUpper: 10 };
    const res = await uploadFile(crew.analyst, groupId, csv, 'mapped.csv').field('mapping', JSON.stringify(mapping)).field('yName', 'm(χ)').field('yUnit', 'TeV');
    expect(res.status).toBe(201);
    expect((res.body as ResultVersion).plane).toMatchObject({ yName: 'm(χ)', yUnit: 'TeV', x: samplePlane().x });
  });

  test("the project's JSON file with a plane is stored, and is what export.json gives back", async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const first = await makePlaneResult(crew.analyst, groupId);
    const file = (await crew.viewer.agent.get(`/api/groups/${groupId}/results/${first.resultId}/versions/1/export.json`)).text;
    expect(JSON.parse(file)).toMatchObject({ format: 'bandwright-limit-result/1', plane: samplePlane(), meta: { parameterName: 'm_X' } });
    const res = await uploadFile(crew.analyst, groupId, file, 'again.json', null);
    expect(res.status).toBe(201);
    expect((res.body as ResultVersion).plane).toEqual(samplePlane());
    expect((res.body as ResultVersion).planeContours).toEqual(first.planeContours);
  });

  test('versions, publishing and permanent links work as for one parameter; downloads give points and lines', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v1 = await makePlaneResult(crew.analyst, groupId);
    const plane2 = samplePlane(6, 5);
    const v2 = await crew.analyst.agent.post(`/api/groups/${groupId}/results/${v1.resultId}/versions`).send({ meta: planeMeta(), plane: plane2, changeNote: 'A finer grid' });
    expect(v2.status).toBe(201);
    expect((v2.body as ResultVersion).version).toBe(2);
    const published = await publishVersion(crew.curator, groupId, v1.resultId, 2, true);
    expect(published.permalink).toMatch(/\/r\/.+\/v2$/);
    const link = await anon().get(`/api/public/results/${v1.slug}/v2`);
    expect(link.status).toBe(200);
    expect((link.body as ResultVersion).plane).toEqual(plane2);

    const csv = await anon().get(`/api/public/results/${v1.slug}/v2/export.csv`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    const rows = csv.text.trim().split('\n');
    expect(rows[0]).toBe('m_X [GeV],m_chi [GeV],observed,expected,expected_minus_2sigma,expected_minus_1sigma,expected_plus_1sigma,expected_plus_2sigma,theory,theory_lower,theory_upper');
    expect(rows).toHaveLength(1 + 30);
    expect(rows[1]!.split(',').slice(0, 3).map(Number)).toEqual([plane2.x[0], plane2.y[0], plane2.observed![0]]);

    const lines = await anon().get(`/api/public/results/${v1.slug}/v2/contours.csv`);
    expect(lines.status).toBe(200);
    expect(lines.headers['content-disposition']).toMatch(/^attachment; filename="?[^"]*-contours-v2\.csv"?$/);
    const lineRows = lines.text.trim().split('\n');
    expect(lineRows[0]).toBe('line,which,closed,vertex,m_X [GeV],m_chi [GeV]');
    const contours = (link.body as ResultVersion).planeContours!;
    const vertices = [contours.observed, contours.observedTheoryLower, contours.observedTheoryUpper, contours.expected['0'], contours.expected['-1'], contours.expected['1']].flat().reduce((s, l) => s + (l?.points.length ?? 0), 0);
    expect(lineRows).toHaveLength(1 + vertices);
    expect(lineRows.slice(1).map((r) => r.split(',')[1])).toContain('observed');
    expect(lineRows[1]!.split(',').slice(0, 4)).toEqual(['1', 'observed', contours.observed![0]!.closed ? 'yes' : 'no', '1']);

    const json = await anon().get(`/api/public/results/${v1.slug}/v2/contours.json`);
    expect(json.status).toBe(200);
    expect(JSON.parse(json.text)).toEqual({ format: 'bandwright-plane-contours/1', x: { name: 'm_X', unit: 'GeV' }, y: { name: 'm_chi', unit: 'GeV' }, quantity: 'xsec', contours });
    // A draft stays private: the first version is not on the public routes.
    expect((await anon().get(`/api/public/results/${v1.slug}/v1/contours.json`)).status).toBe(404);
  });

  test('a one-parameter version has no contour lines (404 saying why); its downloads are unchanged', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v = await makeResult(crew.analyst, groupId);
    const res = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${v.resultId}/versions/1/contours.csv`);
    expect(res.status).toBe(404);
    expect(res.body.error.message).toMatch(/one parameter/);
    expect(v.plane).toBeNull();
    expect(v.planeContours).toBeNull();
  });

  test('a draft plane can be edited with a plane; a curve is refused by name, and so is a plane on a curve', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const v = await makePlaneResult(crew.analyst, groupId);
    const before = await registryProbe.storageBytes(t, groupId);
    const bigger = samplePlane(7, 4);
    const ok = await crew.analyst.agent.patch(`/api/groups/${groupId}/results/${v.resultId}/versions/1`).send({ plane: bigger });
    expect(ok.status).toBe(200);
    expect((ok.body as ResultVersion).plane!.x).toHaveLength(28);
    expect(await registryProbe.storageBytes(t, groupId)).toBeGreaterThan(before);
    const curve = await crew.analyst.agent.patch(`/api/groups/${groupId}/results/${v.resultId}/versions/1`).send({ curve: { x: [1, 2], observed: [1, 1] } });
    expect(curve.status).toBe(400);
    expect(details(curve.body).map((d) => d.field)).toEqual(['curve']);
    const one = await makeResult(crew.analyst, groupId);
    const plane = await crew.analyst.agent.patch(`/api/groups/${groupId}/results/${one.resultId}/versions/1`).send({ plane: samplePlane() });
    expect(plane.status).toBe(400);
    expect(details(plane.body).map((d) => d.field)).toEqual(['plane']);
  });

  test('figures and envelopes of curves refuse a plane by name', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const p = await makePlaneResult(crew.analyst, groupId);
    const c = await makeResult(crew.analyst, groupId);
    const env = await crew.analyst.agent.post(`/api/groups/${groupId}/envelopes`).send({ inputs: [{ resultId: c.resultId, version: 1 }, { resultId: p.resultId, version: 1 }] });
    expect(env.status).toBe(400);
    expect(details(env.body)).toEqual([expect.objectContaining({ field: 'inputs.1', message: expect.stringMatching(/two parameters/) })]);
    const fig = await crew.editor.agent.post(`/api/groups/${groupId}/figures`).send({ spec: figureSpec([{ resultId: c.resultId, version: 1 }, { resultId: p.resultId, version: 1 }]) });
    expect(fig.status).toBe(400);
    expect(details(fig.body)).toEqual([expect.objectContaining({ field: 'spec.layers.1', message: expect.stringMatching(/two parameters/) })]);
  });
});

describe('bad planes are refused naming the field, storing nothing', () => {
  const base = () => samplePlane(3, 3);
  const cases: [string, () => unknown, RegExp][] = [
    ['a zero limit', () => ({ ...base(), observed: base().observed!.map((v, i) => (i === 4 ? 0 : v)) }), /^plane\.observed\.4$/],
    ['a negative limit', () => ({ ...base(), expected: { ...base().expected, '0': base().expected!['0']!.map((v, i) => (i === 2 ? -1 : v)) } }), /^plane\.expected\.0\.2$/],
    ['a band out of order (−1σ above the median)', () => ({ ...base(), expected: { ...base().expected, '-1': base().expected!['0']!.map((v, i) => (i === 5 ? v * 2 : v * 0.8)) } }), /^plane\.expected\.-1\.5$/],
    ['a value that is not a number', () => ({ ...base(), x: base().x.map((v, i) => (i === 7 ? 'heavy' : v)) }), /^plane\.x\.7$/],
    ['columns of different lengths', () => ({ ...base(), observed: base().observed!.slice(1) }), /^plane\.observed$/],
    ['theory with limits on μ', () => base(), /^plane\.theory$/],
    ['a duplicate point', () => ({ ...base(), x: base().x.map((v, i) => (i === 4 ? base().x[3]! : v)), y: base().y.map((v, i) => (i === 4 ? base().y[3]! : v)) }), /^plane\.[xy]\.4$/],
    ['a point off the grid (alone on its x and its y)', () => ({ ...base(), x: base().x.map((v, i) => (i === 8 ? v + 13 : v)), y: base().y.map((v, i) => (i === 8 ? v + 17 : v)) }), /^plane\.x\.8$/],
    ['points that do not form a grid (under half its cells)', () => ({ ...base(), x: base().x.map((v, i) => (i >= 3 ? 1000 + 100 * i : v)) }), /^plane\.x$/],
    ['a one-row grid (every y the same)', () => ({ ...base(), x: base().x.map((_, i) => 1000 + 10 * i), y: base().y.map(() => 100) }), /^plane\.y$/],
    ['an axis with one value', () => ({ ...base(), x: base().x.map(() => 1000), y: base().y.map((_, i) => 100 + i) }), /^plane\.x$/],
  ];
  test.each(cases)('%s', async (what, make, field) => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const before = await stateOf(groupId);
    const extra = what.startsWith('theory with') ? { meta: planeMeta({ quantity: 'mu', quantityUnit: '' }) } : {};
    const res = await postPlane(crew.analyst, groupId, make(), extra);
    expect(res.status).toBe(400);
    expect(details(res.body).map((d) => d.field)).toEqual(expect.arrayContaining([expect.stringMatching(field)]));
    expect(await stateOf(groupId)).toEqual(before);
  });

  test('a grid over 200 values on an axis is refused', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const before = await stateOf(groupId);
    const plane: Plane = { ...samplePlane(201, 2) };
    delete plane.theory;
    const res = await postPlane(crew.analyst, groupId, plane);
    expect(res.status).toBe(400);
    expect(details(res.body)[0]!.field).toMatch(/^plane/);
    expect(res.body.error.message).toMatch(/200/);
    expect(await stateOf(groupId)).toEqual(before);
  });

  test('more points than 200 × 200 are refused before they are read', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const n = 40_001;
    const res = await postPlane(crew.analyst, groupId, { yName: 'm_chi', x: new Array(n).fill(1), y: new Array(n).fill(1), observed: new Array(n).fill(1) });
    expect(res.status).toBe(400);
    expect(details(res.body).map((d) => d.field)).toEqual(['plane.x', 'plane.y', 'plane.observed']);
  });

  test('a body with both a curve and a plane is refused naming curve', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await postPlane(crew.analyst, groupId, samplePlane(), { curve: { x: [1, 2], observed: [1, 1] } });
    expect(res.status).toBe(400);
    expect(details(res.body).map((d) => d.field)).toEqual(['curve']);
  });

  test('a plane without the second parameter name is refused naming plane.yName', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const { yName: _, ...plane } = samplePlane();
    const res = await postPlane(crew.analyst, groupId, plane);
    expect(res.status).toBe(400);
    expect(details(res.body).map((d) => d.field)).toEqual(['plane.yName']);
  });
});

describe('bad plane files are refused by line and column, storing nothing', () => {
  const lines = () => samplePlaneCsv(samplePlane(3, 3)).trim().split('\n');
  /** The file with the cells of one line replaced (column number from 0 → new text). */
  const edit = (ls: string[], line: number, col: number, value: string, more: [number, string][] = []) => {
    const cells = ls[line - 1]!.split(',');
    for (const [c, v] of [[col, value] as [number, string], ...more]) cells[c] = v;
    ls[line - 1] = cells.join(',');
    return `${ls.join('\n')}\n`;
  };

  test.each([
    ['a non-number', (ls: string[]) => edit(ls, 4, 2, 'n/a'), 'line 4, obs', /not a number/],
    ['−1σ above the median', (ls: string[]) => edit(ls, 5, 5, '99'), 'line 5, exp_m1', /above/],
    ['a zero limit', (ls: string[]) => edit(ls, 3, 3, '0'), 'line 3, exp', /positive/],
  ])('%s', async (_what, change, field, message) => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const before = await stateOf(groupId);
    const res = await uploadFile(crew.analyst, groupId, change(lines()), 'bad.csv');
    expect(res.status).toBe(400);
    expect(details(res.body)).toEqual(expect.arrayContaining([expect.objectContaining({ field, message: expect.stringMatching(message) })]));
    expect(await stateOf(groupId)).toEqual(before);
  });

  test('a duplicate (x, y) and a point off the grid are named by their line', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const before = await stateOf(groupId);
    // Line 6 (point 5) repeats line 5's (x, y).
    const line5 = lines()[4]!.split(',');
    const duplicate = edit(lines(), 6, 0, line5[0]!, [[1, line5[1]!]]);
    const res = await uploadFile(crew.analyst, groupId, duplicate, 'dup.csv');
    expect(res.status).toBe(400);
    expect(details(res.body)[0]!.field).toMatch(/^line 6, m_(X|chi) \[GeV\]$/);
    expect(details(res.body)[0]!.message).toMatch(/line 5/);
    // Line 10 (point 8) moved off both its grid lines.
    const off = await uploadFile(crew.analyst, groupId, edit(lines(), 10, 0, '2013', [[1, '517']]), 'off.csv');
    expect(off.status).toBe(400);
    expect(details(off.body)[0]).toEqual({ field: 'line 10, m_X [GeV]', message: expect.stringMatching(/^m_X \[GeV\] \(line 10\) and m_chi \[GeV\] \(line 10\) are off the grid/) });
    expect(await stateOf(groupId)).toEqual(before);
  });

  test("a project JSON file with a bad plane names the plane's field", async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const plane = samplePlane(3, 3);
    plane.observed![2] = -4;
    const file = JSON.stringify({ format: 'bandwright-limit-result/1', meta: planeMeta(), plane });
    const res = await uploadFile(crew.analyst, groupId, file, 'bad.json', null);
    expect(res.status).toBe(400);
    expect(details(res.body)).toEqual([expect.objectContaining({ field: 'plane.observed.2' })]);
  });
});

describe('lists say how many parameters a result is over', () => {
  type Row = { id: string; title: string; parameters: number; secondParameter: { name: string; unit: string } | null };
  const rowsOf = (body: { items: Row[] }) => Object.fromEntries(body.items.map((r) => [r.id, { parameters: r.parameters, secondParameter: r.secondParameter }]));

  test('a plane lists as 2 with its second parameter and a curve as 1, in the group, pinnable, signed-in and public lists; ?parameters keeps one sort', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const word = `Quillfeather${Date.now()}`;
    const plane = await makePlaneResult(crew.analyst, groupId, { meta: { title: `${word} scalar plane` } });
    const curve = await makeResult(crew.analyst, groupId, { meta: { title: `${word} dijet curve` } });
    const both = {
      [plane.resultId]: { parameters: 2, secondParameter: { name: 'm_chi', unit: 'GeV' } },
      [curve.resultId]: { parameters: 1, secondParameter: null },
    };
    const group = await crew.viewer.agent.get(`/api/groups/${groupId}/results`);
    expect(group.status).toBe(200);
    expect(rowsOf(group.body)).toEqual(both);
    const pinnable = await crew.viewer.agent.get(`/api/groups/${groupId}/pinnable-results?q=${word}`);
    expect(rowsOf(pinnable.body)).toEqual(both);
    const signedIn = await crew.viewer.agent.get(`/api/results?q=${word}`);
    expect(rowsOf(signedIn.body)).toEqual(both);

    // One sort only: what a figure's layer picker asks for.
    const planes = await crew.viewer.agent.get(`/api/groups/${groupId}/pinnable-results?q=${word}&parameters=2`);
    expect(planes.body).toMatchObject({ total: 1, items: [{ id: plane.resultId, parameters: 2 }] });
    const curves = await crew.viewer.agent.get(`/api/groups/${groupId}/results?parameters=1`);
    expect(curves.body).toMatchObject({ total: 1, items: [{ id: curve.resultId, parameters: 1 }] });

    // Drafts are not public; once published as public both show in the public list with their sort.
    expect((await anon().get(`/api/public/results?q=${word}`)).body.total).toBe(0);
    await publishVersion(crew.curator, groupId, plane.resultId, 1, true);
    await publishVersion(crew.curator, groupId, curve.resultId, 1, true);
    const open = await anon().get(`/api/public/results?q=${word}`);
    expect(open.status).toBe(200);
    expect(rowsOf(open.body)).toEqual(both);
    const openPlanes = await anon().get(`/api/public/results?q=${word}&parameters=2`);
    expect(openPlanes.body).toMatchObject({ total: 1, items: [{ id: plane.resultId, parameters: 2, secondParameter: { name: 'm_chi', unit: 'GeV' } }] });
    const signedOut = await anon().get(`/api/results?q=${word}&parameters=1`);
    expect(signedOut.body).toMatchObject({ total: 1, items: [{ id: curve.resultId, parameters: 1, secondParameter: null }] });
  });

  test('?parameters other than 1 or 2 is refused naming query.parameters', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    for (const [path, who] of [[`/api/groups/${groupId}/results`, crew.viewer.agent], [`/api/groups/${groupId}/pinnable-results`, crew.viewer.agent], ['/api/results', anon()], ['/api/public/results', anon()]] as const) {
      for (const bad of ['3', '0', '1.5', 'two']) {
        const res = await who.get(`${path}?parameters=${bad}`);
        expect(res.status).toBe(400);
        expect(details(res.body)).toEqual([expect.objectContaining({ field: 'query.parameters', message: 'must be 1 or 2' })]);
      }
    }
  });
});
