import { normaliseSearchText, versionSearchText } from '@/shared/search';

/** Spellings that must read alike: each row's texts normalise to the same string. */
const SAME: [string, string[]][] = [
  ['zprime', ["Z'", 'Z′', 'Zprime', 'Z prime', 'z’', 'Zʹ', "Z^{\\prime}", 'Z^\\prime', "$Z'$", "Z^'"]],
  ['ttbar', ['ttbar', 'tt̄', 't\\bar{t}', 't\\bar t', 'TTBAR', 't\\overline{t}', 'tt\u0305']],
  ['mumu', ['μμ', 'µµ', '\\mu\\mu', 'mumu', 'ΜΜ']],
  ['sigma', ['σ', 'Σ', '\\sigma', '\\Sigma', 'sigma', 'ς']],
  ['tau', ['τ', '\\tau', 'TAU']],
  ['epsilon', ['ε', '\\varepsilon', '\\epsilon', 'ϵ']],
  ['wprimeprime', ['W″', "W''", 'W′′']],
  ['abar', ['ā', 'a\u0304', '\\bar{a}']],
  ['muller', ['Müller', 'MÜLLER', 'Mu\u0308ller']],
];

describe('normaliseSearchText', () => {
  test.each(SAME)('%s', (expected, spellings) => {
    for (const s of spellings) expect([s, normaliseSearchText(s)]).toEqual([s, expected]);
  });

  test('phrases keep their words, spaces collapse, TeX grouping goes', () => {
    expect(normaliseSearchText("  Lanternfish   Z' → ℓℓ  ")).toBe('lanternfish zprime → ℓℓ');
    expect(normaliseSearchText('Search for $t\\bar{t}$ resonances')).toBe('search for ttbar resonances');
    expect(normaliseSearchText('m(Z′) [TeV]')).toBe('m(zprime) [tev]');
    expect(normaliseSearchText('H → ττ in the τ_h channel')).toBe('h → tautau in the tau_h channel');
  });

  test('words that only contain the names are left alone', () => {
    expect(normaliseSearchText('crowbar primer')).toBe('crowbar primer');
    expect(normaliseSearchText('\\muon')).toBe('muon');
  });

  test('a query is a substring of the stored text after both are normalised', () => {
    const stored = versionSearchText({ title: 'Halcyon Ring Z′ → tt̄ search', model: 'Sequential \\mu-philic model', reference: 'HR-NOTE-7' });
    for (const query of ["Z'", 'zprime', 'ttbar', 'tt̄', 'Zprime → ttbar', 'mu-philic', 'μ-philic', 'hr-note']) {
      expect([query, stored.includes(normaliseSearchText(query))]).toEqual([query, true]);
    }
  });
});
