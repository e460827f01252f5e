import { liteAdaptor, type LiteAdaptor } from 'mathjax-full/js/adaptors/liteAdaptor.js';
import type { LiteElement } from 'mathjax-full/js/adaptors/lite/Element.js';
import { RegisterHTMLHandler } from 'mathjax-full/js/handlers/html.js';
import { TeX } from 'mathjax-full/js/input/tex.js';
import 'mathjax-full/js/input/tex/ams/AmsConfiguration.js';
import 'mathjax-full/js/input/tex/base/BaseConfiguration.js';
import { mathjax } from 'mathjax-full/js/mathjax.js';
import { SVG } from 'mathjax-full/js/output/svg.js';
import { labelKey, type FontRole, type Glyphs, type LabelRequest, type Measure, type TextMetrics, type TypesetLabel } from '../../shared/figure/types';
import { splitLabel } from '../../shared/figure/labels';
import { loadFont, type LoadedFont } from './fonts';
import { fmt, IDENTITY, multiply, parsePath, parseTransform, pathBox, placeRelative, relativeBody, scale, splitMatrix, translate, type Box, type Matrix, type Segment } from './svg-path';

/**
 * The typesetter: labels (plain text with `$…$` TeX math) become outline paths in points, so every
 * output (SVG, PDF, PNG, the app's preview) shows the same glyphs without any font installed.
 * Plain text comes from the shipped TTFs through opentype.js (glyph by glyph, falling back to the
 * other shipped font for characters the first lacks); math from MathJax's TeX input and SVG
 * output with inline paths (`fontCache: 'none'`). Origin: left end of the baseline, y down.
 *
 * Only numbers and path commands leave this module: MathJax's markup is walked, never copied,
 * so nothing in a label can become an element or attribute of the output.
 */


// ---------------------------------------------------------------------------------------------
// Plain text through the shipped fonts

const OTHER: Record<FontRole, FontRole> = { sans: 'serif', serif: 'sans' };

type Run = { paths: string[]; width: number; top: number; bottom: number };

/** A glyph's outline in font units (y down, origin on the baseline), its advance and vertical extent. */
type Outline = { segs: Segment[]; advance: number; y1: number; y2: number };
const outlines = new Map<string, Outline>();

function outline(role: FontRole, f: LoadedFont, index: number): Outline {
  const key = `${role}:${index}`;
  let o = outlines.get(key);
  if (o) return o;
  const glyph = f.font.glyphs.get(index);
  const segs: Segment[] = [];
  let [y1, y2] = [0, 0];
  for (const c of glyph.getPath(0, 0, f.upm).commands) {
    if (c.type === 'Z') segs.push({ c: 'Z', p: [] });
    else if (c.type === 'M' || c.type === 'L') segs.push({ c: c.type, p: [c.x, c.y] });
    else if (c.type === 'Q') segs.push({ c: 'Q', p: [c.x1, c.y1, c.x, c.y] });
    else if (c.type === 'C') segs.push({ c: 'C', p: [c.x1, c.y1, c.x2, c.y2, c.x, c.y] });
    if (c.type !== 'Z') [y1, y2] = [Math.min(y1, c.y), Math.max(y2, c.y)];
  }
  o = { segs, advance: glyph.advanceWidth ?? f.upm / 2, y1, y2 };
  outlines.set(key, o);
  return o;
}

type Shape = { start: [number, number]; body: string };

/** Relative shapes by outline and linear map: a glyph at one size is converted once per process. */
const shapes = new Map<string, Shape>();

function shapeOf(key: string, segs: () => readonly Segment[], linear: Matrix): Shape {
  const k = `${key}|${linear.map((v) => fmt(v, 6)).join(',')}`;
  let sh = shapes.get(k);
  if (!sh) {
    sh = relativeBody(segs(), linear);
    if (shapes.size >= SHAPE_LIMIT) shapes.delete(shapes.keys().next().value!);
    shapes.set(k, sh);
  }
  return sh;
}
const SHAPE_LIMIT = 50_000;

