import { Resvg } from '@resvg/resvg-js';
import { createHash } from 'node:crypto';
import { crc32, deflateSync } from 'node:zlib';
import { JSDOM } from 'jsdom';
import { jsPDF } from 'jspdf';
// The package's main entry is a UMD build that fails in Node; the ES build works.
import { svg2pdf } from 'svg2pdf.js/dist/svg2pdf.es.min.js';
import { labelKey, type FontRole, type Glyphs, type Scene } from '../../shared/figure/types';
import { FIGURE_LIMITS } from '../../shared/schemas/figures';
import { fontBytes, fontFile } from './fonts';
import { subsetTtf } from './font-subset';
import { labelPlainText } from '../../shared/figure/labels';

/**
 * The renderers: the scene's SVG (every label already a path) becomes a PDF page of the figure's
 * size through svg2pdf.js + jsPDF, or a PNG through resvg. Both are deterministic for the same
 * input (the PDF's dates and file id are fixed from the input), so cached bytes equal fresh ones.
 */

// ---------------------------------------------------------------------------------------------
// PNG

/** Largest PNG side and area: beyond these a render would take seconds and hundreds of MB. */
export const PNG_LIMITS = { maxSidePx: 12_000, maxPixels: 40_000_000 } as const;

export function pngSize(widthPt: number, heightPt: number, dpi: number): { width: number; height: number } {
  return { width: Math.round((widthPt / 72) * dpi), height: Math.round((heightPt / 72) * dpi) };
}

/** Why a PNG of this size at this resolution is refused, or null when it is fine. */
export function pngProblem(widthPt: number, heightPt: number, dpi: number): string | null {
  if (!(dpi >= FIGURE_LIMITS.minDpi && dpi <= FIGURE_LIMITS.maxDpi)) return `must be between ${FIGURE_LIMITS.minDpi} and ${FIGURE_LIMITS.maxDpi}`;
  const { width, height } = pngSize(widthPt, heightPt, dpi);
  if (width > PNG_LIMITS.maxSidePx || height > PNG_LIMITS.maxSidePx || width * height > PNG_LIMITS.maxPixels) {
    const best = Math.floor(Math.min((PNG_LIMITS.maxSidePx * 72) / Math.max(widthPt, heightPt), Math.sqrt(PNG_LIMITS.maxPixels / ((widthPt / 72) * (heightPt / 72)))));
    return `makes an image of ${width} × ${height} pixels, more than this server renders; at most ${best} dpi for this size`;
  }
  return null;
}

/** The SVG as a PNG at `dpi` (its width in points × dpi / 72 pixels wide). */
const pngOptions = (widthPt: number, dpi: number) => ({
  fitTo: { mode: 'width' as const, value: Math.round((widthPt / 72) * dpi) },
  // Every label is a path: no font is needed, and none from the machine may change the output.
  font: { loadSystemFonts: false },
});

/**
 * resvg is native code, and some inputs make it panic, which aborts the whole process: the server
 * calls this only in a renderer process (server/figures/render-pool.ts), never in its own.
 */
export function svgToPng(svg: string, widthPt: number, dpi: number): Buffer {
  return withResolution(Buffer.from(new Resvg(svg, pngOptions(widthPt, dpi)).render().asPng()), dpi);
}

/**
 * The PNG with its resolution recorded: a `pHYs` chunk (pixels per metre on both axes, unit 1 =
 * metre; W3C PNG 2nd edition, 2003, §11.3.5.3) placed before the first IDAT, as the format asks,
 * replacing any the encoder wrote. Without it, programs that place images by size (LaTeX, word
 * processors) assume 72 or 96 dpi and draw a 300 dpi figure four times too large.
 */
export function withResolution(png: Buffer, dpi: number): Buffer {
  const ppm = Math.round(dpi / 0.0254);
  const data = Buffer.alloc(13);
  data.write('pHYs', 0, 'latin1');
  data.writeUInt32BE(ppm, 4);
  data.writeUInt32BE(ppm, 8);
  data.writeUInt8(1, 12);
  const chunk = Buffer.alloc(4 + 13 + 4);
  chunk.writeUInt32BE(9, 0);
  data.copy(chunk, 4);
  chunk.writeUInt32BE(crc32(data), 17);
  const parts: Buffer[] = [png.subarray(0, 8)];
  let at = 8;
  let placed = false;
  while (at + 8 <= png.length) {
    const length = png.readUInt32BE(at);
    const type = png.toString('latin1', at + 4, at + 8);
    const end = at + 12 + length;
    if (type === 'IDAT' && !placed) {
      parts.push(chunk);
      placed = true;
    }
    if (type !== 'pHYs') parts.push(png.subarray(at, end));
    at = end;
  }
  return Buffer.concat(parts);
}

