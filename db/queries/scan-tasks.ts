import { and, asc, eq, inArray, sql } from 'drizzle-orm';
import type { Executor } from '../client';
import { scanTasks } from '../schema/scans';

/**
 * The scan job queue's SQL: tasks (an asymptotic grid point, or one chunk of a point's
 * pseudo-experiments) claimed fairly between groups, with leases renewed by heartbeats.
 */

export type NewTask = { scanId: string; groupId: string; pointIndex: number; chunk: number; cost: number };

export type ClaimedTask = { id: number; scanId: string; groupId: string; pointIndex: number; chunk: number; attempts: number; lastError: string | null };

export async function insertTasks(db: Executor, tasks: NewTask[]) {
  // Large grids go in slices to stay under PostgreSQL's bind-parameter limit.
  for (let i = 0; i < tasks.length; i += 2000) await db.insert(scanTasks).values(tasks.slice(i, i + 2000));
}

type ClaimedRow = { id: string; scan_id: string; group_id: string; point_index: number; chunk: number; attempts: number; last_error: string | null };

/**
 * The claim of the task a preceding `pick` CTE chose (one row, locked): it turns running with a
 * lease of `leaseSeconds`, counts an attempt and records its group's turn (scan_group_turns).
 */
const claimPicked = (leaseSeconds: number) => sql`claimed as (
      update ${scanTasks} t
      set state = 'running', attempts = t.attempts + 1, claimed_at = now(), heartbeat_at = now(), steps = 0,
          lease_until = now() + make_interval(secs => ${leaseSeconds})
      from pick
      where t.id = pick.id
      returning t.id, t.scan_id, t.group_id, t.point_index, t.chunk, t.attempts, t.last_error
    ),
    turn as (
      insert into scan_group_turns (group_id, last_claimed_at)
      select group_id, clock_timestamp() from claimed
      on conflict (group_id) do update set last_claimed_at = excluded.last_claimed_at
    )
    select * from claimed`;

const claimedTask = (row: ClaimedRow | undefined): ClaimedTask | undefined =>
  row ? { id: Number(row.id), scanId: row.scan_id, groupId: row.group_id, pointIndex: row.point_index, chunk: row.chunk, attempts: row.attempts, lastError: row.last_error } : undefined;

/**
 * Claims the next task in one statement. Claimable: queued and due (`run_after` passed), or
 * running with an expired lease (its worker died). Among them the task of the group with the
 * fewest tasks running now wins; then the group that used the workers least in the last
 * `windowSeconds` (whole seconds of its tasks' run time, so that groups of short tasks are not
 * told apart by milliseconds); then the group whose last claim is the oldest (or that was never
 * served); then the oldest task. So a group that queued a thousand long tasks gets one worker at
 * a time while another group's few short tasks go ahead of them, and groups with similar work
 * take turns. Rows are locked with SKIP LOCKED, so concurrent workers never take the same task.
 * The claim counts an attempt and records the group's turn.
 */
export async function claimNextTask(db: Executor, leaseSeconds: number, windowSeconds = 600): Promise<ClaimedTask | undefined> {
  const r = await db.execute<ClaimedRow>(sql`
    with open as (
      select group_id,
             count(*) filter (where state = 'running' and lease_until > now()) as running,
             min(id) filter (where (state = 'queued' and run_after <= now()) or (state = 'running' and lease_until <= now())) as first_due
      from ${scanTasks}
      where state in ('queued', 'running')
      group by group_id
    ),
    used as (
      select t.group_id,
             floor(sum(case when t.state = 'running' then extract(epoch from now() - t.claimed_at)
                            when t.finished_at is not null then extract(epoch from t.finished_at - t.claimed_at)
                            else 0 end)) as seconds
      from ${scanTasks} t
      join open o on o.group_id = t.group_id
      where t.claimed_at > now() - make_interval(secs => ${windowSeconds})
      group by t.group_id
    ),
    -- One row per group with a due task, in the order it should be served (a few rows, so the
    -- per-task pick below joins a small table).
    ranked as (
      select o.group_id,
             row_number() over (order by o.running, coalesce(u.seconds, 0), g.last_claimed_at asc nulls first, o.first_due) as rank
      from open o
      left join used u on u.group_id = o.group_id
      left join scan_group_turns g on g.group_id = o.group_id
      where o.first_due is not null
    ),
    pick as (
      select t.id
      from ${scanTasks} t
      join ranked r on r.group_id = t.group_id
      where t.state in ('queued', 'running')
        and ((t.state = 'queued' and t.run_after <= now()) or (t.state = 'running' and t.lease_until <= now()))
      order by r.rank, t.id
      limit 1
      for update of t skip locked
    ),
    ${claimPicked(leaseSeconds)}`);
  return claimedTask(r.rows[0]);
}

