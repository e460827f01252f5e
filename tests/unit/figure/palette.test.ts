import { CVD_MATRICES, ciede2000, greyLightness, hexToLab, minPairDifference, paletteProblems, PALETTE_THRESHOLDS, simulateVision, tint, type Lab } from '@/shared/figure/color';
import { FIGURE_THEMES } from '@/shared/schemas/figures';
import { resolveFigureTheme } from '@/shared/figure';

describe('colour difference (CIEDE2000)', () => {
  // Test pairs and expected ΔE00 from G. Sharma, W. Wu, E. N. Dalal, Color Res. Appl. 30 (2005) 21,
  // Table 1 (values from memory; pairs 1–3, 7 and 17–20).
  const pairs: [Lab, Lab, number][] = [
    [[50, 2.6772, -79.7751], [50, 0, -82.7485], 2.0425],
    [[50, 3.1571, -77.2803], [50, 0, -82.7485], 2.8615],
    [[50, 2.8361, -74.02], [50, 0, -82.7485], 3.4412],
    [[50, 0, 0], [50, -1, 2], 2.3669],
    [[50, 2.5, 0], [73, 25, -18], 27.1492],
    [[50, 2.5, 0], [61, -5, 29], 22.8977],
    [[50, 2.5, 0], [56, -27, -3], 31.903],
    [[50, 2.5, 0], [58, 24, 15], 19.4535],
  ];
  test.each(pairs)('%j vs %j → %d', (a, b, expected) => {
    expect(ciede2000(a, b)).toBeCloseTo(expected, 4);
    expect(ciede2000(b, a)).toBeCloseTo(expected, 4);
  });
  test('sRGB white and black have L* 100 and 0 (D65 white point)', () => {
    expect(hexToLab('#ffffff')[0]).toBeCloseTo(100, 1);
    expect(greyLightness('#000000')).toBeCloseTo(0, 6);
    expect(greyLightness('#777777')).toBeCloseTo(50, 0); // mid grey: sRGB 119 ≈ L* 50 (common practice)
  });
});

describe('colour-vision simulation (Machado, Oliveira, Fernandes, IEEE TVCG 15 (2009) 1291)', () => {
  test('each matrix row sums to 1, so white and greys are unchanged', () => {
    for (const m of Object.values(CVD_MATRICES)) for (const row of m) expect(row[0] + row[1] + row[2]).toBeCloseTo(1, 5);
    expect(simulateVision('#ffffff', 'deuteranopia')).toBe('#ffffff');
    expect(simulateVision('#808080', 'protanopia')).toBe('#808080');
  });
  test('red and green, far apart with normal vision, come close for dichromats', () => {
    const normal = ciede2000(hexToLab('#cc3333'), hexToLab('#339933'));
    const deutan = ciede2000(hexToLab(simulateVision('#cc3333', 'deuteranopia')), hexToLab(simulateVision('#339933', 'deuteranopia')));
    expect(deutan).toBeLessThan(normal / 2);
  });
});

describe('figure palettes stay distinguishable', () => {
  test.each(FIGURE_THEMES)('%s: first six layer colours pass every check', (name) => {
    const theme = resolveFigureTheme(name);
    const six = theme.palette.slice(0, 6);
    expect(six).toHaveLength(6);
    // ΔE00 with normal vision and under simulated protanopia / deuteranopia; ΔL* in greyscale.
    for (const mode of ['normal', 'protanopia', 'deuteranopia', 'greyscale'] as const) {
      expect(minPairDifference(six, mode).value).toBeGreaterThanOrEqual(PALETTE_THRESHOLDS[mode]);
    }
    expect(paletteProblems(theme.palette)).toEqual([]);
    // Every colour, extras included, still differs with normal vision; none too light for a line on white.
    expect(minPairDifference(theme.palette, 'normal').value).toBeGreaterThanOrEqual(PALETTE_THRESHOLDS.normal);
    for (const c of theme.palette) expect(greyLightness(c)).toBeLessThanOrEqual(72);
  });
  test.each(FIGURE_THEMES)('%s: band tints are lighter than the line and apart from each other in greyscale', (name) => {
    const theme = resolveFigureTheme(name);
    for (const c of theme.palette.slice(0, 6)) {
      const l1 = greyLightness(tint(c, theme.bandTint.band1));
      const l2 = greyLightness(tint(c, theme.bandTint.band2));
      expect(l1).toBeGreaterThan(greyLightness(c) + 15);
      expect(l2).toBeGreaterThan(l1 + 5);
    }
  });
  test('a house palette of near-identical blues is reported in plain words', () => {
    const problems = paletteProblems(['#1b3f8b', '#1d428f', '#c2571a', '#2e8b57', '#7b3f99', '#b8860b']);
    expect(problems.some((p) => p.includes('colours 1 and 2') && p.includes('normal colour vision'))).toBe(true);
  });
});
