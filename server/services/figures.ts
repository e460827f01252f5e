import { createHash } from 'node:crypto';
import type { FigureLayerData, OversizeLabel } from '../../shared/figure/types';
import type {
  FigureDetail,
  FigureLayerInfo,
  FigureSummary,
  FigureVersionDetail,
  GroupStyleView,
  PublicFigureListQuery,
  PublicFigurePage,
  ResultHueView,
} from '../../shared/schemas/figure-views';
import { figureSizeCm, OFFERED_DPIS, type FigureSpec, type FigureTheme, type HouseStyle, type RenderFormat, type SIZE_PRESETS } from '../../shared/schemas/figures';
import type { VersionMeta } from '../../shared/schemas/results';
import * as q from '../../db/queries/figures';
import { getResultInGroup } from '../../db/queries/results';
import type { Ctx } from '../context';
import type { Executor } from '../../db/client';
import { RenderFailed } from '../figures/render-pool';
import { pngProblem, reuseGlyphs } from '../figures/render';
import { buildFigure, captionOf, csvOf, oversizeLabelsOf } from '../figures/scene';
import { labelPlainText } from '../figures/typeset';
import { AppError, notFound, type ErrorDetail } from '../lib/errors';
import { renderCacheLimits } from './plans';

/**
 * Figures: versioned specs owned by a group, whose layers pin result versions; the data a viewer
 * may draw; renders (SVG, PDF, PNG) cached by everything that decides their bytes, in a cache
 * bounded by the group's plan and never counted toward its storage.
 */

export type Actor = { id: string };
/**
 * Who a figure is drawn for: `group` = members of the figure's group (its own results in any
 * state, other groups' public results except drafts); `public` = anyone (public results except
 * drafts). Renders are cached per audience, never per person.
 */
export type Audience = 'group' | 'public';

// ---------------------------------------------------------------------------------------------
// Visibility of pinned result versions

/** The one rule for what a figure may draw (and what a group may pin). */
type Visibility = { groupId: string | null; isPublic: boolean | null; state: string | null };
function layerVisible<R extends Visibility>(row: R | undefined, figureGroupId: string, audience: Audience): row is R {
  if (!row || row.groupId === null) return false;
  if (audience === 'group' && row.groupId === figureGroupId) return true;
  return row.isPublic === true && row.state !== null && row.state !== 'draft';
}

const pinKey = (resultId: string, version: number) => `${resultId}@${version}`;

async function layerRows(db: Executor, spec: FigureSpec): Promise<Map<string, q.LayerVersionRow>> {
  const rows = await q.getLayerVersions(
    db,
    spec.layers.map((l) => ({ resultId: l.resultId, version: l.version })),
  );
  return new Map(rows.map((r) => [pinKey(r.resultId, r.version), r]));
}

/** 400 naming every layer that pins a result version the group may not use. */
async function assertLayersUsable(db: Executor, groupId: string, spec: FigureSpec) {
  const rows = await layerRows(db, spec);
  const details: ErrorDetail[] = [];
  spec.layers.forEach((l, i) => {
    if (!layerVisible(rows.get(pinKey(l.resultId, l.version)), groupId, 'group')) {
      details.push({
        field: `spec.layers.${i}`,
        message: `version ${l.version} of result ${l.resultId} cannot be used by this group: a layer must pin one of the group's own results or a published version of a public result`,
      });
    }
  });
  if (details.length) throw new AppError(400, 'validation_failed', `Layer ${details[0]!.field.split('.')[2]}: ${details[0]!.message}`, details);
}

function metaOf(r: q.LayerVersionRow): VersionMeta {
  return {
    title: r.title,
    model: r.model,
    parameterName: r.parameterName,
    parameterUnit: r.parameterUnit,
    quantity: r.quantity,
    quantityUnit: r.quantityUnit as VersionMeta['quantityUnit'],
    sqrtS: r.sqrtS,
    luminosity: r.luminosity,
    cl: r.cl,
    method: r.method,
    reference: r.reference,
    notes: r.notes,
  };
}

