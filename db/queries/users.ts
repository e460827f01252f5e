import { eq } from 'drizzle-orm';
import type { Executor } from '../../server/db';
import { user } from '../schema';

/** Whether the user confirmed their address through the mailed link (false for an unknown id). */
export async function getEmailVerified(db: Executor, userId: string): Promise<boolean> {
  const [row] = await db.select({ verified: user.emailVerified }).from(user).where(eq(user.id, userId));
  return row?.verified ?? false;
}
