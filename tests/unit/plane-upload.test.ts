import { detectRoles, parseCsv } from '@/shared/curves/csv';
import { CsvFileError } from '@/shared/curves/csv';
import { contoursToCsv, nameAndUnit, planeField, planeToCsv, tableToPlane } from '@/shared/curves/plane';
import { buildPlanePreview, describePlaneProgress, planeStateCounts, rampColour, Y_TITLE_BAND, type PlanePointState } from '@/components/plot/plane-preview-geometry';
import { linearAxisTicks, TICK_LENGTH, tickLabelWidth, type Tick } from '@/components/plot/quick-plot-geometry';
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

describe('the preview\'s axis ticks', () => {
  /** An nx × ny grid from (x0, y0) in steps (dx, dy), every limit 1. */
  function grid(nx: number, ny: number, x0: number, dx: number, y0: number, dy: number) {
    const x: number[] = [];
    const y: number[] = [];
    for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) {
      x.push(x0 + i * dx);
      y.push(y0 + j * dy);
    }
    return { x, y, observed: x.map(() => 1) };
  }
  const labelled = (ticks: Tick[]) => ticks.filter((t) => t.label);

  test('both axes get round ticks inside the cells\' range, at their scaled positions, not the cell edges', () => {
    const g = buildPlanePreview({ width: 390, height: 300, plane: grid(4, 3, 1000, 100, 100, 100), contours: null, ramp: ['#000000', '#ffffff'] })!;
    // The cells run from edge to edge (950…1350, 50…350); the labels are round values inside.
    expect(g.xRange).toEqual([950, 1350]);
    expect(g.xTicks.map((t) => t.value)).toEqual([1000, 1100, 1200, 1300]);
    expect(g.xTicks.map((t) => t.label)).toEqual(['1000', '1100', '1200', '1300']);
    expect(g.yTicks.map((t) => t.label)).toEqual(['50', '100', '150', '200', '250', '300', '350']);
    for (const t of g.xTicks) expect(t.pos).toBeCloseTo(g.area.x + ((t.value - 950) / 400) * g.area.width, 6);
    for (const t of g.yTicks) expect(t.pos).toBeCloseTo(g.area.y + g.area.height - ((t.value - 50) / 300) * g.area.height, 6);
  });

  test('a range around zero is labelled at round values with the minus sign, never at the edges (−0.056)', () => {
    const g = buildPlanePreview({ width: 390, height: 300, plane: grid(10, 5, -0.045, 0.01, 0.2, 0.2), contours: null, ramp: ['#000000', '#ffffff'] })!;
    expect(g.xRange[0]).toBeCloseTo(-0.05, 12);
    const labels = labelled(g.xTicks).map((t) => t.label);
    expect(labels).toContain('0');
    expect(labels.every((l) => /^(−?0\.\d+|0)$/.test(l))).toBe(true);
    expect(labels.some((l) => l.startsWith('−'))).toBe(true);
    expect(labels.join()).not.toMatch(/0\.0000|0\.056/);
  });

  test('at phone width no two labels overlap, every label stays inside the drawing, and the y labels leave room for the title', () => {
    for (const width of [320, 390, 1280]) {
      // Wide labels (six digits) on x, long decimals on y.
      const g = buildPlanePreview({ width, height: 300, plane: grid(40, 30, 100_000, 12_500, 0.001, 0.0125), contours: null, ramp: ['#000000', '#ffffff'] })!;
      const xs = labelled(g.xTicks);
      expect(xs.length).toBeGreaterThanOrEqual(2);
      xs.forEach((t, i) => {
        const c = t.labelPos ?? t.pos;
        const half = tickLabelWidth(t.label) / 2;
        expect(c - half).toBeGreaterThanOrEqual(0);
        expect(c + half).toBeLessThanOrEqual(width);
        if (i) expect(c - half).toBeGreaterThan((xs[i - 1]!.labelPos ?? xs[i - 1]!.pos) + tickLabelWidth(xs[i - 1]!.label) / 2);
      });
      const ys = labelled(g.yTicks);
      expect(ys.length).toBeGreaterThanOrEqual(2);
      // Up the axis, labels (11 px type) are at least their height apart.
      ys.forEach((t, i) => i && expect(Math.abs(t.pos - ys[i - 1]!.pos)).toBeGreaterThanOrEqual(11));
      const widest = Math.max(...ys.map((t) => tickLabelWidth(t.label)));
      expect(g.area.x - TICK_LENGTH - 3 - widest).toBeGreaterThanOrEqual(Y_TITLE_BAND);
      // Unlabelled ticks keep their marks; the kept labels are every k-th round value.
      expect(g.xTicks.length).toBeGreaterThanOrEqual(xs.length);
    }
  });

  test('labels too close together are thinned to every k-th round value, marks kept', () => {
    const ticks = linearAxisTicks([0, 1_000_000], 0, 150, { horizontal: true, count: 10 });
    const kept = labelled(ticks);
    expect(ticks.length).toBeGreaterThan(kept.length);
    expect(kept.length).toBeGreaterThanOrEqual(2);
    const step = ticks[1]!.value - ticks[0]!.value;
    const k = (kept[1]!.value - kept[0]!.value) / step;
    expect(kept.every((t) => Math.round(t.value / step) % k === 0)).toBe(true);
  });
});

