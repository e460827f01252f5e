import * as tq from '../../db/queries/scan-tasks';
import { createDb, type Db } from '../../db/client';
import type { Env } from '../env';

export type { ClaimedTask } from '../../db/queries/scan-tasks';

/** A task is tried at most this often (the first run and three retries); then its point fails. */
export const MAX_ATTEMPTS = 4;

/** How far back a group's use of the workers counts for the fair share of the next claim. */
export const FAIR_SHARE_WINDOW_SECONDS = 600;

/**
 * The scan job queue: the `scan_tasks` table on the application's own PostgreSQL (SQL in
 * db/queries/scan-tasks.ts). One task per asymptotic grid point, or per chunk of a point's
 * pseudo-experiments. Claims are fair between groups (the group with the fewest running tasks,
 * then the one that used the workers least in the last FAIR_SHARE_WINDOW_SECONDS, then the one
 * served least recently); a claim is a lease of JOB_EXPIRE_SECONDS that the worker
 * renews between steps of its computation, so a task whose worker died is claimed again once its
 * lease has run out. A task that failed waits JOB_RETRY_SECONDS × 2^(attempt − 1) for its retry.
 */
export class ScanQueue {
  constructor(
    readonly db: Db,
    private readonly env: Pick<Env, 'JOB_EXPIRE_SECONDS' | 'JOB_RETRY_SECONDS'>,
    private readonly ownsDb = false,
  ) {}

  get leaseSeconds(): number {
    return this.env.JOB_EXPIRE_SECONDS;
  }

  /** The next task for this worker, or undefined when nothing is due. */
  claim(): Promise<tq.ClaimedTask | undefined> {
    return tq.claimNextTask(this.db, this.env.JOB_EXPIRE_SECONDS, FAIR_SHARE_WINDOW_SECONDS);
  }

  /**
   * The next due task of one scan, ahead of any other group's (no fair share): for running that scan
   * here and now (`runScanHere` in server/jobs/scan-worker.ts).
   */
  claimOfScan(scanId: string): Promise<tq.ClaimedTask | undefined> {
    return tq.claimTaskOfScan(this.db, scanId, this.env.JOB_EXPIRE_SECONDS);
  }

  /** Seconds a task waits before attempt `attempt + 1`. */
  retryDelaySeconds(attempt: number): number {
    return this.env.JOB_RETRY_SECONDS * 2 ** Math.max(0, attempt - 1);
  }

  async stop(): Promise<void> {
    if (this.ownsDb) await this.db.$client.end();
  }
}

/** The queue with its own small connection pool (workers and the API share the database, not the pool). */
export async function startQueue(env: Env): Promise<ScanQueue> {
  return new ScanQueue(createDb(env.DATABASE_URL, 4), env, true);
}
