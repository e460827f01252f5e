import { eq, sql } from 'drizzle-orm';
import type { Executor } from '../client';
import { figureRenders, figures, groups } from '../schema';

/**
 * Data access of storage accounting: the group's storage counter (`groups.storage_bytes`) under
 * its row lock, the stored bytes by kind summed from the rows themselves, and the render cache's
 * lock and eviction. Only server/services/storage.ts imports this file (ESLint
 * `no-restricted-imports`), so every write that adds or frees bytes goes through its rules.
 *
 * The kinds the counter holds, each summed from its own rows' `stored_bytes`:
 * - uploads: `result_versions.stored_bytes` (a version's uploaded file plus its normalized JSON);
 * - scan inputs: `scans.stored_bytes` (the uploaded file plus the points as JSON).
 * Cached renders (`figure_renders.byte_length`) are reported beside them and are not counted.
 */

// ---------------------------------------------------------------------------------------------
// The counter

/**
 * Locks the group's row for the rest of the transaction and reads its storage counter. Concurrent
 * writers that check a quota queue here, so check-and-add cannot interleave. `FOR NO KEY UPDATE`
 * (the lock an UPDATE of storage_bytes takes anyway) rather than `FOR UPDATE`: inserts of rows
 * that reference the group take `FOR KEY SHARE` on it, which `FOR UPDATE` would wait for, and two
 * uploads that each inserted before locking would deadlock.
 */
export async function lockGroupStorage(db: Executor, groupId: string): Promise<{ storageBytes: number } | undefined> {
  const rows = await db.select({ storageBytes: groups.storageBytes }).from(groups).where(eq(groups.id, groupId)).for('no key update');
  return rows[0];
}

/** Adds (or, negative, subtracts) bytes to the group's storage use; it never goes below 0. */
export async function addStorage(db: Executor, groupId: string, bytes: number) {
  if (bytes === 0) return;
  await db
    .update(groups)
    .set({ storageBytes: sql`greatest(${groups.storageBytes} + ${bytes}, 0)` })
    .where(eq(groups.id, groupId));
}

export async function getStorage(db: Executor, groupId: string): Promise<number | undefined> {
  const rows = await db.select({ bytes: groups.storageBytes }).from(groups).where(eq(groups.id, groupId));
  return rows[0]?.bytes;
}

/**
 * Bytes per kind, summed from the stored rows themselves: the counter must equal uploads plus
 * scan inputs; the render cache is reported beside them and is not part of it.
 */
export async function usageByKind(db: Executor, groupId: string) {
  // Plain SQL: the correlated sums need table aliases that the query builder does not render.
  const r = await db.execute<{ total: string; uploads: string; scan_inputs: string; renders: string; render_count: string }>(sql`
    select g.storage_bytes as total,
      coalesce((select sum(v.stored_bytes) from result_versions v join results r on r.id = v.result_id where r.group_id = g.id), 0) as uploads,
      coalesce((select sum(s.stored_bytes) from scans s where s.group_id = g.id), 0) as scan_inputs,
      coalesce((select sum(fr.byte_length) from figure_renders fr join figures f on f.id = fr.figure_id where f.group_id = g.id), 0) as renders,
      (select count(*) from figure_renders fr join figures f on f.id = fr.figure_id where f.group_id = g.id) as render_count
    from groups g where g.id = ${groupId}`);
  const row = r.rows[0];
  if (!row) return undefined;
  return {
    totalBytes: Number(row.total),
    uploadsBytes: Number(row.uploads),
    scanInputsBytes: Number(row.scan_inputs),
    rendersBytes: Number(row.renders),
    renderCount: Number(row.render_count),
  };
}

// ---------------------------------------------------------------------------------------------
// The render cache (outside the counter)

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
