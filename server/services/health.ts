import * as q from '../../db/queries/health';
import type { Ctx } from '../context';

/**
 * How long the health check waits for the database. A database that accepts connections but does
 * not answer (its process stopped, overloaded, a lost network) would otherwise hold the request
 * until the operating system gives up on the connection: the check must say "down" quickly.
 * `select 1` takes well under a millisecond; 2 s leaves room for a busy pool's queue.
 */
export const HEALTH_TIMEOUT_MS = 2000;

/** Whether the database answers (GET /api/health) within `timeoutMs`. */
export async function databaseUp(ctx: Ctx, timeoutMs = HEALTH_TIMEOUT_MS): Promise<boolean> {
  // A late failure of an abandoned ping is handled here too (no unhandled rejection).
  const ping = q.pingDatabase(ctx.db).then(
    () => true,
    () => false,
  );
  let timer: ReturnType<typeof setTimeout> | undefined;
  const timeout = new Promise<boolean>((resolve) => {
    timer = setTimeout(() => resolve(false), timeoutMs);
  });
  try {
    return await Promise.race([ping, timeout]);
  } finally {
    clearTimeout(timer);
  }
}
