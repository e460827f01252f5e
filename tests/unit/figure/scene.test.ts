import { buildScene, collectLabels, labelKey, labelsOffPage, resolveFigureTheme, sizePt, type FigureLayerData, type Measure, type Scene } from '@/shared/figure';
import { FIGURE_THEMES, type FigureSpec, type FigureSpecInput } from '@/shared/schemas/figures';
import { exclusionRanges } from '@/shared/stats/exclusion';
import { placeBoxes } from '@/shared/figure/legend';
import { pathBounds } from '@/shared/figure/scene';
import { rangeForCorner, roughWidth } from '@/shared/figure/room';
import { dijet, dilepton, hiddenLayer, ID, meta, spec, stubMeasure, theory } from './fixtures';
import { allNumbers, inside, legendBox, pathPoints, paths, texts } from './helpers';

const build = (s: FigureSpec, layers: FigureLayerData[], house?: Parameters<typeof resolveFigureTheme>[1]) => buildScene(s, layers, resolveFigureTheme(s.theme, house), stubMeasure);
const roles = (scene: Scene) => scene.items.map((p) => p.role);

describe('labels are collected before the layout', () => {
  const variants: [string, FigureSpec, FigureLayerData[]][] = [
    ['two layers', spec(), [dijet, dilepton]],
    ['hidden layer, annotations, two legend columns', spec({ layers: [{ resultId: ID[0], version: 3 }, { resultId: ID[2], version: 2, label: 'Secret channel' }], annotations: [{ text: 'Preliminary', x: 0.5, y: 0.5 }], legend: { position: 'bottom-left', columns: 2 } }), [dijet, hiddenLayer]],
    ['no legend, no energy, linear y', spec({ legend: { position: 'none', columns: 1 }, energyLabel: false, clLabel: false, y: { scale: 'linear', min: null, max: null, label: 'Limit' } }), [dijet, dilepton]],
    ['no layers at all', spec({ layers: [] }), []],
  ];
  for (const theme of FIGURE_THEMES) {
    test.each(variants)(`${theme}: %s — buildScene measures exactly the collected labels`, (_, s0, layers) => {
      const s = { ...s0, theme };
      const t = resolveFigureTheme(theme);
      const collected = new Set(collectLabels(s, layers, t).map(labelKey));
      const measured = new Set<string>();
      const recording: Measure = (label, size, font) => {
        measured.add(labelKey({ label, size, font }));
        return stubMeasure(label, size, font);
      };
      buildScene(s, layers, t, recording);
      expect([...measured].filter((k) => !collected.has(k))).toEqual([]);
      expect([...collected].filter((k) => !measured.has(k))).toEqual([]);
      expect(collectLabels(s, layers, t)).toHaveLength(collected.size);
    });
  }
});

