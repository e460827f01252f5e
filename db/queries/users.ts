import { eq } from 'drizzle-orm';
import type { Executor } from '../client';
import { user, verification } from '../schema';

/** Whether the user confirmed their address through the mailed link (false for an unknown id). */
export async function getEmailVerified(db: Executor, userId: string): Promise<boolean> {
  const [row] = await db.select({ verified: user.emailVerified }).from(user).where(eq(user.id, userId));
  return row?.verified ?? false;
}

/**
 * Drops the user's outstanding single-use links (password reset tokens: better-auth keeps their
 * hash with the user id as the value). E-mail verification links are signed tokens, not rows.
 */
export async function deleteUserVerificationValues(db: Executor, userId: string): Promise<number> {
  const rows = await db.delete(verification).where(eq(verification.value, userId)).returning({ id: verification.id });
  return rows.length;
}