// ---------------------------------------------------------------------------------------------
// Hues

export const HUE_COUNT = 12;

/** Gives every result of the spec that has no hue in the group the next free one (in the caller's transaction). */
async function assignHues(tx: Executor, groupId: string, spec: FigureSpec) {
  const hues = await q.listHues(tx, groupId);
  const used = new Set(hues.values());
  for (const l of spec.layers) {
    if (hues.has(l.resultId)) continue;
    let hue = 0;
    while (used.has(hue) && hue < HUE_COUNT) hue++;
    if (hue >= HUE_COUNT) hue = hues.size % HUE_COUNT;
    await q.insertHue(tx, groupId, l.resultId, hue);
    hues.set(l.resultId, hue);
    used.add(hue);
  }
}

/** The hues results would get if a figure with them were saved now (assignHues without writing). */
function withPreviewHues(hues: Map<string, number>, resultIds: string[]): Map<string, number> {
  const out = new Map(hues);
  const used = new Set(hues.values());
  for (const id of resultIds) {
    if (out.has(id)) continue;
    let hue = 0;
    while (used.has(hue) && hue < HUE_COUNT) hue++;
    if (hue >= HUE_COUNT) hue = out.size % HUE_COUNT;
    out.set(id, hue);
    used.add(hue);
  }
  return out;
}

const hueOf = (spec: FigureSpec, position: number, hues: Map<string, number>) => {
  const l = spec.layers[position]!;
  return l.hue ?? hues.get(l.resultId) ?? position % HUE_COUNT;
};

// ---------------------------------------------------------------------------------------------
// Reads

function toSummary(f: Awaited<ReturnType<typeof q.listFigures>>[number]): FigureSummary {
  return { ...f, theme: f.theme as FigureTheme, updatedAt: f.updatedAt.toISOString() };
}

export async function listInGroup(ctx: Ctx, groupId: string): Promise<{ figures: FigureSummary[] }> {
  return { figures: (await q.listFigures(ctx.db, groupId)).map(toSummary) };
}

async function figureOr404(db: Executor, groupId: string, figureId: string) {
  const f = await q.getFigureInGroup(db, groupId, figureId);
  if (!f) throw notFound('Figure');
  return f;
}

async function layerInfo(db: Executor, groupId: string, spec: FigureSpec): Promise<FigureLayerInfo[]> {
  const [rows, latest, hues] = await Promise.all([
    layerRows(db, spec),
    q.latestPublishedVersions(db, groupId, [...new Set(spec.layers.map((l) => l.resultId))]),
    q.listHues(db, groupId),
  ]);
  return spec.layers.map((l, position) => {
    const row = rows.get(pinKey(l.resultId, l.version));
    const available = layerVisible(row, groupId, 'group');
    const latestPublished = latest.get(l.resultId) ?? null;
    return {
      position,
      resultId: l.resultId,
      version: l.version,
      title: available ? row.title : null,
      state: available ? row.state : null,
      available,
      publiclyVisible: layerVisible(row, groupId, 'public'),
      latestPublished,
      newerPublished: latestPublished !== null && latestPublished > l.version,
      hue: hueOf(spec, position, hues),
    };
  });
}

async function versionDetail(db: Executor, groupId: string, figureId: string, version: number): Promise<FigureVersionDetail> {
  const v = await q.getFigureVersion(db, figureId, version);
  if (!v) throw notFound(`Version ${version} of this figure`);
  return {
    figureId,
    version: v.version,
    spec: v.spec,
    note: v.note,
    createdBy: v.createdBy,
    createdAt: v.createdAt.toISOString(),
    layers: await layerInfo(db, groupId, v.spec),
  };
}

