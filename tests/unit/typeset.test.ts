import { labelKey, type LabelRequest } from '@/shared/figure/types';
import { multiply, parsePath, pathBox, scale, transformPath, translate } from '@/server/figures/svg-path';
import { labelPlainText, splitLabel } from '@/shared/figure/labels';
import { measureFromGlyphs, typesetLabel, typesetLabels } from '@/server/figures/typeset';

const sans = (label: string, size = 10): LabelRequest => ({ label, size, font: 'sans' });
const one = (label: string, size = 10, font: 'sans' | 'serif' = 'sans') => typesetLabels([{ label, size, font }]).get(labelKey({ label, size, font }))!;

/** Only path commands and numbers: nothing a browser could read as markup or script. */
const PATH_DATA = /^M[-0-9. ]+[mlqcaz0-9 .-]*$/;

describe('label syntax', () => {
  test('plain and math segments in order; \\$ and a lone $ are literal', () => {
    expect(splitLabel("$m_{V'}$ [TeV]")).toEqual([
      { math: true, text: "m_{V'}" },
      { math: false, text: ' [TeV]' },
    ]);
    expect(splitLabel('costs \\$5 or $x$')).toEqual([
      { math: false, text: 'costs $5 or ' },
      { math: true, text: 'x' },
    ]);
    expect(splitLabel('only one $ here')).toEqual([{ math: false, text: 'only one $ here' }]);
  });

  test('plain reading of TeX for the PDF text layer', () => {
    expect(labelPlainText('$\\sigma \\times B$ [fb]')).toBe('σ × B [fb]');
    expect(labelPlainText('$\\sqrt{s} = 18$ TeV, 140 fb$^{-1}$')).toBe('√s = 18 TeV, 140 fb⁻¹');
    expect(labelPlainText("$m_{V'}$ [TeV]")).toBe('mV′ [TeV]');
  });
});

