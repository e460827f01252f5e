/**
 * Figure styling (issue 13, items 6–9): per-layer colour and line style, bands on several layers,
 * named theory curves shown once, short legend entries, a legend clear of the axes and tick
 * labels, axis ranges that end on the data, the excluded region above the observed limit, and
 * luminosities never joined on the energy line.
 */
import { buildScene, resolveFigureTheme, type FigureLayerData, type Scene } from '@/shared/figure';
import { planFigure } from '@/shared/figure/plan';
import { axisDomain } from '@/shared/figure/ticks';
import { bandsLayersOf, figureSpecSchema, FIGURE_THEMES, LEGEND_POSITIONS, type FigureSpec } from '@/shared/schemas/figures';
import { setLayerBands } from '@/components/figure/composer-model';
import { dijet, dilepton, ID, meta, spec, stubMeasure } from './fixtures';
import { legendBox, pathPoints, paths, texts } from './helpers';
import type { Rect } from '@/shared/figure';

const build = (s: FigureSpec, layers: FigureLayerData[]) => buildScene(s, layers, resolveFigureTheme(s.theme), stubMeasure);
const SIZE = { publication: 'one-column', slides: 'slide', outreach: 'web' } as const;
const overlaps = (a: Rect, b: Rect) => a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;

/** The boxes of the tick labels as the stub typesetter measures them. */
function tickBoxes(scene: Scene): Rect[] {
  return texts(scene, 'tick').map((t) => {
    const m = stubMeasure(t.label, t.size, t.font);
    const x = t.anchor === 'start' ? t.x : t.anchor === 'end' ? t.x - m.width : t.x - m.width / 2;
    return { x, y: t.y - m.ascent, width: m.width, height: m.ascent + m.descent };
  });
}

describe('colour and line style per layer', () => {
  test('a palette index or a free colour chooses the layer colour; the bands follow it', () => {
    const theme = resolveFigureTheme('publication');
    const byHue = build(spec({ layers: [{ resultId: ID[0], version: 3, hue: 3 }, { resultId: ID[1], version: 1 }] }), [dijet, dilepton]);
    expect(paths(byHue, 'observed').map((p) => p.stroke)).toEqual([theme.palette[3], theme.palette[1]]);
    const free = build(spec({ layers: [{ resultId: ID[0], version: 3, hue: 3, color: '#2A8F3C' }, { resultId: ID[1], version: 1 }] }), [dijet, dilepton]);
    expect(paths(free, 'observed').map((p) => p.stroke)).toEqual(['#2a8f3c', theme.palette[1]]);
    expect(paths(free, 'expected')[0]!.stroke).toBe('#2a8f3c');
    expect(paths(free, 'band1')[0]!.fill).not.toBe(paths(byHue, 'band1')[0]!.fill);
    expect(figureSpecSchema.safeParse({ ...spec(), layers: [{ resultId: ID[0], version: 3, color: 'green' }] }).success).toBe(false);
  });
  test('the line style gives the observed line its dash pattern, never the expected one', () => {
    for (const name of FIGURE_THEMES) {
      const theme = resolveFigureTheme(name);
      for (const style of ['dashed', 'dotted', 'dashdot'] as const) {
        const scene = build(spec({ theme: name, layers: [{ resultId: ID[0], version: 3, lineStyle: style }] }), [dijet]);
        const obs = paths(scene, 'observed')[0]!;
        expect(obs.dash).toEqual(theme.dash.observed[style]);
        expect(obs.dash).not.toEqual(theme.dash.expected);
        expect(paths(scene, 'expected')[0]!.dash).toEqual(theme.dash.expected);
        // The legend's key shows the same pattern.
        expect(paths(scene, 'legend-key').some((p) => JSON.stringify(p.dash) === JSON.stringify(theme.dash.observed[style]))).toBe(true);
      }
      expect(paths(build(spec({ theme: name }), [dijet, dilepton]), 'observed').every((p) => p.dash === null)).toBe(true);
    }
  });
});