describe('draw order and band styling', () => {
  test('back to front: shading, ±2σ, ±1σ, theory band, theory, expected, observed, markers, axes, labels, legend', () => {
    const scene = build(spec(), [dijet, dilepton]);
    const order = ['background', 'excluded', 'band2', 'band1', 'theory-band', 'theory', 'expected', 'observed', 'crossing', 'axis', 'tick', 'axis-title', 'energy', 'legend'];
    const r = roles(scene);
    for (const role of order) expect(r).toContain(role);
    for (let i = 1; i < order.length; i++) {
      const lastBefore = r.lastIndexOf(order[i - 1]!);
      const firstHere = r.indexOf(order[i]!);
      expect({ pair: `${order[i - 1]} < ${order[i]}`, ok: firstHere > lastBefore }).toEqual({ pair: `${order[i - 1]} < ${order[i]}`, ok: true });
    }
    // The legend is the very last thing drawn.
    expect(scene.items[scene.items.length - 1]!.role).toBe('legend');
  });
  test('only the bands layer carries bands, in two tints of its own hue; curves are clipped', () => {
    const theme = resolveFigureTheme('publication');
    const first = build(spec(), [dijet, dilepton]);
    expect(new Set(paths(first, 'band1').map((p) => p.layer))).toEqual(new Set([0]));
    expect(new Set(paths(first, 'band2').map((p) => p.layer))).toEqual(new Set([0]));
    const second = build(spec({ bandsLayer: 1 }), [dijet, dilepton]);
    expect(paths(second, 'band1').map((p) => p.layer)).toEqual([1]);
    const b1 = paths(second, 'band1')[0]!.fill!;
    const b2 = paths(second, 'band2')[0]!.fill!;
    expect(b1).not.toBe(b2);
    expect(paths(second, 'observed').find((p) => p.layer === 1)!.stroke).toBe(theme.palette[1]);
    expect(build(spec({ bandsLayer: null }), [dijet, dilepton]).items.some((p) => p.role === 'band1' || p.role === 'band2')).toBe(false);
    for (const p of paths(first)) if (['band1', 'band2', 'expected', 'observed', 'theory', 'theory-band', 'excluded', 'crossing'].includes(p.role)) expect(p.clip).toBe(true);
  });
  test('observed solid, expected dashed in the layer colour, theory dotted in the neutral colour', () => {
    const theme = resolveFigureTheme('publication');
    const scene = build(spec(), [dijet, dilepton]);
    for (const p of paths(scene, 'observed')) expect(p.dash).toBeNull();
    for (const p of paths(scene, 'expected')) expect(p.dash).toEqual(theme.dash.expected);
    expect(paths(scene, 'expected').map((p) => p.stroke)).toEqual([theme.palette[0], theme.palette[1]]);
    // Both layers share one prediction: it is drawn once.
    expect(paths(scene, 'theory')).toHaveLength(1);
    expect(paths(scene, 'theory')[0]!.stroke).toBe(theme.colors.theory);
    expect(paths(scene, 'theory')[0]!.dash!.length).toBeGreaterThan(0);
  });
  test('hue: the spec overrides the group hue; hues wrap around the palette', () => {
    const theme = resolveFigureTheme('slides');
    const s = spec({ theme: 'slides', layers: [{ resultId: ID[0], version: 3, hue: 4 }, { resultId: ID[1], version: 1 }] });
    const scene = buildScene(s, [dijet, { ...dilepton, hue: theme.palette.length + 2 } as FigureLayerData], theme, stubMeasure);
    expect(paths(scene, 'observed').map((p) => p.stroke)).toEqual([theme.palette[4], theme.palette[2]]);
  });
  test('a house style replaces palette and font and scales lines and type', () => {
    const house = { font: 'sans' as const, palette: ['#0b6e4f', '#c0392b'], lineScale: 2, typeScale: 1.5 };
    const t = resolveFigureTheme('publication', house);
    expect(t.font).toBe('sans');
    expect(t.type.tick).toBeCloseTo(10.5, 6);
    expect(t.lines.observed).toBeCloseTo(2, 6);
    expect(t.dash.expected).toEqual([6, 3.6]);
    const scene = build(spec(), [dijet, dilepton], house);
    expect(paths(scene, 'observed').map((p) => p.stroke)).toEqual(['#0b6e4f', '#c0392b']);
    expect(texts(scene).every((x) => x.font === 'sans')).toBe(true);
  });
});

describe('log axes in the scene', () => {
  test('decade labels and unlabelled minor ticks on a log y axis', () => {
    const scene = build(spec({ y: { scale: 'log', min: 0.01, max: 1000, label: '' } }), [dijet]);
    const yLabels = texts(scene, 'tick').filter((t) => t.anchor === 'end').map((t) => t.label);
    expect(yLabels).toEqual(['$10^{-2}$', '$10^{-1}$', '$10^{0}$', '$10^{1}$', '$10^{2}$', '$10^{3}$']);
    // Tick marks at the left edge: 6 decades + 5 × 8 minor ticks, each a short horizontal segment.
    const d = paths(scene, 'tick')[0]!.d;
    const left = [...d.matchAll(/M([\d.]+),([\d.]+)H([\d.]+)/g)].filter((m) => Math.abs(Number(m[1]) - scene.plot.x) < 1e-6);
    expect(left).toHaveLength(6 + 5 * 8);
    const lengths = new Set(left.map((m) => Math.round((Number(m[3]) - Number(m[1])) * 1000) / 1000));
    const theme = resolveFigureTheme('publication');
    expect(lengths).toEqual(new Set([theme.ticks.major, theme.ticks.minor]));
  });
});