export async function getDetail(ctx: Ctx, groupId: string, figureId: string): Promise<FigureDetail> {
  const f = await figureOr404(ctx.db, groupId, figureId);
  const [latest, versions] = await Promise.all([versionDetail(ctx.db, groupId, figureId, f.lastVersion), q.listFigureVersions(ctx.db, figureId)]);
  return {
    id: f.id,
    groupId: f.groupId,
    title: f.title,
    theme: latest.spec.theme,
    version: f.lastVersion,
    isPublic: f.isPublic,
    derivedFrom: f.derivedFrom,
    updatedAt: f.updatedAt.toISOString(),
    latest,
    versions: versions.map((v) => ({ ...v, createdAt: v.createdAt.toISOString() })),
  };
}

export async function getVersion(ctx: Ctx, groupId: string, figureId: string, version: number): Promise<FigureVersionDetail> {
  await figureOr404(ctx.db, groupId, figureId);
  return versionDetail(ctx.db, groupId, figureId, version);
}

export async function listPublic(ctx: Ctx, query: Required<Pick<PublicFigureListQuery, 'page' | 'pageSize'>> & PublicFigureListQuery): Promise<PublicFigurePage> {
  const rows = await q.listPublicFigures(ctx.db, query);
  return {
    items: rows.items.map((r) => ({ ...r, theme: r.theme as FigureTheme, updatedAt: r.updatedAt.toISOString() })),
    total: rows.total,
    page: query.page,
    pageSize: query.pageSize,
  };
}

/**
 * The composer's preview: each layer's data as the group may draw it (`available: false`
 * otherwise, revealing nothing), with its override hue, the group's hue for the result, or the
 * hue it would get when saved.
 */
export async function layerData(ctx: Ctx, groupId: string, layers: { resultId: string; version: number; hue: number | null }[]): Promise<{ layers: FigureLayerData[] }> {
  return { layers: await groupLayerData(ctx.db, groupId, layers) };
}

async function groupLayerData(db: Executor, groupId: string, layers: { resultId: string; version: number; hue: number | null }[]): Promise<FigureLayerData[]> {
  // One after the other: `db` may be a transaction's single connection.
  const rows = await q.getLayerVersions(db, layers);
  const hues = await q.listHues(db, groupId);
  const byPin = new Map(rows.map((r) => [pinKey(r.resultId, r.version), r]));
  const visible = layers.map((l) => {
    const row = byPin.get(pinKey(l.resultId, l.version));
    return layerVisible(row, groupId, 'group') ? row : null;
  });
  const allHues = withPreviewHues(hues, visible.flatMap((r) => (r ? [r.resultId] : [])));
  return layers.map((l, i): FigureLayerData => {
    const row = visible[i];
    if (!row) return { available: false, resultId: l.resultId, version: l.version };
    const hue = l.hue ?? allHues.get(l.resultId) ?? i % HUE_COUNT;
    return { available: true, resultId: row.resultId, version: row.version, title: row.title, meta: metaOf(row), curve: row.curve, theory: row.theory ?? null, hue };
  });
}

/** The error for labels whose typeset box no text could have (a saved figure's field, or a stored one's at render time). */
function oversizeError(status: 400 | 422, found: OversizeLabel[]): AppError {
  const details = found.map((o) => ({ field: o.field, message: o.message }));
  const first = found[0]!;
  return status === 400
    ? new AppError(400, 'validation_failed', `${first.field}: ${first.message}`, details)
    : new AppError(422, 'label_too_large', `This figure cannot be drawn: ${first.message} (${first.field}). Edit the figure and save it again.`, details);
}

/**
 * 400 naming every label of the spec (as the group will draw it: its data, house style and page)
 * whose typeset box is larger than any text could make it; see `oversizeCheck` in the shared
 * scene builder. Such a label would push the plot off the page, so it is refused on saving.
 */
