/**
 * A scene as a standalone SVG 1.1 document. By default text is drawn only as outline paths from
 * the typeset glyphs (never as <text>), so the file looks the same everywhere. With
 * `text: 'editable'` each label is one <text> element of its readable text (`labelTextRuns`) in
 * the shipped font's family, so a vector editor can change it. Either way no label can inject
 * markup: every attribute value and every piece of character data is escaped, and the writer has
 * no way to emit script or foreignObject.
 */
import { labelTextRuns } from './labels';
import { n } from './legend';
import { labelKey, type FontRole, type Glyphs, type Primitive, type Scene } from './types';

/** Escapes text for XML attribute values and character data. */
export function escapeXml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

type Attrs = Record<string, string | number | null | undefined>;

function attrs(a: Attrs): string {
  return Object.entries(a)
    .filter(([, v]) => v !== null && v !== undefined && v !== '')
    .map(([k, v]) => ` ${k}="${escapeXml(typeof v === 'number' ? n(v) : v!)}"`)
    .join('');
}

/** FNV-1a, to give the clip path an id of its own when several figures share a page. */
function hash(s: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h.toString(36);
}

function paint(fill: string | null, stroke: string | null, strokeWidth: number, dash: number[] | null, opacity?: number): Attrs {
  return {
    fill: fill ?? 'none',
    stroke: stroke ?? null,
    'stroke-width': stroke ? strokeWidth : null,
    'stroke-dasharray': stroke && dash && dash.length ? dash.map(n).join(' ') : null,
    'stroke-linejoin': stroke ? 'round' : null,
    opacity: opacity !== undefined && opacity < 1 ? opacity : null,
  };
}

/**
 * Glyph outlines drawn once and used again: the typesetter gives each glyph one path whose first
 * point is absolute and the rest relative (`M x y` + body), so equal glyphs have equal bodies.
 * Bodies that occur more than once in the figure go into <defs>; each label then `<use>`s them at
 * its glyph's first point. The picture is unchanged; the SVG gets smaller, and the PDF draws each
 * glyph as one form object (several times faster to write and to read).
 */
type GlyphReuse = { ids: Map<string, string>; defs: string[] };
const GLYPH_START = /^M(-?[\d.]+) (-?[\d.]+)([a-z].*)$/s;

function glyphReuse(items: readonly Primitive[], glyphs: Glyphs): GlyphReuse {
  const counts = new Map<string, number>();
  for (const p of items) {
    if (p.kind !== 'text') continue;
    for (const d of glyphs.get(labelKey({ label: p.label, size: p.size, font: p.font }))?.paths ?? []) {
      const body = GLYPH_START.exec(d)?.[3];
      if (body) counts.set(body, (counts.get(body) ?? 0) + 1);
    }
  }
  const repeated = [...counts].filter(([, count]) => count > 1).map(([body]) => body);
  // Ids of their own per set of outlines, so several figures can share one HTML page.
  const prefix = `gl${hash(repeated.join('|'))}-`;
  const ids = new Map<string, string>();
  const defs: string[] = [];
  for (const body of repeated) {
    const id = `${prefix}${ids.size}`;
    ids.set(body, id);
    defs.push(`<path${attrs({ id, d: `M0 0${body}`, fill: 'currentColor' })}/>`);
  }
  return { ids, defs };
}

function glyphPath(d: string, reuse: GlyphReuse | null): string {
  const m = reuse ? GLYPH_START.exec(d) : null;
  const id = m && reuse!.ids.get(m[3]!);
  return id ? `<use${attrs({ href: `#${id}`, x: m![1], y: m![2] })}/>` : `<path${attrs({ d })}/>`;
}

/**
 * The families of the shipped fonts (Inter, Source Serif 4), as an editor or browser would name
 * them, with generic fallbacks for a machine that has neither.
 */
export const SVG_FONT_FAMILIES: Record<FontRole, string> = {
  sans: 'Inter, Helvetica, Arial, sans-serif',
  serif: "'Source Serif 4', 'Source Serif Pro', Georgia, serif",
};

/** How the SVG writer draws labels: glyph outlines (the default) or editable <text>. */
export type SvgTextMode = 'outline' | 'editable';

/**
 * A label as editable text: one <text> at the anchor point (text-anchor for start/middle/end, a
 * rotation about the anchor for a vertical title), its readable text escaped, and the scripts
 * that have no Unicode form as <tspan>s raised or lowered at 70 % size, as the typesetter sets them.
 */
