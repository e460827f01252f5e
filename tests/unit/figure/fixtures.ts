/**
 * Invented figure data for the scene tests: limits of the fictional experiment Lanternfish at the
 * fictional Halcyon Ring collider (√s = 18 TeV), with a stub typesetter that needs no fonts.
 */
import { figureSpecSchema, type FigureSpec, type FigureSpecInput } from '@/shared/schemas/figures';
import { versionMetaSchema, type VersionMeta, type VersionMetaInput } from '@/shared/schemas/results';
import { labelKey, type FigureLayerData, type Glyphs, type LabelRequest, type Measure, type TextMetrics } from '@/shared/figure';

export const ID = ['7c1e7a52-0d0a-4c59-9d55-2b1f7c0e8a11', '3f6b2d40-5a8e-4d0b-8c3e-6e0a9c4b1f22', 'a2d4c6e8-1b3d-4f5a-9c7e-0f1a2b3c4d33'] as const;

const masses = [1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5];

/** A falling limit: a·exp(−b·m), then the expected bands as fixed ratios of the median. */
function limitCurve(a: number, b: number, wiggle: number[]) {
  const median = masses.map((m) => a * Math.exp(-b * m));
  const obs = median.map((v, i) => v * (wiggle[i] ?? 1));
  const scale = (k: number) => median.map((v) => v * k);
  return { x: masses, observed: obs, expected: { '-2': scale(0.52), '-1': scale(0.71), '0': median, '1': scale(1.42), '2': scale(2.05) } };
}

/** Provenance through the real schema (its defaults fill model, CL and notes). */
export const meta = (over: Partial<VersionMetaInput> = {}): VersionMeta =>
  versionMetaSchema.parse({
    title: 'Search for a heavy vector boson decaying to two jets',
    parameterName: "$m_{V'}$",
    parameterUnit: 'TeV',
    quantity: 'xsec',
    quantityUnit: 'fb',
    sqrtS: 18,
    luminosity: 140,
    method: 'asymptotic',
    reference: 'LANTERNFISH-EXO-2031-04',
    ...over,
  });

/** Theory: falls faster than the limits, so it crosses them between 2 and 4 TeV. */
export const theory = {
  label: "Vee-prime benchmark A",
  x: [0.8, 1.6, 2.4, 3.2, 4, 4.8, 5.6],
  central: [900, 120, 18, 3, 0.55, 0.1, 0.02],
  lower: [780, 100, 15, 2.4, 0.42, 0.075, 0.014],
  upper: [1050, 145, 22, 3.7, 0.7, 0.13, 0.028],
};

export const dijet: FigureLayerData = {
  available: true,
  resultId: ID[0],
  version: 3,
  title: 'Lanternfish dijet',
  meta: meta(),
  curve: limitCurve(60, 0.55, [1.1, 0.9, 1.25, 0.8, 1.05, 1.3, 0.95, 1.1, 1.0]),
  theory,
  hue: 0,
};

export const dilepton: FigureLayerData = {
  available: true,
  resultId: ID[1],
  version: 1,
  title: 'Lanternfish dilepton',
  meta: meta({ title: 'Search for a heavy vector boson decaying to lepton pairs', reference: 'LANTERNFISH-EXO-2032-01' }),
  curve: limitCurve(25, 0.7, [0.95, 1.1, 0.9, 1.2, 1.0, 0.85, 1.15, 1.0, 0.9]),
  theory,
  hue: 1,
};

export const hiddenLayer: FigureLayerData = { available: false, resultId: ID[2], version: 2 };

export function spec(over: Partial<FigureSpecInput> = {}): FigureSpec {
  return figureSpecSchema.parse({
    title: 'Heavy vector bosons at the Halcyon Ring',
    theme: 'publication',
    size: { preset: 'one-column' },
    layers: [
      { resultId: ID[0], version: 3, show: { crossings: true } },
      { resultId: ID[1], version: 1, show: { theory: false } },
    ],
    excludedShading: true,
    ...over,
  });
}

/** Stub typesetter: width 0.5·size per character, ascent 0.75·size, descent 0.25·size. */
export const stubMeasure: Measure = (label, size) => ({ width: 0.5 * size * label.length, ascent: 0.75 * size, descent: 0.25 * size });

/** Stub glyphs: one rectangle the size of the stub metrics per label. */
export function stubGlyphs(requests: LabelRequest[]): Glyphs {
  const g: Glyphs = new Map();
  for (const r of requests) {
    const m: TextMetrics = stubMeasure(r.label, r.size, r.font);
    const d = `M0,${-m.ascent}H${m.width}V${m.descent}H0Z`;
    g.set(labelKey(r), { ...m, paths: [d] });
  }
  return g;
}
