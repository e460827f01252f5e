/**
 * Bad input: every problem is a StatsInputError naming the field and the reason (the list).
 */
import { computeLimit, countingModelSchema, fitNuisanceParameters, StatsInputError, type CountingModelInput, type LimitOptions } from '@/shared/stats';

const good: CountingModelInput = {
  cl: 0.95,
  observed: [12, 7, 3],
  signal: [1.2, 2.5, 1.1],
  backgrounds: [{ name: 'dijet', yields: [10.1, 6.3, 2.2] }],
  systematics: [
    { name: 'luminosity', effects: { signal: 0.02, dijet: 0.02 } },
    { name: 'dijet shape', effects: { dijet: [0.05, 0.1, 0.25] } },
  ],
};

function failure(model: unknown, options?: LimitOptions): StatsInputError {
  try {
    computeLimit(model as CountingModelInput, options);
  } catch (err) {
    expect(err).toBeInstanceOf(StatsInputError);
    return err as StatsInputError;
  }
  throw new Error('expected a StatsInputError');
}

const withSyst = (effects: Record<string, unknown>) => ({ ...good, systematics: [good.systematics?.[0], { name: 'dijet shape', effects }] });

test('the example model of the issue is valid', () => {
  expect(countingModelSchema.safeParse(good).success).toBe(true);
  expect(() => computeLimit(good)).not.toThrow();
});

test.each([
  ['negative count', { ...good, observed: [12, -1, 3] }, 'observed[1]', /negative/],
  ['negative signal yield', { ...good, signal: [1.2, 2.5, -0.1] }, 'signal[2]', /negative/],
  ['negative background yield', { ...good, backgrounds: [{ name: 'dijet', yields: [-10.1, 6.3, 2.2] }] }, 'backgrounds[0].yields[0]', /negative/],
  ['NaN count', { ...good, observed: [12, NaN, 3] }, 'observed[1]', /finite number/],
  ['infinite yield', { ...good, signal: [1.2, Infinity, 1.1] }, 'signal[1]', /finite number/],
  ['infinite effect', withSyst({ dijet: [0.05, -Infinity, 0.25] }), 'systematics[1].effects.dijet[1]', /finite number/],
  ['text for a count', { ...good, observed: [12, '7', 3] }, 'observed[1]', /finite number/],
  ['signal bins mismatch', { ...good, signal: [1.2, 2.5] }, 'signal', /2 bins but observed has 3/],
  ['background bins mismatch', { ...good, backgrounds: [{ name: 'dijet', yields: [10.1, 6.3, 2.2, 1] }] }, 'backgrounds[0].yields', /4 bins/],
  ['effect bins mismatch', withSyst({ dijet: [0.05, 0.1] }), 'systematics[1].effects.dijet', /2 bins/],
  ['unknown process in effects', withSyst({ qcd: 0.1 }), 'systematics[1].effects.qcd', /unknown process "qcd"/],
  ['zero signal everywhere', { ...good, signal: [0, 0, 0] }, 'signal', /zero in every bin/],
  ['cl above 1', { ...good, cl: 1.5 }, 'cl', /between 0 and 1/],
  ['cl of 0', { ...good, cl: 0 }, 'cl', /between 0 and 1/],
  ['effect of −1', withSyst({ dijet: [0.05, 0.1, -1] }), 'systematics[1].effects.dijet[2]', /greater than -1/],
  ['effect below −1', withSyst({ dijet: -1.5 }), 'systematics[1].effects.dijet', /greater than -1/],
  ['no observed counts', { ...good, observed: [] }, 'observed', /at least one bin/],
  ['missing signal', { observed: [1] }, 'signal', /required/],
  ['background named "signal"', { ...good, backgrounds: [{ name: 'signal', yields: [1, 1, 1] }] }, 'backgrounds[0].name', /reserved/],
  ['duplicate background name', { ...good, backgrounds: [{ name: 'dijet', yields: [1, 1, 1] }, { name: 'dijet', yields: [1, 1, 1] }] }, 'backgrounds[1].name', /another background/],
  ['events where nothing is expected', { observed: [3, 1], signal: [1, 0], backgrounds: [{ name: 'flat', yields: [2, 0] }] }, 'observed[1]', /signal and every background are zero/],
])('%s', (_label, model, field, reason) => {
  const err = failure(model);
  expect(err.field).toBe(field);
  expect(err.reason).toMatch(reason);
  expect(err.message).toContain(field);
});

test('process names that are not identifiers are quoted in the field path', () => {
  const err = failure({ ...good, backgrounds: [{ name: 'top pair', yields: [1, 1, 1] }], systematics: [{ name: 'x', effects: { 'top pair': [0.1, 0.1, -3] } }] });
  expect(err.field).toBe('systematics[0].effects["top pair"][2]');
});

test('every problem is listed, the first also in field and reason', () => {
  const err = failure({ ...good, observed: [-1, NaN, 3], signal: [1, 2, -1] });
  expect(err.problems.map((p) => p.field)).toEqual(['observed[0]', 'observed[1]', 'signal[2]']);
  expect(err.field).toBe('observed[0]');
});