describe('legend placement', () => {
  const rising: FigureLayerData = {
    ...dijet,
    curve: { x: [1, 2, 3, 4, 5], observed: [1, 3, 10, 30, 100], expected: { '0': [1.2, 3.5, 11, 33, 95] } },
    theory: null,
  } as FigureLayerData;
  const falling: FigureLayerData = { ...rising, curve: { x: [1, 2, 3, 4, 5], observed: [100, 30, 10, 3, 1], expected: { '0': [95, 33, 11, 3.5, 1.2] } } } as FigureLayerData;
  const fixedRange = { layers: [{ resultId: ID[0], version: 3 }], y: { scale: 'log' as const, min: 0.8, max: 120, label: '' }, energyLabel: false, clLabel: false };

  test('auto: a curve through the top-right corner sends the legend elsewhere, clear of the curve', () => {
    const scene = build(spec(fixedRange), [rising]);
    expect(scene.legendCorner).not.toBe('top-right');
    const box = legendBox(scene)!;
    for (const p of [...paths(scene, 'observed'), ...paths(scene, 'expected')]) {
      const pts = pathPoints(p.d);
      // Check along the segments too, not just at the data points.
      for (let i = 1; i < pts.length; i++) for (let k = 0; k <= 20; k++) {
        const [x0, y0] = pts[i - 1]!;
        const [x1, y1] = pts[i]!;
        expect(inside(box, [x0 + ((x1 - x0) * k) / 20, y0 + ((y1 - y0) * k) / 20])).toBe(false);
      }
    }
    expect(build(spec(fixedRange), [falling]).legendCorner).toBe('top-right');
  });
  test('a band counts as data: the legend keeps off the area it fills', () => {
    const banded = (obs: number[]) => ({ ...rising, curve: { x: [1, 2, 3, 4, 5], observed: obs, expected: { '-2': obs.map((v) => v / 2), '0': obs, '2': obs.map((v) => v * 12) } } }) as FigureLayerData;
    const s = spec({ ...fixedRange, layers: [{ resultId: ID[0], version: 3, show: { band1: false } }] });
    const up = build(s, [banded([1, 2, 4, 6, 10])]);
    expect(up.legendCorner).not.toBe('top-right');
    expect(build(s, [banded([10, 6, 4, 2, 1])]).legendCorner).toBe('top-right');
  });
  test('the legend gets a free corner first, even when the energy block must then sit over data', () => {
    const plot = { x: 0, y: 0, width: 100, height: 100 };
    // Points everywhere except the top-left corner.
    const samples: [number, number][] = [];
    for (let x = 0; x <= 100; x += 5) for (let y = 0; y <= 100; y += 5) if (!(x < 45 && y < 45)) samples.push([x, y]);
    const placed = placeBoxes({ plot, inset: 2, samples, obstacles: [], legend: { w: 40, h: 40, fixed: null }, info: { w: 40, h: 10 } });
    expect(placed).toEqual({ legend: 'top-left', info: 'top-right' });
    // An annotation in the free corner is worse than any number of points.
    const blocked = placeBoxes({ plot, inset: 2, samples, obstacles: [{ x: 10, y: 10, width: 5, height: 5 }], legend: { w: 40, h: 40, fixed: null }, info: null });
    expect(blocked.legend).not.toBe('top-left');
  });
  test('the automatic y range makes room so the legend covers no data', () => {
    // A measure close to the builder's own estimate (a TeX command counts as one character).
    const narrow: Measure = (label, size) => ({ width: roughWidth(label, size), ascent: 0.75 * size, descent: 0.25 * size });
    for (const theme of FIGURE_THEMES) {
      const s = spec({ theme, size: { preset: theme === 'slides' ? 'slide' : theme === 'outreach' ? 'web' : 'one-column' } });
      const scene = buildScene(s, [dijet, dilepton], resolveFigureTheme(theme), narrow);
      const box = legendBox(scene)!;
      const curves = paths(scene).filter((p) => ['band1', 'band2', 'theory-band', 'theory', 'expected', 'observed'].includes(p.role));
      const covered = curves.flatMap((p) => pathPoints(p.d)).filter((q) => inside(box, q) && inside(scene.plot, q));
      expect({ theme, covered }).toEqual({ theme, covered: [] });
    }
  });
  test('room for the legend: the range grows just enough at the end a corner needs, never at a fixed end', () => {
    const pts = [{ fx: 0.1, u: 3 }, { fx: 0.9, u: 1 }];
    // Top-right box covering the right 30 % and top 50 %: the point at u = 1 must sit in the lower half.
    expect(rangeForCorner('top-right', 0.3, 0.5, pts, 0, 3, { low: true, high: true })).toEqual([0, 3]);
    expect(rangeForCorner('top-left', 0.3, 0.5, pts, 0, 3, { low: true, high: true })).toEqual([0, 6]);
    expect(rangeForCorner('top-left', 0.3, 0.5, pts, 0, 3, { low: true, high: false })).toBeNull();
    expect(rangeForCorner('bottom-right', 0.3, 0.5, pts, 0, 3, { low: true, high: true })).toEqual([-1, 3]);
    expect(rangeForCorner('bottom-left', 0.3, 0.5, [], 0, 3, { low: false, high: false })).toEqual([0, 3]);
  });
  test('fixed corners are obeyed, "none" hides the legend, two columns sit side by side', () => {
    for (const position of ['top-left', 'top-right', 'bottom-left', 'bottom-right'] as const) {
      expect(build(spec({ ...fixedRange, legend: { position, columns: 1 } }), [rising]).legendCorner).toBe(position);
    }
    const none = build(spec({ legend: { position: 'none', columns: 1 } }), [dijet, dilepton]);
    expect(none.legendCorner).toBe('none');
    expect(none.items.some((p) => p.role === 'legend' || p.role === 'legend-key')).toBe(false);
    // (On a page wide enough for both: two columns wider than the plot fall back to one, see style.test.ts.)
    const two = build(spec({ size: { preset: 'two-column' }, legend: { position: 'auto', columns: 2 } }), [dijet, dilepton]);
    expect(new Set(texts(two, 'legend').map((t) => Math.round(t.x))).size).toBe(2);
    const narrow = build(spec({ legend: { position: 'auto', columns: 2 } }), [dijet, dilepton]);
    expect(legendBox(narrow)!.width).toBeLessThanOrEqual(narrow.plot.width);
  });
  test('the energy block never shares the legend corner', () => {
    for (const position of ['top-left', 'top-right', 'bottom-left', 'bottom-right'] as const) {
      const scene = build(spec({ legend: { position, columns: 1 } }), [dijet, dilepton]);
      const box = legendBox(scene)!;
      for (const t of texts(scene, 'energy')) expect(inside(box, [t.x, t.y])).toBe(false);
    }
  });
  test('legend entries name each layer once, its parts beneath; a single layer reads plainly', () => {
    const two = texts(build(spec(), [dijet, dilepton]), 'legend').map((t) => t.label);
    expect(two).toEqual([
      'Lanternfish dijet, observed',
      'expected',
      '$\\pm 1\\sigma$',
      '$\\pm 2\\sigma$',
      'Lanternfish dilepton, observed',
      'expected',
      'Vee-prime benchmark A',
      'Excluded (observed)',
    ]);
    const one = texts(build(spec({ layers: [{ resultId: ID[0], version: 3 }], excludedShading: false }), [dijet]), 'legend').map((t) => t.label);
    expect(one).toEqual(['Observed limit', 'Expected limit', 'Expected $\\pm 1\\sigma$', 'Expected $\\pm 2\\sigma$', 'Vee-prime benchmark A']);
  });
});