describe('bands on several layers', () => {
  test('bandsLayers draws bands on each listed layer; older specs with one bandsLayer still parse', () => {
    const both = build(spec({ bandsLayers: [0, 1] }), [dijet, dilepton]);
    expect(new Set(paths(both, 'band1').map((p) => p.layer))).toEqual(new Set([0, 1]));
    expect(new Set(paths(both, 'band2').map((p) => p.layer))).toEqual(new Set([0, 1]));
    const old = figureSpecSchema.parse({ title: 'Old', theme: 'publication', size: { preset: 'one-column' }, layers: [{ resultId: ID[0], version: 3 }, { resultId: ID[1], version: 1 }], bandsLayer: 1 });
    expect(old.bandsLayers).toBeUndefined();
    expect(bandsLayersOf(old)).toEqual([1]);
    expect(bandsLayersOf({ bandsLayer: null, bandsLayers: undefined })).toEqual([]);
    expect(figureSpecSchema.safeParse({ ...spec(), bandsLayers: [0, 2] }).success).toBe(false);
    expect(figureSpecSchema.safeParse({ ...spec(), bandsLayers: [1, 1] }).success).toBe(false);
  });
  test('the composer toggles a layer’s bands and keeps bandsLayer at the first for older readers', () => {
    let s = spec();
    s = setLayerBands(s, 1, true);
    expect([s.bandsLayers, s.bandsLayer]).toEqual([[0, 1], 0]);
    s = setLayerBands(s, 0, false);
    expect([s.bandsLayers, s.bandsLayer]).toEqual([[1], 1]);
    s = setLayerBands(s, 1, false);
    expect([s.bandsLayers, s.bandsLayer]).toEqual([[], null]);
    expect(figureSpecSchema.safeParse(s).success).toBe(true);
  });
});

describe('theory curves', () => {
  test('a theory shared by two layers is drawn and listed once, under the name a layer gives it', () => {
    const s = spec({ layers: [{ resultId: ID[0], version: 3 }, { resultId: ID[1], version: 1, theoryLabel: 'Model A (NLO)' }] });
    const scene = build(s, [dijet, dilepton]);
    expect(paths(scene, 'theory')).toHaveLength(1);
    const legend = texts(scene, 'legend').map((t) => t.label);
    expect(legend.filter((l) => l === 'Model A (NLO)')).toHaveLength(1);
    expect(legend).not.toContain('Vee-prime benchmark A');
    // Without a layer's name, the result's own.
    expect(texts(build(spec({ layers: [{ resultId: ID[0], version: 3 }, { resultId: ID[1], version: 1 }] }), [dijet, dilepton]), 'legend').filter((t) => t.label === 'Vee-prime benchmark A')).toHaveLength(1);
  });
});

describe('short legend entries', () => {
  test('the layer is named once, on its first row; its other parts beneath are short', () => {
    const legend = texts(build(spec({ excludedShading: false }), [dijet, dilepton]), 'legend').map((t) => t.label);
    expect(legend.filter((l) => l.includes('Lanternfish dijet'))).toEqual(['Lanternfish dijet, observed']);
    expect(legend.filter((l) => l.includes('Lanternfish dilepton'))).toEqual(['Lanternfish dilepton, observed']);
    expect(legend).toContain('expected');
    for (const l of legend) expect(l.length).toBeLessThanOrEqual('Lanternfish dilepton, observed'.length);
  });
});

