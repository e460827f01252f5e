import { and, asc, count, desc, eq, ilike, inArray, or, sql, type SQL } from 'drizzle-orm';
import type { FigureSpec, HouseStyle } from '../../shared/schemas/figures';
import type { Executor } from '../client';
import { figureLayers, figures, figureVersions, groups, groupStyles, resultHues, results, resultVersions, user } from '../schema';
import { containsPattern } from './results';
import { versionVisibleSql, type Viewer } from './visibility';

/**
 * Data access of figures. Everything is scoped by the group whose membership the route checked,
 * except `findFigure` (the render routes resolve a figure's group from its id, then check it) and
 * the public list (public figures only).
 */

// ---------------------------------------------------------------------------------------------
// Figures and versions

export type FigureRow = typeof figures.$inferSelect;

export async function insertFigure(db: Executor, f: { groupId: string; title: string; isPublic: boolean; derivedFrom: string | null; createdBy: string | null }) {
  const [row] = await db.insert(figures).values({ ...f, lastVersion: 0 }).returning();
  return row!;
}

/**
 * The figure in the group, locked for the rest of the transaction (version numbers are given out
 * under it). `no key update`: a concurrent render may still insert its cache row (which only
 * key-shares the figure); `update` is for deleting it.
 */
export async function lockFigure(db: Executor, groupId: string, figureId: string, mode: 'no key update' | 'update' = 'no key update'): Promise<FigureRow | undefined> {
  const rows = await db
    .select()
    .from(figures)
    .where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)))
    .for(mode);
  return rows[0];
}

/** Gives out the next version number of a locked figure and renames it to the new spec's title. */
export async function takeNextFigureVersion(db: Executor, groupId: string, figureId: string, title: string): Promise<number> {
  const [row] = await db
    .update(figures)
    .set({ lastVersion: sql`${figures.lastVersion} + 1`, title, updatedAt: sql`now()` })
    .where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)))
    .returning({ n: figures.lastVersion });
  if (!row) throw new Error(`figure ${figureId} vanished while locked`);
  return row.n;
}

export async function insertFigureVersion(
  db: Executor,
  v: { figureId: string; version: number; spec: FigureSpec; note: string; createdBy: string | null },
) {
  await db.insert(figureVersions).values(v);
  if (v.spec.layers.length) {
    await db.insert(figureLayers).values(
      v.spec.layers.map((l, position) => ({ figureId: v.figureId, figureVersion: v.version, position, resultId: l.resultId, resultVersion: l.version })),
    );
  }
}

export async function getFigureInGroup(db: Executor, groupId: string, figureId: string): Promise<FigureRow | undefined> {
  const rows = await db
    .select()
    .from(figures)
    .where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)));
  return rows[0];
}

const latestTheme = sql<string>`(select ${figureVersions.spec}->>'theme' from ${figureVersions} where ${figureVersions.figureId} = ${figures.id} and ${figureVersions.version} = ${figures.lastVersion})`;

/** The group's figures, most recently changed first, with their latest version's theme. */
export async function listFigures(db: Executor, groupId: string) {
  return db
    .select({
      id: figures.id,
      groupId: figures.groupId,
      title: figures.title,
      theme: latestTheme,
      version: figures.lastVersion,
      isPublic: figures.isPublic,
      derivedFrom: figures.derivedFrom,
      updatedAt: figures.updatedAt,
    })
    .from(figures)
    .where(eq(figures.groupId, groupId))
    .orderBy(desc(figures.updatedAt), asc(figures.id));
}

/** One version of a figure (the figure's group was checked by the caller), with its author's name. */
/** The figure `figureId` if it belongs to `groupId`: the scope of every read of its versions. */
const figureOfGroup = (db: Executor, groupId: string, figureId: string) =>
  db.select({ id: figures.id }).from(figures).where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)));

export async function getFigureVersion(db: Executor, groupId: string, figureId: string, version: number) {
  const rows = await db
    .select({
      version: figureVersions.version,
      spec: figureVersions.spec,
      note: figureVersions.note,
      createdBy: user.name,
      createdAt: figureVersions.createdAt,
    })
    .from(figureVersions)
    .leftJoin(user, eq(user.id, figureVersions.createdBy))
    .where(and(inArray(figureVersions.figureId, figureOfGroup(db, groupId, figureId)), eq(figureVersions.version, version)));
  return rows[0];
}

export async function listFigureVersions(db: Executor, groupId: string, figureId: string) {
  return db
    .select({ version: figureVersions.version, note: figureVersions.note, createdBy: user.name, createdAt: figureVersions.createdAt })
    .from(figureVersions)
    .leftJoin(user, eq(user.id, figureVersions.createdBy))
    .where(inArray(figureVersions.figureId, figureOfGroup(db, groupId, figureId)))
    .orderBy(desc(figureVersions.version));
}

export async function setFigurePublic(db: Executor, groupId: string, figureId: string, isPublic: boolean) {
  await db
    .update(figures)
    .set({ isPublic, updatedAt: sql`now()` })
    .where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)));
}

export async function deleteFigure(db: Executor, groupId: string, figureId: string) {
  await db.delete(figures).where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)));
}


/** A public figure with its group's name (any group: public figures are for everyone), or undefined. */
export async function getPublicFigure(db: Executor, figureId: string) {
  const rows = await db
    .select({ id: figures.id, groupId: figures.groupId, groupName: groups.name, title: figures.title, lastVersion: figures.lastVersion, updatedAt: figures.updatedAt })
    .from(figures)
    .innerJoin(groups, eq(groups.id, figures.groupId))
    .where(and(eq(figures.id, figureId), eq(figures.isPublic, true)));
  return rows[0];
}

