import { detectRoles, parseCsv } from '@/shared/curves/csv';
import { CsvFileError } from '@/shared/curves/csv';
import { contoursToCsv, nameAndUnit, planeField, planeToCsv, tableToPlane } from '@/shared/curves/plane';
import { buildPlanePreview, rampColour } from '@/components/plot/plane-preview-geometry';
import type { PlaneContours } from '@/shared/schemas/plane';

/** Two-parameter tables: detection of the second parameter, reading, naming problems, downloads, the preview's geometry. */

const CSV = 'm_X [GeV],m_chi [GeV],obs,exp\n1000,100,2,2.2\n1000,300,2.5,2.6\n2000,100,1,1.1\n2000,300,1.2,1.3\n';

test('a second parameter-like column is the second parameter (y); one such column stays a curve', () => {
  expect(detectRoles(['m_X [GeV]', 'm_chi [GeV]', 'obs', 'exp'])).toEqual({ x: 0, y: 1, observed: 2, expected: 3 });
  expect(detectRoles(['mass', 'obs', 'exp'])).toEqual({ x: 0, observed: 1, expected: 2 });
  expect(detectRoles(['x', 'y', 'observed'])).toEqual({ x: 0, y: 1, observed: 2 });
});

test('a table becomes a plane named by its y header', () => {
  const table = parseCsv(CSV);
  const plane = tableToPlane(table, detectRoles(table.headers), 'xsec');
  expect(plane).toEqual({ yName: 'm_chi', yUnit: 'GeV', x: [1000, 1000, 2000, 2000], y: [100, 300, 100, 300], observed: [2, 2.5, 1, 1.2], expected: { '0': [2.2, 2.6, 1.1, 1.3] } });
  expect(nameAndUnit('m(χ)')).toEqual({ name: 'm(χ)', unit: '' });
  expect(nameAndUnit('m_chi (TeV)')).toEqual({ name: 'm_chi', unit: 'TeV' });
});

test('problems are named by file line and the file\u2019s own header', () => {
  const table = parseCsv(CSV.replace('1000,300,2.5,2.6', '1000,300,-2.5,abc'));
  try {
    tableToPlane(table, detectRoles(table.headers), 'xsec');
    throw new Error('not refused');
  } catch (e) {
    expect(e).toBeInstanceOf(CsvFileError);
    expect((e as CsvFileError).problems).toEqual([{ row: 3, column: 'exp', reason: '"abc" is not a number' }]);
  }
  const negative = parseCsv(CSV.replace('1000,300,2.5,2.6', '1000,300,-2.5,2.6'));
  expect(() => tableToPlane(negative, detectRoles(negative.headers), 'xsec')).toThrow(/line 3, obs: must be positive/);
  const duplicate = parseCsv(CSV.replace('2000,300,1.2,1.3', '2000,100,1.2,1.3'));
  expect(() => tableToPlane(duplicate, detectRoles(duplicate.headers), 'xsec')).toThrow(/^line 5, m_(X|chi) \[GeV\]/);
  expect(planeField({ key: 'expected.-1', index: 5, reason: '' })).toBe('plane.expected.-1.5');
  expect(planeField({ key: '', reason: '' })).toBe('plane');
});

const CONTOURS: PlaneContours = {
  observed: [{ points: [[1000, 100], [1500, 200], [2000, 300]], closed: false }],
  expected: { '0': [{ points: [[1100, 100], [1100, 300], [1200, 200]], closed: true }] },
  problem: null,
};

test('contour lines as CSV: one row per vertex with its line, which line and vertex number', () => {
  expect(contoursToCsv(CONTOURS, { x: 'm_X [GeV]', y: 'm_chi [GeV]' })).toBe(
    'line,which,closed,vertex,m_X [GeV],m_chi [GeV]\n1,observed,no,1,1000,100\n1,observed,no,2,1500,200\n1,observed,no,3,2000,300\n2,expected,yes,1,1100,100\n2,expected,yes,2,1100,300\n2,expected,yes,3,1200,200\n',
  );
  const table = parseCsv(CSV);
  const plane = tableToPlane(table, detectRoles(table.headers), 'xsec');
  expect(planeToCsv(plane, { x: 'm_X [GeV]', y: 'm_chi [GeV]' })).toBe('m_X [GeV],m_chi [GeV],observed,expected\n1000,100,2,2.2\n1000,300,2.5,2.6\n2000,100,1,1.1\n2000,300,1.2,1.3\n');
});

test('the preview colours each point by its limit and draws the contour lines inside the plot', () => {
  const table = parseCsv(CSV);
  const plane = tableToPlane(table, detectRoles(table.headers), 'xsec');
  const g = buildPlanePreview({ width: 400, height: 300, plane, contours: CONTOURS, ramp: ['#000000', '#ffffff'] })!;
  expect(g.cells).toHaveLength(4);
  // The lowest limit (1 at 2000, 100) is the ramp's first colour, the highest (2.5) its last.
  expect(g.cells.find((c) => c.key === '1:0')!.fill).toBe('#000000');
  expect(g.cells.find((c) => c.key === '0:1')!.fill).toBe('#ffffff');
  expect(g.colourRange).toEqual([1, 2.5]);
  expect(g.lines.map((l) => l.which)).toEqual(['observed', 'expected']);
  expect(g.lines[1]!.d.endsWith('Z')).toBe(true);
  expect(rampColour(['#000000', '#ffffff'], 0.5)).toBe('#808080');
  expect(buildPlanePreview({ width: 50, height: 50, plane, contours: null, ramp: ['#000000', '#ffffff'] })).toBeNull();
});
