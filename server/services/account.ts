import { getEmailVerified } from '../../db/queries/users';
import type { Executor } from '../../db/client';

/**
 * Read from the database on every call (in the caller's transaction when given one), never from
 * the session cache: the invitation rule depends on it.
 */
export async function isAddressVerified(db: Executor, userId: string): Promise<boolean> {
  return getEmailVerified(db, userId);
}
