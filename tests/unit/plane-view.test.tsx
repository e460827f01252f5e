import { fireEvent, render, screen } from '@testing-library/react-native';
import { PlaneContoursList, PlanePointsTable, PLANE_PAGE_ROWS } from '@/components/results/plane-view';
import { ResultView } from '@/components/results/result-view';
import { analyseFile, planeFromTable } from '@/components/upload/upload-model';
import type { Plane, PlaneContours } from '@/shared/schemas/plane';
import type { ResultVersion } from '@/shared/schemas/results';

/** The result page's two-parameter parts: points by page, the contour lines with downloads, the version view choosing them. */

jest.mock('expo-router', () => ({ Link: ({ children }: { children: unknown }) => children }));

function grid(nx: number, ny: number): Plane {
  const x: number[] = [];
  const y: number[] = [];
  for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) {
    x.push(100 + i);
    y.push(10 + j);
  }
  return { yName: '<b>m_chi</b>', yUnit: 'GeV', x, y, observed: x.map((v, k) => v / 100 + k / 1000) };
}

const CONTOURS: PlaneContours = { observed: [{ points: [[100, 10], [101, 11]], closed: false }], expected: { '0': [] }, problem: null };

test('points come a page at a time, with the second parameter named as text', () => {
  render(<PlanePointsTable plane={grid(10, 12)} xTitle="m_X [GeV]" />);
  expect(screen.getByLabelText(`Points 1 to ${PLANE_PAGE_ROWS} of 120`)).toBeTruthy();
  // User text is shown as text, never read as markup.
  expect(screen.getByText('<b>m_chi</b> [GeV]')).toBeTruthy();
  // On the first page "Previous" does nothing.
  fireEvent.press(screen.getByRole('button', { name: 'Previous page of points' }));
  expect(screen.getByLabelText(`Points 1 to ${PLANE_PAGE_ROWS} of 120`)).toBeTruthy();
  fireEvent.press(screen.getByRole('button', { name: 'Next page of points' }));
  expect(screen.getByLabelText('Points 51 to 100 of 120')).toBeTruthy();
  fireEvent.press(screen.getByRole('button', { name: 'Next page of points' }));
  expect(screen.getByLabelText('Points 101 to 120 of 120')).toBeTruthy();
});

test('the contour lines are listed by kind with their downloads', () => {
  render(<PlaneContoursList contours={CONTOURS} downloads={{ csv: '/c.csv', json: '/c.json' }} />);
  expect(screen.getByText('Observed: 1 line, 2 vertices')).toBeTruthy();
  expect(screen.queryByText(/Expected median/)).toBeNull();
  expect(screen.getByLabelText('Download the contour lines as CSV')).toBeTruthy();
  render(<PlaneContoursList contours={{ expected: {}, problem: 'no theory σ×B is stored, so no contour can be derived' }} />);
  expect(screen.getByText('no theory σ×B is stored, so no contour can be derived')).toBeTruthy();
});

test('a two-parameter version shows its plane, contour lines and paged points instead of a curve', () => {
  const plane = grid(3, 3);
  const version = {
    version: 1, state: 'draft', changeNote: '', createdBy: null, createdAt: '2026-12-03T10:00:00Z', publishedAt: null, retractionReason: null,
    resultId: 'r1', slug: 'invented-plane', groupId: 'g1', groupName: 'Invented Team', isPublic: false,
    meta: { title: 'T', model: '', parameterName: 'm_X', parameterUnit: 'GeV', quantity: 'mu', quantityUnit: '', sqrtS: 18, luminosity: 140, cl: 0.95, method: 'asymptotic', reference: '', notes: '' },
    curve: null, theory: null, plane, planeContours: CONTOURS,
    exclusion: { ranges: null, problem: 'two parameters' }, permalink: null, sourceFile: null, fromScan: null, inputs: null, newerVersion: null,
  } satisfies ResultVersion;
  render(<ResultView version={version} downloads={{ csv: '/p.csv', json: '/p.json', contours: { csv: '/c.csv', json: '/c.json' } }} />);
  expect(screen.getByText('Plane')).toBeTruthy();
  expect(screen.getByText('Contour lines')).toBeTruthy();
  expect(screen.queryByText('Limit curve')).toBeNull();
  expect(screen.queryByText('Excluded ranges')).toBeNull();
  expect(screen.getByLabelText('Points 1 to 9 of 9')).toBeTruthy();
  expect(screen.getByLabelText(/^Plane of 9 points, <b>m_chi<\/b> \[GeV\] against m_X \[GeV\]/)).toBeTruthy();
});

test('the upload preview reads a CSV with two parameter columns as a plane, and the project JSON with a plane', () => {
  const csv = 'm_X [GeV],m_chi [GeV],obs\n1000,100,2\n1000,300,2.5\n2000,100,1\n2000,300,1.2\n';
  const a = analyseFile('plane.csv', new TextEncoder().encode(csv));
  if (a.kind !== 'csv') throw new Error(a.kind);
  expect(a.mapping).toEqual({ x: 0, y: 1, observed: 2 });
  expect(planeFromTable(a.table, a.mapping, 'mu')).toMatchObject({ plane: { yName: 'm_chi', x: [1000, 1000, 2000, 2000] }, problems: [] });
  const dup = analyseFile('dup.csv', new TextEncoder().encode(csv.replace('2000,300,1.2', '2000,100,1.2')));
  if (dup.kind !== 'csv') throw new Error(dup.kind);
  expect(planeFromTable(dup.table, dup.mapping, 'mu').problems[0]).toMatchObject({ row: 5, column: expect.stringMatching(/^m_(X|chi) \[GeV\]$/) });
  const json = JSON.stringify({ format: 'bandwright-limit-result/1', meta: { title: 'T', parameterName: 'm_X', quantity: 'mu', sqrtS: 18, luminosity: 140, method: 'asymptotic' }, plane: { ...grid(2, 2), observed: [1, 1, 1, -1] } });
  const j = analyseFile('p.json', new TextEncoder().encode(json));
  expect(j).toMatchObject({ kind: 'json', plane: { x: [100, 100, 101, 101] }, problems: [{ row: 4, column: 'plane.observed', reason: expect.stringMatching(/positive/) }] });
});
