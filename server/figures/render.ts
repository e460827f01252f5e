import { Resvg } from '@resvg/resvg-js';
import { createHash } from 'node:crypto';
import { deflateSync } from 'node:zlib';
import { JSDOM } from 'jsdom';
import { jsPDF } from 'jspdf';
// The package's main entry is a UMD build that fails in Node; the ES build works.
import { svg2pdf } from 'svg2pdf.js/dist/svg2pdf.es.min.js';
import { labelKey, type FontRole, type Glyphs, type Scene } from '../../shared/figure/types';
import { FIGURE_LIMITS } from '../../shared/schemas/figures';
import { fontBytes, fontFile } from './fonts';
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
  return Buffer.from(new Resvg(svg, pngOptions(widthPt, dpi)).render().asPng());
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

const fontBase64 = new Map<FontRole, string>();
function embedFont(doc: jsPDF, role: FontRole): string {
  const f = fontFile(role);
  let b64 = fontBase64.get(role);
  if (!b64) {
    b64 = fontBytes(role).toString('base64');
    fontBase64.set(role, b64);
  }
  doc.addFileToVFS(f.fileName, b64);
  doc.addFont(f.fileName, f.family, 'normal');
  return f.family;
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
  // so every PDF we make says which font its (absent) text would use.
  const roles = new Set<FontRole>(texts.length ? texts.map((t) => t.font) : ['sans']);
  const families = new Map<FontRole, string>([...roles].map((r) => [r, embedFont(doc, r)]));
  for (const t of texts) {
    const text = labelPlainText(t.label);
    const g = glyphs.get(labelKey(t));
    if (!text || !g) continue;
    doc.setFont(families.get(t.font)!, 'normal');
    doc.setFontSize(t.size);
    const natural = doc.getStringUnitWidth(text) * t.size;
    const shift = t.anchor === 'middle' ? g.width / 2 : t.anchor === 'end' ? g.width : 0;
    const [x, y] = t.rotate === -90 ? [t.x, t.y + shift] : [t.x - shift, t.y];
    doc.text(text, x, y, {
      renderingMode: 'invisible',
      angle: t.rotate === -90 ? 90 : 0,
      // Selecting the text highlights the drawn label, not a box of another width.
      ...(natural > 0 && g.width > 0 ? { horizontalScale: g.width / natural } : {}),
    });
  }
  if (!texts.length) {
    doc.setFont(families.get('sans')!, 'normal');
    doc.setFontSize(1);
    doc.text(' ', 0, h, { renderingMode: 'invisible' });
  }

  doc.setProperties({ title: meta.title, subject: meta.subject ?? '', creator: 'Bandwright' });
  doc.setCreationDate(meta.created);
  doc.setFileId(createHash('sha256').update(svg).update(meta.title).digest('hex').slice(0, 32).toUpperCase());
  return Buffer.from(doc.output('arraybuffer'));
}