describe('outreach', () => {
  test('one band at most, plain words, no statistics symbols unless asked', () => {
    const s = spec({ theme: 'outreach', size: { preset: 'web' }, clLabel: false });
    const scene = build(s, [dijet, dilepton]);
    expect(paths(scene, 'band2')).toHaveLength(0);
    expect(paths(scene, 'band1')).toHaveLength(1);
    const words = texts(scene).filter((t) => t.role !== 'tick').map((t) => t.label);
    expect(words).toEqual(expect.arrayContaining(['Lanternfish dijet: observed limit', 'expected limit', 'expected range', 'Above the observed limit: ruled out', 'Ruled out by this search', 'Mass of the new particle [TeV]', 'How often it would be made [fb]']));
    for (const w of words) expect(w).not.toMatch(/\\sigma|\\pm|CL\b|\\mu|fb\$\^/);
    const withCl = build({ ...s, clLabel: true }, [dijet, dilepton]);
    expect(texts(withCl, 'cl').map((t) => t.label)).toEqual(['95% confidence']);
  });
  test('a single layer reads "Observed limit" / "Expected limit"; spec titles are kept as written', () => {
    const s = spec({ theme: 'outreach', layers: [{ resultId: ID[0], version: 3 }], x: { scale: 'linear', min: null, max: null, label: 'Mass [TeV]' } });
    const scene = build(s, [dijet]);
    const legend = texts(scene, 'legend').map((t) => t.label);
    expect(legend.slice(0, 3)).toEqual(['Observed limit', 'Expected limit', 'Expected range']);
    expect(texts(scene, 'axis-title').map((t) => t.label)).toContain('Mass [TeV]');
  });
});

