import { formatBytes } from '@/shared/bytes';
import { axisLabels, conditionsLine, formatCl, formatRange, formatRanges, parseVersionSegment, permalinkPath, quantityLabel } from '@/components/results/format';
import { describePlot } from '@/components/plot/quick-plot-geometry';

test('provenance reads with its units', () => {
  expect(conditionsLine({ sqrtS: 18, luminosity: 140, cl: 0.95 })).toBe('√s = 18 TeV, L = 140 fb⁻¹, 95% CL');
  expect(formatCl(0.683)).toBe('68.3%');
  expect(quantityLabel({ quantity: 'xsec', quantityUnit: 'fb' })).toBe('σ×B [fb]');
  expect(quantityLabel({ quantity: 'mu', quantityUnit: '' })).toBe('μ');
  expect(axisLabels({ parameterName: "m(Z')", parameterUnit: 'TeV', quantity: 'mu', quantityUnit: '' })).toEqual({ x: "m(Z') [TeV]", y: 'Upper limit on μ' });
});

test('excluded ranges: closed, open at either end, several, none', () => {
  expect(formatRange({ from: 1.2, to: 3.45 }, 'TeV')).toBe('1.2–3.45 TeV');
  expect(formatRange({ from: 1, to: 3.456, fromOpen: true }, 'TeV')).toBe('from below 1 to 3.46 TeV');
  expect(formatRange({ from: 5.1, to: 7, toOpen: true }, '')).toBe('from 5.1 to above 7');
  expect(formatRanges([{ from: 1.2, to: 2 }, { from: 3, to: 4 }], 'TeV')).toBe('excluded: 1.2–2 TeV and 3–4 TeV');
  expect(formatRanges([], 'TeV')).toBe('nothing excluded');
});

test('permanent links and sizes', () => {
  expect(permalinkPath('dijet-z-prime', 2)).toBe('/r/dijet-z-prime/v2');
  expect(parseVersionSegment('v12')).toBe(12);
  expect(parseVersionSegment('12')).toBeNull();
  expect(parseVersionSegment('v0')).toBeNull();
  expect(formatBytes(1536)).toBe('1.5 KB'); // one rounding everywhere (shared/bytes.ts)
  expect(formatBytes(5.5 * 1024 * 1024)).toBe('5.5 MB');
});

test('the plot is summarised in words for screen readers', () => {
  const text = describePlot({ x: [1, 2, 3], observed: [3, 1, 0.2], expected: { '0': [2, 1, 0.3], '-1': [1, 1, 0.2], '1': [3, 2, 0.4] } }, { x: [1, 3], central: [5, 0.1] }, { x: 'm [TeV]', y: 'Upper limit on σ×B [fb]' });
  expect(text).toBe('Plot of observed, expected median, ±1σ band, theory for Upper limit on σ×B [fb] against m [TeV]; 3 points from 1 to 3; observed limit between 0.2 and 3.');
});