describe('a scan\'s partial plane', () => {
  const plane = { x: [1, 1, 2, 2, 3, 3], y: [10, 20, 10, 20, 10, 20], observed: [1, 4, NaN, NaN, NaN, 100] };
  const states: PlanePointState[] = ['done', 'done', 'running', 'pending', 'failed', 'cancelled'];

  test('only done points are coloured, and the colour range spans theirs; the others carry their state', () => {
    const g = buildPlanePreview({ width: 400, height: 300, plane, contours: null, ramp: ['#000000', '#ffffff'], states })!;
    expect(g.cells.map((c) => c.state)).toEqual(states);
    expect(g.cells.map((c) => c.fill)).toEqual(['#000000', '#ffffff', '', '', '', '']);
    // The cancelled point's value is not a limit of a done point.
    expect(g.colourRange).toEqual([1, 4]);
    // One cross (two strokes) over the failed cell, inside it.
    const failed = g.cells[4]!;
    expect(g.failedMarks.match(/M/g)).toHaveLength(2);
    for (const [, x, y] of g.failedMarks.matchAll(/[ML](-?[\d.]+) (-?[\d.]+)/g)) {
      expect(Number(x)).toBeGreaterThan(failed.x);
      expect(Number(x)).toBeLessThan(failed.x + failed.w);
      expect(Number(y)).toBeGreaterThan(failed.y);
      expect(Number(y)).toBeLessThan(failed.y + failed.h);
    }
    expect(g.counts).toEqual({ total: 6, done: 2, running: 1, pending: 1, failed: 1, cancelled: 1 });
    // The axes are the whole grid's from the start, so cells do not move as points finish.
    expect(g.xRange).toEqual([0.5, 3.5]);
  });

  test('nothing done yet: empty cells, no colour range; without states every point is done', () => {
    const none = buildPlanePreview({ width: 400, height: 300, plane, contours: null, ramp: ['#000000', '#ffffff'], states: plane.x.map(() => 'pending' as const) })!;
    expect(none.colourRange).toBeNull();
    expect(none.cells.every((c) => c.fill === '' && c.state === 'pending')).toBe(true);
    expect(none.failedMarks).toBe('');
    expect(buildPlanePreview({ width: 400, height: 300, plane: { ...plane, observed: [1, 2, 3, 4, 5, 6] }, contours: null, ramp: ['#000000', '#ffffff'] })!.counts).toMatchObject({ total: 6, done: 6 });
  });

  test('the counts in words', () => {
    expect(describePlaneProgress(planeStateCounts(6, states))).toBe('2 of 6 points done, 1 failed, 1 running, 1 queued, 1 cancelled');
    expect(describePlaneProgress(planeStateCounts(49, [...Array(12).fill('done'), 'failed', ...Array(36).fill('pending')]))).toBe('12 of 49 points done, 1 failed, 36 queued');
    expect(describePlaneProgress(planeStateCounts(49))).toBe('All 49 points done');
    expect(describePlaneProgress(planeStateCounts(4, ['done', 'done', 'done', 'failed']))).toBe('3 of 4 points done, 1 failed');
  });
});
