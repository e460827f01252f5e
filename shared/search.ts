/**
 * Search text normalisation: one function for the stored text (`result_versions.search_text`,
 * written by the registry on every write) and for what a reader types, so `Z'`, `Z′`, `Z^\prime`
 * and `Zprime` find each other, as do `ttbar`, `tt̄` and `t\bar{t}`, or `μ`, `\mu` and `mu`.
 *
 * Steps: TeX commands for Greek letters, primes and bars become plain words; the text is
 * decomposed (NFD) so a combining macron or overline stands after its letter and becomes `bar`;
 * every prime-like mark becomes `prime`; Greek letters become their names; remaining accents
 * are dropped; lower case; `prime`/`bar` are glued to the word before them ("Z prime" →
 * "zprime"); the TeX grouping characters `$ { } \` vanish and runs of space become one.
 */

/** Greek letters (lower and upper case, with the variant forms and the micro sign) → names. */
const GREEK: Record<string, string> = {
  α: 'alpha', β: 'beta', γ: 'gamma', δ: 'delta', ε: 'epsilon', ϵ: 'epsilon', ζ: 'zeta', η: 'eta', θ: 'theta', ϑ: 'theta',
  ι: 'iota', κ: 'kappa', λ: 'lambda', μ: 'mu', µ: 'mu', ν: 'nu', ξ: 'xi', ο: 'omicron', π: 'pi', ϖ: 'pi', ρ: 'rho', ϱ: 'rho',
  σ: 'sigma', ς: 'sigma', τ: 'tau', υ: 'upsilon', φ: 'phi', ϕ: 'phi', χ: 'chi', ψ: 'psi', ω: 'omega',
  Α: 'alpha', Β: 'beta', Γ: 'gamma', Δ: 'delta', Ε: 'epsilon', Ζ: 'zeta', Η: 'eta', Θ: 'theta', Ι: 'iota', Κ: 'kappa',
  Λ: 'lambda', Μ: 'mu', Ν: 'nu', Ξ: 'xi', Ο: 'omicron', Π: 'pi', Ρ: 'rho', Σ: 'sigma', Τ: 'tau', Υ: 'upsilon', Φ: 'phi',
  Χ: 'chi', Ψ: 'psi', Ω: 'omega',
};
const GREEK_NAMES = [...new Set(Object.values(GREEK))];
const GREEK_RE = new RegExp(`[${Object.keys(GREEK).join('')}]`, 'gu');
/** `\mu`, `\Sigma`, `\varepsilon` (a TeX command name followed by a non-letter or the end). */
const TEX_GREEK_RE = new RegExp(`\\\\(?:var)?(${GREEK_NAMES.join('|')})(?![a-z])`, 'giu');

/** Marks written for a prime: ASCII apostrophe, ′ ″ (double: two primes), ’ ʹ ´ ` and the modifier primes. */
const PRIME_RE = /['′’ʹ´`‵ʼ]/gu;
const DOUBLE_PRIME_RE = /[″ʺ]/gu;
/** Combining macron (U+0304) and overline (U+0305), after NFD. */
const BAR_RE = /[\u0304\u0305]/gu;

/** The normalised form of `text` for searching (see the module comment). */
export function normaliseSearchText(text: string): string {
  let s = text;
  // TeX first, while the backslashes are there.
  s = s.replace(/\\(?:bar|overline)\s*\{\s*([^{}]*?)\s*\}/gu, '$1bar');
  s = s.replace(/\\(?:bar|overline)\s+([A-Za-z])/gu, '$1bar');
  s = s.replace(/\^\s*\{?\s*\\prime\s*\}?/gu, 'prime');
  s = s.replace(/\\prime(?![a-z])/giu, 'prime');
  s = s.replace(TEX_GREEK_RE, (_m, name: string) => name.toLowerCase());
  // Unicode: decompose so bars and accents are separate marks.
  s = s.normalize('NFD');
  s = s.replace(BAR_RE, 'bar');
  s = s.replace(DOUBLE_PRIME_RE, 'primeprime');
  s = s.replace(/\^\s*(?=['′’ʹ])/gu, '');
  s = s.replace(PRIME_RE, 'prime');
  s = s.replace(GREEK_RE, (c) => GREEK[c] ?? c);
  s = s.replace(/\p{M}/gu, '');
  s = s.toLowerCase();
  s = s.replace(/[${}\\]/gu, '');
  s = s.replace(/\s+/gu, ' ').trim();
  // "Z prime", "t bar": the mark belongs to the word before it.
  s = s.replace(/(\S) (prime|bar)(?![a-z])/gu, '$1$2');
  return s;
}

/** The text of a version that search reads: title, model and reference, normalised. */
export function versionSearchText(v: { title: string; model: string; reference: string }): string {
  return normaliseSearchText([v.title, v.model, v.reference].join(' | '));
}
