import { randomBytes } from 'node:crypto';
import type { ApiTokenSummary } from '../../shared/schemas/results';
import * as q from '../../db/queries/tokens';
import type { Ctx } from '../context';
import { hashToken } from '../lib/api-tokens';
import { notFound } from '../lib/errors';

/**
 * Personal API tokens: `bw_` + 32 random base64url characters (192 bits). Only the SHA-256 is
 * stored, with the first characters as a visible prefix so its owner can tell tokens apart.
 */
const PREFIX_LENGTH = 10;

type Row = Awaited<ReturnType<typeof q.listTokens>>[number];
const toSummary = (t: Row): ApiTokenSummary => ({
  id: t.id,
  name: t.name,
  prefix: t.prefix,
  createdAt: t.createdAt.toISOString(),
  lastUsedAt: t.lastUsedAt?.toISOString() ?? null,
});

export async function listTokens(ctx: Ctx, userId: string): Promise<ApiTokenSummary[]> {
  return (await q.listTokens(ctx.db, userId)).map(toSummary);
}

/** Creates a token; the answer is the only time its text is shown. */
export async function createToken(ctx: Ctx, userId: string, name: string): Promise<ApiTokenSummary & { token: string }> {
  const token = `bw_${randomBytes(24).toString('base64url')}`;
  const row = await q.insertToken(ctx.db, { userId, name, prefix: token.slice(0, PREFIX_LENGTH), tokenHash: hashToken(token) });
  return { ...toSummary(row), token };
}

export async function revokeToken(ctx: Ctx, userId: string, tokenId: string): Promise<void> {
  if (!(await q.deleteToken(ctx.db, userId, tokenId))) throw notFound('Token');
}
