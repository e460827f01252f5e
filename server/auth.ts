import { betterAuth } from 'better-auth';
import { drizzleAdapter } from 'better-auth/adapters/drizzle';
import { toNodeHandler } from 'better-auth/node';
import * as schema from '../db/schema';
import type { Db } from './db';
import type { Env } from './env';
import { PASSWORD_MIN } from '../shared/schemas/auth';
import { trustedOrigins } from './lib/origins';

export function createAuth(db: Db, env: Env) {
  const origin = new URL(env.PUBLIC_URL);
  return betterAuth({
    baseURL: env.PUBLIC_URL,
    basePath: '/api/auth',
    secret: env.AUTH_SECRET,
    database: drizzleAdapter(db, { provider: 'pg', schema }),
    emailAndPassword: { enabled: true, minPasswordLength: PASSWORD_MIN, maxPasswordLength: 128, autoSignIn: true },
    trustedOrigins: trustedOrigins(env.PUBLIC_URL),
    session: { expiresIn: 60 * 60 * 24 * 14, updateAge: 60 * 60 * 24 },
    // Our own limiter (express-rate-limit in app.ts) guards sign-in and sign-up per IP.
    rateLimit: { enabled: false },
    advanced: {
      defaultCookieAttributes: { httpOnly: true, sameSite: 'lax', secure: origin.protocol === 'https:' },
    },
    telemetry: { enabled: false },
  });
}
export type Auth = ReturnType<typeof createAuth>;

/**
 * better-auth answers errors as `{ code, message }`; the API's contract is
 * `{ error: { code, message } }`, so its error responses are rewritten here.
 */
export function authNodeHandler(auth: Auth) {
  return toNodeHandler(async (request: Request) => {
    const response = await auth.handler(request);
    if (response.status < 400) return response;
    const isJson = response.headers.get('content-type')?.includes('json') ?? false;
    const body = isJson ? ((await response.clone().json().catch(() => null)) as { code?: string; message?: string; error?: unknown } | null) : null;
    if (body && typeof body.error === 'object') return response;
    // Unknown auth paths come back as an empty 404 without a content type: give them the API's shape too.
    const fallback =
      response.status === 404
        ? { code: 'not_found', message: `No API route ${request.method} ${new URL(request.url).pathname}` }
        : { code: 'auth_error', message: 'Authentication failed' };
    const headers = new Headers(response.headers);
    headers.delete('content-length');
    headers.set('content-type', 'application/json; charset=utf-8');
    const code = (body?.code ?? fallback.code).toLowerCase();
    const message = body?.message ?? fallback.message;
    return new Response(JSON.stringify({ error: { code, message } }), { status: response.status, headers });
  });
}
