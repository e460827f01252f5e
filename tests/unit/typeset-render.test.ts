import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { crc32, inflateSync } from 'node:zlib';
import opentype from 'opentype.js';
import { PDFDocument, PDFDict, PDFName, PDFRawStream } from 'pdf-lib';
import { labelKey, type Scene } from '@/shared/figure/types';
import { pngProblem, pngSize, svgToPdf, svgToPng } from '@/server/figures/render';
import { fontBytes, loadFont } from '@/server/figures/fonts';
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
    // Source Serif 4 has no superscript minus: the text layer takes it from Inter.
    { kind: 'text', x: 50, y: 30, label: '96.5 fb$^{-1}$', size: 7, font: 'serif', anchor: 'start', color: '#111111', rotate: 0, role: 'legend' },
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

  /** The embedded font programs (FontFile2 streams), decompressed. */
  async function fontPrograms(bytes: Buffer): Promise<Buffer[]> {
    const doc = await PDFDocument.load(bytes);
    const out: Buffer[] = [];
    for (const [, obj] of doc.context.enumerateIndirectObjects()) {
      if (!(obj instanceof PDFDict) || obj.get(PDFName.of('Type'))?.toString() !== '/FontDescriptor') continue;
      const stream = doc.context.lookup(obj.get(PDFName.of('FontFile2')));
      if (stream instanceof PDFRawStream) out.push(inflateSync(Buffer.from(stream.contents)));
    }
    return out;
  }

  test('the fonts are subsets: a small part of the TTF, the used glyphs drawn as in the shipped font', async () => {
    const programs = await fontPrograms(pdf);
    expect(programs).toHaveLength(2);
    for (const program of programs) {
      const sub = opentype.parse(program.buffer.slice(program.byteOffset, program.byteOffset + program.byteLength) as ArrayBuffer);
      // opentype.js 1.x keeps names at the top, 2.x per platform.
      const names = sub.names as { fontFamily?: { en?: string }; windows?: { fontFamily?: { en?: string } } };
      const family = names.windows?.fontFamily?.en ?? names.fontFamily?.en ?? '';
      expect(family).toMatch(/^(Inter|Source Serif)/);
      const role = family.startsWith('Inter') ? 'sans' : 'serif';
      expect(program.length).toBeLessThan(fontBytes(role).length / 8);
      const full = loadFont(role).font;
      expect(sub.numGlyphs).toBe(full.numGlyphs); // glyph ids kept: the PDF addresses glyphs by id
      const ch = role === 'sans' ? 'O' : '9';
      const id = full.charToGlyphIndex(ch);
      expect(sub.charToGlyphIndex(ch)).toBe(id);
      expect(sub.glyphs.get(id).getPath(0, 0, 100).toPathData(2)).toBe(full.glyphs.get(id).getPath(0, 0, 100).toPathData(2));
      // A glyph no label uses is empty.
      const unused = full.charToGlyphIndex('Q');
      expect(sub.glyphs.get(unused).getPath(0, 0, 100).commands).toHaveLength(0);
    }
    expect(pdf.length).toBeLessThan(40_000);
  });

  const pdftotext = '/usr/bin/pdftotext';
  (fs.existsSync(pdftotext) ? test : test.skip)('the text layer copies "fb⁻¹" from a serif label (the minus from Inter)', () => {
    const file = path.join(os.tmpdir(), `bw-typeset-fb-${process.pid}.pdf`);
    fs.writeFileSync(file, pdf);
    try {
      expect(execFileSync(pdftotext, [file, '-'], { encoding: 'utf8' })).toContain('96.5 fb⁻¹');
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

  /** The PNG's chunks in order, each with its type, data and whether its CRC matches. */
  const chunks = (png: Buffer) => {
    const out: { type: string; data: Buffer; crcOk: boolean }[] = [];
    for (let at = 8; at < png.length; ) {
      const length = png.readUInt32BE(at);
      const type = png.toString('latin1', at + 4, at + 8);
      out.push({ type, data: png.subarray(at + 8, at + 8 + length), crcOk: crc32(png.subarray(at + 4, at + 8 + length)) === png.readUInt32BE(at + 8 + length) });
      at += 12 + length;
    }
    return out;
  };

  test.each([
    [72, 2835],
    [300, 11811],
  ])('%i dpi is recorded in a pHYs chunk before the image data (%i pixels per metre)', (dpi, ppm) => {
    const list = chunks(svgToPng(svg, W, dpi));
    const phys = list.filter((c) => c.type === 'pHYs');
    expect(phys).toHaveLength(1);
    expect(list.findIndex((c) => c.type === 'pHYs')).toBeLessThan(list.findIndex((c) => c.type === 'IDAT'));
    expect(phys[0]!.data.readUInt32BE(0)).toBe(ppm);
    expect(phys[0]!.data.readUInt32BE(4)).toBe(ppm);
    expect(phys[0]!.data[8]).toBe(1); // unit: metre
    expect(list.every((c) => c.crcOk)).toBe(true);
    expect(list[0]!.type).toBe('IHDR');
    expect(list[list.length - 1]!.type).toBe('IEND');
  });

  test('absurd resolutions are refused before rendering', () => {
    expect(pngProblem(W, H, 300)).toBeNull();
    expect(pngProblem(W, H, 10)).toMatch(/between 36 and 1200/);
    expect(pngProblem(W, H, 5000)).toMatch(/between/);
    // A 60 cm square at 1200 dpi would be 28 346 px on a side.
    expect(pngProblem(1700.8, 1700.8, 1200)).toMatch(/2834\d × 2834\d pixels.*at most 267 dpi/);
  });
});