async function assertLabelsFit(db: Executor, groupId: string, spec: FigureSpec) {
  const data = await groupLayerData(db, groupId, spec.layers);
  const style = await q.getGroupStyle(db, groupId);
  const found = oversizeLabelsOf(spec, data, style?.style ?? null);
  if (found.length) throw oversizeError(400, found);
}

// ---------------------------------------------------------------------------------------------
// Writes

/** A new figure with `spec` as version 1 (in the caller's transaction). */
async function insertNewFigure(tx: Executor, groupId: string, actor: Actor, spec: FigureSpec, opts: { isPublic: boolean; derivedFrom: string | null; note: string }) {
  await assertLayersUsable(tx, groupId, spec);
  await assertLabelsFit(tx, groupId, spec);
  const f = await q.insertFigure(tx, { groupId, title: spec.title, isPublic: opts.isPublic, derivedFrom: opts.derivedFrom, createdBy: actor.id });
  const version = await q.takeNextFigureVersion(tx, f.id, spec.title);
  await q.insertFigureVersion(tx, { figureId: f.id, version, spec, note: opts.note, createdBy: actor.id });
  await assignHues(tx, groupId, spec);
  return f.id;
}

export async function createFigure(ctx: Ctx, groupId: string, actor: Actor, input: { spec: FigureSpec; public: boolean }): Promise<FigureDetail> {
  const id = await ctx.db.transaction((tx) => insertNewFigure(tx, groupId, actor, input.spec, { isPublic: input.public, derivedFrom: null, note: '' }));
  return getDetail(ctx, groupId, id);
}

/**
 * Saves `spec` as the figure's next version. Renders of older versions are dropped (they are
 * re-made on request) so that a figure's storage is what its current version needs.
 */
export async function saveFigure(ctx: Ctx, groupId: string, actor: Actor, figureId: string, input: { spec: FigureSpec; note: string }): Promise<FigureDetail> {
  // Lock order: the figure (no key update), the pinned results (key share, by the layer rows),
  // the figure's cached renders.
  await ctx.db.transaction(async (tx) => {
    if (!(await q.lockFigure(tx, groupId, figureId))) throw notFound('Figure');
    await assertLayersUsable(tx, groupId, input.spec);
    await assertLabelsFit(tx, groupId, input.spec);
    const version = await q.takeNextFigureVersion(tx, figureId, input.spec.title);
    await q.insertFigureVersion(tx, { figureId, version, spec: input.spec, note: input.note, createdBy: actor.id });
    await assignHues(tx, groupId, input.spec);
    // Older versions' renders go (they are re-made if asked for); renders are not stored bytes of
    // the group, so its storage does not change.
    await q.deleteStaleRenders(tx, figureId, { keepVersion: version });
  });
  return getDetail(ctx, groupId, figureId);
}

export async function setVisibility(ctx: Ctx, groupId: string, figureId: string, isPublic: boolean): Promise<FigureDetail> {
  await figureOr404(ctx.db, groupId, figureId);
  await q.setFigurePublic(ctx.db, groupId, figureId, isPublic);
  return getDetail(ctx, groupId, figureId);
}

/**
 * Deletes a figure with its versions and cached renders (renders are not the group's stored
 * bytes, so its storage does not change). A render being cached meanwhile either committed first
 * (its row goes with the figure) or finds the figure gone and is served uncached.
 */
export async function deleteFigure(ctx: Ctx, groupId: string, figureId: string): Promise<void> {
  await ctx.db.transaction(async (tx) => {
    if (!(await q.lockFigure(tx, groupId, figureId, 'update'))) throw notFound('Figure');
    await q.deleteFigure(tx, groupId, figureId);
  });
}

const clip = (s: string, max = 200) => (s.length > max ? `${s.slice(0, max - 1)}…` : s);

async function latestSpec(db: Executor, groupId: string, figureId: string) {
  const f = await figureOr404(db, groupId, figureId);
  const v = await q.getFigureVersion(db, figureId, f.lastVersion);
  if (!v) throw notFound('Figure');
  return { figure: f, spec: v.spec };
}