describe('layers the viewer may not see', () => {
  const s = spec({ layers: [{ resultId: ID[0], version: 3 }, { resultId: ID[2], version: 2, label: 'Secret channel Z' }], bandsLayer: 1 });
  test('are left out with a note, never with their label', () => {
    const scene = build(s, [dijet, hiddenLayer]);
    expect(scene.notes).toEqual(['1 layer is not shown: you may not see its result']);
    expect(texts(scene, 'note').map((t) => t.label)).toEqual(scene.notes);
    const everything = JSON.stringify(scene) + JSON.stringify(collectLabels(s, [dijet, hiddenLayer], resolveFigureTheme('publication')));
    expect(everything).not.toContain('Secret');
    expect(everything).not.toContain(ID[2]);
    // The bands were chosen on the hidden layer: no bands, rather than someone else's.
    expect(paths(scene, 'band1')).toHaveLength(0);
    expect(new Set(paths(scene).map((p) => p.layer).filter((l) => l !== undefined))).toEqual(new Set([0]));
  });
  test('a missing data entry counts as not visible', () => {
    expect(build(s, [dijet]).notes).toEqual(['1 layer is not shown: you may not see its result']);
    const two = build(spec({ layers: [{ resultId: ID[2], version: 2 }, { resultId: ID[1], version: 1 }, { resultId: ID[0], version: 3 }] }), [hiddenLayer, hiddenLayer]);
    expect(two.notes).toEqual(['3 layers are not shown: you may not see their results']);
  });
  test('a note wider than the page (slide type on a journal column) is drawn on two lines inside the page', () => {
    const narrow = { ...s, theme: 'slides' as const, size: { preset: 'one-column' as const } };
    const scene = build(narrow, [dijet, hiddenLayer]);
    const lines = texts(scene, 'note');
    expect(lines.map((t) => t.label)).toEqual(['1 layer is not shown:', 'you may not see its result']);
    for (const t of lines) expect(t.x + stubMeasure(t.label, t.size, t.font).width).toBeLessThanOrEqual(scene.widthPt);
    expect(lines[1]!.y).toBeGreaterThan(lines[0]!.y);
    // The plot starts below both lines.
    expect(scene.plot.y).toBeGreaterThan(lines[1]!.y);
    expect(scene.notes).toEqual(['1 layer is not shown: you may not see its result']);
  });
});

describe('excluded shading', () => {
  const base = { layers: [{ resultId: ID[0], version: 3, show: { crossings: true } }], x: { scale: 'linear' as const, min: 1, max: 5, label: '' } };
  /** ln-linear interpolation of (xs, ys) at x (the test's own, independent of the builder). */
  const at = (xs: number[], ys: number[], x: number) => {
    let i = 1;
    while (i < xs.length - 1 && xs[i]! < x) i++;
    const t = (x - xs[i - 1]!) / (xs[i]! - xs[i - 1]!);
    return Math.exp(Math.log(ys[i - 1]!) + t * (Math.log(ys[i]!) - Math.log(ys[i - 1]!)));
  };
  test('shades exactly where the observed limit is below the theory curve', () => {
    const scene = build(spec(base), [dijet]);
    const strips = paths(scene, 'excluded').map((p) => {
      const pts = pathPoints(p.d);
      return [Math.min(...pts.map((q) => q[0])), Math.max(...pts.map((q) => q[0]))] as const;
    });
    expect(strips.length).toBeGreaterThan(0);
    const obs = dijet.available ? dijet.curve.observed! : [];
    const X = (v: number) => scene.plot.x + ((v - 1) / 4) * scene.plot.width;
    for (let x = 1.01; x < 5; x += 0.02) {
      const below = at(dijet.available ? dijet.curve.x : [], obs, x) < at(theory.x, theory.central, x);
      const shaded = strips.some(([a, b]) => X(x) >= a && X(x) <= b);
      const margin = Math.abs(Math.log(at(dijet.available ? dijet.curve.x : [], obs, x) / at(theory.x, theory.central, x)));
      if (margin > 0.02) expect({ x: Number(x.toFixed(2)), shaded }).toEqual({ x: Number(x.toFixed(2)), shaded: below });
    }
  });
  test('none when switched off; crossing markers where the limits meet theory', () => {
    expect(paths(build(spec({ ...base, excludedShading: false }), [dijet]), 'excluded')).toHaveLength(0);
    const scene = build(spec(base), [dijet]);
    const r = exclusionRanges(dijet.available ? dijet.curve : { x: [] }, theory);
    const closedEnds = (rs: { fromOpen?: boolean; toOpen?: boolean }[] = []) => rs.reduce((a, x) => a + (x.fromOpen ? 0 : 1) + (x.toOpen ? 0 : 1), 0);
    const markers = paths(scene, 'crossing');
    expect(markers).toHaveLength(closedEnds(r.observed) + closedEnds(r.expected['0']));
    expect(markers.filter((p) => p.fill !== '#ffffff')).toHaveLength(closedEnds(r.observed));
    expect(paths(build(spec({ ...base, layers: [{ resultId: ID[0], version: 3 }] }), [dijet]), 'crossing')).toHaveLength(0);
  });
});

