import type { FigureLayerData } from '../../shared/figure/types';
import { clipText, outreachSpec } from '../../shared/figure/outreach';
import type {
  FigureDetail,
  FigureLayerInfo,
  FigureSummary,
  FigureVersionDetail,
  GroupStyleView,
  PublicFigureDetail,
  PublicFigureListQuery,
  PublicFigurePage,
  ResultHueView,
} from '../../shared/schemas/figure-views';
import type { FigureSpec, FigureTheme, HouseStyle } from '../../shared/schemas/figures';
import * as q from '../../db/queries/figures';
import { getResultInGroup } from '../../db/queries/results';
import type { Ctx } from '../context';
import type { Executor } from '../../db/client';
import { oversizeLabelsOf } from '../figures/scene';
import { notFound } from '../lib/errors';
import { dropOlderRenders, exportFigure } from './figure-renders';
import { assertLayersUsable, assignHues, groupLayerData, hueOf, layerRows, layerVisible, oversizeError, pinKey } from './figure-layers';

/**
 * Figures: versioned specs owned by a group, whose layers pin result versions (checked against
 * the one visibility rule), the composer's layer data, result hues and the house style. Renders
 * and exports of figures are in figure-renders.ts.
 */

export type Actor = { id: string };
export { HUE_COUNT } from './figure-layers';

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
    layerRows(db, groupId, spec),
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
  const v = await q.getFigureVersion(db, groupId, figureId, version);
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
  const [latest, versions] = await Promise.all([versionDetail(ctx.db, groupId, figureId, f.lastVersion), q.listFigureVersions(ctx.db, groupId, figureId)]);
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
 * A public figure's own page (`/f/<id>`): title, group, caption (as the public's caption.txt),
 * and the result versions its layers pin that the public may see, with their permanent links;
 * 404 for a figure that is not public, as for an unknown one.
 */
export async function getPublicDetail(ctx: Ctx, figureId: string): Promise<PublicFigureDetail> {
  const f = await q.getPublicFigure(ctx.db, figureId);
  if (!f) throw notFound('Figure');
  const v = await q.getFigureVersion(ctx.db, f.groupId, figureId, f.lastVersion);
  if (!v) throw notFound('Figure');
  const caption = await exportFigure(ctx, figureId, null, 'caption', f.lastVersion);
  const rows = await q.getLayerVersions(ctx.db, { kind: 'public' }, v.spec.layers.map((l) => ({ resultId: l.resultId, version: l.version })));
  const byPin = new Map(rows.map((r) => [pinKey(r.resultId, r.version), r]));
  const pins: PublicFigureDetail['pins'] = [];
  const seen = new Set<string>();
  let hiddenLayers = 0;
  for (const l of v.spec.layers) {
    const row = byPin.get(pinKey(l.resultId, l.version));
    if (!layerVisible(row, f.groupId, 'public')) {
      hiddenLayers++;
      continue;
    }
    if (seen.has(pinKey(row.resultId, row.version))) continue;
    seen.add(pinKey(row.resultId, row.version));
    pins.push({ slug: row.slug, version: row.version, title: row.title, state: row.state, permalink: `${ctx.env.PUBLIC_URL}/r/${row.slug}/v${row.version}` });
  }
  return {
    id: f.id,
    title: v.spec.title,
    theme: v.spec.theme,
    groupName: f.groupName,
    version: f.lastVersion,
    savedAt: v.createdAt.toISOString(),
    permalink: `${ctx.env.PUBLIC_URL}/f/${f.id}`,
    caption: caption.body,
    pins,
    hiddenLayers,
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
  const version = await q.takeNextFigureVersion(tx, groupId, f.id, spec.title);
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
    const version = await q.takeNextFigureVersion(tx, groupId, figureId, input.spec.title);
    await q.insertFigureVersion(tx, { figureId, version, spec: input.spec, note: input.note, createdBy: actor.id });
    await assignHues(tx, groupId, input.spec);
    // Older versions' renders go (they are re-made if asked for); renders are not stored bytes of
    // the group, so its storage does not change.
    await dropOlderRenders(tx, groupId, figureId, version);
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

async function latestSpec(db: Executor, groupId: string, figureId: string) {
  const f = await figureOr404(db, groupId, figureId);
  const v = await q.getFigureVersion(db, groupId, figureId, f.lastVersion);
  if (!v) throw notFound('Figure');
  return { figure: f, spec: v.spec };
}

export async function duplicateFigure(ctx: Ctx, groupId: string, actor: Actor, figureId: string, input: { title?: string }): Promise<FigureDetail> {
  const id = await ctx.db.transaction(async (tx) => {
    const { spec } = await latestSpec(tx, groupId, figureId);
    const copy: FigureSpec = { ...spec, title: input.title ?? clipText(`Copy of ${spec.title}`) };
    return insertNewFigure(tx, groupId, actor, copy, { isPublic: false, derivedFrom: figureId, note: `Copied from "${spec.title}"` });
  });
  return getDetail(ctx, groupId, id);
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