// ---------------------------------------------------------------------------------------------
// PDF

let dom: JSDOM | undefined;

/**
 * The DOM svg2pdf.js needs, from one JSDOM window kept for the process. svg2pdf reads the global
 * `document` (to parse style sheets), so that one global is set; nothing on the server looks for
 * it (only browser-side code of our dependencies checks for a document).
 */
function domWindow() {
  if (!dom) {
    dom = new JSDOM('<!doctype html><html><body></body></html>');
    // svg2pdf asks every element for its inline style before its attributes, and jsdom builds a
    // CSS declaration object for each ask (a third of the PDF time). Our SVG has no style
    // attributes, so this private window's elements answer "no inline style".
    for (const proto of [dom.window.Element.prototype, dom.window.SVGElement.prototype]) {
      Object.defineProperty(proto, 'style', { get: () => undefined, configurable: true });
    }
    const g = globalThis as { document?: unknown };
    if (g.document === undefined) g.document = dom.window.document;
  }
  return dom.window;
}

/**
 * jsPDF compresses every stream with a JavaScript deflate that takes ~100 ms for one embedded
 * font; Node's zlib writes the same format (zlib-wrapped deflate) in a few ms. jsPDF looks its
 * filter function up on its API object for each stream, so it is wrapped once here (jsPDF is used
 * by this renderer only).
 */
type FilterResult = { data: string; reverseChain: string };
type FilterApi = { processDataByFilters: (data: string, filters: string | string[]) => FilterResult; __bwFastFlate?: boolean };
const pdfApi = (jsPDF as unknown as { API: FilterApi }).API;
if (!pdfApi.__bwFastFlate) {
  const original = pdfApi.processDataByFilters;
  pdfApi.processDataByFilters = (data, filters) => {
    const list = typeof filters === 'string' ? [filters] : filters;
    if (list.length === 1 && (list[0] === 'FlateEncode' || list[0] === '/FlateEncode')) {
      return { data: deflateSync(Buffer.from(data, 'latin1')).toString('latin1'), reverseChain: '/FlateDecode' };
    }
    return original(data, filters);
  };
  pdfApi.__bwFastFlate = true;
}

/** What the text layer needs of an embedded font: jsPDF's font object (glyph lookup, the glyphs used). */
type EmbeddedFont = {
  family: string;
  has: (code: number) => boolean;
};
type JsPdfTtf = {
  characterToGlyph: (code: number) => number;
  toUnicode: Record<number, number>;
  subset: { encode: (ids: number[], indexToLocFormat: number) => ArrayLike<number> };
};

const fontBase64 = new Map<FontRole, string>();
/**
 * Embeds the shipped TTF of `role`. jsPDF would write the whole font but for its glyph outlines
 * (its own subsetter keeps every table, glyph names and the full cmap: 86 KB of Inter for one
 * word); `subsetTtf` writes only what the text layer's glyphs need.
 */
function embedFont(doc: jsPDF, role: FontRole): EmbeddedFont {
  const f = fontFile(role);
  let b64 = fontBase64.get(role);
  if (!b64) {
    b64 = fontBytes(role).toString('base64');
    fontBase64.set(role, b64);
  }
  doc.addFileToVFS(f.fileName, b64);
  doc.addFont(f.fileName, f.family, 'normal');
  const meta = (doc.internal as unknown as { getFont: (family: string, style: string) => { metadata: JsPdfTtf } }).getFont(f.family, 'normal').metadata;
  meta.subset.encode = (ids) => {
    const chars = new Map<number, number>();
    for (const [gid, code] of Object.entries(meta.toUnicode)) chars.set(code, Number(gid));
    return subsetTtf(fontBytes(role), ids, chars);
  };
  return { family: f.family, has: (code) => meta.characterToGlyph(code) > 0 };
}