/**
 * Claims the next due task of one scan (the oldest; due as for `claimNextTask`), whatever other
 * groups wait: for running one scan here and now (`runScanHere` in server/jobs/scan-worker.ts).
 * The claim itself is `claimNextTask`'s (attempt, lease, the group's turn).
 */
export async function claimTaskOfScan(db: Executor, scanId: string, leaseSeconds: number): Promise<ClaimedTask | undefined> {
  const r = await db.execute<ClaimedRow>(sql`
    with pick as (
      select t.id
      from ${scanTasks} t
      where t.scan_id = ${scanId}
        and ((t.state = 'queued' and t.run_after <= now()) or (t.state = 'running' and t.lease_until <= now()))
      order by t.id
      limit 1
      for update of t skip locked
    ),
    ${claimPicked(leaseSeconds)}`);
  return claimedTask(r.rows[0]);
}

/**
 * Renews the lease of a running task and records its progress. False when the task is no longer
 * this attempt's to run (cancelled, finished, or taken over after its lease expired): stop.
 */
export async function heartbeatTask(db: Executor, id: number, attempt: number, leaseSeconds: number, steps: number): Promise<boolean> {
  const rows = await db
    .update(scanTasks)
    .set({ heartbeatAt: sql`now()`, leaseUntil: sql`now() + make_interval(secs => ${leaseSeconds})`, steps })
    .where(and(eq(scanTasks.id, id), eq(scanTasks.state, 'running'), eq(scanTasks.attempts, attempt)))
    .returning({ id: scanTasks.id });
  return rows.length > 0;
}

/**
 * Marks a running task finished (done with a chunk's samples, or cancelled/failed). Only a task
 * still running changes: a cancelled task stays cancelled. Any attempt may finish it (a task is
 * deterministic: a late duplicate computes the same thing). True when this call finished it.
 */
export async function finishTask(
  db: Executor,
  id: number,
  outcome: { state: 'done' | 'failed' | 'cancelled'; samples?: Buffer; stats?: { fits: number; failed: number; generated: number; ms: number }; steps?: number; error?: string },
): Promise<boolean> {
  const rows = await db
    .update(scanTasks)
    .set({
      state: outcome.state,
      samples: outcome.samples ?? null,
      stats: outcome.stats ?? null,
      ...(outcome.steps !== undefined ? { steps: outcome.steps } : {}),
      ...(outcome.error !== undefined ? { lastError: outcome.error } : {}),
      leaseUntil: null,
      finishedAt: sql`now()`,
    })
    .where(and(eq(scanTasks.id, id), eq(scanTasks.state, 'running')))
    .returning({ id: scanTasks.id });
  return rows.length > 0;
}

/** Puts a task that failed back in the queue, claimable from `delaySeconds` on (the retry). */
export async function retryTaskLater(db: Executor, id: number, attempt: number, delaySeconds: number, error: string): Promise<boolean> {
  const rows = await db
    .update(scanTasks)
    .set({ state: 'queued', runAfter: sql`now() + make_interval(secs => ${delaySeconds})`, leaseUntil: null, lastError: error.slice(0, 2000) })
    .where(and(eq(scanTasks.id, id), eq(scanTasks.state, 'running'), eq(scanTasks.attempts, attempt)))
    .returning({ id: scanTasks.id });
  return rows.length > 0;
}

/** Hands a running task back to the queue at once, its attempt not counted (its worker is stopping). */
export async function releaseTask(db: Executor, id: number, attempt: number): Promise<boolean> {
  const rows = await db
    .update(scanTasks)
    .set({ state: 'queued', runAfter: sql`now()`, leaseUntil: null, attempts: sql`${scanTasks.attempts} - 1`, steps: 0 })
    .where(and(eq(scanTasks.id, id), eq(scanTasks.state, 'running'), eq(scanTasks.attempts, attempt)))
    .returning({ id: scanTasks.id });
  return rows.length > 0;
}

