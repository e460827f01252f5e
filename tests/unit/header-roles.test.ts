import { detectRoles, headerRole, headerTokens, parseCsv, unusedNumericColumns, type ColumnRole } from '@/shared/curves/csv';

/**
 * The header recogniser: how people write band columns (plus/minus, up/down, p/m with or without
 * "sigma"/"sig"/"s", signed numbers, σ, 68/95 %, units in brackets). Spellings from common
 * practice in limit tables; every one is invented here, none copied from a real file.
 */
const spellings: Array<[string, ColumnRole | null]> = [
  // parameter
  ['mass', 'x'],
  ['M_Z* [GeV]', 'x'],
  ["m(V') [TeV]", 'x'],
  // observed, with units
  ['obs', 'observed'],
  ['obs [pb]', 'observed'],
  ['Observed σ×B [fb]', 'observed'],
  ['Obs. limit (fb)', 'observed'],
  // expected median
  ['expected', 'expected'],
  ['Expected median', 'expected'],
  ['exp [fb]', 'expected'],
  ['Expected σ×B (pb)', 'expected'],
  ['expected limit, μ = 1', 'expected'],
  ['exp (36 fb-1)', 'expected'],
  ['median', 'expected'],
  // ±1σ: signs, words, short forms
  ['exp +1sigma', 'expectedPlus1'],
  ['exp -1sig', 'expectedMinus1'],
  ['exp+1s', 'expectedPlus1'],
  ['Exp. -1 sigma', 'expectedMinus1'],
  ['exp −1σ', 'expectedMinus1'],
  ['exp –1σ [fb]', 'expectedMinus1'],
  ['expected_p1', 'expectedPlus1'],
  ['expected_m1', 'expectedMinus1'],
  ['exp_p1sig', 'expectedPlus1'],
  ['exp_m1sigma', 'expectedMinus1'],
  ['expm1', 'expectedMinus1'],
  ['exp (up 1)', 'expectedPlus1'],
  ['exp (down 1)', 'expectedMinus1'],
  ['exp_1sigma_up', 'expectedPlus1'],
  ['exp_1sigma_down', 'expectedMinus1'],
  ['expected_plus_1sigma', 'expectedPlus1'],
  ['expected_minus_1sigma', 'expectedMinus1'],
  ['Expected +1σ (fb)', 'expectedPlus1'],
  ['exp 68% low', 'expectedMinus1'],
  ['exp 68% high', 'expectedPlus1'],
  ['exp_up', 'expectedPlus1'],
  ['exp_dn', 'expectedMinus1'],
  ['expUp', 'expectedPlus1'],
  ['+1σ', 'expectedPlus1'],
  ['-1 sigma', 'expectedMinus1'],
  // ±2σ
  ['exp_m2s', 'expectedMinus2'],
  ['exp_p2s', 'expectedPlus2'],
  ['Expected +2σ', 'expectedPlus2'],
  ['Expected -2σ', 'expectedMinus2'],
  ['exp (up 2)', 'expectedPlus2'],
  ['exp_2sigma_lo', 'expectedMinus2'],
  ['expected_minus_2sigma', 'expectedMinus2'],
  ['exp 95% upper', 'expectedPlus2'],
  ['exp_plus_2sig [pb]', 'expectedPlus2'],
  // theory and its band
  ['theory', 'theory'],
  ['theory xsec (NLO) [fb]', 'theory'],
  ['sigma_th NLO+NLL', 'theory'],
  ['Theory (top-philic)', 'theory'],
  ['theory low', 'theoryLower'],
  ['theory_up', 'theoryUpper'],
  ['theory -1σ', 'theoryLower'],
  ['theory +1σ', 'theoryUpper'],
  // no role: said, not guessed
  ['exp 2σ', null],
  ['exp ±1σ', null],
  ['exp up/down', null],
  ['comment', null],
  ['m1', 'x'],
  ['experiment', null],
];

test.each(spellings)('%s → %s', (header, role) => {
  expect(headerRole(header)).toBe(role);
});

test('tokens: signs stay on numbers, σ is a word, glued "exp" is split, units are just words', () => {
  expect(headerTokens('exp -1sig')).toEqual(['exp', '-1', 'sig']);
  expect(headerTokens('Expected +2σ')).toEqual(['expected', '+2', 'sigma']);
  expect(headerTokens('expm2s')).toEqual(['exp', 'm', '2', 's']);
  expect(headerTokens('obs [pb]')).toEqual(['obs', 'pb']);
});

test('a whole header row: each role to the first column that names it', () => {
  expect(detectRoles(['m [GeV]', 'obs [pb]', 'exp', 'exp -1sig', 'exp +1sigma', 'exp_m2s', 'Expected +2σ', 'obs (rerun)'])).toEqual({
    x: 0, observed: 1, expected: 2, expectedMinus1: 3, expectedPlus1: 4, expectedMinus2: 5, expectedPlus2: 6,
  });
});

test('columns with numbers but no role are listed; text columns and mapped ones are not', () => {
  const table = parseCsv('mass,obs,obs (rerun),comment,exp 2σ,mostly text\n1,2,2.1,first,3,a\n2,1,1.1,second,2,b\n3,0.5,,third,1,4\n');
  expect(unusedNumericColumns(table, detectRoles(table.headers))).toEqual([2, 4]);
  expect(unusedNumericColumns(table, { x: 0, observed: 2, expected: 4 })).toEqual([1]);
});
