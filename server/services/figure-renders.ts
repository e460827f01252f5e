import { createHash } from 'node:crypto';
import { LRUCache } from 'lru-cache';
import type { FigureLayerData } from '../../shared/figure/types';
import { clipText } from '../../shared/figure/outreach';
import { figureSizeCm, OFFERED_DPIS, type FigureSpec, type HouseStyle, type RenderFormat, type SIZE_PRESETS, type SVG_TEXT_MODES } from '../../shared/schemas/figures';
import { safeFileName } from '../../shared/slug';
import { MB } from '../../shared/bytes';
import * as q from '../../db/queries/figures';
import * as rq from '../../db/queries/figure-renders';
import { audienceViewer, figureAudience } from '../../db/queries/visibility';
import type { Ctx } from '../context';
import type { Executor } from '../../db/client';
import { RenderFailed } from '../figures/render-pool';
import { pngProblem } from '../figures/render';
import { buildFigure, captionOf, csvOf } from '../figures/scene';
import { AppError, notFound } from '../lib/errors';
import { reserveRenderCache, trimRenderCache } from './storage';
import { availableLayer, hueOf, layerVisible, oversizeError, pinKey, type Audience } from './figure-layers';

/**
 * Figure renders: SVG, PDF and PNG of a figure version for a caller (members see it as the group
 * does, anyone else a public figure as the public does), cached by everything that decides their
 * bytes in a cache bounded by the group's plan and never counted toward its storage; identical
 * requests in flight share one render; ETags and file names; the CSV and caption exports.
 */

// ---------------------------------------------------------------------------------------------
// Rendering

/** Bumped when the renderers change what they draw, so cached renders of the old look are not served. */
const RENDER_REVISION = 'r7';
/** PNG resolutions whose renders are kept (the ones offered to the public); others are made on request and not stored. */
const CACHED_DPIS = new Set<number>(OFFERED_DPIS);

/** `text` (SVG only): labels as glyph outlines (default) or as editable text; other formats ignore it. */
export type RenderRequest = { format: RenderFormat; version?: number; size?: keyof typeof SIZE_PRESETS; dpi: number; text?: (typeof SVG_TEXT_MODES)[number] };
export type RenderOutput = {
  body: Buffer;
  contentType: string;
  fileName: string;
  /** hit: served from the cache; miss: rendered and stored; uncached: rendered, not stored (size not kept, or no room). */
  cache: 'hit' | 'miss' | 'uncached';
  /** Names the bytes: renders are deterministic, so the cache key is the body's identity. */
  etag: string;
  notes: string[];
};

const CONTENT_TYPES: Record<RenderFormat, string> = { svg: 'image/svg+xml; charset=utf-8', pdf: 'application/pdf', png: 'image/png' };
const PT_PER_CM = 72 / 2.54;

type Prepared = {
  figure: RenderInputs['figure'];
  audience: Audience;
  version: number;
  createdAt: Date;
  spec: FigureSpec;
  /** The stored spec's own size preset (before a `?size=` override). */
  ownPreset: FigureSpec['size']['preset'];
  /** Per layer: its hue when this audience may draw it, else null. */
  layers: ({ hue: number } | null)[];
  style: HouseStyle | null;
  dataKey: string;
  sizeKey: string;
  widthPt: number;
  heightPt: number;
  /** Cached renders of this version in the requested format. */
  renders: RenderInputs['renders'];
};
type RenderInputs = NonNullable<Awaited<ReturnType<typeof rq.getRenderInputs>>>;

/**
 * The figure as this caller may see it, with everything its render depends on and the cache
 * key: members of its group see it as the group does; anyone else only a public figure, as the
 * public does; 404 otherwise (a private figure's existence is not revealed). One query, without
 * the curves (a cache hit needs nothing more).
 */