/**
 * A label's plain text in runs of the font role that has their characters: the label's own
 * font, else the other shipped one (as the typesetter falls back per character; Source Serif 4
 * has no superscript minus, so "fb⁻¹" in a serif label takes "⁻" from Inter). jsPDF cuts a
 * string at the first character its font lacks, so a character neither font has is left out.
 */
function textRuns(text: string, own: FontRole, fonts: (role: FontRole) => EmbeddedFont): { role: FontRole; text: string }[] {
  const other: FontRole = own === 'sans' ? 'serif' : 'sans';
  const runs: { role: FontRole; text: string }[] = [];
  for (const ch of text) {
    const code = ch.charCodeAt(0);
    if (ch.length > 1) continue; // outside the BMP: jsPDF reads UTF-16 units
    const role = /\s/.test(ch) || fonts(own).has(code) ? own : fonts(other).has(code) ? other : null;
    if (!role) continue;
    const last = runs[runs.length - 1];
    if (last && last.role === role) last.text += ch;
    else runs.push({ role, text: ch });
  }
  return runs;
}

export type PdfMeta = { title: string; subject?: string; created: Date };

/**
 * A one-page PDF of the figure's size in points: the SVG drawn as vector paths, and every label's
 * plain text written invisibly over it in the embedded shipped font, so the PDF is searchable
 * (and copies as text) while what one sees is the typeset label.
 */
export async function svgToPdf(svg: string, scene: Scene, glyphs: Glyphs, meta: PdfMeta): Promise<Buffer> {
  const window = domWindow();
  const { widthPt: w, heightPt: h } = scene;
  const doc = new jsPDF({ unit: 'pt', format: [w, h], orientation: w > h ? 'landscape' : 'portrait', compress: true, putOnlyUsedFonts: true, precision: 3 });
  const element = new window.DOMParser().parseFromString(svg, 'image/svg+xml').documentElement;
  await svg2pdf(element, doc, { x: 0, y: 0, width: w, height: h });

  const texts = scene.items.filter((i) => i.kind === 'text');
  // The text layer needs at least one font; a figure without labels still embeds the sans one,
  // so every PDF we make says which font its (absent) text would use. A font is embedded when a
  // label first needs it (its own role, or the other one for a character its own lacks).
  const embedded = new Map<FontRole, EmbeddedFont>();
  const fonts = (role: FontRole) => {
    let f = embedded.get(role);
    if (!f) embedded.set(role, (f = embedFont(doc, role)));
    return f;
  };
  for (const role of texts.length ? texts.map((t) => t.font) : (['sans'] as const)) fonts(role);
  for (const t of texts) {
    const g = glyphs.get(labelKey(t));
    const runs = g ? textRuns(labelPlainText(t.label), t.font, fonts) : [];
    if (!runs.length || !g) continue;
    doc.setFontSize(t.size);
    const widths = runs.map((r) => {
      doc.setFont(fonts(r.role).family, 'normal');
      return doc.getStringUnitWidth(r.text) * t.size;
    });
    const natural = widths.reduce((a, b) => a + b, 0);
    // Selecting the text highlights the drawn label, not a box of another width.
    const scale = natural > 0 && g.width > 0 ? g.width / natural : 1;
    const shift = t.anchor === 'middle' ? g.width / 2 : t.anchor === 'end' ? g.width : 0;
    let advance = 0;
    runs.forEach((r, i) => {
      const [x, y] = t.rotate === -90 ? [t.x, t.y + shift - advance] : [t.x - shift + advance, t.y];
      doc.setFont(fonts(r.role).family, 'normal');
      doc.text(r.text, x, y, { renderingMode: 'invisible', angle: t.rotate === -90 ? 90 : 0, ...(scale !== 1 ? { horizontalScale: scale } : {}) });
      advance += widths[i]! * scale;
    });
  }
  if (!texts.length) {
    doc.setFont(fonts('sans').family, 'normal');
    doc.setFontSize(1);
    doc.text(' ', 0, h, { renderingMode: 'invisible' });
  }

  doc.setProperties({ title: meta.title, subject: meta.subject ?? '', creator: 'Bandwright' });
  doc.setCreationDate(meta.created);
  doc.setFileId(createHash('sha256').update(svg).update(meta.title).digest('hex').slice(0, 32).toUpperCase());
  return Buffer.from(doc.output('arraybuffer'));
}