/** One path of `segs` through `m`: its first point absolute, the rest relative (see relativeBody). */
function placed(key: string | null, segs: () => readonly Segment[], m: Matrix): string {
  const { linear, dx, dy } = splitMatrix(m);
  const sh = key === null ? relativeBody(segs(), linear) : shapeOf(key, segs, linear);
  return placeRelative(sh, dx, dy);
}

/**
 * Glyph outlines of `text` at `size` from `x0` on the baseline (y = 0), in the coordinates of
 * `m`, one path per glyph (identical glyphs give identical path bodies, which the renderers
 * draw once and reuse). Each character comes from the font of `role`, else from the other
 * shipped font, else it is left out. No shaping or kerning: labels are short, and opentype.js
 * cannot read these fonts' substitution and positioning tables.
 */
function plainRun(text: string, size: number, role: FontRole, x0 = 0, m: Matrix = IDENTITY): Run {
  const fonts: [FontRole, LoadedFont][] = [
    [role, loadFont(role)],
    [OTHER[role], loadFont(OTHER[role])],
  ];
  const paths: string[] = [];
  let x = x0;
  let top = 0;
  let bottom = 0;
  for (const raw of text.normalize('NFC')) {
    const ch = /\s/.test(raw) ? ' ' : raw;
    // eslint-disable-next-line no-control-regex -- control characters are skipped on purpose
    if (/[\u0000-\u001f\u007f-\u009f]/.test(ch)) continue;
    let hit: [FontRole, LoadedFont, number] | undefined;
    for (const [r, f] of fonts) {
      const index = f.font.charToGlyphIndex(ch);
      if (index) {
        hit = [r, f, index];
        break;
      }
    }
    if (!hit) continue;
    const [r, f, index] = hit;
    const o = outline(r, f, index);
    const k = size / f.upm;
    if (o.segs.length) {
      const d = placed(`${r}:${index}`, () => o.segs, multiply(m, [k, 0, 0, k, x, 0]));
      if (d) paths.push(d);
      top = Math.max(top, -o.y1 * k);
      bottom = Math.max(bottom, o.y2 * k);
    }
    x += o.advance * k;
  }
  return { paths, width: x - x0, top, bottom };
}

// ---------------------------------------------------------------------------------------------
// TeX math through MathJax

type MathJaxDoc = { convert: (math: string, options: Record<string, unknown>) => LiteElement };

let mj: { adaptor: LiteAdaptor; doc: MathJaxDoc } | undefined;

function mathJax() {
  if (mj) return mj;
  const adaptor = liteAdaptor();
  RegisterHTMLHandler(adaptor);
  // Only base and AMS: no \href, \class, \style, \require or other packages that reach outside the
  // formula. Errors are thrown (not drawn as red text) so the label falls back to its raw text.
  const tex = new TeX({
    packages: ['base', 'ams'],
    formatError: (_jax: unknown, err: Error) => {
      throw err;
    },
  });
  const svg = new SVG({ fontCache: 'none' });
  const doc = mathjax.document('', { InputJax: tex, OutputJax: svg }) as unknown as MathJaxDoc;
  mj = { adaptor, doc };
  return mj;
}

/** MathJax's em is 1000 units; its TeX x-height is 0.442 em. */
const MJ_UNITS = 1000;
const MJ_X_HEIGHT = 0.442;

/**
 * Math is scaled up to the text font's x-height (as MathJax does in a browser), but by at most
 * 15 %: Inter's large x-height would otherwise make formulas look bold and oversized.
 */
function mathScale(role: FontRole): number {
  const f = loadFont(role);
  return Math.min(1.15, Math.max(1, f.xHeight / f.upm / MJ_X_HEIGHT));
}

const num = (v: string | null | undefined, dflt = 0) => {
  const n = v === null || v === undefined ? NaN : Number.parseFloat(v);
  return Number.isFinite(n) ? n : dflt;
};

type Walk = { adaptor: LiteAdaptor; paths: string[] };