describe('sizes and robustness', () => {
  test('sizes in points from centimetres (1 cm = 72/2.54 pt)', () => {
    expect(sizePt(spec())).toEqual({ widthPt: 243.78, heightPt: 182.835 });
    expect(sizePt(spec({ size: { preset: 'two-column' } })).widthPt).toBeCloseTo(504.567, 3);
    expect(sizePt({ size: { preset: 'custom', widthCm: NaN, heightCm: 0 } })).toEqual({ widthPt: 85.039, heightPt: 85.039 });
  });
  test('tiny figures, empty figures and broken data never produce NaN', () => {
    const broken = { ...dijet, curve: { x: [1, 2, NaN, 4], observed: [-1, 0, 3, Infinity], expected: { '0': [NaN, NaN, NaN, NaN] } }, theory: null } as FigureLayerData;
    const nanMeasure: Measure = () => ({ width: NaN, ascent: -3, descent: Infinity });
    for (const theme of FIGURE_THEMES) {
      const tiny = spec({ theme, size: { preset: 'custom', widthCm: 3, heightCm: 3 } });
      for (const scene of [build(tiny, [dijet, dilepton]), build({ ...tiny, layers: [] }, []), build(tiny, [broken, dilepton]), buildScene(tiny, [dijet], resolveFigureTheme(theme), nanMeasure)]) {
        expect(allNumbers(scene).filter((v) => !Number.isFinite(v))).toEqual([]);
        expect(scene.plot.width).toBeGreaterThan(0);
        const box = legendBox(scene);
        if (box) expect(box.x >= 0 && box.y >= 0).toBe(true);
        expect(scene.plot.height).toBeGreaterThan(0);
      }
    }
  });
  test('deterministic: the same input gives the same scene', () => {
    expect(JSON.stringify(build(spec(), [dijet, dilepton]))).toBe(JSON.stringify(build(spec(), [dijet, dilepton])));
  });
  test('energy and luminosity from the layers, one line per energy; the confidence level from theirs', () => {
    const other = { ...dilepton, meta: meta({ sqrtS: 13, luminosity: 36.1, cl: 0.9 }) } as FigureLayerData;
    const scene = build(spec(), [dijet, other]);
    expect(texts(scene, 'energy').map((t) => t.label)).toEqual(['$\\sqrt{s}$ = 18 TeV, 140 fb$^{-1}$', '$\\sqrt{s}$ = 13 TeV, 36.1 fb$^{-1}$']);
    expect(texts(scene, 'cl').map((t) => t.label)).toEqual(['95% CL, 90% CL']);
    expect(texts(build(spec({ energyLabel: false, clLabel: false }), [dijet]), 'energy')).toHaveLength(0);
  });
  test('automatic axis titles from the first layer; a μ limit gets the signal-strength title', () => {
    const mu = { ...dijet, meta: meta({ quantity: 'mu', quantityUnit: '' }) } as FigureLayerData;
    const titles = texts(build(spec({ layers: [{ resultId: ID[0], version: 3 }] }), [mu]), 'axis-title').map((t) => t.label);
    expect(titles).toEqual(["$m_{V'}$ [TeV]", 'Signal strength $\\mu$']);
  });
});

