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
// Readable text of a label (captions, CSV, the PDF's searchable text layer, the SVG's editable text)

const TEX_WORDS: Record<string, string> = {
  alpha: 'α', beta: 'β', gamma: 'γ', delta: 'δ', epsilon: 'ε', varepsilon: 'ε', zeta: 'ζ', eta: 'η', theta: 'θ', vartheta: 'ϑ', iota: 'ι',
  kappa: 'κ', lambda: 'λ', mu: 'μ', nu: 'ν', xi: 'ξ', omicron: 'ο', pi: 'π', varpi: 'ϖ', rho: 'ρ', varrho: 'ϱ', sigma: 'σ', varsigma: 'ς', tau: 'τ',
  upsilon: 'υ', phi: 'φ', varphi: 'φ', chi: 'χ', psi: 'ψ', omega: 'ω', Gamma: 'Γ', Delta: 'Δ', Theta: 'Θ', Lambda: 'Λ', Xi: 'Ξ', Pi: 'Π',
  Sigma: 'Σ', Upsilon: 'Υ', Phi: 'Φ', Psi: 'Ψ', Omega: 'Ω', times: '×', cdot: '·', pm: '±', mp: '∓', to: '→', rightarrow: '→', Rightarrow: '⇒',
  leftarrow: '←', leftrightarrow: '↔', geq: '≥', ge: '≥', leq: '≤', le: '≤', neq: '≠', ne: '≠', approx: '≈', sim: '~', simeq: '≃', equiv: '≡', infty: '∞',
  ell: 'ℓ', prime: '′', int: '∫', sum: 'Σ', prod: 'Π', partial: '∂', nabla: '∇', hbar: 'ħ', degree: '°', circ: '°', gg: '≫', ll: '≪',
  propto: '∝', in: '∈', dots: '…', ldots: '…', cdots: '⋯', langle: '⟨', rangle: '⟩', lvert: '|', rvert: '|', vert: '|', mid: '|',
  quad: ' ', qquad: ' ', colon: ':', lbrace: '{', rbrace: '}', percent: '%',
};
/** Commands whose argument is kept as it is (fonts and text in math). */
const WRAPPERS = new Set(['mathrm', 'text', 'textrm', 'textit', 'textbf', 'textsf', 'mathit', 'mathbf', 'mathsf', 'mathcal', 'mathbb', 'mathscr', 'mathfrak', 'operatorname', 'boldsymbol', 'bm', 'mbox', 'hbox']);
/** Accents as combining characters, written after each character of their argument (\bar{t} → t̄). */
const ACCENTS: Record<string, string> = { bar: '\u0304', overline: '\u0304', hat: '\u0302', widehat: '\u0302', tilde: '\u0303', widetilde: '\u0303', dot: '\u0307', ddot: '\u0308', vec: '\u20d7' };
/** Commands that draw nothing readable (sizes, spacing, delimiter sizing). */
const SILENT = new Set(['left', 'right', 'big', 'Big', 'bigg', 'Bigg', 'bigl', 'bigr', 'Bigl', 'Bigr', 'displaystyle', 'textstyle', 'scriptstyle', 'rm', 'it', 'bf', 'sf', 'limits', 'nolimits']);

// Only characters that one of the shipped fonts draws (Inter has all of these; Source Serif 4 takes
// its missing ones from Inter, as the typesetter and the PDF text layer do). Greek subscripts (ᵦ ᵧ …)
// are in neither font, so a Greek subscript stays plain.
const SUPERSCRIPT: Record<string, string> = {
  '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻', '−': '⁻', '+': '⁺', '=': '⁼', '(': '⁽', ')': '⁾', n: 'ⁿ', i: 'ⁱ',
};
const SUBSCRIPT: Record<string, string> = {
  '0': '₀', '1': '₁', '2': '₂', '3': '₃', '4': '₄', '5': '₅', '6': '₆', '7': '₇', '8': '₈', '9': '₉', '-': '₋', '−': '₋', '+': '₊', '=': '₌', '(': '₍', ')': '₎',
  a: 'ₐ', e: 'ₑ', o: 'ₒ', x: 'ₓ', h: 'ₕ', k: 'ₖ', l: 'ₗ', m: 'ₘ', n: 'ₙ', p: 'ₚ', s: 'ₛ', t: 'ₜ', i: 'ᵢ', j: 'ⱼ', r: 'ᵣ', u: 'ᵤ', v: 'ᵥ',
};

