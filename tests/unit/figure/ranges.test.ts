/**
 * The summary of excluded ranges (figure kind `ranges`): bars from the registry's excluded ranges,
 * grouping, order, axis scales, notes, the bar without theory, exports, unit handling.
 */
import { buildScene, captionDraft, collectLabels, figureCsv, labelKey, resolveFigureTheme, type FigureLayerData } from '@/shared/figure';
import { planRanges } from '@/shared/figure/ranges';
import { figureSpecSchema, type FigureSpec, type FigureSpecInput } from '@/shared/schemas/figures';
import { exclusionRanges } from '@/shared/stats/exclusion';
import { hiddenLayer, ID, meta, stubMeasure } from './fixtures';
import { bounds, pathPoints, paths, texts } from './helpers';

const masses = [1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5];
const exp = (a: number, b: number) => masses.map((m) => a * Math.exp(-b * m));
/** Theory 900·e^(−1.3 m) fb (invented). */
const theory = { x: masses, central: exp(900, 1.3) };

const IDS = ['11111111-1111-4111-8111-111111111111', '22222222-2222-4222-8222-222222222222', '33333333-3333-4333-8333-333333333333', '44444444-4444-4444-8444-444444444444'] as const;

/** A result whose limits are exactly a·e^(−b m) (observed) and a·k·e^(−b m) (expected). */
function layer(i: number, a: number, b: number, over: { model?: string; title?: string; theory?: boolean; luminosity?: number; k?: number; parameterUnit?: string; quantity?: 'mu' | 'xsec' } = {}): FigureLayerData {
  const scale = over.parameterUnit === 'GeV' ? 1000 : 1;
  const xsec = over.quantity !== 'mu';
  return {
    available: true,
    resultId: IDS[i]!,
    version: 1,
    title: over.title ?? `Channel ${i + 1}`,
    meta: meta({ title: over.title ?? `Channel ${i + 1}`, model: over.model ?? '', luminosity: over.luminosity ?? 140, parameterUnit: over.parameterUnit ?? 'TeV', ...(xsec ? {} : { quantity: 'mu', quantityUnit: '' }) }),
    curve: { x: masses.map((m) => m * scale), observed: exp(a, b), expected: { '0': exp(a * (over.k ?? 0.8), b) } },
    theory: over.theory === false ? null : { x: theory.x.map((m) => m * scale), central: theory.central },
    hue: i,
  };
}

function spec(layers: FigureLayerData[], over: Partial<FigureSpecInput> = {}): FigureSpec {
  return figureSpecSchema.parse({ title: 'Summary', kind: 'ranges', theme: 'publication', size: { preset: 'two-column' }, layers: layers.map((l) => ({ resultId: l.resultId, version: l.version })), ...over });
}

const theme = resolveFigureTheme('publication');