export async function duplicateFigure(ctx: Ctx, groupId: string, actor: Actor, figureId: string, input: { title?: string }): Promise<FigureDetail> {
  const id = await ctx.db.transaction(async (tx) => {
    const { spec } = await latestSpec(tx, groupId, figureId);
    const copy: FigureSpec = { ...spec, title: input.title ?? clip(`Copy of ${spec.title}`) };
    return insertNewFigure(tx, groupId, actor, copy, { isPublic: false, derivedFrom: figureId, note: `Copied from "${spec.title}"` });
  });
  return getDetail(ctx, groupId, id);
}

/**
 * The plain-language version of a spec for the public: the outreach theme (plain words, big
 * type) at slide or web size; axis titles left to the theme's plain wording; TeX taken out of
 * legend entries and notes; one expected band (±1σ, on the bands layer only); no confidence-level
 * jargon; the excluded region shaded; the energy label kept.
 */
export function outreachSpec(spec: FigureSpec, size: 'web' | 'slide', title?: string): FigureSpec {
  const bandsLayer = spec.layers.length ? (spec.bandsLayer ?? 0) : null;
  return {
    ...spec,
    title: title ?? clip(`${spec.title} (for the public)`),
    theme: 'outreach',
    size: { preset: size },
    x: { ...spec.x, label: '' },
    y: { ...spec.y, label: '' },
    layers: spec.layers.map((l, i) => ({
      ...l,
      label: clip(labelPlainText(l.label)),
      show: { ...l.show, band1: i === bandsLayer, band2: false, crossings: false },
    })),
    bandsLayer,
    legend: { position: 'auto', columns: 1 },
    annotations: spec.annotations.map((a) => ({ ...a, text: clip(labelPlainText(a.text)) })).filter((a) => a.text.length > 0),
    energyLabel: true,
    clLabel: false,
    excludedShading: true,
  };
}

export async function outreachFigure(ctx: Ctx, groupId: string, actor: Actor, figureId: string, input: { size: 'web' | 'slide'; title?: string }): Promise<FigureDetail> {
  const id = await ctx.db.transaction(async (tx) => {
    const { spec } = await latestSpec(tx, groupId, figureId);
    return insertNewFigure(tx, groupId, actor, outreachSpec(spec, input.size, input.title), {
      isPublic: false,
      derivedFrom: figureId,
      note: `Plain-language version of "${spec.title}"`,
    });
  });
  return getDetail(ctx, groupId, id);
}

// ---------------------------------------------------------------------------------------------
// House style and hues

export async function getStyle(ctx: Ctx, groupId: string): Promise<GroupStyleView> {
  const s = await q.getGroupStyle(ctx.db, groupId);
  return { style: s?.style ?? {}, updatedAt: s?.updatedAt.toISOString() ?? null };
}

export async function putStyle(ctx: Ctx, groupId: string, style: HouseStyle): Promise<GroupStyleView> {
  await q.putGroupStyle(ctx.db, groupId, style);
  return getStyle(ctx, groupId);
}

/** Sets the hue of a result the group may use (its own, or a public one) in all of the group's figures. */
export async function setResultHue(ctx: Ctx, groupId: string, resultId: string, hue: number): Promise<ResultHueView> {
  const own = await getResultInGroup(ctx.db, groupId, resultId);
  if (!own) {
    const latest = await q.latestPublishedVersions(ctx.db, groupId, [resultId]);
    if (!latest.has(resultId)) throw notFound('Result');
  }
  await q.setHue(ctx.db, groupId, resultId, hue);
  return { resultId, hue };
}

// ---------------------------------------------------------------------------------------------
// Rendering

/** Bumped when the renderers change what they draw, so cached renders of the old look are not served. */
const RENDER_REVISION = 'r3';
/** PNG resolutions whose renders are kept (the ones offered to the public); others are made on request and not stored. */
const CACHED_DPIS = new Set<number>(OFFERED_DPIS);