async function prepare(ctx: Ctx, figureId: string, userId: string | null, publicOnly: boolean, req: Pick<RenderRequest, 'version' | 'size'> & { format: string }): Promise<Prepared> {
  const inputs = await rq.getRenderInputs(ctx.db, figureId, req.version ?? null, publicOnly ? null : userId, req.format);
  if (!inputs) throw notFound('Figure');
  const audience: Audience | null = figureAudience(inputs.role, inputs.figure);
  if (!audience) throw notFound('Figure');
  const { figure, version: v } = inputs;
  if (!v) throw notFound(`Version ${req.version ?? figure.lastVersion} of this figure`);
  const spec: FigureSpec = req.size ? { ...v.spec, size: { preset: req.size } } : v.spec;
  const hues = new Map(Object.entries(inputs.hues));
  const byPosition = new Map(inputs.layers.map((k) => [k.position, k]));
  const keyParts: string[] = [];
  const layers = spec.layers.map((l, position) => {
    const k = byPosition.get(position);
    if (!k || k.resultId !== l.resultId || k.version !== l.version || !layerVisible(k, figure.groupId, audience)) {
      keyParts.push('-');
      return null;
    }
    const hue = hueOf(spec, position, hues);
    // The version's change time: a pinned draft can still change, and so would the render.
    keyParts.push(`${k.resultId}@${k.version}.${k.updatedAtMs ?? 0}.h${hue}`);
    return { hue };
  });
  const styleHash = inputs.style ? createHash('sha256').update(JSON.stringify(inputs.style)).digest('hex').slice(0, 12) : 'none';
  const { widthCm, heightCm } = figureSizeCm(spec);
  return {
    figure,
    audience,
    version: v.version,
    createdAt: v.createdAt,
    spec,
    ownPreset: v.spec.size.preset,
    layers,
    style: inputs.style,
    dataKey: `${RENDER_REVISION}|${keyParts.join(',')}|style:${styleHash}`,
    sizeKey: `${spec.size.preset}:${widthCm}x${heightCm}cm`,
    widthPt: widthCm * PT_PER_CM,
    heightPt: heightCm * PT_PER_CM,
    renders: inputs.renders,
  };
}

/**
 * The layers' data for a prepared render: curves of the layers it may draw, `available: false`
 * for the others. Visibility is checked again on the loaded rows (the data may have changed
 * since `prepare`; then the render is drawn from the newer state, which is never more open).
 */
async function loadData(ctx: Ctx, p: Prepared): Promise<FigureLayerData[]> {
  const pins = p.spec.layers.filter((_l, i) => p.layers[i] !== null).map((l) => ({ resultId: l.resultId, version: l.version }));
  const rows = new Map((await q.getLayerVersions(ctx.db, audienceViewer(p.audience, p.figure.groupId), pins)).map((r) => [pinKey(r.resultId, r.version), r]));
  return p.spec.layers.map((l, i) => {
    const row = rows.get(pinKey(l.resultId, l.version));
    const drawn = p.layers[i];
    if (!drawn || !layerVisible(row, p.figure.groupId, p.audience)) return { available: false, resultId: l.resultId, version: l.version };
    return availableLayer(row, drawn.hue);
  });
}

/**
 * Bodies of recently served renders by row id, so a hit does not move the bytes out of
 * PostgreSQL each time. A row's body never changes, and the row is looked up (and so known to
 * exist and to match the key) before its body is taken from here. Bounded by bytes.
 */
const HOT_BYTES = 64 * MB;
const hot = new LRUCache<string, Buffer>({ maxSize: HOT_BYTES, maxEntrySize: HOT_BYTES / 8, sizeCalculation: (b) => b.length });
const remember = (id: string, body: Buffer) => {
  if (!hot.has(id)) hot.set(id, body);
};
const recall = (id: string) => hot.get(id);

/**
 * Drops the cached renders of every version of the group's figure but `keepVersion` (in the
 * caller's transaction, when a new version is saved): they are re-made if asked for.
 */
export async function dropOlderRenders(tx: Executor, groupId: string, figureId: string, keepVersion: number): Promise<void> {
  await rq.deleteStaleRenders(tx, groupId, figureId, { keepVersion });
}

