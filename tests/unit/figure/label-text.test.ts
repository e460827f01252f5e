import { labelPlainText, labelTextRuns } from '@/shared/figure/labels';
import { captionDraft, figureCsv } from '@/shared/figure';
import { dijet, meta, spec } from './fixtures';

/** Labels of the fictional Lanternfish searches and what a reader of the caption or CSV should see. */
const CASES: [string, string][] = [
  // Plain text stays as it is.
  ['Lanternfish dijet', 'Lanternfish dijet'],
  ['  two   spaces  ', 'two spaces'],
  ['costs \\$5', 'costs $5'],
  // Greek, lower and upper case.
  ['$\\alpha\\beta\\gamma\\delta\\epsilon\\theta\\lambda\\mu\\nu\\pi\\sigma\\tau\\phi\\chi\\psi\\omega$', 'αβγδεθλμνπστφχψω'],
  ['$\\Gamma\\Delta\\Theta\\Lambda\\Xi\\Pi\\Sigma\\Phi\\Psi\\Omega$', 'ΓΔΘΛΞΠΣΦΨΩ'],
  ['$\\sigma \\times B$ [fb]', 'σ × B [fb]'],
  // Leptons, primes, masses.
  ['$m_{\\ell\\ell}$ [TeV]', 'mℓℓ [TeV]'],
  ["$m_{V'}$ [TeV]", 'mV′ [TeV]'],
  ['$m_{V^{\\prime}}$', 'mV′'],
  ["$Z'$ boson", 'Z′ boson'],
  ['$W^{\\prime}$', 'W′'],
  ['$x^{\\prime\\prime}$', 'x′′'],
  // Powers: superscript digits and minus.
  ['140 fb$^{-1}$', '140 fb⁻¹'],
  ['$10^{-2}$', '10⁻²'],
  ['$10^3$', '10³'],
  ['$W^{+}W^{-}$', 'W⁺W⁻'],
  ['cm$^{-2}$ s$^{-1}$', 'cm⁻² s⁻¹'],
  // Subscripts in Unicode where every character has a form, plain otherwise.
  ['$\\chi_{1}$', 'χ₁'],
  ['$x_{0}$', 'x₀'],
  ['$\\tilde{\\chi}^{0}_{1}$', 'χ̃⁰₁'],
  ['$p_{T}$', 'pT'],
  ['$m_{jj}$', 'mⱼⱼ'],
  ['$\\Gamma_{\\mathrm{tot}}/m$', 'Γₜₒₜ/m'],
  ['$\\sigma_{\\beta}$', 'σβ'],
  // Arrows, roots, ±, bars.
  ["$V' \\to \\ell\\ell$", 'V′ → ℓℓ'],
  ['$X \\rightarrow t\\bar{t}$', 'X → tt̄'],
  ['$\\sqrt{s} = 18$ TeV, 140 fb$^{-1}$', '√s = 18 TeV, 140 fb⁻¹'],
  ['$\\sqrt{s_{NN}}$', '√sNN'],
  ['$\\sqrt{a + b}$', '√(a + b)'],
  ['$1.2 \\pm 0.3$', '1.2 ± 0.3'],
  ['$\\bar{\\nu}$', 'ν̄'],
  ['$\\overline{p}p$', 'p̄p'],
  // Spaces and font wrappers.
  ['$18\\,\\mathrm{TeV}$', '18 TeV'],
  ['$m_{\\text{vee}}$', 'mᵥₑₑ'], ['$m_{\\text{Vee}}$', 'mVee'],
  ['$\\mathrm{d}\\sigma/\\mathrm{d}m$', 'dσ/dm'],
  ['$\\mathbf{x}$ and $\\mathit{y}$', 'x and y'],
  ['$\\frac{1}{2}$', '1/2'],
  ['$\\frac{a+b}{c}$', '(a+b)/c'],
  ['$\\left( x \\right)$', '( x )'],
  ['$\\left. x \\right|$', 'x |'],
  ['$\\{x\\}$ 5\\%', '{x} 5\\%'],
  // Unknown commands and stray TeX never leave TeX source behind.
  ['$\\unknowncommand x$', 'x'],
  ['$x}{$', 'x'],
  ['$\\frac{1$', '1/'],
  ['$^$', ''],
];

describe('labelPlainText: TeX read as Unicode text', () => {
  test.each(CASES)('%s → %s', (label, text) => {
    expect(labelPlainText(label)).toBe(text);
  });

  test('no TeX control characters survive in any case', () => {
    for (const [label] of CASES.filter(([l]) => l.includes('$') && !l.includes('\\$') && !l.includes('\\%'))) {
      expect(labelPlainText(label)).not.toMatch(/[\\^_$]/);
    }
  });
});

describe('labelTextRuns: scripts without a Unicode form stay raised or lowered', () => {
  test.each<[string, ReturnType<typeof labelTextRuns>]>([
    ['140 fb$^{-1}$', [{ text: '140 fb⁻¹', script: 'base' }]],
    ["$m_{V'}$ [TeV]", [{ text: 'm', script: 'base' }, { text: 'V′', script: 'sub' }, { text: ' [TeV]', script: 'base' }]],
    ['$E_{T}^{miss}$', [{ text: 'E', script: 'base' }, { text: 'T', script: 'sub' }, { text: 'miss', script: 'super' }]],
    ['$x^{\\prime}$', [{ text: 'x′', script: 'base' }]],
    ['plain', [{ text: 'plain', script: 'base' }]],
    ['', []],
  ])('%s', (label, runs) => {
    expect(labelTextRuns(label)).toEqual(runs);
  });
});

describe('exports read labels and units as text', () => {
  const tex = { ...dijet, meta: meta({ parameterName: "$m_{V'}$", parameterUnit: '$\\mathrm{TeV}$', quantityUnit: 'fb' }) } as typeof dijet;
  const s = spec({ layers: [{ resultId: dijet.resultId, version: 3, label: '$V\' \\to \\ell\\ell$, 140 fb$^{-1}$' }] });

  test('the caption has no TeX', () => {
    const c = captionDraft(s, [tex]);
    expect(c).toContain('as a function of mV′ (TeV)');
    expect(c).toContain('V′ → ℓℓ, 140 fb⁻¹ (LANTERNFISH-EXO-2031-04, version 3)');
    expect(c).not.toMatch(/[$\\{}^_]/);
  });

  test('the CSV names layers and units as text', () => {
    const line = figureCsv(s, [tex]).split('\r\n')[1]!;
    expect(line.startsWith('"V′ → ℓℓ, 140 fb⁻¹",observed,1,')).toBe(true);
    expect(line.endsWith(',TeV,fb')).toBe(true);
  });
});
