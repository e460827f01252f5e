import PgBoss from 'pg-boss';
import type { Env } from '../env';

/** One task per grid point of a scan. */
export const SCAN_POINT_QUEUE = 'scan-point';
export type ScanPointTask = { scanId: string; index: number };

/**
 * The job queue: pg-boss on the application's own PostgreSQL (schema "pgboss"). A task whose
 * worker dies stays active until it expires (JOB_EXPIRE_SECONDS); pg-boss's maintenance then
 * fails it and it is retried, so a crash loses no point.
 */
export async function startQueue(env: Env): Promise<PgBoss> {
  const boss = new PgBoss({
    connectionString: env.DATABASE_URL,
    schema: 'pgboss',
    max: 4,
    maintenanceIntervalSeconds: env.JOB_MAINTENANCE_SECONDS,
    monitorStateIntervalSeconds: Math.max(env.JOB_MAINTENANCE_SECONDS, 10),
  });
  boss.on('error', (err: Error) => console.error('[jobs]', err.message));
  await boss.start();
  await boss.createQueue(SCAN_POINT_QUEUE, {
    name: SCAN_POINT_QUEUE,
    retryLimit: 3,
    retryDelay: 1,
    expireInSeconds: env.JOB_EXPIRE_SECONDS,
  });
  return boss;
}
