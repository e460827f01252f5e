import { startTestApp, type TestApp } from '../helpers/app';
import { makeCrew, makeGroupWithRoles, registryProbe, sampleCsv, sampleCurve, sampleMeta, type Crew, type Person } from '../helpers/factories';
import type { ResultVersion } from '@/shared/schemas/results';

/**
 * Uploads: CSV in its usual dialects, the project's JSON file and JSON bodies are stored as draft
 * version 1; every kind of bad file is refused with the line, the column and the reason, and a
 * refused upload stores nothing and counts no bytes.
 */

let t: TestApp;
let crew: Crew;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
}, 60_000);
afterAll(async () => t?.close());

type Detail = { field: string; message: string };
const details = (body: { error?: { details?: Detail[] } }) => body.error?.details ?? [];

function uploadCsv(person: Person, groupId: string, content: string | Buffer, opts: { name?: string; meta?: object | string | null; mapping?: object } = {}) {
  let req = person.agent.post(`/api/groups/${groupId}/results`);
  if (opts.meta !== null) req = req.field('meta', typeof opts.meta === 'string' ? opts.meta : JSON.stringify(opts.meta ?? sampleMeta()));
  if (opts.mapping) req = req.field('mapping', JSON.stringify(opts.mapping));
  return req.attach('file', Buffer.isBuffer(content) ? content : Buffer.from(content, 'utf8'), opts.name ?? 'limits.csv');
}

const storageOf = async (groupId: string) => (await crew.owner.agent.get(`/api/groups/${groupId}`)).body.storageBytes as number;

