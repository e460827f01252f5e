import { draftToModel, engineFieldToKey, EXAMPLE_DRAFT, readNumber } from '@/components/compute/model-draft';
import { computeLimit, StatsInputError } from '@/shared/stats';

test('the example draft is the counting model of the statistics engine (effects from percent)', () => {
  const { model, errors } = draftToModel(EXAMPLE_DRAFT);
  expect(errors).toEqual({});
  expect(model).toEqual({
    observed: [12, 7, 3],
    signal: [1.2, 2.5, 1.1],
    backgrounds: [{ name: 'dijet', yields: [10.1, 6.3, 2.2] }],
    systematics: [
      { name: 'luminosity', effects: { signal: 0.02, dijet: 0.02 } },
      { name: 'dijet shape', effects: { dijet: 0.1 } },
    ],
  });
});

test('typing problems name the form field; decimal commas are read', () => {
  expect(readNumber('1,5')).toBe(1.5);
  const { model, errors } = draftToModel({ ...EXAMPLE_DRAFT, bins: [{ observed: 'x', signal: '', backgrounds: ['3'] }] });
  expect(model).toBeUndefined();
  expect(errors).toEqual({ 'bins.0.observed': '"x" is not a number', 'bins.0.signal': 'Enter a number' });
});

test("the engine's field paths land on the right form fields", () => {
  const draft = { ...EXAMPLE_DRAFT, bins: EXAMPLE_DRAFT.bins.map((b, i) => (i === 1 ? { ...b, observed: '-3' } : b)) };
  const { model } = draftToModel(draft);
  let field = '';
  try {
    computeLimit(model!);
  } catch (e) {
    if (e instanceof StatsInputError) field = e.field;
  }
  expect(engineFieldToKey(field)).toBe('bins.1.observed');
  expect(engineFieldToKey('backgrounds[0].yields[2]')).toBe('bins.2.backgrounds.0');
  expect(engineFieldToKey('systematics[1].effects.dijet')).toBe('systematics.1.effects.dijet');
  expect(engineFieldToKey('systematics[0].effects["top pairs"]')).toBe('systematics.0.effects.top pairs');
});