export type RenderRequest = { format: RenderFormat; version?: number; size?: keyof typeof SIZE_PRESETS; dpi: number };
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
type RenderInputs = NonNullable<Awaited<ReturnType<typeof q.getRenderInputs>>>;

/**
 * The figure as this caller may see it, with everything its render depends on and the cache
 * key: members of its group see it as the group does; anyone else only a public figure, as the
 * public does; 404 otherwise (a private figure's existence is not revealed). One query, without
 * the curves (a cache hit needs nothing more).
 */
async function prepare(ctx: Ctx, figureId: string, userId: string | null, publicOnly: boolean, req: Pick<RenderRequest, 'version' | 'size'> & { format: string }): Promise<Prepared> {
  const inputs = await q.getRenderInputs(ctx.db, figureId, req.version ?? null, publicOnly ? null : userId, req.format);
  if (!inputs) throw notFound('Figure');
  const audience: Audience | null = inputs.role ? 'group' : inputs.figure.isPublic ? 'public' : null;
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
  const rows = new Map((await q.getLayerVersions(ctx.db, pins)).map((r) => [pinKey(r.resultId, r.version), r]));
  return p.spec.layers.map((l, i) => {
    const row = rows.get(pinKey(l.resultId, l.version));
    const drawn = p.layers[i];
    if (!drawn || !layerVisible(row, p.figure.groupId, p.audience)) return { available: false, resultId: l.resultId, version: l.version };
    return { available: true, resultId: row.resultId, version: row.version, title: row.title, meta: metaOf(row), curve: row.curve, theory: row.theory ?? null, hue: drawn.hue };
  });
}

/**
 * Bodies of recently served renders by row id, so a hit does not move the bytes out of
 * PostgreSQL each time. A row's body never changes, and the row is looked up (and so known to
 * exist and to match the key) before its body is taken from here. Bounded by bytes.
 */
const HOT_BYTES = 64 * 1024 * 1024;
const hot = new Map<string, Buffer>();
let hotBytes = 0;
function remember(id: string, body: Buffer) {
  if (body.length > HOT_BYTES / 8 || hot.has(id)) return;
  hot.set(id, body);
  hotBytes += body.length;
  for (const [oldId, b] of hot) {
    if (hotBytes <= HOT_BYTES) break;
    hot.delete(oldId);
    hotBytes -= b.length;
  }
}
function recall(id: string): Buffer | undefined {
  const b = hot.get(id);
  if (b) {
    // Most recently used last, so eviction takes the coldest first.
    hot.delete(id);
    hot.set(id, b);
  }
  return b;
}

function safeFileName(title: string, version: number, ext: string): string {
  const base = title
    .normalize('NFKD')
    .replace(/[^\w\s-]/g, '')
    .trim()
    .replace(/\s+/g, '-')
    .toLowerCase()
    .slice(0, 80);
  return `${base || 'figure'}-v${version}.${ext}`;
}

/** Builds the scene and writes the format (no cache involved). */
async function renderPrepared(ctx: Ctx, p: Prepared, format: RenderFormat, dpi: number): Promise<{ body: Buffer; notes: string[] }> {
  const built = buildFigure(p.spec, await loadData(ctx, p), p.style);
  const { scene, glyphs } = built;
  // Saving refuses such labels; a figure stored before that check, or drawn at another size or
  // in a changed house style, is refused here, before any renderer sees it.
  if (scene.oversizeLabels.length) throw oversizeError(422, scene.oversizeLabels);
  const svg = reuseGlyphs(built.svg);
  if (format === 'svg') return { body: Buffer.from(svg, 'utf8'), notes: scene.notes };
  // PNG and PDF are drawn in a renderer process: a native crash there ends that process, not the
  // server, and this request gets a 500 naming the render (nothing is stored for it).
  try {
    const body = format === 'png' ? await ctx.renderer.png(svg, scene.widthPt, dpi) : await ctx.renderer.pdf(svg, scene, glyphs, { title: p.spec.title, subject: scene.notes.join(' '), created: p.createdAt });
    return { body, notes: scene.notes };
  } catch (e) {
    if (!(e instanceof RenderFailed)) throw e;
    const what = `The ${format.toUpperCase()} render of figure “${clip(p.spec.title, 80)}” (version ${p.version}${format === 'png' ? `, ${dpi} dpi` : ''})`;
    throw new AppError(500, 'render_failed', `${what} failed: ${e.message}. The figure itself is unchanged; other formats and sizes may still work.`);
  }
}