describe('good uploads', () => {
  test('the theory curve of a CSV is named at upload (theoryLabel); a name too long is refused by field', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const named = await uploadCsv(crew.analyst, groupId, sampleCsv()).field('theoryLabel', 'Z* benchmark (NLO)');
    expect(named.status).toBe(201);
    expect((named.body as ResultVersion).theory?.label).toBe('Z* benchmark (NLO)');
    const long = await uploadCsv(crew.analyst, groupId, sampleCsv()).field('theoryLabel', 'x'.repeat(121));
    expect(long.status).toBe(400);
    expect(details(long.body).map((d) => d.field)).toEqual(['theoryLabel']);
  });

  test('a comma CSV with bands and theory becomes draft version 1 with every column', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const csv = sampleCsv();
    const res = await uploadCsv(crew.analyst, groupId, csv);
    expect(res.status).toBe(201);
    const v = res.body as ResultVersion;
    const { curve, theory } = sampleCurve();
    expect(v).toMatchObject({ version: 1, state: 'draft', permalink: null, groupId, sourceFile: { name: 'limits.csv', bytes: Buffer.byteLength(csv) } });
    expect(v.meta).toMatchObject({ title: sampleMeta().title, sqrtS: 18, quantity: 'xsec', quantityUnit: 'fb', method: 'asymptotic' });
    expect(v.curve).toEqual(curve);
    expect(v.theory).toEqual({ x: theory.x, central: theory.central, lower: theory.lower, upper: theory.upper });
    expect(v.slug).toMatch(/^search-for-a-fictional-vector-boson-z-decaying-to-two-jets-[a-z0-9]{5}$/);
    // Derived numbers: the theory crosses the observed limit inside the range.
    expect(v.exclusion.problem).toBeNull();
    expect(v.exclusion.ranges?.observed).toEqual([expect.objectContaining({ from: 1000, fromOpen: true })]);
    expect(v.exclusion.ranges!.observed![0]!.to).toBeGreaterThan(1000);
    expect(v.exclusion.ranges!.observed![0]!.to).toBeLessThan(4500);
  });

  test('storage grows by exactly the uploaded bytes plus the normalized JSON (the export)', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const before = await storageOf(groupId);
    expect(before).toBe(0);
    const csv = sampleCsv({ n: 12 });
    const res = await uploadCsv(crew.analyst, groupId, csv);
    expect(res.status).toBe(201);
    const exported = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${res.body.resultId}/versions/1/export.json`);
    expect(exported.status).toBe(200);
    const after = await storageOf(groupId);
    expect(after - before).toBe(Buffer.byteLength(csv) + Buffer.byteLength(exported.text));

    // A JSON body has no file: only its normalized data counts.
    const { curve } = sampleCurve(5);
    const body = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta({ title: 'Without a file' }), curve });
    expect(body.status).toBe(201);
    expect(body.body.sourceFile).toBeNull();
    const exported2 = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${body.body.resultId}/versions/1/export.json`);
    expect((await storageOf(groupId)) - after).toBe(Buffer.byteLength(exported2.text));
  });

  test('semicolon files with decimal commas and tab files give the same curve as comma files', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const comma = await uploadCsv(crew.analyst, groupId, sampleCsv());
    const semi = await uploadCsv(crew.analyst, groupId, sampleCsv({ delimiter: ';', decimalComma: true }), { name: 'limits-semicolon.csv' });
    const tab = await uploadCsv(crew.analyst, groupId, sampleCsv({ delimiter: '\t' }), { name: 'limits.tsv' });
    expect([comma.status, semi.status, tab.status]).toEqual([201, 201, 201]);
    expect(semi.body.curve).toEqual(comma.body.curve);
    expect(tab.body.curve).toEqual(comma.body.curve);
    expect(semi.body.theory).toEqual(comma.body.theory);
  });

  test('unusual column names are recognised without a mapping', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const headers = ["M_Z* [GeV]", 'Obs. limit (fb)', 'Expected median', 'Exp -2σ', 'Exp. -1 sigma', 'exp+1s', 'Exp +2σ', 'Theory xsec', 'theory low', 'theory up'];
    const res = await uploadCsv(crew.analyst, groupId, sampleCsv({ headers }));
    expect(res.status).toBe(201);
    expect(res.body.curve).toEqual(sampleCurve().curve);
  });

  test('an explicit mapping picks the columns (and leaves the others out)', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const csv = 'a,b,c,comment\n1000,2.5,3.1,first\n1500,1.9,2.2,second\n2000,1.1,1.6,third\n';
    const res = await uploadCsv(crew.analyst, groupId, csv, { mapping: { x: 0, expected: 1, observed: 2 } });
    expect(res.status).toBe(201);
    expect(res.body.curve).toEqual({ x: [1000, 1500, 2000], observed: [3.1, 2.2, 1.6], expected: { '0': [2.5, 1.9, 1.1] } });
    expect(res.body.theory).toBeNull();
    expect(res.body.exclusion).toEqual({ ranges: null, problem: expect.stringContaining('No theory curve') });
  });

  test('columns with numbers but no role are named in the answer as warnings, never dropped silently', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const csv = 'mass,obs [pb],exp,xsec_alt,exp 2σ,comment\n1000,2.5,2.1,9,2.2,first\n1500,1.9,1.7,8,1.8,second\n2000,1.1,1.0,7,1.05,third\n';
    const res = await uploadCsv(crew.analyst, groupId, csv);
    expect(res.status).toBe(201);
    expect(res.body.curve).toEqual({ x: [1000, 1500, 2000], observed: [2.5, 1.9, 1.1], expected: { '0': [2.1, 1.7, 1.0] } });
    expect(res.body.warnings).toEqual([
      { field: 'column 4, xsec_alt', message: expect.stringContaining('holds numbers but has no role') },
      { field: 'column 5, exp 2σ', message: expect.stringContaining('holds numbers but has no role') },
    ]);
    // Replayed with its key, the answer keeps its warnings.
    const keyed = () => crew.analyst.agent.post(`/api/groups/${groupId}/results`).set('Idempotency-Key', 'warnings-replay-01').field('meta', JSON.stringify(sampleMeta())).attach('file', Buffer.from(csv), 'limits.csv');
    const first = await keyed();
    const again = await keyed();
    expect(again.headers['idempotent-replayed']).toBe('true');
    expect(again.body.warnings).toEqual(first.body.warnings);
    expect(again.body.warnings).toHaveLength(2);
    // Every numeric column with a role: no warnings.
    const all = await uploadCsv(crew.analyst, groupId, csv, { mapping: { x: 0, observed: 1, expected: 2, theory: 3 } });
    expect(all.status).toBe(201);
    expect(all.body.warnings).toEqual([{ field: 'column 5, exp 2σ', message: expect.any(String) }]);
    const json = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(), curve: sampleCurve(3).curve });
    expect(json.body.warnings).toEqual([]);
  });

  test("the project's JSON file round-trips: download a version and upload it again, without a meta field", async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const first = await uploadCsv(crew.analyst, groupId, sampleCsv());
    const file = await crew.analyst.agent.get(`/api/groups/${groupId}/results/${first.body.resultId}/versions/1/export.json`);
    expect(file.body.format).toBe('bandwright-limit-result/1');
    const again = await uploadCsv(crew.analyst, groupId, file.text, { name: 'limits.json', meta: null });
    expect(again.status).toBe(201);
    expect(again.body.curve).toEqual(first.body.curve);
    expect(again.body.theory).toEqual(first.body.theory);
    expect(again.body.meta).toEqual(first.body.meta);
    expect(again.body.sourceFile).toEqual({ name: 'limits.json', bytes: Buffer.byteLength(file.text) });
    // A meta field replaces the file's own provenance.
    const renamed = await uploadCsv(crew.analyst, groupId, file.text, { name: 'limits.json', meta: sampleMeta({ title: 'Renamed on upload' }) });
    expect(renamed.status).toBe(201);
    expect(renamed.body.meta.title).toBe('Renamed on upload');
  });

  test('a JSON body with a theory curve on its own grid', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const { curve } = sampleCurve();
    const theory = { label: 'NLO benchmark', x: [800, 2000, 3000, 5000], central: [300, 30, 6, 0.3] };
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(), curve, theory });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ version: 1, state: 'draft', curve, theory, sourceFile: null });
    expect(res.body.exclusion.ranges.observed.length).toBeGreaterThan(0);
    // The CSV export holds the limits only (the theory is on another grid); the JSON holds both.
    const csv = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${res.body.resultId}/versions/1/export.csv`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/^text\/csv/);
    expect(csv.headers['content-disposition']).toMatch(new RegExp(`^attachment; filename="?${res.body.slug}-v1\\.csv"?$`));
    expect(csv.text.split('\n')[0]).toBe('m(Z*) [GeV],observed,expected,expected_minus_2sigma,expected_minus_1sigma,expected_plus_1sigma,expected_plus_2sigma');
    expect(csv.text.trim().split('\n')).toHaveLength(curve.x.length + 1);
    const json = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${res.body.resultId}/versions/1/export.json`);
    expect(json.headers['content-disposition']).toMatch(new RegExp(`^attachment; filename="?${res.body.slug}-v1\\.json"?$`));
    expect(json.body).toEqual({ format: 'bandwright-limit-result/1', meta: res.body.meta, curve, theory });
  });

  test('titles and labels are stored as given, markup included (the app escapes them where shown)', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const title = '<script>alert(1)</script> Search & "quotes"';
    const res = await uploadCsv(crew.analyst, groupId, sampleCsv({ headers: ['<b>mass</b>', 'obs', 'exp', 'exp_m2', 'exp_m1', 'exp_p1', 'exp_p2', 'theory', 'theory_low', 'theory_up'] }), {
      meta: sampleMeta({ title, parameterName: '<i>m</i>' }),
    });
    expect(res.status).toBe(201);
    const v = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${res.body.resultId}/versions/1`);
    expect(v.headers['content-type']).toMatch(/^application\/json/);
    expect(v.body.meta).toMatchObject({ title, parameterName: '<i>m</i>' });
    expect(res.body.slug).toMatch(/^script-alert-1-script-search-quotes-[a-z0-9]{5}$/);

    const named = await uploadCsv(crew.analyst, groupId, sampleCsv(), { name: 'grenzen m(V′) σ×B.csv' });
    expect(named.body.sourceFile.name).toBe('grenzen m(V′) σ×B.csv');
  });

  test('a parameter name that a spreadsheet would run as a formula is neutralised in the CSV download', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const { curve } = sampleCurve(3);
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta({ parameterName: '=HYPERLINK("http://x.invalid")', parameterUnit: '' }), curve });
    expect(res.status).toBe(201);
    const csv = await crew.viewer.agent.get(`/api/groups/${groupId}/results/${res.body.resultId}/versions/1/export.csv`);
    expect(csv.text.split('\n')[0]).toMatch(/^"'=HYPERLINK\(""http:\/\/x\.invalid""\)",observed/);
    // The stored name itself is unchanged.
    expect(res.body.meta.parameterName).toBe('=HYPERLINK("http://x.invalid")');
  });
});

describe('bad files are refused with line, column and reason, and nothing is stored', () => {
  const header = 'mass,obs,exp,exp_minus_1sigma,exp_plus_1sigma';
  const cases: Array<[string, string | Buffer, Detail]> = [
    ['a non-numeric cell', `${header}\n1000,2.0,1.8,1.2,2.6\n1500,abc,1.1,0.8,1.6\n`, { field: 'line 3, obs', message: '"abc" is not a number' }],
    ['an empty cell', `${header}\n1000,2.0,1.8,1.2,2.6\n1500,1.2,,0.8,1.6\n`, { field: 'line 3, exp', message: 'is empty' }],
    ['a negative limit', `${header}\n1000,2.0,1.8,1.2,2.6\n1500,-1.2,1.1,0.8,1.6\n`, { field: 'line 3, obs', message: expect.stringContaining('must be positive') }],
    ['a band edge on the wrong side of the median', `${header}\n1000,2.0,1.8,1.9,2.6\n1500,1.2,1.1,0.8,1.6\n`, { field: 'line 2, exp_minus_1sigma', message: expect.stringContaining('−2σ ≤ −1σ ≤ median ≤ +1σ ≤ +2σ') }],
    ['an upper band edge below the median', `${header}\n1000,2.0,1.8,1.2,2.6\n1500,1.2,1.1,0.8,1.0\n`, { field: 'line 3, exp_plus_1sigma', message: expect.stringContaining('is above') }],
    ['a duplicate x', `${header}\n1000,2.0,1.8,1.2,2.6\n1000,1.2,1.1,0.8,1.6\n`, { field: 'line 3, mass', message: expect.stringContaining('duplicates') }],
    ['unsorted x', `${header}\n1500,2.0,1.8,1.2,2.6\n1000,1.2,1.1,0.8,1.6\n`, { field: 'line 3, mass', message: expect.stringContaining('smaller than the row before') }],
    ['no limit column', 'mass,comment\n1000,first\n1500,second\n', { field: 'mapping', message: expect.stringContaining('observed or an expected median') }],
    ['a row with a cell too many', `${header}\n1000,2.0,1.8,1.2,2.6\n1500,1.2,1.1,0.8,1.6,9\n`, { field: 'line 3, row', message: expect.stringContaining('has 6 cells but the header has 5') }],
    ['an empty file', '', { field: 'file', message: 'is empty' }],
    ['a header without rows', `${header}\n`, { field: 'file', message: 'has a header but no data rows' }],
    ['a file without a header', '1000,2.0\n1500,1.2\n', { field: 'line 1, header', message: expect.stringContaining('name the columns') }],
    ["the wrong delimiter ('|')", 'mass|obs|exp\n1000|2.0|1.8\n1500|1.2|1.1\n', { field: 'line 1, header', message: expect.stringContaining('one column only') }],
    ['Latin-1 bytes', Buffer.from('masse (TeV),obs µ,exp µ\n1,2.0,1.8\n1.5,1.2,1.1\n', 'latin1'), { field: 'file', message: expect.stringContaining('not UTF-8') }],
    ['a binary file', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0x00, 0x00]), { field: 'file', message: expect.stringMatching(/UTF-8|binary/) }],
    ['a JSON file that is not JSON', '{"format": "bandwright-limit-result/1", ', { field: 'file', message: expect.stringContaining('not valid JSON') }],
  ];

  test.each(cases)('%s', async (_name, content, detail) => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await uploadCsv(crew.analyst, groupId, content, { name: typeof content === 'string' && content.startsWith('{') ? 'limits.json' : 'limits.csv' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('invalid_file');
    expect(details(res.body)).toContainEqual(detail);
    expect(res.body.error.message).toContain(details(res.body)[0]!.field);
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
    expect(await storageOf(groupId)).toBe(0);
  });

  test('every problem of a file is listed at once, each by its line', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await uploadCsv(crew.analyst, groupId, 'mass,obs,exp\n1000,x,1\n2000,1,y\n3000,z,1\n');
    expect(res.status).toBe(400);
    expect(details(res.body).map((d) => d.field).sort()).toEqual(['line 2, obs', 'line 3, exp', 'line 4, obs']);
    expect(res.body.error.message).toMatch(/and 2 more problems/);
  });

  test("a project JSON file with a bad curve names the point and column, and its zod paths", async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const { curve } = sampleCurve(4);
    const bad = { format: 'bandwright-limit-result/1', meta: sampleMeta(), curve: { ...curve, observed: [1, 2, -3, 4] } };
    const res = await uploadCsv(crew.analyst, groupId, JSON.stringify(bad), { name: 'limits.json', meta: null });
    expect(res.status).toBe(400);
    expect(details(res.body)).toContainEqual({ field: 'point 3, observed', message: expect.stringContaining('must be positive') });
    const wrongFormat = await uploadCsv(crew.analyst, groupId, JSON.stringify({ ...bad, format: 'something-else/2', meta: { ...sampleMeta(), sqrtS: 'high' } }), { name: 'x.json', meta: null });
    expect(wrongFormat.status).toBe(400);
    expect(details(wrongFormat.body).map((d) => d.field)).toEqual(expect.arrayContaining(['format', 'meta.sqrtS']));
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
  });

  test('bad provenance is named by its field (meta.sqrtS, meta.quantityUnit), also together with file problems', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const noEnergy = { ...sampleMeta() } as Record<string, unknown>;
    delete noEnergy.sqrtS;
    const a = await uploadCsv(crew.analyst, groupId, sampleCsv(), { meta: noEnergy });
    expect(a.status).toBe(400);
    expect(a.body.error.code).toBe('validation_failed');
    expect(details(a.body)).toEqual([{ field: 'meta.sqrtS', message: 'must be a number (TeV)' }]);

    const b = await uploadCsv(crew.analyst, groupId, sampleCsv(), { meta: sampleMeta({ quantity: 'xsec', quantityUnit: '' }) });
    expect(details(b.body)).toEqual([{ field: 'meta.quantityUnit', message: expect.stringContaining('required for σ×B') }]);

    const c = await uploadCsv(crew.analyst, groupId, sampleCsv(), { meta: null });
    expect(details(c.body)).toEqual([{ field: 'meta', message: expect.stringContaining('is required with a CSV file') }]);

    const d = await uploadCsv(crew.analyst, groupId, sampleCsv(), { meta: '{"title": ' });
    expect(details(d.body)).toContainEqual({ field: 'meta', message: 'is not valid JSON text' });

    const both = await uploadCsv(crew.analyst, groupId, 'mass,obs\n1000,abc\n2000,1\n', { meta: noEnergy });
    expect(both.body.error.code).toBe('invalid_file');
    expect(details(both.body).map((x) => x.field)).toEqual(['meta.sqrtS', 'line 2, obs']);

    const mapping = await uploadCsv(crew.analyst, groupId, sampleCsv(), { mapping: { x: 0, observed: 99, colour: 2 } });
    expect(mapping.status).toBe(400);
    expect(details(mapping.body).map((x) => x.field)).toEqual(['mapping']);
    const outside = await uploadCsv(crew.analyst, groupId, sampleCsv(), { mapping: { x: 0, observed: 99 } });
    expect(details(outside.body)).toContainEqual({ field: 'Observed limit', message: 'points at column 100, but the file has 10' });

    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
    expect(await storageOf(groupId)).toBe(0);
  });

  test('a multipart request without a file, or with the file in another field, is refused', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const none = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).field('meta', JSON.stringify(sampleMeta()));
    expect(none.status).toBe(400);
    expect(details(none.body)).toContainEqual({ field: 'file', message: expect.stringContaining('is missing') });
    const other = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).field('meta', JSON.stringify(sampleMeta())).attach('upload', Buffer.from(sampleCsv()), 'a.csv');
    expect(other.status).toBe(400);
    expect(other.body.error.message).toMatch(/form field "file"/);
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
  });

  test('a JSON body with bad numbers names the point and column; a bad shape names the path', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const { curve } = sampleCurve(4);
    const res = await crew.analyst.agent
      .post(`/api/groups/${groupId}/results`)
      .send({ meta: sampleMeta(), curve: { ...curve, x: [1000, 1500, 1500, 2000], expected: { ...curve.expected, '-1': [1, 1, 1, 1] } } });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(details(res.body)).toEqual(
      expect.arrayContaining([
        { field: 'point 3, parameter', message: expect.stringContaining('duplicates') },
        { field: 'point 1, expected −2σ', message: expect.stringContaining('is above expected −1σ') },
      ]),
    );
    const shape = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: { ...sampleMeta(), sqrtS: undefined }, curve: { x: [1] } });
    expect(shape.status).toBe(400);
    expect(details(shape.body).map((d) => d.field)).toEqual(expect.arrayContaining(['meta.sqrtS', 'curve.x']));
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
  });
});

describe('huge bad inputs get a bounded answer', () => {
  test('a JSON body with 72,000 values that are not numbers: the first 100 named, the rest counted', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const n = 8_000;
    const x = Array.from({ length: n }, (_, i) => i + 1);
    const bad = Array.from({ length: n }, () => 'x');
    const curve = { x, observed: bad, expected: Object.fromEntries(['-2', '-1', '0', '1', '2'].map((k) => [k, bad])) };
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(), curve, theory: { x, central: bad, lower: bad, upper: bad } });
    expect(res.status).toBe(400);
    const d = details(res.body);
    expect(d).toHaveLength(101);
    expect(d[0]).toEqual({ field: 'curve.observed.0', message: 'must be a number' });
    // 6 curve columns and 3 theory columns of 8,000 bad values each.
    expect(d[100]).toEqual({ field: 'file', message: `and ${(9 * n - 100).toLocaleString('en')} more problems` });
    expect(await registryProbe.resultCount(t, groupId)).toBe(0);
  });

  test('a JSON curve longer than 10,000 points is refused without reading every value', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const x = Array.from({ length: 20_000 }, (_, i) => i + 1);
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(), curve: { x, observed: x } });
    expect(res.status).toBe(400);
    expect(details(res.body)).toEqual([
      { field: 'curve.x', message: 'must have at most 10,000 points (has 20,000)' },
      { field: 'curve.observed', message: 'must have at most 10,000 points (has 20,000)' },
    ]);
  });

  test('a CSV with more bad cells than are listed names the first lines with all their bad cells', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const rows = Array.from({ length: 300 }, (_, i) => `${1000 + i},bad,,2`).join('\n');
    const res = await uploadCsv(crew.analyst, groupId, `mass,obs,exp,exp_minus_1sigma\n${rows}\n`);
    expect(res.status).toBe(400);
    const d = details(res.body);
    expect(d.slice(0, 3)).toEqual([
      { field: 'line 2, obs', message: '"bad" is not a number' },
      { field: 'line 2, exp', message: 'is empty' },
      { field: 'line 3, obs', message: '"bad" is not a number' },
    ]);
    expect(d).toHaveLength(101);
    expect(d[100]).toEqual({ field: 'file', message: 'and 500 more problems' });
    expect(res.body.error.message).toContain('(and 599 more problems)');
  });
});

describe('size limit', () => {
  let small: TestApp;
  let smallCrew: Crew;
  beforeAll(async () => {
    small = await startTestApp({ UPLOAD_LIMIT_BYTES: '2048' });
    smallCrew = await makeCrew(small);
  }, 60_000);
  afterAll(async () => small?.close());

  test('a file over the limit gets 413 with the limit in MB, and nothing is stored', async () => {
    const { groupId } = await makeGroupWithRoles(small, { crew: smallCrew });
    const big = sampleCsv({ n: 60 });
    expect(Buffer.byteLength(big)).toBeGreaterThan(2048);
    const res = await smallCrew.analyst.agent.post(`/api/groups/${groupId}/results`).field('meta', JSON.stringify(sampleMeta())).attach('file', Buffer.from(big), 'big.csv');
    expect(res.status).toBe(413);
    expect(res.body.error).toMatchObject({ code: 'too_large', message: expect.stringContaining('limit of 2 KB') });
    expect(await registryProbe.resultCount(small, groupId)).toBe(0);

    // The same numbers as a JSON body are over the limit too.
    const json = await smallCrew.analyst.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta(), curve: sampleCurve(60).curve });
    expect(json.status).toBe(413);
    expect(json.body.error.code).toBe('too_large');

    // A small file still goes through.
    const ok = await smallCrew.analyst.agent.post(`/api/groups/${groupId}/results`).field('meta', JSON.stringify(sampleMeta())).attach('file', Buffer.from(sampleCsv({ n: 3 })), 'small.csv');
    expect(ok.status).toBe(201);
  });

  test('the default limit is 5 MB', async () => {
    expect(t.ctx.env.UPLOAD_LIMIT_BYTES).toBe(5 * 1024 * 1024);
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const huge = Buffer.alloc(5 * 1024 * 1024 + 10, 'a');
    const res = await crew.analyst.agent.post(`/api/groups/${groupId}/results`).field('meta', JSON.stringify(sampleMeta())).attach('file', huge, 'huge.csv');
    expect(res.status).toBe(413);
    expect(res.body.error.message).toContain('limit of 5 MB');
  });
});