describe('summary of excluded ranges: the bars', () => {
  test('a bar ends where the limit meets the theory: ln(c/a)/(d−b) for exponentials, which the log interpolation follows exactly', () => {
    // Both curves are exactly exponential in m, so ln σ is linear in m between grid points and the
    // crossing of a·e^(−b m) with c·e^(−d m) is m* = ln(c/a)/(d − b) (algebra; common practice to
    // interpolate cross-sections in ln σ).
    const data = [layer(0, 60, 0.55)];
    const plan = planRanges(spec(data), data, theme);
    const bar = plan.bars[0]!;
    const crossing = Math.log(900 / 60) / (1.3 - 0.55);
    expect(bar.observed).toHaveLength(1);
    expect(bar.observed![0]!.from).toBe(1);
    expect(bar.observed![0]!.fromOpen).toBe(true);
    expect(bar.observed![0]!.to).toBeCloseTo(crossing, 10);
    // Expected median 0.8·a: crossing at ln(900/48)/(0.75).
    expect(bar.expected![0]!.to).toBeCloseTo(Math.log(900 / 48) / 0.75, 10);
    // The same ranges the registry derives for the version.
    expect(bar.observed).toEqual(exclusionRanges(data[0]!.available ? data[0]!.curve : { x: [] }, theory).observed);
  });

  test('the drawn bar spans the excluded range on the axis; the open end is a point; the expected outline is dashed', () => {
    const data = [layer(0, 60, 0.55)];
    const scene = buildScene(spec(data), data, theme, stubMeasure);
    const [bar] = paths(scene, 'bar-observed');
    const b = bounds(pathPoints(bar!.d));
    const plan = planRanges(spec(data), data, theme);
    const [x0, x1] = plan.x.domain;
    const X = (v: number) => scene.plot.x + ((v - x0) / (x1 - x0)) * scene.plot.width;
    expect(b.x).toBeCloseTo(X(1), 2);
    expect(b.x + b.width).toBeCloseTo(X(plan.bars[0]!.observed![0]!.to), 2);
    expect(paths(scene, 'bar-expected')[0]!.dash).toEqual(theme.dash.expected);
    // The legend explains filled, outlined and open ends.
    expect(texts(scene, 'legend').map((t) => t.label)).toEqual(['Observed exclusion', 'Expected exclusion', 'Beyond the computed range']);
  });

  test('a result without theory is listed with "no theory curve, no range"; one that excludes nothing says so', () => {
    const data = [layer(0, 60, 0.55), layer(1, 30, 0.5, { theory: false }), layer(2, 5000, 0.2)];
    const scene = buildScene(spec(data), data, theme, stubMeasure);
    expect(texts(scene, 'bar-label').map((t) => t.label)).toEqual(['Channel 1', 'Channel 2', 'Channel 3']);
    expect(texts(scene, 'bar-status').map((t) => t.label)).toEqual(['no theory curve, no range', 'nothing excluded']);
    expect(paths(scene, 'bar-observed').filter((p) => p.layer === 1)).toHaveLength(0);
  });

  test('a theory curve on a grid that does not overlap the limit\'s says it cannot be compared', () => {
    const far = layer(0, 60, 0.55);
    if (!far.available) throw new Error('fixture');
    far.theory = { x: [10, 11, 12], central: [1, 0.5, 0.2] };
    const scene = buildScene(spec([far]), [far], theme, stubMeasure);
    expect(texts(scene, 'bar-status').map((t) => t.label)).toEqual(['nothing excluded']);
    const bad = layer(0, 60, 0.55);
    if (!bad.available) throw new Error('fixture');
    bad.theory = { x: [1, 1, 2], central: [1, 0.5, 0.2] };
    expect(texts(buildScene(spec([bad]), [bad], theme, stubMeasure), 'bar-status').map((t) => t.label)).toEqual(['theory curve not comparable, no range']);
  });

  test('grouped by model in order of first appearance, results without a model last; sorted by reach or title within groups', () => {
    const data = [layer(0, 60, 0.55, { model: 'Vee-prime A', title: 'Beta' }), layer(1, 30, 0.5, { model: 'Scalar S', title: 'Gamma' }), layer(2, 5, 0.5, { model: 'Vee-prime A', title: 'Alpha' }), layer(3, 10, 0.5, { title: 'Delta' })];
    const rowsOf = (s: FigureSpec) => planRanges(s, data, theme).rows.map((r) => (r.kind === 'heading' ? `# ${r.label}` : r.bar.layer.name));
    expect(rowsOf(spec(data))).toEqual(['# Vee-prime A', 'Beta', 'Alpha', '# Scalar S', 'Gamma', '# No model given', 'Delta']);
    // Alpha (a = 5) reaches furthest: its limit meets the theory at the highest mass.
    expect(rowsOf(spec(data, { ranges: { sort: 'reach' } }))).toEqual(['# Vee-prime A', 'Alpha', 'Beta', '# Scalar S', 'Gamma', '# No model given', 'Delta']);
    expect(rowsOf(spec(data, { ranges: { sort: 'title', groupByModel: false } }))).toEqual(['Alpha', 'Beta', 'Delta', 'Gamma']);
    // No model anywhere: no heading at all.
    const plain = [layer(0, 60, 0.55), layer(1, 30, 0.5)];
    expect(planRanges(spec(plain), plain, theme).rows.every((r) => r.kind === 'bar')).toBe(true);
  });

  test('a note per bar: the layer\'s own, else its luminosity; none when turned off', () => {
    const data = [layer(0, 60, 0.55, { luminosity: 60 }), layer(1, 30, 0.5)];
    const s = spec(data);
    s.layers[1]!.note = '2031 data, $e\\mu$ channel';
    expect(texts(buildScene(s, data, theme, stubMeasure), 'bar-note').map((t) => t.label)).toEqual(['60 fb$^{-1}$', '2031 data, $e\\mu$ channel']);
    expect(texts(buildScene({ ...s, ranges: { ...s.ranges, notes: false } }, data, theme, stubMeasure), 'bar-note')).toHaveLength(0);
  });

  test('a log parameter axis, markers for the expected range, no legend when asked', () => {
    const data = [layer(0, 60, 0.55)];
    const s = spec(data, { x: { scale: 'log' }, ranges: { expected: 'marker' }, legend: { position: 'none' } });
    const scene = buildScene(s, data, theme, stubMeasure);
    expect(planRanges(s, data, theme).x.scale).toBe('log');
    const marks = paths(scene, 'bar-expected');
    // Only the closed end is marked (the low end runs into the computed edge).
    expect(pathPoints(marks[0]!.d)).toHaveLength(2);
    expect(texts(scene, 'legend')).toHaveLength(0);
  });

  test('every label drawn is one collectLabels lists (the app typesets them in one batch)', () => {
    const data = [layer(0, 60, 0.55, { model: 'Vee-prime A' }), layer(1, 30, 0.5, { theory: false }), hiddenLayer];
    const s = spec(data, { layers: [...data.slice(0, 2).map((l) => ({ resultId: l.resultId, version: 1 })), { resultId: ID[2], version: 2 }], annotations: [{ text: 'Preliminary' }] });
    const listed = new Set(collectLabels(s, data, theme).map(labelKey));
    const scene = buildScene(s, data, theme, stubMeasure);
    for (const t of texts(scene)) expect(listed.has(labelKey(t))).toBe(true);
    // The hidden layer is counted, never named.
    expect(scene.notes).toEqual(['1 layer is not shown: you may not see its result']);
  });

  test('μ and σ×B results share the parameter axis; GeV converts to TeV with its ranges', () => {
    const data = [layer(0, 60, 0.55), layer(1, 60, 0.55, { parameterUnit: 'GeV', title: 'In GeV' }), layer(2, 0.5, 0.1, { quantity: 'mu', theory: false, title: 'On mu' })];
    const plan = planRanges(spec(data), data, theme);
    expect(plan.bars.map((b) => b.layer.name)).toEqual(['Channel 1', 'In GeV', 'On mu']);
    expect(plan.bars[1]!.observed![0]!.to).toBeCloseTo(plan.bars[0]!.observed![0]!.to, 9);
    expect(plan.notes).toEqual(['In GeV: converted to the axis units (GeV → TeV)']);
  });

  test('a bar note larger than the page is refused naming its field', () => {
    const data = [layer(0, 60, 0.55)];
    const s = spec(data);
    s.layers[0]!.note = '$\\rule{1em}{100em}$';
    const huge = (label: string, size: number) => (label.includes('rule') ? { width: size, ascent: 5000, descent: 0 } : stubMeasure(label, size, 'serif'));
    expect(buildScene(s, data, theme, huge).oversizeLabels.map((o) => o.field)).toEqual(['spec.layers.0.note']);
  });

  test('outreach words', () => {
    const data = [layer(0, 60, 0.55), layer(1, 30, 0.5, { theory: false })];
    const scene = buildScene(spec(data, { theme: 'outreach' }), data, resolveFigureTheme('outreach'), stubMeasure);
    expect(texts(scene, 'legend').map((t) => t.label)).toContain('Ruled out');
    expect(texts(scene, 'bar-status').map((t) => t.label)).toEqual(['no prediction to compare with']);
  });

  test('the spec refuses unknown kinds and options, naming the field', () => {
    const r = figureSpecSchema.safeParse({ title: 'x', kind: 'pie', theme: 'publication', size: { preset: 'web' }, layers: [], ranges: { sort: 'random' } });
    expect(r.success).toBe(false);
    const fields = r.error!.issues.map((i) => i.path.join('.'));
    expect(fields).toEqual(expect.arrayContaining(['kind', 'ranges.sort']));
  });
});

