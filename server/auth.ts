import { betterAuth } from 'better-auth';
import { drizzleAdapter } from 'better-auth/adapters/drizzle';
import { toNodeHandler } from 'better-auth/node';
import * as schema from '../db/schema';
import type { Db } from '../db/client';
import type { Env } from './env';
import { PASSWORD_MAX, PASSWORD_MIN } from '../shared/schemas/auth';
import { deleteUserVerificationValues } from '../db/queries/users';
import { passwordResetMail, RESET_MINUTES, VERIFICATION_HOURS, verificationMail } from './lib/account-mail';
import type { Mailer, OutgoingMail } from './clients/mail';
import { trustedOrigins } from './lib/origins';

export function createAuth(db: Db, env: Env, mail: Mailer) {
  // With real SMTP the reset request does not wait for the mail server: how long the answer took
  // would tell whether the address has an account. The outbox (development, tests) is written at once.
  const sendUnseen = async (m: OutgoingMail) => {
    if (env.MAIL_MODE !== 'smtp') return mail.send(m);
    void mail.send(m).catch((err: unknown) => console.error(`[mail] could not send the ${m.kind} mail: ${(err as Error).message}`));
  };
  const origin = new URL(env.PUBLIC_URL);
  return betterAuth({
    baseURL: env.PUBLIC_URL,
    basePath: '/api/auth',
    secret: env.AUTH_SECRET,
    database: drizzleAdapter(db, { provider: 'pg', schema }),
    emailAndPassword: {
      enabled: true,
      minPasswordLength: PASSWORD_MIN,
      maxPasswordLength: PASSWORD_MAX,
      autoSignIn: true,
      // Forgotten password: a single-use link to the app's reset screen. The answer to the request is
      // the same for unknown addresses (better-auth), and the request is rate-limited (app.ts).
      sendResetPassword: async ({ user, token }) => sendUnseen(passwordResetMail(user, env.PUBLIC_URL, token)),
      resetPasswordTokenExpiresIn: RESET_MINUTES * 60,
      revokeSessionsOnPasswordReset: true,
      // Links asked for earlier must not set the password again once it was reset.
      onPasswordReset: async ({ user }) => {
        await deleteUserVerificationValues(db, user.id);
      },
    },
    // Reset tokens are stored as their SHA-256 only, as our invitation and API tokens are.
    verification: { storeIdentifier: 'hashed' },
    // Signing in does not need a verified address; accepting an invitation does
    // (server/services/invitations.ts). The link is mailed at sign-up and on request.
    emailVerification: {
      sendOnSignUp: true,
      expiresIn: VERIFICATION_HOURS * 3600,
      // better-auth's own link would verify and then redirect; ours opens the app's screen, which
      // verifies through GET /api/auth/verify-email?token=… and says so. The path to come back to
      // (sign-up's or the resend's callbackURL) is carried along as `next`.
      sendVerificationEmail: async ({ user, url, token }) =>
        mail.send(verificationMail(user, env.PUBLIC_URL, token, new URL(url).searchParams.get('callbackURL') ?? '/')),
    },
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

/** better-auth's terse messages ("Invalid token") where the user needs to know what to do next. */
function clearerMessage(pathname: string, code: string): string | undefined {
  if (pathname.endsWith('/reset-password') && code === 'invalid_token') {
    return `This reset link cannot be used: it was already used, has expired (links work for ${RESET_MINUTES} minutes) or is incomplete. Ask for a new one`;
  }
  if (pathname.endsWith('/verify-email') && code === 'token_expired') return 'This verification link has expired; ask for a new one';
  if (pathname.endsWith('/verify-email') && code === 'invalid_token') return 'This verification link is not valid: it is incomplete or was changed';
  return undefined;
}

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
    const message = clearerMessage(new URL(request.url).pathname, code) ?? body?.message ?? fallback.message;
    return new Response(JSON.stringify({ error: { code, message } }), { status: response.status, headers });
  });
}
