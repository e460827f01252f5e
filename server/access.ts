import type { Request, RequestHandler } from 'express';
import { ACTION_MIN_ROLE, can, type GroupAction, type GroupRole } from '../shared/access';
import { uuidParam } from '../shared/schemas/common';
import { getRole } from '../db/queries/groups';
import type { Ctx } from './context';
import { AppError, forbidden, notFound, unauthorized } from './lib/errors';
import { userForToken } from './lib/api-tokens';

/**
 * The access-control module: who is calling, and what their role in a group allows. Every group
 * route goes through `requireGroup(ctx, action)`; the table of actions lives in shared/access.ts.
 */

const ACTION_WORDS: Record<GroupAction, string> = {
  'group.read': 'read this group',
  'figure.write': 'create or edit figures',
  'result.write': 'upload or change results',
  'result.publish': 'publish, supersede or retract results',
  'member.manage': 'manage members and invitations',
  'group.manage': 'change or delete the group',
  'billing.manage': 'manage the storage plan and billing',
};

/**
 * The caller: from `Authorization: Bearer <API token>` when that header is sent (an unknown or
 * revoked token is refused, never treated as anonymous), else from the session cookie.
 */
async function resolveUser(ctx: Ctx, req: Request) {
  const header = req.headers.authorization;
  if (header !== undefined) {
    const token = /^Bearer\s+(\S+)\s*$/i.exec(header)?.[1];
    if (!token) throw unauthorized('The Authorization header must be "Bearer <API token>"');
    const u = await userForToken(ctx.db, token);
    if (!u) throw unauthorized('This API token is not valid: it was revoked or mistyped. Create a new one under Account, API tokens');
    req.authVia = 'token';
    return u;
  }
  const u = await ctx.sessions.lookup(req.headers);
  if (!u) return undefined;
  req.authVia = 'session';
  return u;
}

/** 401 unless the request carries a valid session or API token. */
export function requireUser(ctx: Ctx): RequestHandler {
  return async (req, _res, next) => {
    const u = await resolveUser(ctx, req);
    if (!u) return next(unauthorized());
    req.user = u;
    next();
  };
}

/**
 * A signed-in session, not an API token: for managing tokens, so that a leaked token cannot mint,
 * list or revoke tokens.
 */
export function requireSession(ctx: Ctx): RequestHandler {
  return async (req, _res, next) => {
    const u = await resolveUser(ctx, req);
    if (!u) return next(unauthorized());
    if (req.authVia === 'token') return next(forbidden('API tokens cannot manage tokens; sign in to the app to do that'));
    req.user = u;
    next();
  };
}

/** Sets req.user when signed in; refuses only a bad API token. For routes that also serve anonymous callers. */
export function optionalUser(ctx: Ctx): RequestHandler {
  return async (req, _res, next) => {
    req.user = await resolveUser(ctx, req);
    next();
  };
}

/**
 * The caller's role in a group allows `action`, or the error to send. Non-members get 404, so a
 * group's existence is not revealed to outsiders; members without the role get 403.
 */
export async function checkGroupAction(ctx: Ctx, userId: string, groupId: string, action: GroupAction): Promise<GroupRole> {
  const role = await getRole(ctx.db, groupId, userId);
  if (!role) throw notFound('Group');
  if (!can(role, action)) {
    throw forbidden(`Your role in this group (${role}) cannot ${ACTION_WORDS[action]}; it needs ${ACTION_MIN_ROLE[action]} or above`);
  }
  return role;
}

/** Route guard for `/groups/:groupId/...`: signed in, member, and allowed to do `action`. */
export function requireGroup(ctx: Ctx, action: GroupAction): RequestHandler {
  return async (req, _res, next) => {
    const u = req.user ?? (await resolveUser(ctx, req));
    if (!u) return next(unauthorized());
    req.user = u;
    const groupId = uuidParam.safeParse(req.params.groupId);
    if (!groupId.success) return next(new AppError(404, 'not_found', 'Group not found'));
    req.groupRole = await checkGroupAction(ctx, u.id, groupId.data, action);
    next();
  };
}
