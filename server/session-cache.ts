import type { IncomingHttpHeaders } from 'node:http';
import { fromNodeHeaders } from 'better-auth/node';
import { LRUCache } from 'lru-cache';
import type { Auth } from './auth';

export type SessionUser = { id: string; name: string; email: string };

/**
 * Who a session cookie belongs to, remembered for a few seconds so that a signed-in request does
 * not pay better-auth's session lookup (≈ 3–4 ms, two queries and cookie checks) every time.
 * Revocation stays exact: every write under /api/auth (sign-out, revoking sessions, password
 * changes) empties the cache before it starts and again when it has finished, and a lookup that
 * overlapped such a write is not stored (the generation counter), so a signed-out cookie is never
 * answered from memory. Entries never outlive the session's own expiry. Negative answers are not
 * kept. One server process per database is assumed (the scan workers serve no HTTP); with several
 * HTTP processes, another process's sign-out would be seen after at most `ttlMs`.
 */
export function createSessionCache(auth: Auth, opts: { ttlMs?: number; max?: number; /** The cache's clock in ms (tests). */ now?: () => number } = {}) {
  const ttlMs = opts.ttlMs ?? 30_000;
  const cache = new LRUCache<string, SessionUser>({ max: opts.max ?? 10_000, ttl: ttlMs, ...(opts.now ? { perf: { now: opts.now } } : {}) });
  let generation = 0;

  return {
    async lookup(headers: IncomingHttpHeaders): Promise<SessionUser | undefined> {
      const key = headers.cookie;
      // No session cookie, no session: better-auth would answer null without a query.
      if (!key || !key.includes('session_token')) return undefined;
      const hit = cache.get(key);
      if (hit) return hit;
      const started = generation;
      const session = await auth.api.getSession({ headers: fromNodeHeaders(headers) });
      if (!session) return undefined;
      const user = { id: session.user.id, name: session.user.name, email: session.user.email };
      const left = new Date(session.session.expiresAt).getTime() - Date.now();
      if (started === generation && left > 0) cache.set(key, user, { ttl: Math.min(ttlMs, left) });
      return user;
    },
    /** Forget every remembered session (an auth write is starting or has finished). */
    clear() {
      generation++;
      cache.clear();
    },
    get size() {
      return cache.size;
    },
  };
}
export type SessionCache = ReturnType<typeof createSessionCache>;
