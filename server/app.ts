import compression from 'compression';
import express, { type Express } from 'express';
import fs from 'node:fs';
import path from 'node:path';
import { requestPasswordResetSchema, resendVerificationSchema, resetPasswordSchema, signInSchema, signUpSchema } from '../shared/schemas/auth';
import { authNodeHandler } from './auth';
import type { Ctx } from './context';
import { AppError, errorHandler } from './lib/errors';
import { resultJson } from './lib/upload';
import { cookieWriteGuard } from './lib/origins';
import { securityHeaders } from './lib/security-headers';
import { perMinuteLimit } from './lib/rate-limit';
import { validate } from './lib/validate';
import { apiDocsRouter } from './routes/api-docs';
import { billingRouter, billingWebhook } from './routes/billing';
import { devRouter } from './routes/dev';
import { figuresRouter } from './routes/figures';
import { groupsRouter } from './routes/groups';
import { healthRouter } from './routes/health';
import { invitationsRouter } from './routes/invitations';
import { meRouter } from './routes/me';
import { scansRouter } from './routes/scans';
import { resultsRouter } from './routes/results';
import { tokensRouter } from './routes/tokens';

export const DEFAULT_WEB_DIST = path.resolve(__dirname, '../dist');
/** Example input files (invented numbers), served under /examples/ for download. */
export const EXAMPLES_DIR = path.resolve(__dirname, '../assets/examples');

/**
 * The whole HTTP surface on one port: better-auth under /api/auth, the JSON API under /api, and
 * the exported web app for everything else.
 */
export function createApp(ctx: Ctx): Express {
  const app = express();
  app.disable('x-powered-by');
  // Only the proxies named in TRUST_PROXY may tell the client's address (none by default): the
  // sign-in rate limit counts per address, and a spoofed X-Forwarded-For must not reset it.
  app.set('trust proxy', ctx.env.TRUST_PROXY);
  app.set('query parser', 'simple');

  // CSP, no framing, nosniff, referrer policy… on every answer (server/lib/security-headers.ts).
  app.use(securityHeaders(ctx.env.PUBLIC_URL));
  // A request that may write makes the remembered registry reads stale, from its start until it has
  // answered (server/read-cache.ts; writes of other processes arrive as database notifications).
  app.use((req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      ctx.reads.invalidate();
      res.on('close', () => ctx.reads.invalidate());
    }
    next();
  });
  // gzip for text answers over 1 KB (the web bundle, JSON, SVG); PNG and PDF are left as they are.
  app.use(compression());

  // Payment provider events: verified on their raw bytes, so before any JSON parser; signed and
  // sent without cookies, so before the cookie write guard as well.
  app.post('/api/billing/webhook', ...billingWebhook(ctx));

  // Writes with a session cookie only from the app's own pages (server/lib/origins.ts).
  app.use(cookieWriteGuard(ctx.env.PUBLIC_URL));

  // Sign-in and sign-up: rate-limited per IP and validated with the shared schemas before
  // better-auth sees them, so bad input gets the same error shape as the rest of the API.
  const authLimiter = perMinuteLimit({ limit: ctx.env.AUTH_RATE_LIMIT, message: 'Too many attempts; wait a minute and try again' });
  const authJson = express.json({ limit: '16kb' });
  app.post('/api/auth/sign-up/email', authLimiter, authJson, validate({ body: signUpSchema }));
  app.post('/api/auth/sign-in/email', authLimiter, authJson, validate({ body: signInSchema }));
  app.post('/api/auth/request-password-reset', authLimiter, authJson, validate({ body: requestPasswordResetSchema }));
  app.post('/api/auth/reset-password', authLimiter, authJson, validate({ body: resetPasswordSchema }));
  app.post('/api/auth/send-verification-email', authLimiter, authJson, validate({ body: resendVerificationSchema }));
  // Any auth request may end or change sessions: the remembered sessions are dropped before it runs
  // and again once it has answered (server/session-cache.ts).
  app.all('/api/auth/{*any}', (_req, res, next) => {
    ctx.sessions.clear();
    res.on('close', () => ctx.sessions.clear());
    next();
  });
  app.all('/api/auth/{*any}', authNodeHandler(ctx.auth));

  // Result uploads sent as JSON may be as large as uploaded files.
  app.use(['/api/groups/:groupId/results', '/api/groups/:groupId/scans'], resultJson(ctx.env.UPLOAD_LIMIT_BYTES));
  app.use('/api', express.json({ limit: '1mb' }));
  app.use('/api', healthRouter(ctx));
  app.use('/api', apiDocsRouter(ctx));
  app.use('/api', meRouter(ctx));
  app.use('/api', groupsRouter(ctx));
  app.use('/api', invitationsRouter(ctx));
  app.use('/api', resultsRouter(ctx));
  app.use('/api', tokensRouter(ctx));
  app.use('/api', scansRouter(ctx));
  app.use('/api', figuresRouter(ctx));
  app.use('/api', billingRouter(ctx));
  if (ctx.env.devTools) app.use('/api', devRouter(ctx));
  app.use('/api', (req, _res, next) => next(new AppError(404, 'not_found', `No API route ${req.method} ${req.path}`)));

  // The example input files the README and the scan and upload forms point to, as downloads.
  app.use(
    '/examples',
    express.static(EXAMPLES_DIR, {
      index: false,
      fallthrough: true,
      maxAge: '1h',
      setHeaders: (res, file) => res.setHeader('Content-Disposition', `attachment; filename="${path.basename(file)}"`),
    }),
  );

  const dist = ctx.env.WEB_DIST ?? DEFAULT_WEB_DIST;
  const index = path.join(dist, 'index.html');
  const hashed = `${path.sep}_expo${path.sep}static${path.sep}`;
  app.use(
    express.static(dist, {
      extensions: ['html'],
      index: 'index.html',
      maxAge: '1h',
      // The bundle's file names carry its content hash: kept for a year. Pages are asked again
      // every time, so a new release is seen at once.
      setHeaders: (res, file) => {
        if (file.includes(hashed)) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
        else if (file.endsWith('.html')) res.setHeader('Cache-Control', 'no-cache');
      },
    }),
  );
  // Client-side routes: any other GET that wants HTML gets the single-page app.
  app.get('/{*splat}', (req, res, next) => {
    if (!req.accepts('html') || !fs.existsSync(index)) return next();
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(index);
  });
  app.use((req, res) => {
    res.status(404).json({ error: { code: 'not_found', message: `Nothing at ${req.method} ${req.path}` } });
  });

  app.use(errorHandler);
  return app;
}