describe('labels off the page', () => {
  test('none on the usual sizes; slide type with long legend entries on a journal column sticks out and is named', () => {
    const usual = { publication: 'one-column', slides: 'slide', outreach: 'web' } as const;
    for (const theme of FIGURE_THEMES) expect(labelsOffPage(build(spec({ theme, size: { preset: usual[theme] } }), [dijet, dilepton]), stubMeasure)).toEqual([]);
    const long = 'A very long legend entry for a channel with many words in it';
    const cramped = spec({ theme: 'slides', size: { preset: 'one-column' }, layers: [{ resultId: ID[0], version: 3, label: long }] });
    const off = labelsOffPage(build(cramped, [dijet]), stubMeasure);
    expect(off.some((l) => l.startsWith(long))).toBe(true);
  });
});

describe('labels larger than the page', () => {
  // What TeX can typeset: a box of any size (\rule{1em}{100em} is 100 em tall, \hspace{1000000em} a million wide).
  const TALL = '$\\rule{1em}{100em}$';
  const WIDE = '$\\hspace{1000000em}x$';
  const hostile: Measure = (label, size, font) =>
    label.includes(TALL) ? { width: size, ascent: 100 * size, descent: 0.2 * size } : label.includes(WIDE) ? { width: 1e6 * size, ascent: 0.7 * size, descent: 0.2 * size } : stubMeasure(label, size, font);
  const buildHostile = (s: FigureSpec, layers: FigureLayerData[] = [dijet, dilepton]) => buildScene(s, layers, resolveFigureTheme(s.theme), hostile);
  const onPage = (scene: Scene) => {
    const { plot, widthPt: W, heightPt: H } = scene;
    expect(plot.width).toBeGreaterThanOrEqual(0.25 * W - 1e-9);
    expect(plot.height).toBeGreaterThanOrEqual(0.25 * H - 1e-9);
    expect(plot.x).toBeGreaterThanOrEqual(0);
    expect(plot.y).toBeGreaterThanOrEqual(0);
    expect(plot.x + plot.width).toBeLessThanOrEqual(W);
    expect(plot.y + plot.height).toBeLessThanOrEqual(H);
  };
  const cases: [string, Partial<FigureSpecInput>, string][] = [
    ['a 100 em tall y-axis title', { y: { scale: 'log', min: null, max: null, label: TALL } }, 'spec.y.label'],
    ['a million em wide y-axis title', { y: { scale: 'log', min: null, max: null, label: WIDE } }, 'spec.y.label'],
    ['a 100 em tall x-axis title', { x: { scale: 'linear', min: null, max: null, label: TALL } }, 'spec.x.label'],
    ['a million em wide x-axis title', { x: { scale: 'linear', min: null, max: null, label: WIDE } }, 'spec.x.label'],
    ['a tall annotation', { annotations: [{ text: 'fine', x: 0.1, y: 0.9 }, { text: TALL, x: 0.5, y: 0.5 }] }, 'spec.annotations.1.text'],
    ['a wide layer label in the legend', { layers: [{ resultId: ID[0], version: 3, label: WIDE, show: { observed: true, expected: true, band1: true, band2: true, theory: true, theoryBand: true, crossings: false }, hue: null }] }, 'spec.layers.0.label'],
  ];
  test.each(cases)('%s: the plot stays on the page and the label is named by its field', (_name, over, field) => {
    for (const theme of FIGURE_THEMES) {
      const scene = buildHostile(spec({ ...over, theme }));
      onPage(scene);
      expect(scene.oversizeLabels.map((o) => o.field)).toEqual([field]);
      expect(scene.oversizeLabels[0]!.message).toMatch(/ pt (tall|long|wide) when typeset.*(taller|longer|wider) than the [\d.]+ × [\d.]+ pt page/);
    }
  });
  test('ordinary figures have none, not even slide type squeezed onto a journal column (it only sticks out)', () => {
    for (const theme of FIGURE_THEMES) expect(buildHostile(spec({ theme }), [dijet, dilepton]).oversizeLabels).toEqual([]);
    const long = 'A very long legend entry for a channel with many words in it, longer than the page';
    const cramped = buildHostile(spec({ theme: 'slides', size: { preset: 'one-column' }, layers: [{ resultId: ID[0], version: 3, label: long, show: { observed: true, expected: true, band1: true, band2: true, theory: true, theoryBand: true, crossings: false }, hue: null }] }), [dijet]);
    expect(cramped.oversizeLabels).toEqual([]);
    expect(labelsOffPage(cramped, hostile).some((l) => l.startsWith(long))).toBe(true);
  });
  test('thickness is checked across the reading direction: the upright y-axis title may be as thick as the page is wide', () => {
    const { heightPt, widthPt } = sizePt(spec());
    expect(widthPt).toBeGreaterThan(heightPt);
    // Thicker than the page is tall, thinner than it is wide.
    const THICK = 'thick';
    const thick = (h: number): Measure => (label, size, font) => (label === THICK ? { width: 20, ascent: h, descent: 0 } : stubMeasure(label, size, font));
    const between = (heightPt + widthPt) / 2;
    const s = (axis: 'x' | 'y') => spec({ [axis]: { scale: axis === 'x' ? 'linear' : 'log', min: null, max: null, label: THICK } });
    const fields = (axis: 'x' | 'y', h: number) => buildScene(s(axis), [dijet], resolveFigureTheme('publication'), thick(h)).oversizeLabels.map((o) => o.field);
    expect(fields('x', between)).toEqual(['spec.x.label']);
    expect(fields('y', between)).toEqual([]);
    expect(fields('y', widthPt + 10)).toEqual(['spec.y.label']);
  });
});