describe('the legend never covers the axes or the tick labels', () => {
  const variants: [string, Partial<FigureSpec>, FigureLayerData[]][] = [
    ['one layer', { layers: [{ resultId: ID[0], version: 3 }] } as Partial<FigureSpec>, [dijet]],
    ['two layers', {}, [dijet, dilepton]],
    ['two layers, two columns', { legend: { position: 'auto', columns: 2 } }, [dijet, dilepton]],
    ['linear y', { y: { scale: 'linear', min: null, max: null, label: '' } }, [dijet, dilepton]],
    ['longer label', { layers: [{ resultId: ID[0], version: 3, label: 'A longer name for the dijet search' }] } as Partial<FigureSpec>, [dijet]],
  ];
  for (const theme of FIGURE_THEMES) {
    test.each(variants)(`${theme}: %s`, (_, over, layers) => {
      for (const position of LEGEND_POSITIONS.filter((p) => p !== 'none')) {
        const s = figureSpecSchema.parse({ ...spec({ theme, size: { preset: SIZE[theme] } }), ...over, legend: { ...(over.legend ?? { columns: 1 }), position } });
        const scene = build(s, layers);
        const box = legendBox(scene)!;
        const inset = resolveFigureTheme(theme).spacing.legendInset;
        const ticks = resolveFigureTheme(theme).ticks;
        const p = scene.plot;
        // Inside the frame, clear of the inward tick marks.
        const clear = ticks.direction === 'in' ? ticks.major : 0;
        expect({ position, inside: box.x >= p.x + clear && box.y >= p.y + clear && box.x + box.width <= p.x + p.width - clear && box.y + box.height <= p.y + p.height - clear }).toEqual({ position, inside: true });
        expect(inset).toBeGreaterThan(clear);
        expect({ position, hits: tickBoxes(scene).filter((t) => overlaps(t, box)) }).toEqual({ position, hits: [] });
      }
    });
  }
  test('automatic placement takes a corner clear of the curves', () => {
    for (const theme of FIGURE_THEMES) {
      const scene = build(spec({ theme, size: { preset: SIZE[theme] } }), [dijet, dilepton]);
      const box = legendBox(scene)!;
      const inBox = paths(scene)
        .filter((q) => ['observed', 'expected', 'theory'].includes(q.role))
        .flatMap((q) => pathPoints(q.d))
        .filter(([x, y]) => x > box.x && x < box.x + box.width && y > box.y && y < box.y + box.height && y > scene.plot.y && y < scene.plot.y + scene.plot.height);
      expect({ theme, inBox }).toEqual({ theme, inBox: [] });
    }
  });
});

describe('axis ranges end on the data or a round value just outside', () => {
  test('tight linear ends: the data when round, else the next fine round value', () => {
    const lin = { scale: 'linear' as const, min: null, max: null, label: '' };
    expect(axisDomain(lin, [1, 2, 5], { pad: 0, fromZero: false, tight: true })).toEqual([1, 5]);
    expect(axisDomain(lin, [0.83, 4.97], { pad: 0, fromZero: false, tight: true })).toEqual([0.8, 5]);
    expect(axisDomain(lin, [1013, 4987], { pad: 0, fromZero: false, tight: true })).toEqual([1000, 5000]);
    // Limits on a linear axis start at zero; the top stays within a fortieth of the span.
    const [a, b] = axisDomain(lin, [2, 8.37], { pad: 0, fromZero: true, tight: true });
    expect(a).toBe(0);
    expect(b).toBeGreaterThanOrEqual(8.37);
    expect(b - 8.37).toBeLessThanOrEqual(8.37 / 20);
    const log = { scale: 'log' as const, min: null, max: null, label: '' };
    expect(axisDomain(log, [0.3, 40], { pad: 0, fromZero: true, tight: true })).toEqual([0.2, 50]);
  });
  test('in a figure: x from the first to the last mass; y within a round step of the data where the legend needs no room', () => {
    const theme = resolveFigureTheme('publication');
    const plan = planFigure(spec({ legend: { position: 'none', columns: 1 }, energyLabel: false, clLabel: false }), [dijet, dilepton], theme);
    expect(plan.x.domain).toEqual([1, 5]);
    const shown = planFigure(spec({ legend: { position: 'none', columns: 1 }, energyLabel: false, clLabel: false, layers: [{ resultId: ID[0], version: 3, show: { theory: false, band1: false, band2: false } }] }), [dijet], theme);
    const obs = dijet.available ? [...dijet.curve.observed!, ...dijet.curve.expected!['0']!] : [];
    const [lo, hi] = shown.y.domain;
    expect(lo).toBeLessThanOrEqual(Math.min(...obs));
    expect(hi).toBeGreaterThanOrEqual(Math.max(...obs));
    // The 1, 2, 5 × 10^k just outside: never more than a factor 2.5 beyond the data.
    expect(Math.min(...obs) / lo).toBeLessThan(2.5);
    expect(hi / Math.max(...obs)).toBeLessThan(2.5);
  });
});