/**
 * A piece of a label's readable text: `script` says whether it is raised or lowered in the drawn
 * label and has no Unicode form (a superscript or subscript that has one is written in it, as
 * ⁻¹ or ₁, and is `base`). Writers that can raise text (the editable SVG) raise these pieces;
 * plain text simply runs them on (m_{V'} → mV′).
 */
export type LabelRun = { text: string; script: 'base' | 'super' | 'sub' };

type Script = LabelRun['script'];

/**
 * A small reader of TeX math as text: control words from the tables above, font wrappers dropped
 * (their content kept), accents as combining marks, fractions as a/b, roots as √, scripts in
 * Unicode where every character has a form, primes as ′. Anything it does not know (an unknown
 * command) reads as nothing rather than as TeX source.
 */
class TexReader {
  private i = 0;
  readonly runs: LabelRun[] = [];
  constructor(private readonly s: string) {}

  static read(tex: string, script: Script = 'base'): LabelRun[] {
    const r = new TexReader(tex);
    r.readAll(script);
    return r.runs;
  }

  private emit(text: string, script: Script) {
    if (!text) return;
    const last = this.runs[this.runs.length - 1];
    if (last && last.script === script) last.text += text;
    else this.runs.push({ text, script });
  }

  private emitRuns(runs: LabelRun[]) {
    for (const r of runs) this.emit(r.text, r.script);
  }

  private readAll(script: Script) {
    while (this.i < this.s.length) this.readOne(script);
  }

  /** The source of the next argument: a {…} group, a control word, or one character. */
  private argument(): string {
    while (this.s[this.i] === ' ') this.i += 1;
    const ch = this.s[this.i];
    if (ch === undefined) return '';
    if (ch === '{') {
      let depth = 0;
      const start = this.i + 1;
      for (let j = this.i; j < this.s.length; j++) {
        const c = this.s[j]!;
        if (c === '\\') {
          j += 1;
          continue;
        }
        if (c === '{') depth += 1;
        else if (c === '}' && --depth === 0) {
          this.i = j + 1;
          return this.s.slice(start, j);
        }
      }
      this.i = this.s.length;
      return this.s.slice(start);
    }
    if (ch === '\\') {
      const m = /^\\([A-Za-z]+|.?)/.exec(this.s.slice(this.i))!;
      this.i += m[0].length;
      return m[0];
    }
    this.i += 1;
    return ch;
  }

  private text(tex: string, script: Script): string {
    return TexReader.read(tex, script).map((r) => r.text).join('');
  }

  private readOne(script: Script) {
    const ch = this.s[this.i]!;
    if (ch === '\\') {
      const m = /^\\([A-Za-z]+|.?)/.exec(this.s.slice(this.i))!;
      this.i += m[0].length;
      this.command(m[1]!, script);
      return;
    }
    this.i += 1;
    if (ch === '{') {
      this.i -= 1;
      this.emitRuns(TexReader.read(this.argument(), script));
    } else if (ch === '}') {
      // A stray closing brace: nothing to read.
    } else if (ch === '^' || ch === '_') {
      this.script(ch === '^' ? 'super' : 'sub', this.argument(), script);
    } else if (ch === "'") {
      this.emit('′', script);
    } else if (ch === '~') {
      this.emit(' ', script);
    } else if (ch === '&') {
      this.emit(' ', script);
    } else {
      this.emit(ch, script);
    }
  }

