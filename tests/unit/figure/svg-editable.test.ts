import { JSDOM } from 'jsdom';
import { buildScene, collectLabels, resolveFigureTheme, sceneToSvg, SVG_FONT_FAMILIES, type FigureLayerData } from '@/shared/figure';
import { dijet, dilepton, ID, spec, stubGlyphs, stubMeasure } from './fixtures';

const HOSTILE = ['<script>alert(1)</script>', '"><svg onload=alert(1)>', ']]>', "' onmouseover='x", '&amp; &#60;', '<foreignObject><p>x</p></foreignObject>'];

function figure(labels: string[], opts: { font?: 'sans' | 'serif' } = {}) {
  const s = spec({
    title: 'Editable',
    x: { scale: 'linear', min: null, max: null, label: labels[0]! },
    y: { scale: 'log', min: null, max: null, label: labels[1]! },
    layers: [{ resultId: ID[0], version: 3, label: labels[2]! }, { resultId: ID[1], version: 1 }],
    annotations: labels.slice(3).map((text) => ({ text, x: 0.1, y: 0.5 })),
  });
  const layers: FigureLayerData[] = [dijet, dilepton];
  const theme = resolveFigureTheme('publication');
  const scene = buildScene(s, layers, theme, stubMeasure);
  const glyphs = stubGlyphs(collectLabels(s, layers, theme));
  return { scene, glyphs, font: opts.font };
}

const doc = (svg: string) => new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document;

describe('SVG with editable text', () => {
  test('each label is one <text> of its readable text in the shipped font family; no outlines', () => {
    const { scene, glyphs } = figure(["$m_{V'}$ [TeV]", '$\\sigma \\times B$ [fb$^{-1}$]', "$V' \\to \\ell\\ell$"]);
    const svg = sceneToSvg(scene, glyphs, { title: 'Editable', reuseGlyphs: true, text: 'editable' });
    const d = doc(svg);
    const texts = [...d.querySelectorAll('text')];
    const labels = scene.items.filter((i) => i.kind === 'text');
    expect(texts).toHaveLength(labels.length);
    expect(texts.map((t) => t.textContent)).toContain('mV′ [TeV]');
    expect(texts.map((t) => t.textContent)).toContain('σ × B [fb⁻¹]');
    expect(texts.some((t) => t.textContent!.startsWith('V′ → ℓℓ'))).toBe(true);
    // No glyph outlines or shared glyphs: the label groups are gone.
    expect(d.querySelectorAll('g[transform], use, defs > path').length).toBe(0);
    texts.forEach((t, k) => {
      const item = labels[k]!;
      expect(t.getAttribute('font-family')).toBe(SVG_FONT_FAMILIES[item.kind === 'text' ? item.font : 'sans']);
      expect(Number(t.getAttribute('font-size'))).toBe(item.kind === 'text' ? Number(item.size.toFixed(3)) : NaN);
      expect(Number(t.getAttribute('font-size'))).toBeGreaterThan(3);
      expect(t.getAttribute('fill')).toMatch(/^#[0-9a-f]{6}$/i);
    });
    // The subscript V′ has no Unicode form: it is a lowered, smaller tspan.
    const mass = texts.find((t) => t.textContent === 'mV′ [TeV]')!;
    const sub = mass.querySelector('tspan')!;
    expect(sub.textContent).toBe('V′');
    expect(sub.getAttribute('baseline-shift')).toBe('sub');
    expect(sub.getAttribute('font-size')).toBe('70%');
  });

  test('anchor and rotation follow the scene: the vertical title turns about its anchor', () => {
    const { scene, glyphs } = figure(['Mass', 'Limit', 'Dijet']);
    const d = doc(sceneToSvg(scene, glyphs, { text: 'editable' }));
    const texts = [...d.querySelectorAll('text')];
    const items = scene.items.filter((i) => i.kind === 'text');
    items.forEach((item, k) => {
      const t = texts[k]!;
      expect(Number(t.getAttribute('x'))).toBeCloseTo(item.x, 2);
      expect(Number(t.getAttribute('y'))).toBeCloseTo(item.y, 2);
      expect(t.getAttribute('text-anchor')).toBe(item.anchor === 'start' ? null : item.anchor);
      expect(t.getAttribute('transform')).toBe(item.rotate ? `rotate(-90 ${t.getAttribute('x')} ${t.getAttribute('y')})` : null);
    });
    expect(texts.some((t) => t.getAttribute('transform')?.startsWith('rotate(-90'))).toBe(true);
    expect(texts.some((t) => t.getAttribute('text-anchor') === 'middle')).toBe(true);
  });

  test('serif labels name the serif family', () => {
    const { scene, glyphs } = figure(['Mass', 'Limit', 'Dijet']);
    const serif = { ...scene, items: scene.items.map((i) => (i.kind === 'text' ? { ...i, font: 'serif' as const } : i)) };
    const d = doc(sceneToSvg(serif, glyphs, { text: 'editable' }));
    for (const t of d.querySelectorAll('text')) expect(t.getAttribute('font-family')).toBe("'Source Serif 4', 'Source Serif Pro', Georgia, serif");
  });

  test('hostile labels stay text: escaped, no element or attribute of theirs, <script> cannot inject', () => {
    const { scene, glyphs } = figure([...HOSTILE, ...HOSTILE]);
    const svg = sceneToSvg(scene, glyphs, { title: HOSTILE.join(' '), text: 'editable' });
    for (const h of HOSTILE.filter((h) => h !== '&amp; &#60;')) expect(svg).not.toContain(h);
    expect(svg).not.toMatch(/<script|<foreignObject|<!--|<!\[CDATA\[/i);
    expect(svg).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(svg).toContain('&amp;amp; &amp;#60;');
    const d = doc(svg);
    const names = new Set([...d.querySelectorAll('*')].map((e) => e.localName));
    expect([...names].every((x) => ['svg', 'title', 'defs', 'clipPath', 'rect', 'path', 'g', 'text', 'tspan'].includes(x))).toBe(true);
    const attributes = [...d.querySelectorAll('*')].flatMap((e) => e.getAttributeNames());
    expect(attributes.filter((a) => /^on/i.test(a))).toEqual([]);
    // The text reads back exactly as written.
    const texts = [...d.querySelectorAll('text')].map((t) => t.textContent);
    for (const h of ['<script>alert(1)</script>', '"><svg onload=alert(1)>', "' onmouseover='x", '&amp; &#60;']) expect(texts).toContain(h);
  });

  test('outlines stay the default: the same bytes without the option or with text: outline', () => {
    const { scene, glyphs } = figure(['Mass', 'Limit', 'Dijet']);
    const plain = sceneToSvg(scene, glyphs, { title: 't', reuseGlyphs: true });
    expect(sceneToSvg(scene, glyphs, { title: 't', reuseGlyphs: true, text: 'outline' })).toBe(plain);
    expect(plain).not.toMatch(/<text/);
    // Deterministic, like the outline writer.
    expect(sceneToSvg(scene, glyphs, { text: 'editable' })).toBe(sceneToSvg(scene, glyphs, { text: 'editable' }));
  });
});