function attr(w: Walk, node: LiteElement, name: string): string | null {
  const v = w.adaptor.getAttribute(node, name);
  return v === undefined || v === null ? null : String(v);
}

function children(w: Walk, node: LiteElement): LiteElement[] {
  return (w.adaptor.childNodes(node) as LiteElement[]).filter((c) => w.adaptor.kind(c) !== '#text' && w.adaptor.kind(c) !== '#comment');
}

/** MathJax's glyph outlines, parsed once per process. */
const mathOutlines = new Map<string, Segment[]>();
function mathSegments(d: string): Segment[] {
  let segs = mathOutlines.get(d);
  if (!segs) {
    segs = parsePath(d);
    if (mathOutlines.size >= SHAPE_LIMIT) mathOutlines.delete(mathOutlines.keys().next().value!);
    mathOutlines.set(d, segs);
  }
  return segs;
}

/** A filled rectangle (local units) through `m`, as one path. */
function rectPiece(x: number, y: number, w: number, h: number, m: Matrix): string {
  return placed(null, () => [{ c: 'M', p: [x, y] }, { c: 'L', p: [x + w, y] }, { c: 'L', p: [x + w, y + h] }, { c: 'L', p: [x, y + h] }, { c: 'Z', p: [] }], m);
}

/** Collects the filled geometry under `node` (MathJax units, y down after the root flip) into paths in points. */
function walkMath(w: Walk, node: LiteElement, m: Matrix) {
  const kind = w.adaptor.kind(node);
  const local = multiply(m, parseTransform(attr(w, node, 'transform')));
  switch (kind) {
    case 'g':
      for (const c of children(w, node)) walkMath(w, c, local);
      return;
    case 'path': {
      const d = attr(w, node, 'd');
      if (!d || attr(w, node, 'fill') === 'none') return;
      const p = placed(`mj:${d}`, () => mathSegments(d), local);
      if (p) w.paths.push(p);
      return;
    }
    case 'rect': {
      const [x, y, width, height] = ['x', 'y', 'width', 'height'].map((a) => num(attr(w, node, a))) as [number, number, number, number];
      const sw = num(attr(w, node, 'stroke-width'));
      if (attr(w, node, 'fill') === 'none') {
        // An outlined box (\boxed): four bars centred on the edges.
        if (sw <= 0) return;
        const h = sw / 2;
        w.paths.push(
          rectPiece(x - h, y - h, width + sw, sw, local),
          rectPiece(x - h, y + height - h, width + sw, sw, local),
          rectPiece(x - h, y + h, sw, height - sw, local),
          rectPiece(x + width - h, y + h, sw, height - sw, local),
        );
      } else if (width > 0 && height > 0) w.paths.push(rectPiece(x, y, width, height, local));
      return;
    }
    case 'line': {
      const [x1, y1, x2, y2] = ['x1', 'y1', 'x2', 'y2'].map((a) => num(attr(w, node, a))) as [number, number, number, number];
      const sw = num(attr(w, node, 'stroke-width'), 0);
      const len = Math.hypot(x2 - x1, y2 - y1);
      if (sw <= 0 || len === 0) return;
      const [nx, ny] = [(-(y2 - y1) / len) * (sw / 2), ((x2 - x1) / len) * (sw / 2)];
      w.paths.push(placed(null, () => parsePath(`M${x1 + nx} ${y1 + ny}L${x2 + nx} ${y2 + ny}L${x2 - nx} ${y2 - ny}L${x1 - nx} ${y1 - ny}Z`), local));
      return;
    }
    case 'svg': {
      // A stretched extender piece: a glyph scaled into a viewport that clips it. Extenders are
      // bars, so the clipped glyph is drawn as the rectangle it fills.
      const vb = (attr(w, node, 'viewBox') ?? '').split(/[\s,]+/).map(Number);
      const [x, y, width, height] = ['x', 'y', 'width', 'height'].map((a) => num(attr(w, node, a))) as [number, number, number, number];
      if (vb.length !== 4 || vb.some((v) => !Number.isFinite(v)) || !(vb[2]! > 0 && vb[3]! > 0)) return;
      const [vx, vy, vw, vh] = vb as [number, number, number, number];
      const inner = multiply(local, multiply(translate(x, y), multiply(scale(width / vw, height / vh), translate(-vx, -vy))));
      let box: Box | null = null;
      const grow = (b: Box | null) => {
        if (b) box = box ? { x1: Math.min(box.x1, b.x1), y1: Math.min(box.y1, b.y1), x2: Math.max(box.x2, b.x2), y2: Math.max(box.y2, b.y2) } : b;
      };
      const visit = (n: LiteElement, mm: Matrix) => {
        const t = multiply(mm, parseTransform(attr(w, n, 'transform')));
        if (w.adaptor.kind(n) === 'path') grow(pathBox(attr(w, n, 'd') ?? '', t));
        else for (const c of children(w, n)) visit(c, t);
      };
      for (const c of children(w, node)) visit(c, IDENTITY);
      const b = box as Box | null;
      if (!b) return;
      const x1 = Math.max(b.x1, vx);
      const x2 = Math.min(b.x2, vx + vw);
      const y1 = Math.max(b.y1, vy);
      const y2 = Math.min(b.y2, vy + vh);
      if (x2 > x1 && y2 > y1) w.paths.push(rectPiece(x1, y1, x2 - x1, y2 - y1, inner));
      return;
    }
    case 'text': {
      // A character MathJax's fonts lack: drawn from the shipped fonts at MathJax's size.
      const text = w.adaptor.textContent(node) ?? '';
      const size = num(attr(w, node, 'font-size'), MJ_UNITS);
      const run = plainRun(text, size, attr(w, node, 'font-family') === 'serif' ? 'serif' : 'sans', num(attr(w, node, 'x')), multiply(local, translate(0, num(attr(w, node, 'y')))));
      w.paths.push(...run.paths);
      return;
    }
    default:
      return;
  }
}

