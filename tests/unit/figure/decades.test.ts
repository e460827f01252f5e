/** The decade helpers that the figure scene and the app's quick plot share (shared/figure/ticks.ts). */
import { decade, decadeRange, formatDecade, isPlainDecade, MINUS, PLAIN_DECADES, powerOfTen, roundMultiples } from '@/shared/figure/ticks';
import { formatTick } from '@/components/plot/quick-plot-geometry';

test('decade(k) is the round power of ten', () => {
  expect(decade(-3)).toBe(0.001);
  expect(decade(0)).toBe(1);
  expect(decade(5)).toBe(100000);
});

test('decadeRange gives the decades inside a range, with rounding slack at the ends', () => {
  expect(decadeRange(0.01, 1000)).toEqual([-2, 3]);
  expect(decadeRange(0.5, 20).map((k) => k + 0)).toEqual([0, 1]); // + 0: Math.ceil gives −0 here
  expect(decadeRange(0.001 * (1 + 1e-12), 1000 * (1 - 1e-12))).toEqual([-3, 3]);
  const [k0, k1] = decadeRange(2, 5);
  expect(k0).toBeGreaterThan(k1);
});

test('roundMultiples: m × 10^k inside the range, increasing, stopping at a limit between decades', () => {
  expect(roundMultiples([0.5, 20], -1, 1, [1, 2, 5])).toEqual([0.5, 1, 2, 5, 10, 20]);
  expect(roundMultiples([1, 100], 0, 1, [3])).toEqual([3, 30]);
  expect(roundMultiples([1e-10, 1e10], -10, 9, [2, 5], 4)).toEqual([2e-10, 5e-10, 2e-9, 5e-9]);
});

test('decades 0.001…10000 are written out, beyond as powers of ten (TeX for figures, superscripts in the app)', () => {
  expect(PLAIN_DECADES).toEqual({ lowest: -3, highest: 4 });
  expect([-4, -3, 4, 5].map(isPlainDecade)).toEqual([false, true, true, false]);
  expect(formatDecade(-3, true)).toBe('0.001');
  expect(formatDecade(4, true)).toBe('10000');
  expect(formatDecade(-4, false)).toBe('$10^{-4}$');
  expect(formatDecade(-4, false, 'unicode')).toBe('10⁻⁴');
  expect(powerOfTen(12)).toBe('10¹²');
  expect(powerOfTen(-305)).toBe('10⁻³⁰⁵');
});

test('the quick plot writes decades as the figure does and negative ones with a true minus', () => {
  for (let k = -8; k <= 8; k++) {
    const figure = formatDecade(k, isPlainDecade(k), 'unicode');
    expect(formatTick(decade(k))).toBe(figure);
  }
  expect(formatTick(-1e6)).toBe(`${MINUS}10⁶`);
  expect(formatTick(-0.001)).toBe(`${MINUS}0.001`);
});
