import { commonGrid, concatenateModels, jointGrid, nuisanceOverview, unlinkedName } from '@/shared/combine/joint';
import { countingModelSchema, type CountingModel, type CountingModelInput } from '@/shared/schemas/counting-model';
import { computeLimit } from '@/shared/stats';
import { StatsInputError } from '@/shared/stats/errors';

/** Invented channels (fictional data). */
const model = (m: CountingModelInput): CountingModel => countingModelSchema.parse(m);

const jets = model({
  observed: [12, 7],
  signal: [3, 2],
  backgrounds: [{ name: 'multijet', yields: [10, 6] }],
  systematics: [{ name: 'luminosity', effects: { signal: 0.02, multijet: [0.05, 0.1] } }],
});
const leptons = model({
  observed: [4, 2, 1],
  signal: [1, 1.5, 0.5],
  backgrounds: [
    { name: 'multijet', yields: [1, 0.5, 0.2] },
    { name: 'diboson', yields: [2, 1, 0.5] },
  ],
  systematics: [
    { name: 'luminosity', effects: { signal: 0.02, diboson: 0.02 } },
    { name: 'lepton id', effects: { signal: 0.03 } },
  ],
});

describe('concatenation of counting models', () => {
  test('bins side by side; processes matched by name with zero yield where a channel lacks them; effects per bin, 0 elsewhere', () => {
    const c = concatenateModels([jets, leptons]);
    expect(c.observed).toEqual([12, 7, 4, 2, 1]);
    expect(c.signal).toEqual([3, 2, 1, 1.5, 0.5]);
    expect(c.backgrounds).toEqual([
      { name: 'multijet', yields: [10, 6, 1, 0.5, 0.2] },
      { name: 'diboson', yields: [0, 0, 2, 1, 0.5] },
    ]);
    expect(c.systematics.map((s) => s.name)).toEqual(['luminosity', 'lepton id']);
    const lumi = c.systematics[0]!.effects as Record<string, number[]>;
    expect(lumi.signal!.map((v) => Number(v.toFixed(12)))).toEqual([0.02, 0.02, 0.02, 0.02, 0.02]);
    expect(lumi.multijet!.map((v) => Number(v.toFixed(12)))).toEqual([0.05, 0.1, 0, 0, 0]);
    expect(lumi.diboson!.map((v) => Number(v.toFixed(12)))).toEqual([0, 0, 0.02, 0.02, 0.02]);
    expect((c.systematics[1]!.effects.signal as number[]).map((v) => Number(v.toFixed(12)))).toEqual([0, 0, 0.03, 0.03, 0.03]);
    // The result is a valid counting model.
    expect(countingModelSchema.safeParse(c).success).toBe(true);
  });

  test('an unlinked name becomes one parameter per channel, suffixed with the input index', () => {
    const c = concatenateModels([jets, leptons], ['luminosity']);
    expect(c.systematics.map((s) => s.name)).toEqual([unlinkedName('luminosity', 0), unlinkedName('luminosity', 1), 'lepton id']);
    expect((c.systematics[0]!.effects.signal as number[]).map((v) => Number(v.toFixed(12)))).toEqual([0.02, 0.02, 0, 0, 0]);
  });

  test('two entries of one name in one channel act on one θ: their factors multiply', () => {
    const twice = model({ observed: [5], signal: [1], backgrounds: [{ name: 'b', yields: [4] }], systematics: [{ name: 'k', effects: { b: 0.1 } }, { name: 'k', effects: { b: 0.2 } }] });
    const c = concatenateModels([twice, jets]);
    expect(c.systematics.filter((s) => s.name === 'k')).toHaveLength(1);
    expect((c.systematics.find((s) => s.name === 'k')!.effects.b as number[])[0]).toBeCloseTo(1.1 * 1.2 - 1, 12);
  });

  test('an unlinked name that meets an existing name is refused naming the input', () => {
    const clash = model({ ...leptons, systematics: [{ name: unlinkedName('luminosity', 0), effects: { signal: 0.01 } }] });
    expect(() => concatenateModels([jets, clash], ['luminosity'])).toThrow(StatsInputError);
    try {
      concatenateModels([jets, clash], ['luminosity']);
    } catch (e) {
      expect((e as StatsInputError).field).toBe('inputs.1');
    }
  });

  test('the overview lists each input’s parameters and the shared names', () => {
    expect(nuisanceOverview([jets, leptons])).toEqual({ perInput: [['luminosity'], ['luminosity', 'lepton id']], shared: ['luminosity'] });
  });

  test('common grid, missing values per input, and σ×B only when every channel gives the same nominal value', () => {
    const a = { points: [1000, 1100, 1200].map((x) => ({ x, sigmaNominal: x / 100, model: jets })) };
    const b = { points: [1100, 1200, 1300].map((x) => ({ x, sigmaNominal: x / 100, model: leptons })) };
    expect(commonGrid([a, b])).toEqual({ common: [1100, 1200], missing: [[1000], [1300]] });
    const g = jointGrid([a, b]);
    expect(g.points.map((p) => [p.x, p.sigmaNominal])).toEqual([
      [1100, 11],
      [1200, 12],
    ]);
    expect(g.sigmaAgrees).toBe(true);
    const other = { points: b.points.map((p) => ({ ...p, sigmaNominal: p.x / 50 })) };
    const h = jointGrid([a, other]);
    expect(h.sigmaAgrees).toBe(false);
    expect(h.points.every((p) => p.sigmaNominal === null)).toBe(true);
  });
});