describe('excluded shading', () => {
  const base = { layers: [{ resultId: ID[0], version: 3 }] };
  test('fills the region above the observed limit, up to the top of the plot', () => {
    for (const scale of ['log', 'linear'] as const) {
      const scene = build(spec({ ...base, y: { scale, min: null, max: null, label: '' } }), [dijet]);
      const obs = pathPoints(paths(scene, 'observed')[0]!.d);
      const at = (x: number) => {
        let i = 1;
        while (i < obs.length - 1 && obs[i]![0] < x) i++;
        const [x0, y0] = obs[i - 1]!;
        const [x1, y1] = obs[i]!;
        return y0 + ((x - x0) / (x1 - x0)) * (y1 - y0);
      };
      const regions = paths(scene, 'excluded');
      expect(regions.length).toBeGreaterThan(0);
      for (const r of regions) {
        const pts = pathPoints(r.d);
        expect(Math.min(...pts.map((q) => q[1]))).toBeLessThanOrEqual(scene.plot.y);
        // Every vertex lies on or above (smaller y) the observed line.
        for (const [x, y] of pts) expect(y).toBeLessThanOrEqual(at(x) + 1e-3);
        // Not a full-height block: its lower edge is the observed line, well above the bottom.
        expect(Math.max(...pts.map((q) => q[1]))).toBeLessThan(scene.plot.y + scene.plot.height - 1);
      }
    }
  });
  test('does not change the y range', () => {
    for (const name of FIGURE_THEMES) {
      const theme = resolveFigureTheme(name);
      const on = planFigure(spec({ theme: name, legend: { position: 'none', columns: 1 }, excludedShading: true }), [dijet, dilepton], theme);
      const off = planFigure(spec({ theme: name, legend: { position: 'none', columns: 1 }, excludedShading: false }), [dijet, dilepton], theme);
      expect(on.y.domain).toEqual(off.y.domain);
    }
  });
  test('outreach says in one plain line what the curves mean; the technical themes do not', () => {
    const out = build(spec({ theme: 'outreach', size: { preset: 'web' } }), [dijet, dilepton]);
    expect(texts(out, 'explain').map((t) => t.label)).toEqual(['Above the observed limit: ruled out']);
    expect(texts(build(spec(), [dijet, dilepton]), 'explain')).toEqual([]);
  });
});

describe('luminosities', () => {
  const lumi60 = { ...dilepton, meta: meta({ luminosity: 60 }) } as FigureLayerData;
  test('layers of one energy with different luminosities: √s once, each luminosity in its layer’s legend entry', () => {
    const scene = build(spec(), [dijet, lumi60]);
    expect(texts(scene, 'energy').map((t) => t.label)).toEqual(['$\\sqrt{s}$ = 18 TeV']);
    for (const t of texts(scene, 'energy')) expect(t.label).not.toMatch(/fb|,/);
    const legend = texts(scene, 'legend').map((t) => t.label);
    expect(legend).toContain('Lanternfish dijet (140 fb$^{-1}$), observed');
    expect(legend).toContain('Lanternfish dilepton (60 fb$^{-1}$), observed');
  });
  test('a layer label that already names its luminosity is not told it twice', () => {
    const s = spec({ layers: [{ resultId: ID[0], version: 3, label: 'Dijet, 140 fb$^{-1}$' }, { resultId: ID[1], version: 1, label: 'Dilepton' }] });
    const legend = texts(build(s, [dijet, lumi60]), 'legend').map((t) => t.label);
    expect(legend).toContain('Dijet, 140 fb$^{-1}$, observed');
    expect(legend).toContain('Dilepton (60 fb$^{-1}$), observed');
  });
  test('one luminosity: the energy line carries it and the legend does not repeat it', () => {
    const scene = build(spec(), [dijet, dilepton]);
    expect(texts(scene, 'energy').map((t) => t.label)).toEqual(['$\\sqrt{s}$ = 18 TeV, 140 fb$^{-1}$']);
    expect(texts(scene, 'legend').some((t) => t.label.includes('fb'))).toBe(false);
  });
});
