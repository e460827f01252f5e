import { and, eq, inArray, lt, ne, sql, type SQL } from 'drizzle-orm';
import type { FigureSpec, HouseStyle } from '../../shared/schemas/figures';
import type { Db, Executor } from '../client';
import { figureRenders, figures } from '../schema';
import { memberRoleJoinSql } from './visibility';

/**
 * Data access of figure renders: what a render's cache key depends on (one prepared statement),
 * and the render cache rows (bodies, use times, stale renders). Scoped by the figure's group
 * wherever a request reaches them. The cache's lock and eviction (its limits) are storage
 * accounting's, in db/queries/storage.ts.
 */

// ---------------------------------------------------------------------------------------------
// Render inputs

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
  ${memberRoleJoinSql('m', 'f.group_id', '$3')}
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


// ---------------------------------------------------------------------------------------------
// Cached renders

export type RenderKey = { figureId: string; figureVersion: number; format: string; sizeKey: string; dataKey: string; variant: string };

/** A cached render's bytes (the service keeps hot bodies in memory by id). */
export async function getRenderBody(db: Executor, figureId: string, id: string): Promise<Buffer | undefined> {
  const rows = await db.select({ body: figureRenders.body }).from(figureRenders).where(and(eq(figureRenders.id, id), eq(figureRenders.figureId, figureId)));
  return rows[0]?.body;
}

/** Marks a render used, at most once a minute (a hit should not cost a write every time). */
export async function touchRender(db: Executor, figureId: string, id: string) {
  await db
    .update(figureRenders)
    .set({ lastUsedAt: sql`now()` })
    .where(and(eq(figureRenders.id, id), eq(figureRenders.figureId, figureId), lt(figureRenders.lastUsedAt, sql`now() - interval '1 minute'`)));
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
 * Deletes renders of the group's figure that can no longer be asked for: the same version,
 * format, size and audience drawn from other data (`staleFor`), or of every version but
 * `keepVersion`. Returns the bytes freed.
 */
export async function deleteStaleRenders(db: Executor, groupId: string, figureId: string, opts: { staleFor?: RenderKey; keepVersion?: number }): Promise<number> {
  const conditions: (SQL | undefined)[] = [
    eq(figureRenders.figureId, figureId),
    inArray(figureRenders.figureId, db.select({ id: figures.id }).from(figures).where(and(eq(figures.id, figureId), eq(figures.groupId, groupId)))),
  ];
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