describe('typesetting', () => {
  test('decade labels ($10^{k}$) are set in the text font, like the other tick labels, with a raised smaller exponent', () => {
    for (const font of ['sans', 'serif'] as const) {
      const ten = one('10', 10, font);
      const power = one('$10^{3}$', 10, font);
      const negative = one('$10^{-2}$', 10, font);
      expect(power.error).toBeUndefined();
      // "1" and "0" are the very glyphs of the plain label "10" (same outlines, same places).
      expect(power.paths.slice(0, 2)).toEqual(ten.paths.slice(0, 2));
      expect(negative.paths.slice(0, 2)).toEqual(ten.paths.slice(0, 2));
      // One more glyph for "3", two for "−2"; the exponent sits above the digits' cap height.
      expect(power.paths).toHaveLength(3);
      expect(negative.paths).toHaveLength(4);
      expect(power.width).toBeGreaterThan(ten.width);
      expect(power.ascent).toBeGreaterThan(ten.ascent + 1);
      const sup = pathBox(power.paths[2]!)!;
      expect(sup.y2).toBeLessThan(-2.5); // its bottom 0.42 em above the baseline, minus rounding
      expect(sup.y2 - sup.y1).toBeLessThan(0.8 * ten.ascent); // smaller than a full-size digit
    }
    // A bare exponent after plain text (fb$^{-1}$) is set the same way: "fb" then a raised "−1".
    const fb = one('140 fb$^{-1}$');
    expect(fb.paths.slice(0, 5)).toEqual(one('140 fb').paths);
    expect(fb.paths).toHaveLength(7);
    expect(pathBox(fb.paths[6]!)!.y2).toBeLessThan(-2.5);
    // Anything else in math stays with MathJax.
    expect(one('$10^{3} \\times 2$').paths.length).toBeGreaterThan(3);
  });

  test('plain text becomes non-empty outline paths with a positive width and the font’s box', () => {
    const g = one('Mass of the new particle [TeV]');
    expect(g.error).toBeUndefined();
    expect(g.paths.length).toBeGreaterThan(0);
    expect(g.paths.join('').length).toBeGreaterThan(200);
    expect(g.width).toBeGreaterThan(50);
    // Inter: cap height 0.73 em, descender of "p" 0.2 em (font tables).
    expect(g.ascent).toBeGreaterThan(7);
    expect(g.descent).toBeGreaterThan(1.5);
    for (const p of g.paths) expect(p).toMatch(PATH_DATA);
  });

  test("'$m_{V'}$ [TeV]' draws the formula and the text, one after the other on one baseline", () => {
    const both = one("$m_{V'}$ [TeV]");
    const math = one("$m_{V'}$");
    const text = one(' [TeV]');
    expect(both.error).toBeUndefined();
    // One path per glyph: m, V, ′ from MathJax, then [, T, e, V, ] from the font.
    expect(both.paths).toHaveLength(math.paths.length + text.paths.length);
    expect(math.paths).toHaveLength(3);
    expect(both.width).toBeCloseTo(math.width + text.width, 2);
    const boxes = both.paths.map((p) => pathBox(p)!);
    // The text part starts where the formula ends.
    for (const b of boxes.slice(3)) expect(b.x1).toBeGreaterThanOrEqual(math.width - 0.01);
    for (const b of boxes.slice(0, 3)) expect(b.x2).toBeLessThanOrEqual(math.width + 0.01);
    // The formula sits on the baseline: m's bottom at y ≈ 0, the subscript below it.
    expect(Math.max(...boxes.slice(0, 3).map((b) => b.y2))).toBeGreaterThan(0.5);
    expect(Math.min(...boxes.slice(0, 3).map((b) => b.y1))).toBeLessThan(-5);
  });

  test('identical glyphs give identical path bodies (renderers draw each once)', () => {
    const g = one('1010');
    const body = (p: string) => p.replace(/^M[-0-9. ]+/, '');
    expect(g.paths).toHaveLength(4);
    expect(body(g.paths[0]!)).toBe(body(g.paths[2]!));
    expect(body(g.paths[1]!)).toBe(body(g.paths[3]!));
    expect(g.paths[0]).not.toBe(g.paths[2]);
  });

  test('width grows in proportion to the size', () => {
    for (const label of ['Observed limit', '$\\sigma \\times B$ [fb]']) {
      const small = one(label, 8);
      const large = one(label, 16);
      expect(large.width).toBeCloseTo(2 * small.width, 1);
      expect(large.ascent).toBeGreaterThan(small.ascent);
    }
  });

  test('serif and sans differ', () => {
    expect(one('Expected limit', 10, 'serif').width).not.toBeCloseTo(one('Expected limit', 10, 'sans').width, 1);
  });

  test('Unicode in plain text comes out (σ, ×, √, ′, ⁻¹); a character neither font has is skipped', () => {
    for (const ch of ['σ', '×', '√', '′', '⁻¹', 'μ']) {
      const g = one(`a${ch}b`);
      expect(g.width).toBeGreaterThan(one('ab').width + 1);
      expect(g.paths.join('').length).toBeGreaterThan(one('ab').paths.join('').length);
    }
    expect(one('a\u{1F4A5}b').width).toBeCloseTo(one('ab').width, 5);
  });

  test('bad TeX sets the error and draws the raw text in sans', () => {
    const bad = one('$\\frac{$');
    expect(bad.error).toMatch(/TeX error: .*brace/i);
    expect(bad.paths.length).toBeGreaterThan(0);
    // The same characters typed as plain text (dollars escaped) give the same width.
    expect(bad.width).toBeCloseTo(one('\\$\\frac{\\$').width, 5);
    expect(one('$\\undefinedmacro x$').error).toMatch(/Undefined control sequence \\undefinedmacro/);
  });

  test('commands that reach outside the formula are not available', () => {
    for (const label of ['$\\href{javascript:alert(1)}{x}$', '$\\class{x}{y}$', '$\\require{html}$', '$\\style{color:red}{x}$']) {
      const g = one(label);
      expect(g.error).toBeDefined();
      for (const p of g.paths) expect(p).toMatch(PATH_DATA);
    }
  });

  test('hostile text never comes out as markup', () => {
    const hostile = [
      '<script>alert(1)</script>',
      '"/><foreignObject><div>x</div></foreignObject>',
      "$\\text{<script>alert('x')</script>}$",
      '</svg><svg onload=alert(1)>',
      '$x$ <img src=x onerror=alert(1)>',
    ];
    for (const label of hostile) {
      const g = one(label);
      expect(g.paths.length).toBeGreaterThan(0);
      for (const p of g.paths) {
        expect(p).toMatch(PATH_DATA);
        expect(p).not.toMatch(/script|foreign|onload|onerror|</i);
      }
    }
  });

  test('boxes, bars and stretched pieces are filled geometry', () => {
    for (const label of ['$\\boxed{x}$', '$\\overline{ab}$', '$\\frac{1}{2}$', '$\\left( \\frac{a}{b} \\right)$', '$\\sqrt{s}$']) {
      const g = one(label);
      expect(g.error).toBeUndefined();
      for (const p of g.paths) expect(p).toMatch(PATH_DATA);
      expect(g.width).toBeGreaterThan(2);
    }
    // \overline: the bar stays within the letters' width (the stretched glyph is clipped to its box).
    const bar = pathBox(one('$\\overline{ab}$').paths.join(''))!;
    expect(bar.x1).toBeGreaterThanOrEqual(-0.01);
    expect(bar.x2).toBeLessThanOrEqual(one('$\\overline{ab}$').width + 0.01);
  });

  test('typesetLabels answers one entry per distinct label and reuses cached results', () => {
    const reqs = [sans('10'), sans('10'), sans('100'), { label: '10', size: 10, font: 'serif' as const }];
    const g = typesetLabels(reqs);
    expect(g.size).toBe(3);
    expect(typesetLabels([sans('10')]).get(labelKey(sans('10')))).toBe(g.get(labelKey(sans('10'))));
  });

  test('measureFromGlyphs answers with the metrics of the paths, typesetting what is missing', () => {
    const glyphs = typesetLabels([sans('Observed limit', 9)]);
    const measure = measureFromGlyphs(glyphs);
    const g = glyphs.get(labelKey(sans('Observed limit', 9)))!;
    expect(measure('Observed limit', 9, 'sans')).toEqual({ width: g.width, ascent: g.ascent, descent: g.descent });
    const fresh = measure('Expected limit', 9, 'sans');
    expect(fresh.width).toBeGreaterThan(0);
    expect(glyphs.get(labelKey(sans('Expected limit', 9)))?.width).toBe(fresh.width);
    expect(typesetLabel(sans('Expected limit', 9)).width).toBe(fresh.width);
  });
});

describe('path data under transforms', () => {
  test('relative commands, H and V become absolute lines', () => {
    expect(transformPath('m1 1 h2 v2 l-2 0 z', translate(10, 0))).toBe('M11 1L13 1L13 3L11 3Z');
  });
  test('curves and their shorthand forms keep their control points', () => {
    expect(transformPath('M0 0Q1 1 2 0T4 0', scale(2))).toBe('M0 0Q2 2 4 0Q6 -2 8 0');
    expect(transformPath('M0 0C0 1 1 1 1 0S2 -1 2 0', IDENTITY_T)).toBe('M0 0C0 1 1 1 1 0C1 -1 2 -1 2 0');
  });
  test('a y flip maps up to down', () => {
    expect(transformPath('M0 0L0 10', multiply(translate(0, 5), scale(1, -1)))).toBe('M0 5L0 -5');
  });
  test('malformed data stops the parse instead of inventing geometry', () => {
    expect(parsePath('M0 0L5')).toHaveLength(1);
    expect(transformPath('<script>', IDENTITY_T)).toBe('');
  });
});

const IDENTITY_T = translate(0, 0);
