import { buildScene, resolveFigureTheme } from '@/shared/figure';
import { drawnLayers, planFigure } from '@/shared/figure/plan';
import type { FigureLayerData } from '@/shared/figure/types';
import { conversionTo, convertCurve, convertTheory } from '@/shared/units';
import { dijet, dilepton, meta, spec, stubMeasure } from './figure/fixtures';

const tev = { parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb' } as const;

describe('unit conversion of limit curves', () => {
  test('energies and cross-sections convert by their SI prefixes', () => {
    // 1 TeV = 1000 GeV = 10⁶ MeV and 1 pb = 1000 fb = 10⁶ ab: SI prefixes (BIPM, The International
    // System of Units, 9th edition, 2019); the barn's multiples the same way (common practice).
    expect(conversionTo({ ...tev, parameterUnit: 'GeV' }, tev)).toEqual({ ok: true, x: 1e-3, y: 1 });
    expect(conversionTo({ ...tev, parameterUnit: 'MeV' }, tev)).toEqual({ ok: true, x: 1e-6, y: 1 });
    expect(conversionTo({ ...tev, quantityUnit: 'pb' }, tev)).toEqual({ ok: true, x: 1, y: 1000 });
    expect(conversionTo({ ...tev, quantityUnit: 'ab' }, tev)).toEqual({ ok: true, x: 1, y: 1e-3 });
    expect(conversionTo(tev, { ...tev, parameterUnit: 'GeV', quantityUnit: 'pb' })).toEqual({ ok: true, x: 1000, y: 1e-3 });
    // Limits on μ carry no unit; the parameter still converts.
    expect(conversionTo({ parameterUnit: 'GeV', quantity: 'mu', quantityUnit: '' }, { parameterUnit: 'TeV', quantity: 'mu', quantityUnit: '' })).toEqual({ ok: true, x: 1e-3, y: 1 });
  });

  test('what does not convert is refused with the reason', () => {
    const mu = conversionTo({ parameterUnit: 'TeV', quantity: 'mu', quantityUnit: '' }, tev);
    expect(mu.ok).toBe(false);
    expect(!mu.ok && mu.reason).toContain('signal strength μ');
    const other = conversionTo({ ...tev, parameterUnit: 'rad' }, tev);
    expect(!other.ok && other.reason).toContain('“rad”');
    // Unit names are case-sensitive: meV is not MeV.
    expect(conversionTo({ ...tev, parameterUnit: 'meV' }, tev).ok).toBe(false);
    // A parameter without unit only matches another without unit.
    expect(conversionTo({ ...tev, parameterUnit: '' }, { ...tev, parameterUnit: '' })).toEqual({ ok: true, x: 1, y: 1 });
    expect(conversionTo({ ...tev, parameterUnit: '' }, tev).ok).toBe(false);
  });

  test('curves and theory scale point by point; bands that are absent stay absent', () => {
    const c = convertCurve({ x: [500, 1000], observed: [2, 4], expected: { '0': [1, 2], '1': [3, 5] } }, { x: 1e-3, y: 1000 });
    expect(c).toEqual({ x: [0.5, 1], observed: [2000, 4000], expected: { '0': [1000, 2000], '1': [3000, 5000] } });
    expect(convertTheory({ x: [500], central: [1], upper: [2] }, { x: 1e-3, y: 10 })).toEqual({ x: [0.5], central: [10], upper: [20] });
  });
});

describe('figure layers in other units', () => {
  const theme = resolveFigureTheme('publication');
  const inGeV: FigureLayerData = {
    ...(dilepton as Extract<FigureLayerData, { available: true }>),
    meta: meta({ title: 'Dilepton in GeV and pb', parameterUnit: 'GeV', quantityUnit: 'pb' }),
    curve: { x: [1000, 2000, 3000], observed: [0.05, 0.01, 0.004], expected: { '0': [0.04, 0.012, 0.005] } },
    theory: null,
  };

  test('a GeV/pb layer is drawn on the first layer’s TeV/fb axes, with a note saying so', () => {
    const { drawn, unitNotes } = drawnLayers(spec(), [dijet, inGeV], theme);
    expect(drawn).toHaveLength(2);
    expect(drawn[1]!.data.curve.x).toEqual([1, 2, 3]);
    expect(drawn[1]!.data.curve.observed![0]).toBeCloseTo(50, 10);
    expect(drawn[1]!.data.meta.parameterUnit).toBe('TeV');
    expect(unitNotes.map((n) => n.text)).toEqual(['Lanternfish dilepton: converted to the axis units (GeV → TeV, pb → fb)']);
    const scene = buildScene(spec(), [dijet, inGeV], theme, stubMeasure);
    expect(scene.notes).toContain('Lanternfish dilepton: converted to the axis units (GeV → TeV, pb → fb)');
    // The x axis spans the data in TeV, not 1 … 3000.
    expect(planFigure(spec(), [dijet, inGeV], theme).x.domain[1]).toBeLessThan(10);
  });

  test('a limit on μ is not put on a σ×B axis: the layer is left out, named in a note', () => {
    const onMu: FigureLayerData = { ...inGeV, meta: meta({ title: 'Signal strength', quantity: 'mu', quantityUnit: '' }) } as FigureLayerData;
    const { drawn, refused } = drawnLayers(spec(), [dijet, onMu], theme);
    expect(drawn.map((l) => l.index)).toEqual([0]);
    expect(refused[0]!.text).toBe('Lanternfish dilepton is not shown: it limits the signal strength μ, the axis shows σ×B');
  });
});
