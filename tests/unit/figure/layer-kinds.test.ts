import { layerKindProblem, layerParameters, layerPickerNote } from '@/shared/figure/plan';
import { FIGURE_KINDS } from '@/shared/schemas/figures';
import { parametersBadge } from '@/components/results/format';

/**
 * Which results a kind of figure takes: one rule (`layerParameters`) behind the save check
 * (`layerKindProblem`) and the composer's layer picker (its filter and its note).
 */

test('a plane figure takes two-parameter results, the other kinds one-parameter ones', () => {
  expect(Object.fromEntries(FIGURE_KINDS.map((k) => [k, layerParameters(k)]))).toEqual({ limits: 1, ranges: 1, plane: 2 });
});

test('the save check refuses exactly what the picker leaves out', () => {
  for (const kind of FIGURE_KINDS) {
    for (const parameters of [1, 2] as const) {
      const problem = layerKindProblem(kind, parameters === 2);
      expect(problem === null).toBe(layerParameters(kind) === parameters);
    }
  }
  expect(layerKindProblem('limits', true)).toBe('it is a result over two parameters: a figure of limit curves cannot draw it');
  expect(layerKindProblem('plane', false)).toMatch(/^it is a result over one parameter/);
});

test('the picker note counts what is left out and says why, or nothing', () => {
  expect(layerPickerNote('limits', 0)).toBeNull();
  expect(layerPickerNote('limits', 1)).toBe('1 two-parameter result is not shown: a limit plot draws curves.');
  expect(layerPickerNote('ranges', 3)).toBe('3 two-parameter results are not shown: a summary of excluded ranges draws curves.');
  expect(layerPickerNote('plane', 2)).toBe('2 one-parameter results are not shown: a plane figure draws results over two parameters.');
});

test('the list badge marks two-parameter results only, spoken with units', () => {
  const row = { parameterName: 'm_X', parameterUnit: 'GeV' };
  expect(parametersBadge({ ...row, parameters: 1, secondParameter: null })).toBeNull();
  expect(parametersBadge({ ...row, parameters: 2, secondParameter: { name: 'm_chi', unit: 'GeV' } })).toEqual({
    text: '2 parameters: m_X × m_chi',
    label: 'Over two parameters: m_X (GeV) and m_chi (GeV)',
  });
  expect(parametersBadge({ ...row, parameterUnit: '', parameters: 2, secondParameter: { name: 'ratio', unit: '' } })?.label).toBe('Over two parameters: m_X and ratio');
});