type MathBox = { paths: string[]; width: number; ascent: number; descent: number };

/** A TeX formula at `size` pt from `x0` on the baseline; throws MathJax's error when it does not parse. */
function mathRun(tex: string, size: number, role: FontRole, x0: number): MathBox {
  const { adaptor, doc } = mathJax();
  const container = doc.convert(tex, { display: false, em: 16, ex: 8, containerWidth: 1280 });
  const svg = (adaptor.childNodes(container) as LiteElement[]).find((c) => adaptor.kind(c) === 'svg');
  if (!svg) throw new Error('MathJax produced no drawing');
  const vb = String(adaptor.getAttribute(svg, 'viewBox') ?? '')
    .split(/[\s,]+/)
    .map(Number);
  if (vb.length !== 4 || vb.some((v) => !Number.isFinite(v))) throw new Error('MathJax produced no drawing');
  const [minX, minY, vw, vh] = vb as [number, number, number, number];
  const k = (size / MJ_UNITS) * mathScale(role);
  const w: Walk = { adaptor, paths: [] };
  const root = multiply(translate(x0, 0), multiply(scale(k), translate(-minX, 0)));
  for (const c of children(w, svg)) walkMath(w, c, root);
  return { paths: w.paths.filter(Boolean), width: vw * k, ascent: Math.max(0, -minY * k), descent: Math.max(0, (vh + minY) * k) };
}

/**
 * A bare power of ten (`10^{k}`, the log axes' decade labels) or a bare exponent (`fb$^{-1}$`) in
 * the label's own text font: "10" as plain text and the exponent at 70 % size raised by 0.42 em,
 * with a true minus sign. MathJax would set them in its math font, which beside sans-serif text
 * (slides, outreach) looks like another hand.
 */