  private command(word: string, script: Script) {
    if (WRAPPERS.has(word)) return this.emitRuns(TexReader.read(this.argument(), script));
    if (word in ACCENTS) {
      const mark = ACCENTS[word]!;
      for (const r of TexReader.read(this.argument(), script)) this.emit(r.text.replace(/(\S)/gu, `$1${mark}`), r.script);
      return;
    }
    if (word === 'frac' || word === 'dfrac' || word === 'tfrac') {
      const a = this.text(this.argument(), script);
      const b = this.text(this.argument(), script);
      const wrap = (t: string) => (/[\s+\-−×/]/.test(t.trim()) ? `(${t.trim()})` : t.trim());
      return this.emit(`${wrap(a)}/${wrap(b)}`, script);
    }
    if (word === 'sqrt') {
      while (this.s[this.i] === ' ') this.i += 1;
      let degree = '';
      if (this.s[this.i] === '[') {
        const end = this.s.indexOf(']', this.i);
        degree = end < 0 ? '' : this.text(this.s.slice(this.i + 1, end), 'base');
        this.i = end < 0 ? this.s.length : end + 1;
      }
      const arg = this.text(this.argument(), script).trim();
      const root = degree === '3' ? '∛' : degree === '4' ? '∜' : `${degree ? scripted(degree, 'super') ?? degree : ''}√`;
      return this.emit(`${root}${/[\s+\-−×/]/.test(arg) ? `(${arg})` : arg}`, script);
    }
    if (SILENT.has(word)) {
      // \left. and \right. draw no delimiter.
      if ((word === 'left' || word === 'right') && this.s[this.i] === '.') this.i += 1;
      return;
    }
    if (word in TEX_WORDS) return this.emit(TEX_WORDS[word]!, script);
    if (word === ',' || word === ';' || word === ':' || word === ' ' || word === '>' || word === '\\') return this.emit(' ', script);
    if (word === '!' || word === '') return;
    // An escaped character (\{, \%, \&, \#, \_, \$) is itself.
    if (!/^[A-Za-z]/.test(word)) return this.emit(word, script);
    // An unknown command reads as nothing, never as TeX source.
  }

  private script(kind: 'super' | 'sub', tex: string, outer: Script) {
    const runs = TexReader.read(tex, 'base');
    const text = runs.map((r) => r.text).join('');
    // A prime in a superscript (x^{\prime}, x^{\prime\prime}) is the prime itself.
    if (kind === 'super' && /^[′″‴]+$/.test(text)) return this.emit(text, outer);
    // Nested scripts and scripts of scripts read as their own text.
    if (outer !== 'base' || runs.some((r) => r.script !== 'base')) return this.emit(text, outer);
    const unicode = scripted(text, kind);
    if (unicode !== null) this.emit(unicode, outer);
    else this.emit(text, kind);
  }
}

/** `text` in Unicode superscript or subscript characters, or null when one of them has none. */
function scripted(text: string, kind: 'super' | 'sub'): string | null {
  const table = kind === 'super' ? SUPERSCRIPT : SUBSCRIPT;
  const chars = [...text.trim()];
  if (!chars.length || chars.some((c) => !(c in table))) return null;
  return chars.map((c) => table[c]!).join('');
}

/**
 * A label as readable runs (see `LabelRun`): plain segments as they are, math read by `TexReader`,
 * spaces collapsed and the ends trimmed. `labelPlainText` joins them; the editable SVG raises the
 * `super`/`sub` runs.
 */
export function labelTextRuns(label: string): LabelRun[] {
  const runs: LabelRun[] = [];
  const push = (r: LabelRun) => {
    const last = runs[runs.length - 1];
    if (last && last.script === r.script) last.text += r.text;
    else if (r.text) runs.push({ ...r });
  };
  for (const seg of splitLabel(label)) {
    if (!seg.math) push({ text: seg.text, script: 'base' });
    else for (const r of TexReader.read(seg.text)) push(r);
  }
  for (const r of runs) r.text = r.text.replace(/\s+/g, ' ');
  // Collapse spaces across run boundaries, then trim the label's ends.
  for (let k = 1; k < runs.length; k++) if (runs[k - 1]!.text.endsWith(' ') && runs[k]!.text.startsWith(' ')) runs[k]!.text = runs[k]!.text.slice(1);
  if (runs.length) {
    runs[0]!.text = runs[0]!.text.trimStart();
    runs[runs.length - 1]!.text = runs[runs.length - 1]!.text.trimEnd();
  }
  return runs.filter((r) => r.text.length > 0);
}

/**
 * A label as plain Unicode text ("$\sigma \times B$ [fb]" → "σ × B [fb]", "fb$^{-1}$" → "fb⁻¹",
 * "$m_{V'}$" → "mV′", "$t\bar{t}$" → "tt̄"), for captions, CSV, search, screen readers and the PDF's
 * text layer: the one reading of TeX as text.
 */
export function labelPlainText(label: string): string {
  return labelTextRuns(label)
    .map((r) => r.text)
    .join('')
    .replace(/\s+/g, ' ')
    .trim();
}