describe('summary of excluded ranges: exports', () => {
  test('CSV: one row per range with open ends and units; a row saying why for a bar without range', () => {
    const data = [layer(0, 60, 0.55, { model: 'Vee-prime A' }), layer(1, 30, 0.5, { theory: false })];
    const csv = figureCsv(spec(data), data);
    const rows = csv.trimEnd().split('\r\n');
    expect(rows[0]).toBe('analysis,model,range,from,to,open_low,open_high,x_unit,note');
    const obs = rows.find((r) => r.startsWith('Channel 1,Vee-prime A,observed'))!.split(',');
    expect(Number(obs[4])).toBeCloseTo(Math.log(900 / 60) / 0.75, 10);
    expect(obs.slice(5)).toEqual(['yes', 'no', 'TeV', '140 fb⁻¹']);
    expect(rows).toContain('Channel 2,,no theory curve,,,,,TeV,140 fb⁻¹');
  });

  test('caption names every bar and its range in plain text', () => {
    const data = [layer(0, 60, 0.55), layer(1, 30, 0.5, { theory: false })];
    const c = captionDraft(spec(data), data);
    expect(c).toContain('excluded at 95% CL by 2 analyses');
    expect(c).toMatch(/Channel 1 \(version 1\): excluded below 3\.611 TeV\./);
    expect(c).toContain('Channel 2 (version 1): no theory curve, so no range.');
    expect(c).not.toMatch(/[$\\{}]/);
  });
});