const POWER = /^\s*(10)?\s*\^\s*(?:\{\s*([-−]?\d{1,3})\s*\}|(\d))\s*$/;
function powerRun(tex: string, size: number, role: FontRole, x0: number): MathBox | null {
  const hit = POWER.exec(tex);
  if (!hit) return null;
  const exponent = (hit[2] ?? hit[3]!).replace('-', '−');
  const base = hit[1] ? plainRun('10', size, role, x0) : { paths: [], width: 0, top: 0, bottom: 0 };
  const gap = hit[1] ? 0.04 * size : 0.02 * size;
  const rise = 0.42 * size;
  const sup = plainRun(exponent, 0.7 * size, role, x0 + base.width + gap, translate(0, -rise));
  return {
    paths: [...base.paths, ...sup.paths],
    width: base.width + gap + sup.width,
    ascent: Math.max(base.top, sup.top + rise),
    descent: Math.max(base.bottom, sup.bottom - rise),
  };
}

// ---------------------------------------------------------------------------------------------
// Labels

/** The first line of an error's message (MathJax's TeX errors are not Error instances). */
function errorText(e: unknown): string {
  const m = e && typeof e === 'object' && 'message' in e && typeof e.message === 'string' ? e.message : String(e);
  return (m.split('\n')[0] ?? m).slice(0, 200);
}

/** Typesets one label (uncached). */
export function typesetLabel(req: LabelRequest): TypesetLabel {
  const { label, size, font } = req;
  const f = loadFont(font);
  // Boxes never collapse below the font's cap height and "p" depth, so labels of one size share
  // a baseline-to-edge distance whatever letters they hold.
  const floorAscent = (f.capHeight / f.upm) * size;
  const floorDescent = (f.descender / f.upm) * size;
  const paths: string[] = [];
  let x = 0;
  let ascent = floorAscent;
  let descent = floorDescent;
  try {
    for (const seg of splitLabel(label)) {
      if (seg.math) {
        const r = powerRun(seg.text, size, font, x) ?? mathRun(seg.text, size, font, x);
        paths.push(...r.paths);
        x += r.width;
        ascent = Math.max(ascent, r.ascent);
        descent = Math.max(descent, r.descent);
      } else {
        const r = plainRun(seg.text, size, font, x);
        paths.push(...r.paths);
        x += r.width;
        ascent = Math.max(ascent, r.top);
        descent = Math.max(descent, r.bottom);
      }
    }
  } catch (e) {
    // The raw text, as typed, in the sans font; the composer shows the error beside the field.
    const raw = plainRun(label, size, 'sans');
    const s = loadFont('sans');
    return {
      width: round(raw.width),
      ascent: round(Math.max((s.capHeight / s.upm) * size, raw.top)),
      descent: round(Math.max((s.descender / s.upm) * size, raw.bottom)),
      paths: raw.paths,
      error: `TeX error: ${errorText(e)}`,
    };
  }
  return { width: round(x), ascent: round(ascent), descent: round(descent), paths };
}

const round = (v: number) => Number(fmt(v, 3));

/** Typeset labels by labelKey, kept for the life of the process (bounded; oldest dropped first). */
const cache = new Map<string, TypesetLabel>();
const CACHE_LIMIT = 20_000;

/** Typesets a batch of labels (cached by labelKey); the answer has one entry per distinct key. */
export function typesetLabels(requests: readonly LabelRequest[]): Glyphs {
  const out: Glyphs = new Map();
  for (const r of requests) {
    const key = labelKey(r);
    if (out.has(key)) continue;
    let t = cache.get(key);
    if (!t) {
      t = typesetLabel(r);
      if (cache.size >= CACHE_LIMIT) cache.delete(cache.keys().next().value!);
      cache.set(key, t);
    }
    out.set(key, t);
  }
  return out;
}

/**
 * A Measure answering from typeset glyphs, so the scene's layout uses exactly the metrics of the
 * paths it will draw. A label missing from `glyphs` is typeset on the spot and added to it.
 */
export function measureFromGlyphs(glyphs: Glyphs): Measure {
  return (label: string, size: number, font: FontRole): TextMetrics => {
    const req = { label, size, font };
    const key = labelKey(req);
    let g = glyphs.get(key);
    if (!g) {
      g = typesetLabels([req]).get(key)!;
      glyphs.set(key, g);
    }
    return { width: g.width, ascent: g.ascent, descent: g.descent };
  };
}
