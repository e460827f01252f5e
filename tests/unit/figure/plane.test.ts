/**
 * The two-parameter plane (figure kind `plane`): contour paths on the axes where planeContours puts
 * them, the colour bar's range, log axes, holes, labels collected = labels drawn, the refusal of
 * one-parameter layers, the contour CSV, and the sequential palette.
 */
import { buildScene, collectLabels, figureCsv, captionDraft, labelKey, resolveFigureTheme, type FigureLayerData, type Scene } from '@/shared/figure';
import { hatchTicks, planPlane, PLANE_BAND_OVER_MAP, PLANE_COLOR_LEVELS, PLANE_SHADE_OVER_MAP } from '@/shared/figure/plane';
import { bandColors } from '@/shared/figure/plan';
import { greyLightness, rampColor, simulateVision } from '@/shared/figure/color';
import { planeContours } from '@/shared/plane/contours';
import type { Plane } from '@/shared/schemas/plane';
import { figureSpecSchema, type FigureSpec, type FigureSpecInput } from '@/shared/schemas/figures';
import { PLANE_FORBIDDEN_FILL, PLANE_SEQUENTIAL } from '@/themes/figure/palette';
import { dijet, ID, meta, stubMeasure } from './fixtures';
import { allNumbers, pathPoints, paths, texts } from './helpers';

/**
 * An invented plane over (m_X, m_Y) in GeV: μ limit = ((m_X − 1000)² + (m_Y − 500)²) / 400², so
 * the μ = 1 contour is the circle of radius 400 GeV around (1000, 500), excluded inside. One
 * corner cell (the largest m_X, m_Y) has no point.
 */
function circlePlane(scale = 1, hole = true): Plane {
  const x: number[] = [];
  const y: number[] = [];
  const obs: number[] = [];
  for (let i = 0; i <= 20; i++) {
    for (let j = 0; j <= 20; j++) {
      const mx = 400 + 60 * i;
      const my = 100 + 40 * j;
      if (hole && i === 20 && j === 20) continue;
      x.push(mx);
      y.push(my);
      obs.push((scale * ((mx - 1000) ** 2 + (my - 500) ** 2)) / 400 ** 2 + 1e-3);
    }
  }
  return { yName: 'm_Y', yUnit: 'GeV', x, y, observed: obs, expected: { '0': obs.map((v) => v * 0.8), '-1': obs.map((v) => v * 0.6), '1': obs.map((v) => v * 1.1) } };
}

function planeLayer(i: number, plane: Plane, title = `Plane ${i + 1}`): FigureLayerData {
  const contours = planeContours(plane, 'mu');
  return { available: true, resultId: ID[i]!, version: 1, title, meta: meta({ title, parameterName: 'm_X', parameterUnit: 'GeV', quantity: 'mu', quantityUnit: '' }), curve: { x: [] }, theory: null, hue: i, plane: { plane, contours } };
}

function spec(layers: FigureLayerData[], over: Partial<FigureSpecInput> = {}): FigureSpec {
  return figureSpecSchema.parse({
    title: 'Plane',
    kind: 'plane',
    theme: 'publication',
    size: { preset: 'two-column' },
    x: { scale: 'linear' },
    y: { scale: 'linear' },
    layers: layers.map((l) => ({ resultId: l.resultId, version: l.version })),
    ...over,
  });
}

const theme = resolveFigureTheme('publication');
/** Every number of a scene but paths with relative commands (hatch and colour-bar ticks, which pathPoints does not read). */
const absoluteNumbers = (sc: Scene) => allNumbers({ ...sc, items: sc.items.filter((p) => p.kind !== 'path' || !/[lh]/.test(p.d)) });

