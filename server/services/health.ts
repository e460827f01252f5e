import * as q from '../../db/queries/health';
import type { Ctx } from '../context';

/** Whether the database answers (GET /api/health). */
export async function databaseUp(ctx: Ctx): Promise<boolean> {
  try {
    await q.pingDatabase(ctx.db);
    return true;
  } catch {
    return false;
  }
}