test.each([
  ['cl outside (0, 1)', { cl: 1 }, 'options.cl', /between 0 and 1/],
  ['negative cl', { cl: -0.1 }, 'options.cl', /between 0 and 1/],
  ['unknown method', { method: 'bayesian' }, 'options.method', /asymptotic/],
  ['unknown Asimov choice', { asimov: 'median' }, 'options.asimov', /profiled/],
  ['too few pseudo-experiments', { method: 'toys', toys: 3 }, 'options.toys', /at least/],
  ['fractional seed', { method: 'toys', seed: 1.5 }, 'options.seed', /whole number/],
] as Array<[string, Record<string, unknown>, string, RegExp]>)('options: %s', (_label, options, field, reason) => {
  const err = failure(good, options as LimitOptions);
  expect(err.field).toBe(field);
  expect(err.reason).toMatch(reason);
});

test('"exact" refuses models it cannot do, saying why', () => {
  const many = failure(good, { method: 'exact' });
  expect(many.field).toBe('method');
  expect(many.reason).toMatch(/one bin without systematics.*3 bins and 2 systematics/);
  const fractional = failure({ observed: [2.5], signal: [1], backgrounds: [] }, { method: 'exact' });
  expect(fractional.field).toBe('observed[0]');
  expect(fractional.reason).toMatch(/whole number/);
});

test('options.cl overrides the model cl, which overrides 0.95', () => {
  const model: CountingModelInput = { observed: [3], signal: [1], backgrounds: [] };
  expect(computeLimit(model, { method: 'exact' }).cl).toBe(0.95);
  expect(computeLimit({ ...model, cl: 0.9 }, { method: 'exact' }).cl).toBe(0.9);
  expect(computeLimit({ ...model, cl: 0.9 }, { method: 'exact', cl: 0.99 }).cl).toBe(0.99);
});

describe('names that are also properties of JavaScript objects', () => {
  /** The same model with its processes and systematics renamed. */
  const named = (bg: [string, string], syst: [string, string]): CountingModelInput => ({
    observed: [14, 6, 2],
    signal: [1.2, 2.5, 1.1],
    backgrounds: [
      { name: bg[0], yields: [9.1, 4.3, 1.2] },
      { name: bg[1], yields: [2, 1.5, 0.6] },
    ],
    systematics: [
      { name: syst[0], effects: { [bg[0]]: [0.05, 0.1, 0.25], signal: 0.02 } },
      { name: syst[1], effects: { [bg[1]]: 0.3 } },
    ],
  });

  test.each([
    [['constructor', 'toString'], ['hasOwnProperty', 'valueOf']],
    [['hasOwnProperty', 'isPrototypeOf'], ['__proto__', 'constructor']],
    [['valueOf', 'propertyIsEnumerable'], ['toString', 'toLocaleString']],
  ] as Array<[[string, string], [string, string]]>)('processes %j and systematics %j are ordinary names: the same limits and pulls as plain names', (bg, syst) => {
    // exact: renaming a process or a systematic does not change the model
    const plain = computeLimit(named(['dijet', 'fakes'], ['shape', 'fake rate']));
    const odd = computeLimit(JSON.parse(JSON.stringify(named(bg, syst))));
    expect(odd).toEqual(plain);
    const pulls = fitNuisanceParameters(named(bg, syst));
    expect(pulls.pulls.map((p) => p.name)).toEqual(syst);
    expect(pulls.pulls.map((p) => p.value)).toEqual(fitNuisanceParameters(named(['dijet', 'fakes'], ['shape', 'fake rate'])).pulls.map((p) => p.value));
  });

  test('an unknown process named like an object property is still unknown', () => {
    const err = failure({ ...good, systematics: [{ name: 'x', effects: { constructor: 0.1 } }] });
    expect(err.field).toBe('systematics[0].effects.constructor');
    expect(err.reason).toMatch(/unknown process "constructor"/);
  });

  test('"__proto__" is refused as a process name, by name, wherever it appears', () => {
    // A JSON body keeps "__proto__" as an own key; an object record cannot: the effect would vanish.
    const asBackground = failure(JSON.parse('{"observed":[3],"signal":[1],"backgrounds":[{"name":"__proto__","yields":[2]}]}'));
    expect(asBackground.field).toBe('backgrounds[0].name');
    expect(asBackground.reason).toMatch(/"__proto__" cannot name a process.*choose another name/);
    const asEffect = failure(JSON.parse('{"observed":[3],"signal":[1],"backgrounds":[{"name":"flat","yields":[2]}],"systematics":[{"name":"norm","effects":{"flat":0.1,"__proto__":[0.2]}}]}'));
    expect(asEffect.field).toBe('systematics[0].effects.__proto__');
    expect(asEffect.reason).toMatch(/"__proto__" cannot name a process/);
  });
});