/**
 * Stores a fresh render in the group's render cache. Renders are not the group's stored bytes:
 * they never count toward its quota (anonymous visitors may ask for public figures, and what
 * they cause must not decide what members can upload), and the cache is bounded by the plan's
 * `renderCache` instead: beyond its count, bytes or age the least recently used renders are
 * dropped, in the same transaction (one group's cache writes at a time, `lockRenderCache`). A
 * render of the same version, format, size and audience drawn from older data is dropped too (it
 * can no longer be asked for). A render larger than the whole cache is served and not kept.
 */
async function cacheRender(ctx: Ctx, key: q.RenderKey, groupId: string, out: { body: Buffer; contentType: string; notes: string[] }): Promise<'miss' | 'uncached'> {
  try {
    return await ctx.db.transaction(async (tx) => {
      const limits = await renderCacheLimits(tx, groupId);
      if (out.body.length > limits.maxBytes) return 'uncached';
      await q.lockRenderCache(tx, groupId);
      await q.deleteStaleRenders(tx, key.figureId, { staleFor: key });
      const inserted = await q.insertRender(tx, { ...key, ...out });
      await q.evictRenders(tx, groupId, limits);
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
  const fileName = safeFileName(p.spec.title, p.version, req.format);
  const cacheable = req.format !== 'png' || CACHED_DPIS.has(req.dpi);
  const key: q.RenderKey = {
    figureId: p.figure.id,
    figureVersion: p.version,
    format: req.format,
    sizeKey: req.format === 'png' ? `${p.sizeKey}@${req.dpi}dpi` : p.sizeKey,
    dataKey: p.dataKey,
    variant: p.audience,
  };
  const etag = `"${createHash('sha1').update(JSON.stringify([key, req.dpi])).digest('base64url').slice(0, 22)}"`;
  if (cacheable) {
    const hit = p.renders.find((r) => r.sizeKey === key.sizeKey && r.dataKey === key.dataKey && r.variant === key.variant);
    const body = hit && (recall(hit.id) ?? (await q.getRenderBody(ctx.db, hit.id)));
    if (hit && body) {
      remember(hit.id, body);
      if (Date.now() - hit.lastUsedAtMs > 60_000) await q.touchRender(ctx.db, hit.id);
      return { body, contentType, fileName, cache: 'hit', notes: hit.notes, etag };
    }
  }
  // Identical requests that arrive while this one renders wait for it instead of rendering again.
  const flightKey = `${etag}|${p.figure.groupId}`;
  let flight = inFlight.get(flightKey);
  if (!flight) {
    flight = (async () => {
      const out = await renderPrepared(ctx, p, req.format, req.dpi);
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
  if (kind === 'csv') return { fileName: safeFileName(p.spec.title, p.version, 'csv'), contentType: 'text/csv; charset=utf-8', body: csvOf(p.spec, data), notes };
  return { fileName: safeFileName(p.spec.title, p.version, 'txt'), contentType: 'text/plain; charset=utf-8', body: captionOf(p.spec, data), notes };
}

function hiddenNote(data: FigureLayerData[]): string[] {
  const n = data.filter((d) => !d.available).length;
  return [n === 1 ? '1 layer is left out: you may not see its result' : `${n} layers are left out: you may not see their results`];
}
