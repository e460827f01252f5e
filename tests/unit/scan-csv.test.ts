import fs from 'node:fs';
import path from 'node:path';
import { CsvFileError } from '@/shared/curves/csv';
import { parseScanCsv, scanToCsv } from '@/shared/scans/csv';
import { scanFileSchema, type ScanInputPoint } from '@/shared/schemas/scans';
import { computeScan } from '@/shared/stats';

const example = (name: string) => fs.readFileSync(path.resolve(__dirname, '../../assets/examples', name), 'utf8');
const problemsOf = (text: string) => {
  try {
    parseScanCsv(text);
  } catch (e) {
    if (e instanceof CsvFileError) return e.problems;
    throw e;
  }
  return [];
};

test('the example scan CSV and JSON describe the same grid', () => {
  const fromCsv = parseScanCsv(example('scan-example.csv'));
  const fromJson = scanFileSchema.parse(JSON.parse(example('scan-example.json'))).points as ScanInputPoint[];
  expect(fromCsv).toHaveLength(6);
  expect(fromCsv.map((p) => p.x)).toEqual([1000, 1500, 2000, 2500, 3000, 3500]);
  expect(fromCsv[0]!.model.observed).toHaveLength(3);
  // Same limits from both inputs (uniform effects in JSON, per-bin arrays from CSV).
  const a = computeScan(fromCsv);
  const b = computeScan(fromJson);
  a.forEach((p, i) => {
    expect('error' in p).toBe(false);
    if ('error' in p || 'error' in b[i]!) return;
    expect(p.observed).toBeCloseTo((b[i] as typeof p).observed, 6);
    expect(p.sigmaB?.observed).toBeCloseTo((b[i] as typeof p).sigmaB!.observed, 6);
  });
});

test('scan CSV → text → scan CSV round-trips', () => {
  const points = parseScanCsv(example('scan-example.csv'));
  expect(parseScanCsv(scanToCsv(points))).toEqual(points);
});

test('problems name the file line and the column', () => {
  const text = 'x,bin,observed,signal,background:qcd,systematic:lumi:ghost\n1000,1,5,1.2,4,0.02\n1000,2,x,1.0,3,0.02\n';
  const problems = problemsOf(text);
  expect(problems).toEqual(expect.arrayContaining([{ row: 3, column: 'observed', reason: '"x" is not a number' }]));
});

test('a model the engine refuses fails only its own point when computed', () => {
  const points = parseScanCsv('x,bin,observed,signal,background:qcd,systematic:lumi:ghost\n1000,1,5,1.2,4,0.02\n2000,1,5,1.2,4,\n');
  const results = computeScan(points);
  expect(results[0]).toEqual(expect.objectContaining({ error: expect.objectContaining({ field: expect.stringContaining('ghost'), reason: expect.stringContaining('unknown process') }) }));
  expect('error' in results[1]!).toBe(false);
});

test('missing required columns, unknown columns and split grid points are refused', () => {
  expect(problemsOf('x,bin,observed\n1,1,2\n').map((p) => p.column)).toContain('signal');
  expect(problemsOf('x,observed,signal,bkg\n1,2,3,4\n')[0]).toEqual(expect.objectContaining({ column: 'bkg' }));
  const split = problemsOf('x,observed,signal\n1,2,3\n2,2,3\n1,2,3\n');
  expect(split[0]).toEqual(expect.objectContaining({ row: 4, reason: expect.stringContaining('keep the rows of one grid point together') }));
  const sigma = problemsOf('x,sigma_nominal,observed,signal\n1,5,2,3\n1,6,2,3\n');
  expect(sigma[0]).toEqual(expect.objectContaining({ row: 3, column: 'sigma_nominal' }));
});

describe('process and systematic names that are also properties of JavaScript objects', () => {
  const header = 'x,bin,observed,signal,background:constructor,background:toString,systematic:hasOwnProperty:constructor,systematic:hasOwnProperty:toString,systematic:__proto__:toString';
  const rows = ['1000,1,12,2,9.5,1.1,0.05,,0.2', '1000,2,4,1,3.2,0.4,0.1,,', '1100,1,8,2,7.9,0.9,,0.3,0.2', '1100,2,3,1,2.6,0.3,,0.3,'];
  const csv = [header, ...rows].join('\n') + '\n';

  test('are ordinary names in a scan CSV: parsed, computed like plain names, written back unchanged', () => {
    const points = parseScanCsv(csv);
    expect(points[0]!.model.backgrounds?.map((b) => b.name)).toEqual(['constructor', 'toString']);
    expect(points[0]!.model.systematics?.map((s) => [s.name, Object.keys(s.effects)])).toEqual([
      ['hasOwnProperty', ['constructor']],
      ['__proto__', ['toString']],
    ]);
    expect(points[1]!.model.systematics?.map((s) => [s.name, Object.keys(s.effects)])).toEqual([
      ['hasOwnProperty', ['toString']],
      ['__proto__', ['toString']],
    ]);
    // exact: renaming processes and systematics does not change a limit
    const plain = parseScanCsv(csv.replace(header, 'x,bin,observed,signal,background:dijet,background:fakes,systematic:shape:dijet,systematic:shape:fakes,systematic:rate:fakes'));
    const [a, b] = [computeScan(points), computeScan(plain)];
    a.forEach((p, i) => expect(p).toEqual(b[i]));
    // The second point's "hasOwnProperty" has no effect on "constructor": the writer must not read
    // Object.prototype.constructor in its place.
    const text = scanToCsv(points);
    expect(text).not.toMatch(/function|native code/);
    expect(parseScanCsv(text)).toEqual(points);
  });

  test('a bare column named like an object property is not a column of the layout', () => {
    for (const name of ['constructor', 'toString', '__proto__']) {
      const problems = problemsOf(`x,bin,observed,signal,${name}\n1000,1,3,1,2\n`);
      expect(problems).toEqual([expect.objectContaining({ column: name, reason: expect.stringMatching(/not a column of the scan layout/) })]);
    }
  });

  test('"__proto__" as a process name is refused at once, naming the column', () => {
    for (const column of ['background:__proto__', 'systematic:norm:__proto__']) {
      const problems = problemsOf(`x,bin,observed,signal,background:flat,${column}\n1000,1,3,1,2,0.1\n`);
      expect(problems).toEqual([expect.objectContaining({ column, reason: expect.stringMatching(/"__proto__" cannot name a process/) })]);
    }
  });
});

test('the σ×B band columns are read per grid point and written back', () => {
  const text = 'x,sigma_nominal,sigma_nominal_low,sigma_nominal_high,bin,observed,signal\n1000,5,4,6,a,2,3\n1000,5,4,6,b,1,2\n1100,4,3.5,4.5,a,2,3\n1100,4,3.5,4.5,b,2,1\n';
  const points = parseScanCsv(text);
  expect(points.map((p) => [p.x, p.sigmaNominal, p.sigmaNominalLow, p.sigmaNominalHigh])).toEqual([
    [1000, 5, 4, 6],
    [1100, 4, 3.5, 4.5],
  ]);
  expect(parseScanCsv(scanToCsv(points))).toEqual(points);
  // The band differs between the rows of one point: named by line and column.
  expect(problemsOf('x,sigma_nominal,sigma_nominal_low,sigma_nominal_high,observed,signal\n1,5,4,6,2,3\n1,5,4.5,6,2,3\n')[0]).toEqual(expect.objectContaining({ row: 3, column: 'sigma_nominal_low' }));
});
