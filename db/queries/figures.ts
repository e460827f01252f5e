import { and, asc, count, desc, eq, ilike, inArray, lt, ne, or, sql, type SQL } from 'drizzle-orm';
import type { FigureSpec, HouseStyle } from '../../shared/schemas/figures';
import type { Db, Executor } from '../client';
import { figureLayers, figureRenders, figures, figureVersions, groups, groupStyles, resultHues, results, resultVersions, user } from '../schema';
import { containsPattern } from './results';

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
export async function takeNextFigureVersion(db: Executor, figureId: string, title: string): Promise<number> {
  const [row] = await db
    .update(figures)
    .set({ lastVersion: sql`${figures.lastVersion} + 1`, title, updatedAt: sql`now()` })
    .where(eq(figures.id, figureId))
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

/** Everything a render's cache key depends on, for one figure version, one caller and one format. */
export type RenderInputs = {
  figure: { id: string; groupId: string; isPublic: boolean; lastVersion: number };
  /** The caller's role in the figure's group (null: not a member, or nobody signed in). */
  role: string | null;
  /** Null when the version does not exist. */
  version: { version: number; spec: FigureSpec; createdAt: Date } | null;
  layers: { position: number; resultId: string; version: number; groupId: string | null; isPublic: boolean | null; state: string | null; updatedAtMs: number | null }[];
  hues: Record<string, number>;
  style: HouseStyle | null;
  /** The cached renders of this version in this format (any size, data or audience; few, as stale ones are dropped). */
  renders: { id: string; sizeKey: string; dataKey: string; variant: string; notes: string[]; lastUsedAtMs: number }[];
};

const RENDER_INPUTS_SQL = `
  select f.id, f.group_id, f.is_public, f.last_version, m.role, v.version, v.spec, v.created_at,
    (select coalesce(json_agg(json_build_object(
        'position', fl.position, 'resultId', fl.result_id, 'version', fl.result_version,
        'groupId', r.group_id, 'isPublic', r.is_public, 'state', rv.state,
        'updatedAtMs', floor(extract(epoch from rv.updated_at) * 1000)) order by fl.position), '[]'::json)
      from figure_layers fl
      left join result_versions rv on rv.result_id = fl.result_id and rv.version = fl.result_version
      left join results r on r.id = rv.result_id
      where fl.figure_id = f.id and fl.figure_version = v.version) as layers,
    (select coalesce(json_object_agg(h.result_id, h.hue), '{}'::json) from result_hues h
      where h.group_id = f.group_id
        and h.result_id in (select fl.result_id from figure_layers fl where fl.figure_id = f.id and fl.figure_version = v.version)) as hues,
    (select s.style from group_styles s where s.group_id = f.group_id) as style,
    (select coalesce(json_agg(json_build_object(
        'id', fr.id, 'sizeKey', fr.size_key, 'dataKey', fr.data_key, 'variant', fr.variant, 'notes', fr.notes,
        'lastUsedAtMs', floor(extract(epoch from fr.last_used_at) * 1000))), '[]'::json)
      from figure_renders fr
      where fr.figure_id = f.id and fr.figure_version = v.version and fr.format = $4) as renders
  from figures f
  left join memberships m on m.group_id = f.group_id and m.user_id = $3
  left join figure_versions v on v.figure_id = f.id and v.version = coalesce($2::int, f.last_version)
  where f.id = $1`;

type RenderInputsRow = {
  id: string;
  group_id: string;
  is_public: boolean;
  last_version: number;
  role: string | null;
  version: number | null;
  spec: FigureSpec | null;
  created_at: Date | string | null;
  layers: RenderInputs['layers'];
  hues: Record<string, number>;
  style: HouseStyle | null;
  renders: RenderInputs['renders'];
};

/**
 * The figure, the caller's role, the version's spec, its layers' owners, states and change
 * times, the group's hues for them, its house style and the cached renders of that version in
 * that format: one prepared statement, so that serving a cached render costs one round trip.
 * `version` null = the latest.
 */
export async function getRenderInputs(db: Db, figureId: string, version: number | null, userId: string | null, format: string): Promise<RenderInputs | undefined> {
  const res = await db.$client.query<RenderInputsRow>({ name: 'bw_figure_render_inputs', text: RENDER_INPUTS_SQL, values: [figureId, version, userId ?? '', format] });
  const row = res.rows[0];
  if (!row) return undefined;
  return {
    figure: { id: row.id, groupId: row.group_id, isPublic: row.is_public, lastVersion: row.last_version },
    role: userId ? row.role : null,
    version: row.version !== null && row.spec ? { version: row.version, spec: row.spec, createdAt: new Date(row.created_at!) } : null,
    layers: row.layers,
    hues: row.hues,
    style: row.style,
    renders: row.renders,
  };
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
export async function getFigureVersion(db: Executor, figureId: string, version: number) {
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
    .where(and(eq(figureVersions.figureId, figureId), eq(figureVersions.version, version)));
  return rows[0];
}

export async function listFigureVersions(db: Executor, figureId: string) {
  return db
    .select({ version: figureVersions.version, note: figureVersions.note, createdBy: user.name, createdAt: figureVersions.createdAt })
    .from(figureVersions)
    .leftJoin(user, eq(user.id, figureVersions.createdBy))
    .where(eq(figureVersions.figureId, figureId))
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
 * The result versions `pins` name, with their owner and visibility: the service decides from
 * these columns what a viewer may draw (the rule is in `layerVisible`, server/services/figures.ts).
 */
export async function getLayerVersions(db: Executor, pins: { resultId: string; version: number }[]) {
  if (!pins.length) return [];
  return db
    .select({
      resultId: resultVersions.resultId,
      version: resultVersions.version,
      groupId: results.groupId,
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
    })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(pinMatch(pins));
}

/**
 * Per result: the newest published version `groupId` may use (its own results, or other groups'
 * public ones).
 */
export async function latestPublishedVersions(db: Executor, groupId: string, resultIds: string[]): Promise<Map<string, number>> {
  if (!resultIds.length) return new Map();
  const rows = await db
    .select({ resultId: resultVersions.resultId, version: sql<number>`max(${resultVersions.version})`.mapWith(Number) })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(and(inArray(resultVersions.resultId, resultIds), eq(resultVersions.state, 'published'), or(eq(results.groupId, groupId), eq(results.isPublic, true))))
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

// ---------------------------------------------------------------------------------------------
// Cached renders

export type RenderKey = { figureId: string; figureVersion: number; format: string; sizeKey: string; dataKey: string; variant: string };

/** A cached render's bytes (the service keeps hot bodies in memory by id). */
export async function getRenderBody(db: Executor, id: string): Promise<Buffer | undefined> {
  const rows = await db.select({ body: figureRenders.body }).from(figureRenders).where(eq(figureRenders.id, id));
  return rows[0]?.body;
}

/** Marks a render used, at most once a minute (a hit should not cost a write every time). */
export async function touchRender(db: Executor, id: string) {
  await db
    .update(figureRenders)
    .set({ lastUsedAt: sql`now()` })
    .where(and(eq(figureRenders.id, id), lt(figureRenders.lastUsedAt, sql`now() - interval '1 minute'`)));
}

/** Stores a render; its id, or undefined when an identical one was stored meanwhile (nothing was added then). */
export async function insertRender(db: Executor, k: RenderKey & { contentType: string; body: Buffer; notes: string[] }): Promise<string | undefined> {
  const rows = await db
    .insert(figureRenders)
    .values({ ...k, byteLength: k.body.length })
    .onConflictDoNothing()
    .returning({ id: figureRenders.id });
  return rows[0]?.id;
}

/**
 * Deletes renders of the figure that can no longer be asked for: the same version, format, size
 * and audience drawn from other data (`staleFor`), or of every version but `keepVersion`.
 * Returns the bytes freed.
 */
export async function deleteStaleRenders(db: Executor, figureId: string, opts: { staleFor?: RenderKey; keepVersion?: number }): Promise<number> {
  const conditions: (SQL | undefined)[] = [eq(figureRenders.figureId, figureId)];
  if (opts.staleFor) {
    const k = opts.staleFor;
    conditions.push(
      eq(figureRenders.figureVersion, k.figureVersion),
      eq(figureRenders.format, k.format),
      eq(figureRenders.sizeKey, k.sizeKey),
      eq(figureRenders.variant, k.variant),
      ne(figureRenders.dataKey, k.dataKey),
    );
  }
  if (opts.keepVersion !== undefined) conditions.push(ne(figureRenders.figureVersion, opts.keepVersion));
  const rows = await db.delete(figureRenders).where(and(...conditions)).returning({ bytes: figureRenders.byteLength });
  return rows.reduce((s, r) => s + r.bytes, 0);
}

/**
 * Serialises the group's render-cache writes for the rest of the transaction (a transaction-scoped
 * advisory lock, so that concurrent renders evict in turn instead of deadlocking on each other's
 * rows; it takes no row lock, so renders never queue behind uploads on the group row).
 */
export async function lockRenderCache(db: Executor, groupId: string) {
  await db.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`bw-render-cache:${groupId}`}, 0))`);
}

/**
 * Drops the group's cached renders beyond its plan's limits: those unused for `maxAgeDays`, and,
 * most recently used first, all after the `maxRenders`-th or once `maxBytes` are reached.
 * Returns the bytes freed.
 */
export async function evictRenders(db: Executor, groupId: string, limits: { maxRenders: number; maxBytes: number; maxAgeDays: number }): Promise<number> {
  const r = await db.execute<{ bytes: string }>(sql`
    with ranked as (
      select fr.id, fr.last_used_at,
        row_number() over w as n,
        sum(fr.byte_length) over w as running
      from ${figureRenders} fr join ${figures} f on f.id = fr.figure_id
      where f.group_id = ${groupId}
      window w as (order by fr.last_used_at desc, fr.created_at desc, fr.id)
    ),
    gone as (
      delete from ${figureRenders} where id in (
        select id from ranked
        where n > ${limits.maxRenders} or running > ${limits.maxBytes}
          or last_used_at < now() - make_interval(days => ${limits.maxAgeDays}))
      returning byte_length
    )
    select coalesce(sum(byte_length), 0) as bytes from gone`);
  return Number(r.rows[0]?.bytes ?? 0);
}
