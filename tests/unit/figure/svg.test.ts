import { JSDOM } from 'jsdom';
import { buildScene, collectLabels, labelKey, resolveFigureTheme, sceneToSvg, type FigureLayerData, type Glyphs, type LabelRequest } from '@/shared/figure';
import { dijet, dilepton, ID, spec, stubGlyphs, stubMeasure } from './fixtures';

const HOSTILE = ['<script>alert(1)</script>', '"><svg onload=alert(1)>', ']]>', "' onmouseover='x", '&amp; &#60;'];

function render(labels: string[], title: string, glyphsFor?: (g: Glyphs, requests: LabelRequest[]) => Glyphs, reuseGlyphs = false) {
  const s = spec({
    title: 'Hostile',
    x: { scale: 'linear', min: null, max: null, label: labels[0]! },
    y: { scale: 'log', min: null, max: null, label: labels[1]! },
    layers: [{ resultId: ID[0], version: 3, label: labels[2]! }, { resultId: ID[1], version: 1 }],
    annotations: labels.slice(3).map((text) => ({ text, x: 0.1, y: 0.5 })),
  });
  const layers: FigureLayerData[] = [dijet, { ...dilepton, title: labels[0]! } as FigureLayerData];
  const theme = resolveFigureTheme('publication');
  const requests = collectLabels(s, layers, theme);
  const glyphs = stubGlyphs(requests);
  const scene = buildScene(s, layers, theme, stubMeasure);
  return { svg: sceneToSvg(scene, glyphsFor ? glyphsFor(glyphs, requests) : glyphs, { title, reuseGlyphs }), requests, scene };
}

/** Element names of a well-formed SVG document (JSDOM throws on malformed XML). */
function elementNames(svg: string): Set<string> {
  const doc = new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document;
  return new Set([...doc.querySelectorAll('*')].map((e) => e.localName));
}