/** Builds the scene and writes the format (no cache involved). */
async function renderPrepared(ctx: Ctx, p: Prepared, format: RenderFormat, dpi: number, editableText: boolean): Promise<{ body: Buffer; notes: string[] }> {
  const built = buildFigure(p.spec, await loadData(ctx, p), p.style, { svgText: format === 'svg' && editableText ? 'editable' : 'outline' });
  const { scene, glyphs } = built;
  // Saving refuses such labels; a figure stored before that check, or drawn at another size or
  // in a changed house style, is refused here, before any renderer sees it.
  if (scene.oversizeLabels.length) throw oversizeError(422, scene.oversizeLabels);
  const svg = built.svg;
  if (format === 'svg') return { body: Buffer.from(svg, 'utf8'), notes: scene.notes };
  // PNG and PDF are drawn in a renderer process: a native crash there ends that process, not the
  // server, and this request gets a 500 naming the render (nothing is stored for it).
  try {
    const body = format === 'png' ? await ctx.renderer.png(svg, scene.widthPt, dpi) : await ctx.renderer.pdf(svg, scene, glyphs, { title: p.spec.title, subject: scene.notes.join(' '), created: p.createdAt });
    return { body, notes: scene.notes };
  } catch (e) {
    if (!(e instanceof RenderFailed)) throw e;
    const what = `The ${format.toUpperCase()} render of figure “${clipText(p.spec.title, 80)}” (version ${p.version}${format === 'png' ? `, ${dpi} dpi` : ''})`;
    throw new AppError(500, 'render_failed', `${what} failed: ${e.message}. The figure itself is unchanged; other formats and sizes may still work.`);
  }
}

/**
 * Stores a fresh render in the group's render cache. Renders are not the group's stored bytes:
 * they never count toward its quota (anonymous visitors may ask for public figures, and what
 * they cause must not decide what members can upload), and the cache is bounded by the plan's
 * `renderCache` instead: beyond its count, bytes or age the least recently used renders are
 * dropped, in the same transaction (one group's cache writes at a time, `reserveRenderCache`). A
 * render of the same version, format, size and audience drawn from older data is dropped too (it
 * can no longer be asked for). A render larger than the whole cache is served and not kept.
 */
async function cacheRender(ctx: Ctx, key: rq.RenderKey, groupId: string, out: { body: Buffer; contentType: string; notes: string[] }): Promise<'miss' | 'uncached'> {
  try {
    return await ctx.db.transaction(async (tx) => {
      const room = await reserveRenderCache(tx, groupId, out.body.length);
      if (!room) return 'uncached';
      await rq.deleteStaleRenders(tx, groupId, key.figureId, { staleFor: key });
      const inserted = await rq.insertRender(tx, { ...key, ...out });
      await trimRenderCache(tx, groupId, room);
      if (inserted) remember(inserted, out.body);
      return 'miss';
    });
  } catch (e) {
    // The figure was deleted while this render was being made: serve it, keep nothing.
    if (pgCode(e) === '23503') return 'uncached';
    throw e;
  }
}

/**
 * What a figure offers to the public (anyone not in its group): its own page size, and PNGs at the
 * offered resolutions. Members may ask for any preset and resolution; the public may not make the
 * server draw (and keep) arbitrary variants. 400 naming the field otherwise.
 */
function assertOffered(p: Prepared, req: RenderRequest, ownPreset: FigureSpec['size']['preset']) {
  if (p.audience !== 'public') return;
  if (req.size !== undefined && req.size !== ownPreset) {
    const message = `this figure is offered at its own size only (${ownPreset === 'custom' ? 'a custom size' : ownPreset}); leave size out`;
    throw new AppError(400, 'validation_failed', `Invalid query: size ${message}`, [{ field: 'query.size', message }]);
  }
  if (req.format === 'png' && !CACHED_DPIS.has(req.dpi)) {
    const message = `must be one of ${OFFERED_DPIS.join(', ')} for a public figure`;
    throw new AppError(400, 'validation_failed', `Invalid query: dpi ${message}`, [{ field: 'query.dpi', message }]);
  }
}

