import { DEFAULT_UPLOAD_LIMIT_BYTES } from '@/shared/bytes';
import { ApiError } from '@/shared/api-client';
import {
  analyseFile,
  assignRole,
  curveFromTable,
  draftFromMeta,
  EMPTY_META,
  guessMeta,
  isMappingProblem,
  metaInput,
  previewCurve,
  readNumber,
  roleOfColumn,
  splitServerDetails,
  uploadForm,
} from '@/components/upload/upload-model';
import { LIMIT_FILE_FORMAT, versionMetaSchema } from '@/shared/schemas/results';

const bytes = (s: string) => new TextEncoder().encode(s);

const UNUSUAL = [
  "M_Z' [TeV];Obs. limit (fb);Exp. median;exp-1s;exp+1s;exp+1s (rerun)",
  '1,0;2,5;2,0;1,5;2,8;2,8',
  '2,0;0,9;0,8;0,6;1,1;1,1',
  '3,0;0,3;0,35;0,25;0,30;0,5',
].join('\n');

describe('reading a picked file', () => {
  test('a semicolon file with unusual headers is a table with detected roles', () => {
    const a = analyseFile('limits.csv', bytes(UNUSUAL));
    expect(a.kind).toBe('csv');
    if (a.kind !== 'csv') return;
    expect(a.table.delimiter).toBe(';');
    expect(a.mapping).toEqual({ x: 0, observed: 1, expected: 2, expectedMinus1: 3, expectedPlus1: 4 });
    expect(roleOfColumn(a.mapping, 5)).toBeUndefined();
  });

  test('a band edge on the wrong side is named by line and column; remapping fixes it', () => {
    const a = analyseFile('limits.csv', bytes(UNUSUAL));
    if (a.kind !== 'csv') throw new Error('not csv');
    const bad = curveFromTable(a.table, a.mapping);
    expect(bad.problems).toEqual([expect.objectContaining({ row: 4, column: 'exp+1s', reason: expect.stringContaining('is above expected +1σ') })]);
    const fixed = curveFromTable(a.table, assignRole(a.mapping, 5, 'expectedPlus1'));
    expect(fixed.problems).toEqual([]);
    expect(fixed.curve?.expected?.['1']).toEqual([2.8, 1.1, 0.5]);
  });

  test('too large, empty, Latin-1 and one-column files are refused with the reason', () => {
    const big = new Uint8Array(DEFAULT_UPLOAD_LIMIT_BYTES + 1);
    expect(analyseFile('big.csv', big)).toEqual({ kind: 'invalid', problems: [{ column: 'file', reason: 'is just over the limit of 5 MB' }] });
    // The server's own limit when it has said one (GET /api/limits), in plain words.
    expect(analyseFile('big.csv', new Uint8Array(900_000), 800_000)).toEqual({ kind: 'invalid', problems: [{ column: 'file', reason: 'is 878.9 KB; the limit is 781.2 KB' }] });
    expect(analyseFile('ok.csv', bytes('m,obs\n1,2\n2,1\n'), 800_000).kind).toBe('csv');
    expect(analyseFile('big.csv', new Uint8Array(6 * 1024 * 1024))).toEqual({ kind: 'invalid', problems: [{ column: 'file', reason: 'is 6 MB; the limit is 5 MB' }] });
    expect(analyseFile('e.csv', bytes(' \n'))).toEqual({ kind: 'invalid', problems: [{ column: 'file', reason: 'is empty' }], total: 1 });
    const latin1 = analyseFile('l.csv', new Uint8Array([0x6d, 0x2c, 0xb5, 0x0a, 0x31, 0x2c, 0x32]));
    expect(latin1.kind === 'invalid' && latin1.problems[0]!.reason).toMatch(/not UTF-8/);
    const pipes = analyseFile('p.csv', bytes('m|obs\n1|2\n'));
    expect(pipes.kind === 'invalid' && pipes.problems[0]!.reason).toMatch(/one column only/);
  });

  test('the project JSON skips the mapping; other JSON and bad points are refused with the place', () => {
    const meta = { title: 'A', parameterName: 'm', parameterUnit: 'TeV', quantity: 'mu', sqrtS: 18, luminosity: 140, method: 'imported' };
    const good = analyseFile('r.json', bytes(JSON.stringify({ format: LIMIT_FILE_FORMAT, meta, curve: { x: [1, 2], observed: [1, 0.5] } })));
    expect(good.kind).toBe('json');
    expect(good.kind === 'json' && good.meta.cl).toBe(0.95);
    expect(good.kind === 'json' && good.problems).toEqual([]);
    const other = analyseFile('x.json', bytes('{"hello": 1}'));
    expect(other.kind === 'invalid' && other.problems[0]).toEqual(expect.objectContaining({ column: 'format' }));
    const broken = analyseFile('x.json', bytes('{"format": '));
    expect(broken.kind === 'invalid' && broken.problems[0]!.reason).toMatch(/not valid JSON/);
    const badPoint = analyseFile('r.json', bytes(JSON.stringify({ format: LIMIT_FILE_FORMAT, meta, curve: { x: [1, 2], observed: [1, 'a'] } })));
    expect(badPoint.kind === 'invalid' && badPoint.problems[0]).toEqual(expect.objectContaining({ row: 2, column: 'curve.observed' }));
    const negative = analyseFile('r.json', bytes(JSON.stringify({ format: LIMIT_FILE_FORMAT, meta, curve: { x: [1, 2], observed: [1, -1] } })));
    expect(negative.kind === 'json' && negative.problems[0]).toEqual(expect.objectContaining({ row: 2, column: 'observed' }));
  });
});