describe('plane figure scene', () => {
  const data = [planeLayer(0, circlePlane())];
  const s = spec(data);
  const scene = buildScene(s, data, theme, stubMeasure);

  test('the observed contour lands where planeContours puts it on the axes', () => {
    const plan = planPlane(s, data, theme);
    const { plot } = scene;
    const X = (v: number) => plot.x + ((v - plan.x.domain[0]) / (plan.x.domain[1] - plan.x.domain[0])) * plot.width;
    const Y = (v: number) => plot.y + plot.height - ((v - plan.y.domain[0]) / (plan.y.domain[1] - plan.y.domain[0])) * plot.height;
    const obs = paths(scene, 'observed');
    expect(obs).toHaveLength(1);
    const drawn = pathPoints(obs[0]!.d);
    const want = data[0]!.available ? data[0]!.plane!.contours.observed!.flatMap((l) => l.points) : [];
    expect(drawn).toHaveLength(want.length);
    drawn.forEach(([px, py], k) => {
      expect(px).toBeCloseTo(X(want[k]![0]), 1);
      expect(py).toBeCloseTo(Y(want[k]![1]), 1);
    });
    // The circle of radius 400 GeV around (1000, 500): within a grid spacing (60 × 40 GeV cells).
    for (const [x, y] of want) expect(Math.abs(Math.hypot(x - 1000, y - 500) - 400)).toBeLessThan(15);
    expect(paths(scene, 'expected')).toHaveLength(1);
    // The bands layer's ±1σ band is one filled region (even-odd), translucent over the colour map.
    const band = paths(scene, 'band1');
    expect(band).toHaveLength(1);
    expect(band[0]).toMatchObject({ fillRule: 'evenodd', stroke: null, opacity: PLANE_BAND_OVER_MAP, clip: true });
    expect(band[0]!.fill).toBe(bandColors(planPlane(s, data, theme).layers[0]!, theme).band1);
  });

  test('the ±1σ band fills the ring between its contours; other layers draw their band as thin dashed lines', () => {
    const two = [planeLayer(0, circlePlane()), planeLayer(1, circlePlane(1.2))];
    const plan = planPlane(spec(two, { plane: { colorMap: false } }), two, theme);
    const sc = buildScene(spec(two, { plane: { colorMap: false } }), two, theme, stubMeasure);
    const X = (v: number) => sc.plot.x + ((v - plan.x.domain[0]) / (plan.x.domain[1] - plan.x.domain[0])) * sc.plot.width;
    const Y = (v: number) => sc.plot.y + sc.plot.height - ((v - plan.y.domain[0]) / (plan.y.domain[1] - plan.y.domain[0])) * sc.plot.height;
    const band = paths(sc, 'band1');
    // Layer 0 (the bands layer) fills, opaque without a colour map; layer 1 keeps its two dashed lines.
    expect(band.filter((p) => p.layer === 0)).toHaveLength(1);
    expect(band[0]).toMatchObject({ fillRule: 'evenodd', stroke: null });
    expect(band[0]!.opacity).toBeUndefined();
    const dashed = band.filter((p) => p.layer === 1);
    expect(dashed).toHaveLength(2);
    for (const p of dashed) expect(p.fill).toBeNull();
    // The −1σ ring (μ·0.6 = 1, radius 400/√0.6 GeV) and the +1σ ring (radius 400/√1.1 GeV) of
    // layer 0 are both in the fill: its vertices lie on one circle or the other or on the grid's edge.
    const onCircle = (px: number, py: number, r: number) => Math.abs(Math.hypot(px - X(1000), ((py - Y(500)) * (X(1060) - X(1000))) / 60 * 40 / (Y(500) - Y(540))) - (X(1000 + r) - X(1000))) < 8;
    const pts = pathPoints(band[0]!.d);
    const edge = (px: number, py: number) => Math.abs(px - sc.plot.x) < 0.5 || Math.abs(px - (sc.plot.x + sc.plot.width)) < 0.5 || Math.abs(py - sc.plot.y) < 0.5 || Math.abs(py - (sc.plot.y + sc.plot.height)) < 0.5;
    const inner = pts.filter(([px, py]) => onCircle(px, py, 400 / Math.sqrt(1.1))).length;
    const outer = pts.filter(([px, py]) => onCircle(px, py, 400 / Math.sqrt(0.6))).length;
    expect(inner).toBeGreaterThan(20);
    expect(outer).toBeGreaterThan(20);
    expect(pts.filter(([px, py]) => !edge(px, py) && !onCircle(px, py, 400 / Math.sqrt(1.1)) && !onCircle(px, py, 400 / Math.sqrt(0.6)))).toEqual([]);
    // Its legend key is a filled swatch in the band's colour; layer 1's a dashed line.
    const keys = paths(sc, 'legend-key');
    expect(keys.some((k) => k.layer === 0 && k.fill === band[0]!.fill)).toBe(true);
    expect(keys.some((k) => k.layer === 1 && k.dash !== null && k.fill === null)).toBe(true);
    // The caption says which is which.
    const caption = captionDraft(spec(two, { plane: { colorMap: false } }), two);
    expect(caption).toContain('Shaded band: the region between the expected contours at ±1σ of Plane 1.');
    expect(caption).toContain('Thin dashed lines: the expected contours at ±1σ.');
  });

  test('the colour bar spans the observed values on a log scale, in the sequential palette', () => {
    const plan = planPlane(s, data, theme);
    const obs = circlePlane().observed!;
    expect(plan.map!.domain[0]).toBeLessThanOrEqual(Math.min(...obs));
    expect(plan.map!.domain[1]).toBeGreaterThanOrEqual(Math.max(...obs));
    expect(plan.map!.bar.scale).toBe('log');
    expect(plan.map!.title).toBe('95% CL limit on $\\mu$');
    const bar = paths(scene, 'color-bar');
    expect(bar[0]!.fill).toBe(PLANE_SEQUENTIAL[0]);
    expect(bar[bar.length - 1]!.fill).toBe(PLANE_SEQUENTIAL[PLANE_SEQUENTIAL.length - 1]);
    expect(texts(scene, 'axis-title').map((t) => t.label)).toContain('95% CL limit on $\\mu$');
    expect(absoluteNumbers(scene).every(Number.isFinite)).toBe(true);
  });

  test('the excluded side is hatched on the left of the contour, inside the circle', () => {
    const hatch = paths(scene, 'hatch');
    expect(hatch).toHaveLength(1);
    // Each tick: M start, l offset. Inside the circle means towards its centre on the page.
    const plan = planPlane(s, data, theme);
    const { plot } = scene;
    const cx = plot.x + ((1000 - plan.x.domain[0]) / (plan.x.domain[1] - plan.x.domain[0])) * plot.width;
    const cy = plot.y + plot.height - ((500 - plan.y.domain[0]) / (plan.y.domain[1] - plan.y.domain[0])) * plot.height;
    const ticks = [...hatch[0]!.d.matchAll(/M([-\d.]+),([-\d.]+)l([-\d.]+),([-\d.]+)/g)].map((m) => m.slice(1).map(Number));
    expect(ticks.length).toBeGreaterThan(5);
    for (const [x, y, dx, dy] of ticks) expect(Math.hypot(x! + dx! - cx, y! + dy! - cy)).toBeLessThan(Math.hypot(x! - cx, y! - cy));
  });

  test('hatchTicks: left of travel on the page (y down)', () => {
    // Travelling right on the page, the left is up (smaller y).
    const d = hatchTicks([[0, 10], [100, 10]], false, 20, 3);
    expect(d).toMatch(/^M10(\.0)?,10(\.0)?l0(\.0)?,-3/);
  });

  test('a missing cell is blank, or grey when forbidden is drawn', () => {
    expect(paths(scene, 'forbidden')).toHaveLength(0);
    const drawnScene = buildScene(spec(data, { plane: { forbidden: 'drawn' } }), data, theme, stubMeasure);
    expect(paths(drawnScene, 'forbidden')).toHaveLength(1);
    expect(texts(drawnScene, 'legend').map((t) => t.label)).toContain('No points');
  });

  test('every grid point lies in exactly one cell rectangle, of its own limit\'s colour; the missing one in the grey', () => {
    const drawnScene = buildScene(spec(data, { plane: { forbidden: 'drawn' } }), data, theme, stubMeasure);
    const plan = planPlane(spec(data, { plane: { forbidden: 'drawn' } }), data, theme);
    const { plot } = drawnScene;
    const X = (v: number) => plot.x + ((v - plan.x.domain[0]) / (plan.x.domain[1] - plan.x.domain[0])) * plot.width;
    const Y = (v: number) => plot.y + plot.height - ((v - plan.y.domain[0]) / (plan.y.domain[1] - plan.y.domain[0])) * plot.height;
    // Rectangles "M x,y H x2 V y2 H x Z" of every cell path, with the path's fill.
    const rects = [...paths(drawnScene, 'color-map'), ...paths(drawnScene, 'forbidden')].flatMap((p) =>
      [...p.d.matchAll(/M([-\d.]+),([-\d.]+)H([-\d.]+)V([-\d.]+)H[-\d.]+Z/g)].map((m) => ({ x0: +m[1]!, y0: +m[2]!, x1: +m[3]!, y1: +m[4]!, fill: p.fill })),
    );
    const plane = circlePlane();
    const [lo, hi] = plan.map!.domain.map(Math.log) as [number, number];
    const wrong: string[] = [];
    const levelOf = (k: number) => Math.round(((Math.log(plane.observed![k]!) - lo) / (hi - lo)) * (PLANE_COLOR_LEVELS - 1));
    const at = (px: number, py: number) => rects.filter((r) => px > r.x0 && px < r.x1 && py > r.y0 && py < r.y1);
    // Outer cells end on their grid point (no drawing past the grid): look a hair inside there.
    const inward = (v: number, all: number[]) => (v === Math.min(...all) ? 0.05 : v === Math.max(...all) ? -0.05 : 0);
    plane.x.forEach((x, k) => {
      const covering = at(X(x) + inward(x, plane.x), Y(plane.y[k]!) - inward(plane.y[k]!, plane.y));
      const want = rampColor(PLANE_SEQUENTIAL, levelOf(k) / (PLANE_COLOR_LEVELS - 1));
      if (covering.length !== 1 || covering[0]!.fill !== want) wrong.push(`${x},${plane.y[k]}`);
    });
    expect(wrong).toEqual([]);
    // The corner with no point (m_X = 1600, m_Y = 900) is covered by the grey only.
    expect(at(X(1600) - 0.05, Y(900) + 0.05).map((r) => r.fill)).toEqual([PLANE_FORBIDDEN_FILL]);
    // Runs of equal colour in a row are one rectangle, and equal runs are merged across rows too:
    // fewer rectangles than the rows' runs (+1 for the hole).
    const rowRuns = [...new Set(plane.y)].reduce((sum, yv) => {
      const row = plane.x.map((_, k) => k).filter((k) => plane.y[k] === yv).sort((a, b) => plane.x[a]! - plane.x[b]!);
      return sum + row.filter((k, n) => n === 0 || levelOf(k) !== levelOf(row[n - 1]!)).length;
    }, 0);
    expect(rects.length).toBeLessThan(rowRuns + 1);
  });

  test('shading marks the excluded cells: a tint of the layer without a map, a page-colour veil over one', () => {
    const overMap = buildScene(spec(data, { plane: { excludedMark: 'shade' } }), data, theme, stubMeasure);
    const bare = buildScene(spec(data, { plane: { excludedMark: 'shade', colorMap: false } }), data, theme, stubMeasure);
    const veil = paths(overMap, 'excluded');
    expect(veil).toHaveLength(1);
    expect(veil[0]).toMatchObject({ fill: theme.colors.background, opacity: PLANE_SHADE_OVER_MAP });
    const tinted = paths(bare, 'excluded');
    expect(tinted[0]).toMatchObject({ fill: planPlane(s, data, theme).layers[0]!.color, opacity: 0.18 });
    // The cells shaded are those inside the μ = 1 circle (radius 400 GeV around (1000, 500)):
    // as many rectangles as grid points with μ < 1.
    const inside = circlePlane().observed!.filter((v) => v < 1).length;
    expect((tinted[0]!.d.match(/M/g) ?? []).length).toBe(inside);
    expect(paths(overMap, 'hatch')).toHaveLength(0);
  });

  test('log axes on x and y', () => {
    const log = buildScene(spec(data, { x: { scale: 'log' }, y: { scale: 'log' } }), data, theme, stubMeasure);
    const plan = planPlane(spec(data, { x: { scale: 'log' }, y: { scale: 'log' } }), data, theme);
    expect(plan.x.scale).toBe('log');
    expect(plan.y.scale).toBe('log');
    expect(absoluteNumbers(log).every(Number.isFinite)).toBe(true);
    expect(paths(log, 'hatch')[0]!.d).not.toMatch(/NaN|Infinity/);
    const { plot } = log;
    const X = (v: number) => plot.x + (Math.log(v / plan.x.domain[0]) / Math.log(plan.x.domain[1] / plan.x.domain[0])) * plot.width;
    const first = data[0]!.available ? data[0]!.plane!.contours.observed![0]!.points[0]! : [1, 1];
    expect(pathPoints(paths(log, 'observed')[0]!.d)[0]![0]).toBeCloseTo(X(first[0]!), 1);
  });

  test('labels collected are the labels drawn, with several layers and every theme', () => {
    const three = [planeLayer(0, circlePlane()), planeLayer(1, circlePlane(0.7)), planeLayer(2, circlePlane(1.4))];
    for (const th of ['publication', 'slides', 'outreach'] as const) {
      const sp = spec(three, { theme: th, annotations: [{ text: 'Invented $\\tilde{X}$', x: 0.1, y: 0.9 }] });
      const t = resolveFigureTheme(th);
      const wanted = new Set(collectLabels(sp, three, t).map(labelKey));
      const sc = buildScene(sp, three, t, stubMeasure);
      for (const it of texts(sc)) expect(wanted).toContain(labelKey({ label: it.label, size: it.size, font: it.font }));
      expect(paths(sc, 'observed')).toHaveLength(3);
    }
    const out = buildScene(spec(three, { theme: 'outreach' }), three, resolveFigureTheme('outreach'), stubMeasure);
    expect(texts(out, 'legend').map((x) => x.label)).toEqual(expect.arrayContaining(['Plane 1: ruled out', 'Plane 1: expected reach']));
  });

  test('a one-parameter layer is left out with a note; the CSV lists the drawn contours', () => {
    const mixed = [planeLayer(0, circlePlane()), { ...dijet, resultId: ID[1] }];
    const sc = buildScene(spec(mixed), mixed, theme, stubMeasure);
    expect(sc.notes.join(' ')).toMatch(/one parameter/);
    expect(paths(sc, 'observed')).toHaveLength(1);
    const csv = figureCsv(spec(mixed), mixed).trim().split('\r\n');
    expect(csv[0]).toBe('layer,line,piece,x,y,x_unit,y_unit');
    const obsRows = csv.filter((r) => r.includes(',observed,'));
    const want = data[0]!.available ? data[0]!.plane!.contours.observed!.flatMap((l) => l.points) : [];
    expect(obsRows).toHaveLength(want.length);
    expect(obsRows[0]).toBe(`Plane 1,observed,1,${want[0]![0]},${want[0]![1]},GeV,GeV`);
    expect(csv.some((r) => r.startsWith('Plane 1,expected_minus_1sigma,1,'))).toBe(true);
    expect(captionDraft(spec(mixed), mixed)).toMatch(/exclusion contours in the plane of m_X \(GeV\) and m_Y \(GeV\)/);
  });
});

describe('the sequential palette of the plane', () => {
  const ramp = Array.from({ length: 17 }, (_, k) => rampColor(PLANE_SEQUENTIAL, k / 16));
  test.each(['normal', 'protanopia', 'deuteranopia'] as const)('lightness rises at every step (%s), by at least 3 L* per sixteenth', (mode) => {
    const L = ramp.map((c) => greyLightness(mode === 'normal' ? c : simulateVision(c, mode)));
    for (let k = 1; k < L.length; k++) expect(L[k]! - L[k - 1]!).toBeGreaterThan(3);
    // From dark to light across most of the range (common practice for sequential maps: ≥ 60 L*).
    expect(L[L.length - 1]! - L[0]!).toBeGreaterThan(60);
  });
  test('the ramp ends on its stops', () => {
    expect(rampColor(PLANE_SEQUENTIAL, 0)).toBe(PLANE_SEQUENTIAL[0]);
    expect(rampColor(PLANE_SEQUENTIAL, 1)).toBe(PLANE_SEQUENTIAL[PLANE_SEQUENTIAL.length - 1]);
  });
});
