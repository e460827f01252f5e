import { render, screen } from '@testing-library/react-native';
import { colourNote, planePointState, ScanPlane, scanPlaneInput } from '@/components/scans/scan-plane';
import type { ScanPointSummary } from '@/shared/schemas/scan-views';

/** A two-parameter scan's plane on its progress page: point states, the limits drawn, the counts named. */

const EXPECTED = { '-2': 0.5, '-1': 0.7, '0': 1, '1': 1.4, '2': 2 };

function point(index: number, x: number, y: number, state: ScanPointSummary['state'], extra: Partial<ScanPointSummary> = {}): ScanPointSummary {
  const done = state === 'done';
  return {
    index, x, y, sigmaNominal: 2, state,
    observed: done ? 0.5 + index : null, expected: done ? EXPECTED : null,
    sigmaB: done ? { observed: 10 + index, expected: EXPECTED } : null,
    warnings: null, error: state === 'failed' ? { field: 'model', reason: 'invented failure' } : null, computeMs: null,
    tasks: { done: done ? 1 : 0, total: 1, running: 0 }, retryAt: null,
    ...extra,
  };
}

const POINTS = [
  point(0, 1000, 100, 'done'),
  point(1, 1000, 200, 'done'),
  point(2, 1100, 100, 'queued', { tasks: { done: 0, total: 1, running: 1 } }),
  point(3, 1100, 200, 'queued'),
  point(4, 1200, 100, 'failed'),
  point(5, 1200, 200, 'queued', { retryAt: '2026-12-03T10:00:00Z' }),
];

test('a queued point a worker holds is running; one waiting for a retry is still queued', () => {
  expect(POINTS.map(planePointState)).toEqual(['done', 'done', 'running', 'pending', 'failed', 'pending']);
  expect(planePointState(point(6, 1, 1, 'cancelled'))).toBe('cancelled');
});

test('the input takes σ×B limits of a σ×B scan, μ otherwise, and no limit of a point not done', () => {
  expect(scanPlaneInput(POINTS, true).plane).toEqual({ x: [1000, 1000, 1100, 1100, 1200, 1200], y: [100, 200, 100, 200, 100, 200], observed: [10, 11, NaN, NaN, NaN, NaN] });
  expect(scanPlaneInput(POINTS, false).plane.observed!.slice(0, 2)).toEqual([0.5, 1.5]);
});

test('the drawing is an image named by the counts and the axes; the key shows each state with its count; names are text', () => {
  render(<ScanPlane points={POINTS} xsec active xLabel="<b>m(V)</b> [GeV]" yLabel="m(χ) [GeV]" />);
  expect(screen.getByLabelText('2 of 6 points done, 1 failed, 1 running, 2 queued. Plane of m(χ) [GeV] against <b>m(V)</b> [GeV].').props.role).toBe('img');
  for (const k of ['Done 2', 'Running 1', 'Queued 2', 'Failed 1']) expect(screen.getByText(k, { includeHiddenElements: true })).toBeTruthy();
  expect(screen.queryByText(/^Not computed/, { includeHiddenElements: true })).toBeNull();
});

test('every point done: the label says so', () => {
  const all = POINTS.map((p, i) => point(i, p.x, p.y!, 'done'));
  render(<ScanPlane points={all} xsec={false} active={false} xLabel="m(V) [GeV]" yLabel="m(χ) [GeV]" />);
  expect(screen.getByLabelText(/^All 6 points done\. Plane of m\(χ\) \[GeV\] against m\(V\) \[GeV\]/).props.role).toBe('img');
  // A finished scan's key leaves out the states no point is in.
  expect(screen.getByText('Done 6', { includeHiddenElements: true })).toBeTruthy();
  expect(screen.queryByText(/^(Running|Queued|Failed)/, { includeHiddenElements: true })).toBeNull();
});

test('the colour note: nothing yet, one value, a range', () => {
  expect(colourNote(null, true)).toBe('Cells fill in with their observed limit on σ×B as points finish.');
  expect(colourNote([3.48, 3.48], false)).toBe('Colour: observed limit on μ, 3.48 so far; the scale spreads as more points finish.');
  expect(colourNote([1.2, 24], false)).toBe('Colour: observed limit on μ from 1.2 (light) to 24 (dark), log scale, over the points done so far.');
});