/** Cancels a scan's open tasks (a running one stops at its next heartbeat). */
export async function cancelOpenTasks(db: Executor, groupId: string, scanId: string, pointIndex?: number) {
  await db
    .update(scanTasks)
    .set({ state: 'cancelled', leaseUntil: null, finishedAt: sql`now()` })
    .where(
      and(eq(scanTasks.scanId, scanId), eq(scanTasks.groupId, groupId), inArray(scanTasks.state, ['queued', 'running']), pointIndex === undefined ? undefined : eq(scanTasks.pointIndex, pointIndex)),
    );
}

/** The finished chunks of a point with their samples (for the merge), in chunk order. */
export async function listDoneChunks(db: Executor, scanId: string, pointIndex: number) {
  return db
    .select({ chunk: scanTasks.chunk, cost: scanTasks.cost, samples: scanTasks.samples, stats: scanTasks.stats })
    .from(scanTasks)
    .where(and(eq(scanTasks.scanId, scanId), eq(scanTasks.pointIndex, pointIndex), eq(scanTasks.state, 'done')))
    .orderBy(asc(scanTasks.chunk));
}

/** Frees the samples of a merged point (they are in its result now). */
export async function dropChunkSamples(db: Executor, scanId: string, pointIndex: number) {
  await db
    .update(scanTasks)
    .set({ samples: null })
    .where(and(eq(scanTasks.scanId, scanId), eq(scanTasks.pointIndex, pointIndex), sql`${scanTasks.samples} is not null`));
}

/**
 * Pseudo-experiments per hypothesis (an asymptotic point counts 1) in a group's tasks that are
 * queued or running: what the plan's queue limit is checked against.
 */
export async function queuedCost(db: Executor, groupId: string): Promise<number> {
  const rows = await db
    .select({ cost: sql<string | null>`sum(${scanTasks.cost})` })
    .from(scanTasks)
    .where(and(eq(scanTasks.groupId, groupId), inArray(scanTasks.state, ['queued', 'running'])));
  return Number(rows[0]?.cost ?? 0);
}

/**
 * Per point of a scan: its tasks in all and still open (queued or running), done, running now,
 * the highest attempt, and when the last of its tasks that wait for a retry becomes due: a failed
 * task's back-off (`run_after`), or the lease of a task whose worker went silent (then already
 * past: due, waiting for a free worker). `now` is the database's clock, which these times are on.
 */
export async function taskProgress(db: Executor, groupId: string, scanId: string) {
  const r = await db.execute<{ point_index: number; tasks: number; open: number; done: number; running: number; retry_at: Date | string | null; attempts: number; now: Date | string }>(sql`
    select point_index,
           count(*)::int as tasks,
           count(*) filter (where state in ('queued', 'running'))::int as open,
           count(*) filter (where state = 'done')::int as done,
           count(*) filter (where state = 'running' and lease_until > now())::int as running,
           max(case when state = 'queued' and attempts > 0 and run_after > now() then run_after
                    when state = 'running' and lease_until <= now() then lease_until end) as retry_at,
           max(attempts)::int as attempts,
           now() as now
    from ${scanTasks}
    where scan_id = ${scanId} and group_id = ${groupId}
    group by point_index
    order by point_index`);
  return r.rows.map((row) => ({
    pointIndex: row.point_index,
    tasks: row.tasks,
    open: row.open,
    done: row.done,
    running: row.running,
    retryAt: row.retry_at ? new Date(row.retry_at) : null,
    attempts: row.attempts,
    now: new Date(row.now),
  }));
}

/**
 * Deletes the tasks of scans that ended more than `olderThanSeconds` ago (their points keep the
 * attempts; the claim's fair share only looks back that far).
 */
export async function deleteOldTasks(db: Executor, olderThanSeconds: number): Promise<number> {
  const r = await db.execute(sql`
    delete from ${scanTasks} t
    using scans s
    where s.id = t.scan_id and s.state in ('done', 'failed', 'cancelled')
      and s.finished_at < now() - make_interval(secs => ${olderThanSeconds})`);
  return r.rowCount ?? 0;
}

/** Points whose chunks are all done but that were never merged (their last worker died). */
export async function listUnmergedPoints(db: Executor) {
  const r = await db.execute<{ scan_id: string; point_index: number }>(sql`
    select t.scan_id, t.point_index
    from ${scanTasks} t
    join scan_points p on p.scan_id = t.scan_id and p.index = t.point_index
    where p.state = 'queued'
    group by t.scan_id, t.point_index, p.chunks
    having count(*) filter (where t.state = 'done') = p.chunks`);
  return r.rows.map((row) => ({ scanId: row.scan_id, pointIndex: row.point_index }));
}
