import { and, eq, gt, lte, sql } from 'drizzle-orm';
import type { Executor } from '../client';
import type { ErrorDetail } from '../../shared/errors';
import { uploadIdempotency } from '../schema';

/** Data access of upload `Idempotency-Key`s (rules in server/services/upload-idempotency.ts). */

export type IdempotencyRow = typeof uploadIdempotency.$inferSelect;

/** The group's unexpired row for `key`, if any. */
export async function getIdempotencyKey(db: Executor, groupId: string, key: string): Promise<IdempotencyRow | undefined> {
  const [row] = await db
    .select()
    .from(uploadIdempotency)
    .where(and(eq(uploadIdempotency.groupId, groupId), eq(uploadIdempotency.key, key), gt(uploadIdempotency.expiresAt, sql`now()`)));
  return row;
}

/**
 * Takes `key` for this request, in the writing transaction: true when it is ours (new, or an
 * expired row taken over). While another transaction holds the same key uncommitted, this waits
 * for it (the primary key's uniqueness check), so concurrent retries queue here; false when a
 * committed unexpired row has it.
 */
export async function claimIdempotencyKey(
  db: Executor,
  k: { groupId: string; key: string; userId: string; requestHash: string; ttlSeconds: number },
): Promise<boolean> {
  const expiresAt = sql`now() + make_interval(secs => ${k.ttlSeconds})`;
  const rows = await db
    .insert(uploadIdempotency)
    .values({ groupId: k.groupId, key: k.key, userId: k.userId, requestHash: k.requestHash, expiresAt })
    .onConflictDoUpdate({
      target: [uploadIdempotency.groupId, uploadIdempotency.key],
      set: { userId: k.userId, requestHash: k.requestHash, resultId: null, version: null, status: 201, warnings: [], createdAt: sql`now()`, expiresAt },
      setWhere: lte(uploadIdempotency.expiresAt, sql`now()`),
    })
    .returning({ key: uploadIdempotency.key });
  return rows.length === 1;
}

/** Binds a claimed key to the version its request created (same transaction as the claim). */
export async function settleIdempotencyKey(db: Executor, groupId: string, key: string, v: { resultId: string; version: number; status: number; warnings: ErrorDetail[] }) {
  await db
    .update(uploadIdempotency)
    .set(v)
    .where(and(eq(uploadIdempotency.groupId, groupId), eq(uploadIdempotency.key, key)));
}

/** Drops the group's expired keys. */
export async function deleteExpiredIdempotencyKeys(db: Executor, groupId: string) {
  await db.delete(uploadIdempotency).where(and(eq(uploadIdempotency.groupId, groupId), lte(uploadIdempotency.expiresAt, sql`now()`)));
}