async function renderWithCache(ctx: Ctx, figureId: string, userId: string | null, publicOnly: boolean, req: RenderRequest): Promise<RenderOutput> {
  const p = await prepare(ctx, figureId, userId, publicOnly, req);
  assertOffered(p, req, p.ownPreset);
  if (req.format === 'png') {
    const problem = pngProblem(p.widthPt, p.heightPt, req.dpi);
    if (problem) throw new AppError(400, 'validation_failed', `Invalid query: dpi ${problem}`, [{ field: 'query.dpi', message: problem }]);
  }
  const contentType = CONTENT_TYPES[req.format];
  // Editable text is an SVG of its own: its own cache row (in the size key, so neither drawing
  // counts as the other's stale twin), ETag and file name.
  const editable = req.format === 'svg' && req.text === 'editable';
  const plainName = safeFileName(p.spec.title, req.format, { version: p.version, fallback: 'figure' });
  const fileName = editable ? plainName.replace(/\.svg$/, '-editable.svg') : plainName;
  const cacheable = req.format !== 'png' || CACHED_DPIS.has(req.dpi);
  const key: rq.RenderKey = {
    figureId: p.figure.id,
    figureVersion: p.version,
    format: req.format,
    sizeKey: req.format === 'png' ? `${p.sizeKey}@${req.dpi}dpi` : editable ? `${p.sizeKey}@text` : p.sizeKey,
    dataKey: p.dataKey,
    variant: p.audience,
  };
  const etag = `"${createHash('sha1').update(JSON.stringify([key, req.dpi])).digest('base64url').slice(0, 22)}"`;
  if (cacheable) {
    const hit = p.renders.find((r) => r.sizeKey === key.sizeKey && r.dataKey === key.dataKey && r.variant === key.variant);
    const body = hit && (recall(hit.id) ?? (await rq.getRenderBody(ctx.db, p.figure.id, hit.id)));
    if (hit && body) {
      remember(hit.id, body);
      if (Date.now() - hit.lastUsedAtMs > 60_000) await rq.touchRender(ctx.db, p.figure.id, hit.id);
      return { body, contentType, fileName, cache: 'hit', notes: hit.notes, etag };
    }
  }
  // Identical requests that arrive while this one renders wait for it instead of rendering again.
  const flightKey = `${etag}|${p.figure.groupId}`;
  let flight = inFlight.get(flightKey);
  if (!flight) {
    flight = (async () => {
      const out = await renderPrepared(ctx, p, req.format, req.dpi, editable);
      const cache = cacheable ? await cacheRender(ctx, key, p.figure.groupId, { ...out, contentType }) : 'uncached';
      return { ...out, cache };
    })().finally(() => inFlight.delete(flightKey));
    inFlight.set(flightKey, flight);
  }
  const out = await flight;
  return { ...out, contentType, fileName, etag };
}

/** The PostgreSQL error code of a failed query (drizzle wraps the driver's error as `cause`). */
function pgCode(e: unknown): string | undefined {
  const err = e as { code?: unknown; cause?: { code?: unknown } };
  const code = err?.cause?.code ?? err?.code;
  return typeof code === 'string' ? code : undefined;
}

const inFlight = new Map<string, Promise<{ body: Buffer; notes: string[]; cache: RenderOutput['cache'] }>>();

/** `GET /api/figures/:id/render.*`: members see the group's figure; others a public figure as the public does. */
export async function renderForCaller(ctx: Ctx, figureId: string, userId: string | null, req: RenderRequest): Promise<RenderOutput> {
  return renderWithCache(ctx, figureId, userId, false, req);
}

/** `GET /api/public/figures/:id/render.*`: public figures only, drawn with public results only. */
export async function renderPublic(ctx: Ctx, figureId: string, req: RenderRequest): Promise<RenderOutput> {
  return renderWithCache(ctx, figureId, null, true, req);
}

export type ExportFile = { fileName: string; contentType: string; body: string; notes: string[] };

/** The plotted curves as one CSV, or a caption draft naming the results and their references. */
export async function exportFigure(ctx: Ctx, figureId: string, userId: string | null, kind: 'csv' | 'caption', version?: number): Promise<ExportFile> {
  const p = await prepare(ctx, figureId, userId, false, { version, format: 'csv' });
  const data = await loadData(ctx, p);
  const notes = data.some((d) => !d.available) ? hiddenNote(data) : [];
  if (kind === 'csv') return { fileName: safeFileName(p.spec.title, 'csv', { version: p.version, fallback: 'figure' }), contentType: 'text/csv; charset=utf-8', body: csvOf(p.spec, data), notes };
  return { fileName: safeFileName(p.spec.title, 'txt', { version: p.version, fallback: 'figure' }), contentType: 'text/plain; charset=utf-8', body: captionOf(p.spec, data), notes };
}

function hiddenNote(data: FigureLayerData[]): string[] {
  const n = data.filter((d) => !d.available).length;
  return [n === 1 ? '1 layer is left out: you may not see its result' : `${n} layers are left out: you may not see their results`];
}
