/**
 * Label syntax, shared by the typesetter, the scene builder, the exports and the app: a label is
 * plain text with `$…$` TeX math. `splitLabel` separates the two; `labelPlainText` reads a label
 * as plain Unicode text (captions, CSV headers, the PDF's text layer, search, screen readers).
 */

// ---------------------------------------------------------------------------------------------
// Label syntax

export type LabelSegment = { math: boolean; text: string };

/**
 * Splits a label into plain and math segments. `\$` is a literal dollar sign; a `$` without a
 * closing partner is literal too.
 */
export function splitLabel(label: string): LabelSegment[] {
  const out: LabelSegment[] = [];
  let plain = '';
  let i = 0;
  while (i < label.length) {
    const ch = label[i]!;
    if (ch === '\\' && label[i + 1] === '$') {
      plain += '$';
      i += 2;
      continue;
    }
    if (ch === '$') {
      const end = findClosingDollar(label, i + 1);
      if (end < 0) {
        plain += '$';
        i += 1;
        continue;
      }
      if (plain) out.push({ math: false, text: plain });
      plain = '';
      const tex = label.slice(i + 1, end);
      if (tex.trim()) out.push({ math: true, text: tex });
      i = end + 1;
      continue;
    }
    plain += ch;
    i += 1;
  }
  if (plain) out.push({ math: false, text: plain });
  return out;
}

function findClosingDollar(s: string, from: number): number {
  for (let j = from; j < s.length; j++) {
    if (s[j] === '\\') {
      j += 1;
      continue;
    }
    if (s[j] === '$') return j;
  }
  return -1;
}

// ---------------------------------------------------------------------------------------------
// Plain-text reading of a label (captions, CSV, the PDF's searchable text layer)

const TEX_WORDS: Record<string, string> = {
  alpha: 'α', beta: 'β', gamma: 'γ', delta: 'δ', epsilon: 'ε', varepsilon: 'ε', zeta: 'ζ', eta: 'η', theta: 'θ', iota: 'ι',
  kappa: 'κ', lambda: 'λ', mu: 'μ', nu: 'ν', xi: 'ξ', pi: 'π', rho: 'ρ', sigma: 'σ', tau: 'τ', upsilon: 'υ', phi: 'φ',
  varphi: 'φ', chi: 'χ', psi: 'ψ', omega: 'ω', Gamma: 'Γ', Delta: 'Δ', Theta: 'Θ', Lambda: 'Λ', Xi: 'Ξ', Pi: 'Π',
  Sigma: 'Σ', Phi: 'Φ', Psi: 'Ψ', Omega: 'Ω', times: '×', cdot: '·', pm: '±', mp: '∓', to: '→', rightarrow: '→',
  leftarrow: '←', geq: '≥', ge: '≥', leq: '≤', le: '≤', neq: '≠', ne: '≠', approx: '≈', sim: '~', simeq: '≃', infty: '∞',
  ell: 'ℓ', prime: '′', sqrt: '√', int: '∫', sum: 'Σ', partial: '∂', hbar: 'ħ', degree: '°', circ: '°', gg: '≫', ll: '≪',
  propto: '∝', in: '∈', dots: '…', ldots: '…', cdots: '⋯',
};
const SUPERSCRIPT: Record<string, string> = { '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻', '+': '⁺' };

function texToText(tex: string): string {
  let s = tex
    .replace(/\\(?:mathrm|text|mathit|mathbf|mathsf|mathcal|operatorname|textrm|textit|boldsymbol|bar|overline)\s*\{([^{}]*)\}/g, '$1')
    .replace(/\\frac\s*\{([^{}]*)\}\s*\{([^{}]*)\}/g, '$1/$2')
    .replace(/\\([A-Za-z]+)/g, (_m, w: string) => TEX_WORDS[w] ?? '')
    .replace(/\\[,;:! ]/g, ' ')
    .replace(/~/g, ' ');
  s = s.replace(/\^\{([-+0-9]+)\}|\^([-+0-9])/g, (_m, a: string | undefined, b: string | undefined) =>
    [...(a ?? b ?? '')].map((c) => SUPERSCRIPT[c] ?? c).join(''),
  );
  return s.replace(/[\^_{}\\]/g, '').replace(/\s+/g, ' ');
}

/** A label as plain Unicode text ("$\sigma \times B$ [fb]" → "σ × B [fb]"), for search and screen readers. */
export function labelPlainText(label: string): string {
  return splitLabel(label)
    .map((s) => (s.math ? texToText(s.text) : s.text))
    .join('')
    .replace(/\s+/g, ' ')
    .trim();
}
