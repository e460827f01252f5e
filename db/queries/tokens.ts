import { and, desc, eq, isNull, lt, or, sql } from 'drizzle-orm';
import type { Executor } from '../client';
import { apiTokens, user } from '../schema';

export async function insertToken(db: Executor, t: { userId: string; name: string; prefix: string; tokenHash: string }) {
  const [row] = await db.insert(apiTokens).values(t).returning();
  return row!;
}

/** The user's tokens, newest first (never the hash). */
export async function listTokens(db: Executor, userId: string) {
  return db
    .select({ id: apiTokens.id, name: apiTokens.name, prefix: apiTokens.prefix, createdAt: apiTokens.createdAt, lastUsedAt: apiTokens.lastUsedAt })
    .from(apiTokens)
    .where(eq(apiTokens.userId, userId))
    .orderBy(desc(apiTokens.createdAt));
}

/** Deletes one of the user's tokens; false when the user has no such token. */
export async function deleteToken(db: Executor, userId: string, tokenId: string): Promise<boolean> {
  const rows = await db
    .delete(apiTokens)
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, userId)))
    .returning({ id: apiTokens.id });
  return rows.length > 0;
}

/** The user a token hash belongs to, or undefined. */
export async function findUserByTokenHash(db: Executor, tokenHash: string) {
  const rows = await db
    .select({ tokenId: apiTokens.id, id: user.id, name: user.name, email: user.email })
    .from(apiTokens)
    .innerJoin(user, eq(user.id, apiTokens.userId))
    .where(eq(apiTokens.tokenHash, tokenHash));
  return rows[0];
}

/** Records a use of the token, at most once a minute (a busy script must not write on every call). */
export async function touchToken(db: Executor, tokenId: string) {
  await db
    .update(apiTokens)
    .set({ lastUsedAt: sql`now()` })
    .where(and(eq(apiTokens.id, tokenId), or(isNull(apiTokens.lastUsedAt), lt(apiTokens.lastUsedAt, sql`now() - interval '1 minute'`))));
}