/** Public figures of every group, most recently changed first, paged. */
export async function listPublicFigures(db: Executor, f: { q?: string; theme?: string; page: number; pageSize: number }) {
  const conditions: (SQL | undefined)[] = [eq(figures.isPublic, true)];
  if (f.q) {
    const p = containsPattern(f.q);
    conditions.push(or(ilike(figures.title, p), ilike(groups.name, p)));
  }
  if (f.theme) conditions.push(sql`${latestTheme} = ${f.theme}`);
  const where = and(...conditions);
  const items = await db
    .select({ id: figures.id, title: figures.title, theme: latestTheme, groupName: groups.name, version: figures.lastVersion, updatedAt: figures.updatedAt })
    .from(figures)
    .innerJoin(groups, eq(groups.id, figures.groupId))
    .where(where)
    .orderBy(desc(figures.updatedAt), asc(figures.id))
    .limit(f.pageSize)
    .offset((f.page - 1) * f.pageSize);
  const [total] = await db.select({ n: count() }).from(figures).innerJoin(groups, eq(groups.id, figures.groupId)).where(where);
  return { items, total: total?.n ?? 0 };
}

// ---------------------------------------------------------------------------------------------
// The result versions layers pin

const pinMatch = (pins: { resultId: string; version: number }[]) =>
  or(...pins.map((p) => and(eq(resultVersions.resultId, p.resultId), eq(resultVersions.version, p.version))));

export type LayerVersionRow = Awaited<ReturnType<typeof getLayerVersions>>[number];

/**
 * The result versions `pins` name that `viewer` may see, with their owner and visibility (the
 * services check the rows again with `versionVisibleTo` of db/queries/visibility.ts).
 */
export async function getLayerVersions(db: Executor, viewer: Viewer, pins: { resultId: string; version: number }[]) {
  if (!pins.length) return [];
  return db
    .select({
      resultId: resultVersions.resultId,
      version: resultVersions.version,
      groupId: results.groupId,
      groupName: groups.name,
      isPublic: results.isPublic,
      slug: results.slug,
      state: resultVersions.state,
      updatedAt: resultVersions.updatedAt,
      title: resultVersions.title,
      model: resultVersions.model,
      parameterName: resultVersions.parameterName,
      parameterUnit: resultVersions.parameterUnit,
      quantity: resultVersions.quantity,
      quantityUnit: resultVersions.quantityUnit,
      sqrtS: resultVersions.sqrtS,
      luminosity: resultVersions.luminosity,
      cl: resultVersions.cl,
      method: resultVersions.method,
      reference: resultVersions.reference,
      notes: resultVersions.notes,
      curve: resultVersions.curve,
      theory: resultVersions.theory,
      envelope: resultVersions.envelope,
      plane: resultVersions.plane,
      planeContours: resultVersions.planeContours,
    })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .innerJoin(groups, eq(groups.id, results.groupId))
    .where(and(pinMatch(pins), versionVisibleSql(viewer)));
}

/**
 * Per result: the newest published version `groupId` may use (the `pinning` reader of
 * db/queries/visibility.ts: its own results, or other groups' public ones).
 */
export async function latestPublishedVersions(db: Executor, groupId: string, resultIds: string[]): Promise<Map<string, number>> {
  if (!resultIds.length) return new Map();
  const rows = await db
    .select({ resultId: resultVersions.resultId, version: sql<number>`max(${resultVersions.version})`.mapWith(Number) })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(and(inArray(resultVersions.resultId, resultIds), eq(resultVersions.state, 'published'), versionVisibleSql({ kind: 'pinning', groupId })))
    .groupBy(resultVersions.resultId);
  return new Map(rows.map((r) => [r.resultId, r.version]));
}

// ---------------------------------------------------------------------------------------------
// Hues and house styles

export async function listHues(db: Executor, groupId: string): Promise<Map<string, number>> {
  const rows = await db.select({ resultId: resultHues.resultId, hue: resultHues.hue }).from(resultHues).where(eq(resultHues.groupId, groupId));
  return new Map(rows.map((r) => [r.resultId, r.hue]));
}

/** Inserts a hue for a result that has none yet (a concurrent insert wins; the caller re-reads). */
export async function insertHue(db: Executor, groupId: string, resultId: string, hue: number) {
  await db.insert(resultHues).values({ groupId, resultId, hue }).onConflictDoNothing();
}

export async function setHue(db: Executor, groupId: string, resultId: string, hue: number) {
  await db
    .insert(resultHues)
    .values({ groupId, resultId, hue })
    .onConflictDoUpdate({ target: [resultHues.groupId, resultHues.resultId], set: { hue } });
}

export async function getGroupStyle(db: Executor, groupId: string) {
  const rows = await db.select({ style: groupStyles.style, updatedAt: groupStyles.updatedAt }).from(groupStyles).where(eq(groupStyles.groupId, groupId));
  return rows[0];
}

export async function putGroupStyle(db: Executor, groupId: string, style: HouseStyle) {
  await db
    .insert(groupStyles)
    .values({ groupId, style })
    .onConflictDoUpdate({ target: groupStyles.groupId, set: { style, updatedAt: sql`now()` } });
}