describe('mapping', () => {
  test('a role moves to its new column; the column drops its old role', () => {
    const m = { x: 0, observed: 1, expected: 2 };
    expect(assignRole(m, 2, 'observed')).toEqual({ x: 0, observed: 2 });
    expect(assignRole(m, 1, null)).toEqual({ x: 0, expected: 2 });
    expect(assignRole(m, 3, 'theory')).toEqual({ ...m, theory: 3 });
  });
  test('problems without a line are about the mapping', () => {
    expect(isMappingProblem({ column: 'mapping', reason: 'x' })).toBe(true);
    expect(isMappingProblem({ row: 3, column: 'obs', reason: 'x' })).toBe(false);
  });
  test('the preview plots readable cells and leaves gaps for bad ones', () => {
    const a = analyseFile('t.csv', bytes('m,obs,th\n1,2,5\n2,x,3\n'));
    if (a.kind !== 'csv') throw new Error('not csv');
    const p = previewCurve(a.table, a.mapping);
    expect(p.curve.x).toEqual([1, 2]);
    expect(p.curve.observed).toEqual([2, NaN]);
    expect(p.theory).toEqual({ x: [1, 2], central: [5, 3] });
  });
});

describe('provenance form', () => {
  test('headers tell the parameter, its unit and the limited quantity', () => {
    expect(guessMeta(["M_Z' [TeV]", 'Obs. limit (fb)'], { x: 0, observed: 1 })).toEqual({ parameterName: "M_Z'", parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb' });
    expect(guessMeta(['mass', 'mu obs'], { x: 0, observed: 1 })).toEqual({ parameterName: 'mass', quantity: 'mu', quantityUnit: '' });
  });
  test('numbers accept a decimal comma; empty is missing, words are not numbers', () => {
    expect(readNumber('13,6')).toBe(13.6);
    expect(readNumber(' ')).toBeUndefined();
    expect(readNumber('abc')).toBeNaN();
  });
  test('the draft checks against the shared schema and round-trips a stored version', () => {
    const draft = { ...EMPTY_META, title: 'Dijet', parameterName: 'm', parameterUnit: 'TeV', sqrtS: '18', luminosity: '140', method: 'asymptotic' as const };
    const r = versionMetaSchema.safeParse(metaInput(draft));
    expect(r.success).toBe(true);
    expect(draftFromMeta(r.data!)).toEqual(draft);
    const missing = versionMetaSchema.safeParse(metaInput(EMPTY_META));
    expect(missing.error?.issues.map((i) => i.path[0])).toEqual(expect.arrayContaining(['title', 'parameterName', 'sqrtS', 'luminosity', 'method']));
  });
  test('the upload body carries the file, the provenance and the mapping as JSON text', async () => {
    const meta = versionMetaSchema.parse(metaInput({ ...EMPTY_META, title: 'T', parameterName: 'm', sqrtS: '18', luminosity: '1', method: 'imported' }));
    const form = uploadForm({ file: new Blob(['m,obs\n1,2\n']), fileName: 'a.csv', meta, mapping: { x: 0, observed: 1 }, changeNote: 'fixed' });
    expect(JSON.parse(form.get('meta') as string)).toEqual(meta);
    expect(JSON.parse(form.get('mapping') as string)).toEqual({ x: 0, observed: 1 });
    expect(form.get('changeNote')).toBe('fixed');
    const file = form.get('file') as File;
    expect(file.name).toBe('a.csv');
    expect(await file.text()).toBe('m,obs\n1,2\n');
  });
});

test('server details go beside the form fields or into the problem list with their line', () => {
  const err = new ApiError(400, 'invalid_file', 'The file cannot be stored', [
    { field: 'line 7, obs', message: 'must be positive' },
    { field: 'point 3, observed', message: 'must be positive' },
    { field: 'meta.title', message: 'must not be empty' },
    { field: 'changeNote', message: 'say what changed in this version' },
    { field: 'mapping.x', message: 'must be a whole number' },
  ]);
  expect(splitServerDetails(err)).toEqual({
    problems: [
      { row: 7, column: 'obs', reason: 'must be positive' },
      { row: 3, column: 'observed', reason: 'must be positive' },
      { column: 'mapping.x', reason: 'must be a whole number' },
    ],
    fields: { title: 'Must not be empty', changeNote: 'Say what changed in this version' },
  });
  expect(splitServerDetails(new Error('x'))).toEqual({ problems: [], fields: {} });
});