function editableText(p: Extract<Primitive, { kind: 'text' }>): string {
  const runs = labelTextRuns(p.label);
  if (!runs.length) return '';
  const body = runs
    .map((r) => (r.script === 'base' ? escapeXml(r.text) : `<tspan${attrs({ 'baseline-shift': r.script === 'super' ? 'super' : 'sub', 'font-size': '70%' })}>${escapeXml(r.text)}</tspan>`))
    .join('');
  const a: Attrs = {
    x: p.x,
    y: p.y,
    'font-family': SVG_FONT_FAMILIES[p.font],
    'font-size': p.size,
    'text-anchor': p.anchor === 'start' ? null : p.anchor,
    fill: p.color,
    transform: p.rotate ? `rotate(${p.rotate} ${n(p.x)} ${n(p.y)})` : null,
  };
  return `<text${attrs(a)}>${body}</text>`;
}

function primitive(p: Primitive, glyphs: Glyphs, reuse: GlyphReuse | null, text: SvgTextMode): string {
  switch (p.kind) {
    case 'rect':
      return `<rect${attrs({ x: p.x, y: p.y, width: p.width, height: p.height, ...paint(p.fill, p.stroke, p.strokeWidth, null, p.opacity) })}/>`;
    case 'path':
      return `<path${attrs({ d: p.d, ...paint(p.fill, p.stroke, p.strokeWidth, p.dash, p.opacity), 'fill-rule': p.fillRule ?? null })}/>`;
    case 'text': {
      if (text === 'editable') return editableText(p);
      const g = glyphs.get(labelKey({ label: p.label, size: p.size, font: p.font }));
      // A label that was not typeset is left out: raw text would bypass the typesetter.
      if (!g || g.paths.length === 0) return '';
      const w = Number.isFinite(g.width) ? g.width : 0;
      const dx = p.anchor === 'middle' ? -w / 2 : p.anchor === 'end' ? -w : 0;
      const transform = `translate(${n(p.x)},${n(p.y)})${p.rotate ? ` rotate(${p.rotate})` : ''}${dx ? ` translate(${n(dx)},0)` : ''}`;
      // `color` feeds the shared outlines' currentColor (svg2pdf does not pass fill into <use>).
      return `<g${attrs({ transform, fill: p.color, color: reuse ? p.color : null })}>${g.paths.map((d) => glyphPath(d, reuse)).join('')}</g>`;
    }
  }
}

/**
 * The scene as SVG 1.1: width and height in points with a matching viewBox, a <title> from
 * `opts.title`, curves clipped to the plot (each run of clipped paths in one clipped group), labels as paths from `glyphs` (keyed by `labelKey`;
 * a label missing there is not drawn). `opts.reuseGlyphs` draws each repeated glyph outline once
 * and uses it again (see `GlyphReuse`): smaller files and faster PDFs, the same picture.
 * `opts.text: 'editable'` writes labels as <text> instead (see `editableText`; no outlines, so no
 * glyph reuse): for editing in a vector editor, looking right where the shipped fonts are installed.
 */
export function sceneToSvg(scene: Scene, glyphs: Glyphs, opts?: { title?: string; reuseGlyphs?: boolean; text?: SvgTextMode }): string {
  const { plot } = scene;
  const clipId = `bw-plot-${hash([scene.widthPt, scene.heightPt, plot.x, plot.y, plot.width, plot.height].map(n).join(','))}`;
  const out: string[] = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    `<svg${attrs({ xmlns: 'http://www.w3.org/2000/svg', version: '1.1', width: `${n(scene.widthPt)}pt`, height: `${n(scene.heightPt)}pt`, viewBox: `0 0 ${n(scene.widthPt)} ${n(scene.heightPt)}` })}>`,
  ];
  if (opts?.title) out.push(`<title>${escapeXml(opts.title)}</title>`);
  const text: SvgTextMode = opts?.text ?? 'outline';
  const reuse = opts?.reuseGlyphs && text === 'outline' ? glyphReuse(scene.items, glyphs) : null;
  const glyphDefs = reuse && reuse.defs.length ? reuse.defs.join('') : '';
  out.push(`<defs>${glyphDefs}<clipPath${attrs({ id: clipId })}><rect${attrs({ x: plot.x, y: plot.y, width: plot.width, height: plot.height })}/></clipPath></defs>`);
  out.push(`<rect${attrs({ x: 0, y: 0, width: scene.widthPt, height: scene.heightPt, fill: scene.background })}/>`);
  // Each run of clipped paths shares one clipped group: the picture is the same as clipping each,
  // and a rasteriser makes one mask per group instead of one per path (resvg's time at 300 dpi
  // was mostly those masks for a colour map of many cell paths).
  let clipped = false;
  for (const p of scene.items) {
    if (p.kind === 'rect' && p.role === 'background') continue;
    const s = primitive(p, glyphs, reuse && reuse.defs.length ? reuse : null, text);
    if (!s) continue;
    const clip = p.kind === 'path' && p.clip;
    if (clip !== clipped) out.push(clip ? `<g${attrs({ 'clip-path': `url(#${clipId})` })}>` : '</g>');
    clipped = clip;
    out.push(s);
  }
  if (clipped) out.push('</g>');
  out.push('</svg>', '');
  return out.join('\n');
}