describe('combined limits (engine on the concatenated model)', () => {
  // Large counts, no systematics: the asymptotic regime of Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554.
  const big = model({ observed: [10000, 10000, 10000], signal: [60, 80, 100], backgrounds: [{ name: 'continuum', yields: [10000, 10000, 10000] }] });

  test('two identical independent channels: the median expected limit on μ shrinks by ≈ 1/√2', () => {
    // Common practice, from the asymptotic formulae (Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554):
    // with s ≪ b the median limit is proportional to σ_μ = 1/√(Σᵢ sᵢ²/bᵢ); two identical channels double
    // the sum, so σ_μ and the limit shrink by 1/√2.
    const one = computeLimit(big);
    const two = computeLimit(concatenateModels([big, big]));
    const ratio = two.expected['0'] / one.expected['0'];
    expect(Math.abs(ratio - Math.SQRT1_2)).toBeLessThan(0.01); // within 1 % of 1/√2
  });

  test('adding a channel with zero signal changes nothing', () => {
    // From memory (profile likelihood): a channel without signal and with no shared parameter adds a
    // term independent of μ, which cancels in the likelihood ratio λ(μ).
    // (A channel's own check refuses signal zero everywhere; as one channel of several it is valid.)
    const noSignal: CountingModel = { observed: [7, 3], signal: [0, 0], backgrounds: [{ name: 'sideband', yields: [6, 4] }], systematics: [] };
    const alone = computeLimit(jets);
    const with0 = computeLimit(concatenateModels([jets, noSignal]));
    expect(with0.observed).toBeCloseTo(alone.observed, 4);
    expect(with0.expected['0']).toBeCloseTo(alone.expected['0'], 4);
    expect(with0.expected['2']).toBeCloseTo(alone.expected['2'], 4);
  });

  test('a channel with itself: one fully correlated systematic gives a higher (weaker) limit than the systematic unlinked', () => {
    // Common practice: a correlated normalization uncertainty does not average down between channels,
    // independent ones do (the variance of the mean of n independent pulls is 1/n).
    const ch = model({ observed: [100], signal: [10], backgrounds: [{ name: 'bkg', yields: [100] }], systematics: [{ name: 'bkg norm', effects: { bkg: 0.1 } }] });
    const correlated = computeLimit(concatenateModels([ch, ch]));
    const unlinked = computeLimit(concatenateModels([ch, ch], ['bkg norm']));
    expect(correlated.expected['0']).toBeGreaterThan(unlinked.expected['0'] * 1.02);
    expect(correlated.observed).toBeGreaterThan(unlinked.observed);
  });
});
