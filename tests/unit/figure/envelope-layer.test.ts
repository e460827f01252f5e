import { buildScene, collectLabels, labelKey, resolveFigureTheme, type FigureLayerData } from '@/shared/figure';
import { figureSpecSchema } from '@/shared/schemas/figures';
import { dijet, ID, spec, stubMeasure } from './fixtures';
import { pathPoints, paths, texts } from './helpers';

/**
 * An envelope layer drawn by input: its observed line in stretches coloured by the input the
 * envelope takes there, one legend row per input ("observed, from <input>"), or in the layer's
 * own colour when the spec says so (the default).
 */

const xs = dijet.available ? dijet.curve.x : [];
const switchAt = xs[4]!;
const envelope: FigureLayerData = {
  ...(dijet as Extract<FigureLayerData, { available: true }>),
  title: 'Best expected of 2',
  sources: { titles: ['Dijet search', 'Dilepton search'], segments: [{ input: 0, from: xs[0]!, to: switchAt }, { input: 1, from: switchAt, to: xs[xs.length - 1]! }] },
};
const layerSpec = (observedColors: 'layer' | 'input') => figureSpecSchema.parse({ ...spec(), layers: [{ resultId: ID[0], version: 3, observedColors }], excludedShading: false });
const build = (observedColors: 'layer' | 'input') => {
  const s = layerSpec(observedColors);
  const theme = resolveFigureTheme(s.theme);
  return { scene: buildScene(s, [envelope], theme, stubMeasure), theme, s };
};

test('by input: two observed stretches in two colours meeting at the switch, neither the layer\'s own colour', () => {
  const { scene } = build('input');
  const { scene: plain } = build('layer');
  const own = paths(plain, 'observed')[0]!.stroke;
  const stretches = paths(scene, 'observed');
  expect(stretches).toHaveLength(2);
  expect(new Set(stretches.map((p) => p.stroke)).size).toBe(2);
  expect(stretches.map((p) => p.stroke)).not.toContain(own);
  const [a, b] = stretches.map((p) => pathPoints(p.d));
  // Five points up to the switch, the rest after it; they share the switch point.
  expect(a!.length).toBe(5);
  expect(b!.length).toBe(xs.length - 4);
  expect(a![a!.length - 1]).toEqual(b![0]);
  // The whole observed line is drawn: the stretches together cover the plain line's points (x in
  // page units; y differs as the longer legend rows take more room above the curves).
  expect([...a!, ...b!.slice(1)].map((p) => p[0])).toEqual(pathPoints(paths(plain, 'observed')[0]!.d).map((p) => p[0]));
});

test('by input: a legend row per input names it; the labels are collected before the layout', () => {
  const { scene, theme, s } = build('input');
  const legend = texts(scene, 'legend').map((t) => t.label);
  expect(legend.filter((l) => / from /.test(l))).toEqual(['Observed limit, from Dijet search', 'Observed limit, from Dilepton search']);
  const collected = new Set(collectLabels(s, [envelope], theme).map(labelKey));
  for (const t of texts(scene, 'legend')) expect(collected.has(labelKey(t))).toBe(true);
});

test('by layer (the default): one observed line in the layer\'s colour and no "from" rows', () => {
  const { scene } = build('layer');
  expect(paths(scene, 'observed')).toHaveLength(1);
  expect(texts(scene, 'legend').some((t) => /from /.test(t.label))).toBe(false);
  expect(figureSpecSchema.parse({ ...spec(), layers: [{ resultId: ID[0], version: 3 }] }).layers[0]!.observedColors).toBe('layer');
});

test('a layer without sources ignores "by input"', () => {
  const s = layerSpec('input');
  const scene = buildScene(s, [dijet], resolveFigureTheme(s.theme), stubMeasure);
  expect(paths(scene, 'observed')).toHaveLength(1);
});