describe('clipped shapes wholly outside the plot are left out', () => {
  test('crossing markers and curves far outside a fixed x range are not drawn; those inside are', () => {
    // x from 1e300: every data point lies far to the left of the plot.
    const far = build(spec({ x: { scale: 'linear', min: 1e300, max: null, label: '' }, layers: [{ resultId: ID[0], version: 3, show: { observed: true, expected: true, band1: true, band2: true, theory: true, theoryBand: true, crossings: true }, hue: null }] }), [dijet]);
    expect(paths(far).filter((p) => p.clip && ['crossing', 'observed', 'expected', 'band1', 'band2', 'theory', 'theory-band', 'excluded'].includes(p.role))).toEqual([]);
    const near = build(spec(), [dijet, dilepton]);
    for (const role of ['crossing', 'observed', 'expected', 'band1', 'band2', 'theory']) expect(paths(near, role).length).toBeGreaterThan(0);
    // Every clipped shape left touches the plot.
    for (const p of paths(near).filter((q) => q.clip)) {
      const b = pathBounds(p.d)!;
      expect(b.x <= near.plot.x + near.plot.width + 10 && b.x + b.width >= near.plot.x - 10).toBe(true);
    }
  });
  test('path bounds: lines, arcs, rectangles; nothing finite gives null; unknown commands keep the shape', () => {
    expect(pathBounds('M1,2L3,-4H10V7Z')).toEqual({ x: 1, y: -4, width: 9, height: 11 });
    expect(pathBounds('M10,5A2,2 0 1,0 14,5A2,2 0 1,0 10,5Z')).toEqual({ x: 8, y: 3, width: 8, height: 4 });
    expect(pathBounds('M1e+300,2L-1e+300,3')).toEqual({ x: -1e300, y: 2, width: 2e300, height: 1 });
    expect(pathBounds('MNaN,NaNLNaN,NaN')).toBeNull();
    expect(pathBounds('M0,0c1,1 2,2 3,3')!.width).toBe(Infinity);
  });
});

describe('work is bounded by the page, not by the axis range', () => {
  test('a fixed x range far narrower than the data samples only what a legend could cover', () => {
    const legendModule = jest.requireActual<typeof import('@/shared/figure/legend')>('@/shared/figure/legend');
    const spy = jest.spyOn(legendModule, 'densify');
    try {
      // The data run from 1 to 5; the axis shows −0.001 … 0.001: the bands span millions of points' widths.
      const narrow = spec({ x: { scale: 'linear', min: -0.001, max: 0.001, label: '' } });
      build(narrow, [dijet, dilepton]);
      const produced = spy.mock.results.reduce((n, r) => n + (r.value as unknown[]).length, 0);
      // (4.8 million before the bound, and two minutes of work on a busy machine.) Ordinary
      // figures are sampled as before: the golden figures would show any change.
      expect(produced).toBeLessThan(100_000);
    } finally {
      spy.mockRestore();
    }
  });
});
