import { createHash } from 'node:crypto';
import type { Executor } from '../../db/client';
import * as q from '../../db/queries/tokens';

/**
 * Personal API tokens as the access check reads them: `bw_` + 32 base64url characters, stored as
 * their SHA-256 (server/services/tokens.ts makes and lists them).
 */
export const TOKEN_PATTERN = /^bw_[A-Za-z0-9_-]{32}$/;

export const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

/** The user behind a token (acting with their current roles), or undefined for unknown or revoked tokens. */
export async function userForToken(db: Executor, token: string) {
  if (!TOKEN_PATTERN.test(token)) return undefined;
  const found = await q.findUserByTokenHash(db, hashToken(token));
  if (!found) return undefined;
  await q.touchToken(db, found.tokenId);
  return { id: found.id, name: found.name, email: found.email };
}
