import type { RequestHandler } from 'express';
import { AppError } from './errors';

/**
 * Which web pages may make a signed-in browser change things: the app's own origin (PUBLIC_URL)
 * and, for a loopback address, its localhost/127.0.0.1 twin (the same server reached under the
 * other name). The one list of trusted origins: better-auth's `trustedOrigins` (server/auth.ts)
 * and the cookie write guard below both read it.
 */
export function trustedOrigins(publicUrl: string): string[] {
  const url = new URL(publicUrl);
  const twin = url.hostname === '127.0.0.1' ? 'localhost' : url.hostname === 'localhost' ? '127.0.0.1' : null;
  return [url.origin, ...(twin ? [`${url.protocol}//${twin}${url.port ? `:${url.port}` : ''}`] : [])];
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Cross-site request forgery guard for cookie sessions. A request that changes state (any method
 * but GET/HEAD/OPTIONS) and carries a cookie must come from a trusted origin; otherwise 403
 * `untrusted_origin`, before any route runs. The session cookie is `SameSite=Lax`, which does not
 * stop a page on another port of the same host (same site, other origin) from posting with it.
 *
 * - Requests with an `Authorization` header (API tokens) pass: a page cannot add that header to a
 *   cross-origin request without a CORS preflight, which this server never grants, and the API
 *   then authenticates by the token, not the cookie.
 * - Requests with no cookie pass (nothing to forge; sign-in and sign-up check their own Origin
 *   through better-auth).
 * - The decision: `Origin` when sent (`null`, from sandboxed frames or `no-referrer` pages, is not
 *   trusted); without it, `Sec-Fetch-Site` other than `same-origin`/`none` is foreign; without
 *   either, the `Referer`'s origin when present. A request with none of the three is not from a
 *   current browser (they all send `Origin` on cross-origin POSTs, and `Sec-Fetch-Site` on every
 *   request): scripts holding a copied cookie pass as before.
 *
 * Mounted before everything except the payment webhook, which is signed and carries no cookie.
 */
export function cookieWriteGuard(publicUrl: string): RequestHandler {
  const trusted = new Set(trustedOrigins(publicUrl));
  return (req, _res, next) => {
    if (SAFE_METHODS.has(req.method) || req.headers.authorization !== undefined || !req.headers.cookie) return next();
    const origin = req.get('origin');
    const site = req.get('sec-fetch-site');
    const referer = req.get('referer');
    let from: string | null = null;
    let foreign = false;
    if (origin !== undefined) {
      from = origin;
      foreign = !trusted.has(origin);
    } else if (site !== undefined && site !== 'same-origin' && site !== 'none') {
      from = `a ${site} page`;
      foreign = true;
    } else if (referer !== undefined) {
      from = originOf(referer);
      foreign = from === null || !trusted.has(from);
    }
    if (!foreign) return next();
    next(
      new AppError(
        403,
        'untrusted_origin',
        `This request changes data with your session cookie but came from ${from ?? 'an unknown page'}, not from ${publicUrl}: refused to protect your account. Use the app itself, or an API token (Authorization: Bearer) for scripts`,
      ),
    );
  };
}

function originOf(url: string): string | null {
  try {
    return new URL(url).origin;
  } catch {
    return null;
  }
}