describe('SVG output', () => {
  test('hostile labels and titles never reach the markup unescaped', () => {
    const { svg } = render([...HOSTILE, ...HOSTILE], HOSTILE.join(' '), (g, requests) => {
      // A typesetter that returned hostile path data is escaped too.
      const first = requests[0]!;
      g.set(labelKey(first), { width: 5, ascent: 3, descent: 1, paths: ['M0,0"/><script>alert(1)</script><path d="'] });
      return g;
    });
    for (const h of HOSTILE) expect(svg).not.toContain(h);
    expect(svg).not.toMatch(/<script|<foreignObject|<text|<!--|<!\[CDATA\[/i);
    expect(svg).toContain('<title>&lt;script&gt;alert(1)&lt;/script&gt; &quot;&gt;&lt;svg onload=alert(1)&gt; ]]&gt;');
    const names = elementNames(svg);
    expect([...names].every((n) => ['svg', 'title', 'defs', 'clipPath', 'rect', 'path', 'g'].includes(n))).toBe(true);
    // No event-handler attribute anywhere (the hostile text stays text inside <title>).
    const doc = new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document;
    const attributes = [...doc.querySelectorAll('*')].flatMap((e) => e.getAttributeNames());
    expect(attributes.filter((a) => /^on/i.test(a))).toEqual([]);
    expect(doc.querySelector('title')!.textContent).toBe(HOSTILE.join(' '));
  });
  test('standalone SVG 1.1: size in points with a matching viewBox, labels as paths, curves clipped', () => {
    const { svg, scene } = render(['$m$ [TeV]', '$\\sigma$ [fb]', 'Dijet'], 'A figure');
    expect(svg.startsWith('<?xml version="1.0" encoding="UTF-8"?>\n<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="243.78pt" height="182.835pt" viewBox="0 0 243.78 182.835">')).toBe(true);
    expect(svg).toContain('<title>A figure</title>');
    const doc = new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document;
    const clipId = doc.querySelector('clipPath')!.getAttribute('id')!;
    // Every clipped path of the scene, and only those, inside a group clipped to the plot (one
    // group per run of clipped paths, not one clip per path: a rasteriser masks once per group).
    const clippedPaths = scene.items.filter((p) => p.kind === 'path' && p.clip).length;
    expect(clippedPaths).toBeGreaterThan(5);
    expect(doc.querySelectorAll(`g[clip-path="url(#${clipId})"] > path`).length).toBe(clippedPaths);
    expect(doc.querySelectorAll('path[clip-path], g[clip-path] g').length).toBe(0);
    expect(doc.querySelectorAll('g[clip-path]').length).toBeLessThan(clippedPaths);
    // Each label is one group of outline paths.
    expect(doc.querySelectorAll('g[transform] > path').length).toBeGreaterThan(10);
    expect(svg).not.toContain('NaN');
  });
  test('a label missing from the glyphs is left out: no text, no comment', () => {
    const full = render(['Mass', 'Limit', 'Dijet'], 'x');
    const missing = render(['Mass', 'Limit', 'Dijet'], 'x', (g) => {
      for (const k of [...g.keys()]) if (k.endsWith('|Mass')) g.delete(k);
      return g;
    });
    const groups = (svg: string) => (svg.match(/<g /g) ?? []).length;
    expect(groups(missing.svg)).toBe(groups(full.svg) - 1);
    expect(missing.svg).not.toMatch(/<text|<!--|>Mass</);
  });
  test('deterministic', () => {
    expect(render(['a', 'b', 'c'], 't').svg).toBe(render(['a', 'b', 'c'], 't').svg);
  });
  test('glyph reuse: each repeated outline drawn once in <defs> and used where it was; the same glyphs end up on the page', () => {
    // Glyphs as the typesetter writes them: an absolute first point, then a relative body; one per character.
    const perCharacter = (g: Glyphs, requests: LabelRequest[]) => {
      for (const r of requests) {
        const paths = [...r.label].map((c, i) => `M${i * 5} ${i % 2}h4v${(c.charCodeAt(0) % 7) + 1}c0.5 1.25 1.5 2.75 3.25 4.5c-0.5 1.25-1.5 2.75-3.25 4.5h-4z`);
        g.set(labelKey(r), { width: paths.length * 5, ascent: 7, descent: 1, paths });
      }
      return g;
    };
    const labels = ['mass mass', 'limit limit', 'Dijet'];
    const plain = render(labels, 'x', perCharacter).svg;
    const reused = render(labels, 'x', perCharacter, true).svg;
    const doc = (svg: string) => new JSDOM(svg, { contentType: 'image/svg+xml' }).window.document;
    /** Every glyph drawn inside a label group, written back as one absolute path. */
    const drawnGlyphs = (svg: string) => {
      const d = doc(svg);
      const defs = new Map([...d.querySelectorAll('defs > path[id]')].map((p) => [p.getAttribute('id')!, p.getAttribute('d')!.replace(/^M0 0/, '')]));
      return [...d.querySelectorAll('g[transform] > *')].map((e) => (e.localName === 'use' ? `M${e.getAttribute('x')} ${e.getAttribute('y')}${defs.get(e.getAttribute('href')!.slice(1))}` : e.getAttribute('d'))).sort();
    };
    expect(drawnGlyphs(reused)).toEqual(drawnGlyphs(plain));
    const r = doc(reused);
    expect(r.querySelectorAll('use').length).toBeGreaterThan(10);
    // Only outlines that occur more than once are shared, and each only once.
    const defs = [...r.querySelectorAll('defs > path[id]')].map((p) => p.getAttribute('d'));
    expect(new Set(defs).size).toBe(defs.length);
    for (const u of r.querySelectorAll('use')) expect(r.getElementById(u.getAttribute('href')!.slice(1))).not.toBeNull();
    // The label groups pass their colour to the shared outlines (currentColor).
    for (const g of r.querySelectorAll('g[transform]')) expect(g.getAttribute('color')).toBe(g.getAttribute('fill'));
    expect(reused.length).toBeLessThan(plain.length);
    // Without repeats nothing changes.
    expect(render(['a', 'b', 'c'], 't', undefined, true).svg).toBe(render(['a', 'b', 'c'], 't').svg);
  });
});
