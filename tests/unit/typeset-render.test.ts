import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PDFDocument, PDFDict, PDFName } from 'pdf-lib';
import { labelKey, type Scene } from '@/shared/figure/types';
import { pngProblem, pngSize, svgToPdf, svgToPng } from '@/server/figures/render';
import { typesetLabels } from '@/server/figures/typeset';

/**
 * The PDF and PNG writers on their own, from a small hand-made scene and SVG (the scene builder
 * and its SVG writer have their own tests; figures-render.test.ts checks the whole route).
 */

const W = 243.78; // 8.6 cm
const H = 182.83; // 6.45 cm

const scene: Scene = {
  widthPt: W,
  heightPt: H,
  background: '#ffffff',
  plot: { x: 40, y: 10, width: 190, height: 140 },
  legendCorner: 'none',
  oversizeLabels: [],
  notes: [],
  items: [
    { kind: 'path', d: 'M40 150L230 10', fill: null, stroke: '#15357f', strokeWidth: 1, dash: [3, 2], clip: true, role: 'expected' },
    { kind: 'text', x: 135, y: 175, label: "$m_{V'}$ [TeV]", size: 8, font: 'serif', anchor: 'middle', color: '#111111', rotate: 0, role: 'axis-title' },
    { kind: 'text', x: 12, y: 80, label: '$\\sigma \\times B$ [fb]', size: 8, font: 'serif', anchor: 'middle', color: '#111111', rotate: -90, role: 'axis-title' },
    { kind: 'text', x: 50, y: 20, label: 'Observed limit', size: 7, font: 'sans', anchor: 'start', color: '#111111', rotate: 0, role: 'legend' },
  ],
};
const texts = scene.items.flatMap((i) => (i.kind === 'text' ? [i] : []));
const glyphs = typesetLabels(texts);

/** A minimal SVG of the scene, labels as paths (the real one comes from sceneToSvg). */
const svg = [
  `<svg xmlns="http://www.w3.org/2000/svg" width="${W}pt" height="${H}pt" viewBox="0 0 ${W} ${H}">`,
  `<rect width="${W}" height="${H}" fill="#ffffff"/>`,
  '<path d="M40 150L230 10" fill="none" stroke="#15357f" stroke-width="1" stroke-dasharray="3 2"/>',
  ...texts.map((t) => {
    const g = glyphs.get(labelKey(t))!;
    const dx = t.anchor === 'middle' ? -g.width / 2 : 0;
    return `<g transform="translate(${t.x} ${t.y}) rotate(${t.rotate}) translate(${dx} 0)" fill="${t.color}">${g.paths.map((d) => `<path d="${d}"/>`).join('')}</g>`;
  }),
  '</svg>',
].join('');

const created = new Date('2031-05-04T12:00:00Z');

describe('PDF', () => {
  let pdf: Buffer;
  beforeAll(async () => {
    pdf = await svgToPdf(svg, scene, glyphs, { title: 'Test figure', created });
  });

  test('one page of exactly the figure size in points', async () => {
    const doc = await PDFDocument.load(pdf);
    expect(doc.getPageCount()).toBe(1);
    const { width, height } = doc.getPage(0).getSize();
    expect(width).toBeCloseTo(W, 1);
    expect(height).toBeCloseTo(H, 1);
    expect(doc.getTitle()).toBe('Test figure');
  });

  test('the shipped fonts are embedded (FontFile2) and no other font is referenced', async () => {
    const doc = await PDFDocument.load(pdf);
    const fonts: string[] = [];
    let embedded = 0;
    for (const [, obj] of doc.context.enumerateIndirectObjects()) {
      if (!(obj instanceof PDFDict)) continue;
      if (obj.get(PDFName.of('Type'))?.toString() === '/Font' && obj.get(PDFName.of('Subtype'))?.toString() !== '/CIDFontType2') {
        fonts.push(String(obj.get(PDFName.of('BaseFont'))));
      }
      if (obj.get(PDFName.of('FontFile2'))) embedded += 1;
    }
    expect(fonts.sort()).toEqual(['/Inter', '/SourceSerif4']);
    expect(embedded).toBe(2);
  });

  const pdffonts = '/usr/bin/pdffonts';
  (fs.existsSync(pdffonts) ? test : test.skip)('pdffonts reports every font embedded; pdftotext finds the labels', () => {
    const file = path.join(os.tmpdir(), `bw-typeset-${process.pid}.pdf`);
    fs.writeFileSync(file, pdf);
    try {
      const lines = execFileSync(pdffonts, [file], { encoding: 'utf8' }).trim().split('\n').slice(2);
      expect(lines.length).toBe(2);
      for (const l of lines) expect(l).toMatch(/\byes\b/);
      const text = execFileSync('/usr/bin/pdftotext', [file, '-'], { encoding: 'utf8' });
      expect(text).toContain('σ × B [fb]');
      expect(text).toContain('Observed limit');
    } finally {
      fs.rmSync(file, { force: true });
    }
  });

  test('the same input gives the same bytes (cached and fresh renders agree)', async () => {
    const again = await svgToPdf(svg, scene, glyphs, { title: 'Test figure', created });
    expect(again.equals(pdf)).toBe(true);
  });
});

describe('PNG', () => {
  const ihdr = (png: Buffer) => ({ signature: png.subarray(1, 4).toString('latin1'), width: png.readUInt32BE(16), height: png.readUInt32BE(20) });

  test.each([72, 150, 300])('%i dpi gives width × dpi / 72 pixels', (dpi) => {
    const png = svgToPng(svg, W, dpi);
    const { signature, width, height } = ihdr(png);
    expect(signature).toBe('PNG');
    expect(width).toBe(Math.round((W / 72) * dpi));
    expect(height).toBe(Math.round((H / 72) * dpi));
    expect(pngSize(W, H, dpi)).toEqual({ width, height });
  });


  test('absurd resolutions are refused before rendering', () => {
    expect(pngProblem(W, H, 300)).toBeNull();
    expect(pngProblem(W, H, 10)).toMatch(/between 36 and 1200/);
    expect(pngProblem(W, H, 5000)).toMatch(/between/);
    // A 60 cm square at 1200 dpi would be 28 346 px on a side.
    expect(pngProblem(1700.8, 1700.8, 1200)).toMatch(/2834\d × 2834\d pixels.*at most 267 dpi/);
  });
});
