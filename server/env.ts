import { z } from 'zod';

/**
 * The one place that reads process.env. The entry point calls `loadEnv()` and passes the result down.
 * Development defaults are chosen so `npm start` works with no configuration; production refuses
 * to start without a real secret.
 */
const schema = z
  .object({
    NODE_ENV: z.enum(['development', 'test', 'production']).default('development'),
    HOST: z.string().default('127.0.0.1'),
    PORT: z.coerce.number().int().min(0).max(65535).default(8080),
    DATABASE_URL: z.string().min(1, 'DATABASE_URL is required (npm start sets it for its own cluster)'),
    PUBLIC_URL: z.string().url().optional(),
    AUTH_SECRET: z.string().min(32).optional(),
    /** Requests per minute per IP on /api/auth sign-in and sign-up. */
    AUTH_RATE_LIMIT: z.coerce.number().int().positive().default(20),
    /** "outbox": mail is stored in the dev_mail table (the local mail fake); "smtp": sent via SMTP_URL. */
    MAIL_MODE: z.enum(['outbox', 'smtp']).optional(),
    SMTP_URL: z.string().optional(),
    MAIL_FROM: z.string().default('Bandwright <no-reply@bandwright.invalid>'),
    WEB_DIST: z.string().optional(),
    /** Job workers started inside the server process (npm run worker starts more elsewhere). */
    WORKERS: z.coerce.number().int().min(0).max(16).default(1),
    /** A task running longer than this is taken for dead (its worker crashed) and retried. */
    JOB_EXPIRE_SECONDS: z.coerce.number().int().min(1).default(900),
    /** How often the queue looks for expired tasks. */
    JOB_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).default(30),
    /** Largest scan accepted, in points × bins × pseudo-experiments (1 per point when asymptotic). */
    SCAN_COST_LIMIT: z.coerce.number().positive().default(200_000_000),
    /** Figure renders per minute per IP for callers who are not signed in (public and by-id render routes). */
    RENDER_RATE_LIMIT: z.coerce.number().int().positive().default(300),
    /** Renderer processes (PNG and PDF are drawn outside the server process, see server/figures/render-pool.ts). */
    RENDER_PROCESSES: z.coerce.number().int().min(1).max(16).default(2),
    /** A PNG or PDF render taking longer (waiting included) is given up with 500 and its renderer process killed. */
    RENDER_TIMEOUT_SECONDS: z.coerce.number().positive().default(60),
    /** Largest result upload accepted (file or JSON body), in bytes; larger ones get 413. */
    UPLOAD_LIMIT_BYTES: z.coerce.number().int().positive().default(5 * 1024 * 1024),
    /** The payment provider's secret key; outside production a fixed test key for the local fake. */
    STRIPE_SECRET_KEY: z.string().min(1).optional(),
    /** Signing secret of the provider's webhook events; outside production a fixed one shared with the fake. */
    STRIPE_WEBHOOK_SECRET: z.string().min(1).optional(),
    /** Where the provider's API is; unset outside production: the local fake on STRIPE_FAKE_PORT. */
    STRIPE_API_HOST: z.string().min(1).optional(),
    STRIPE_API_PORT: z.coerce.number().int().min(1).max(65535).optional(),
    STRIPE_API_PROTOCOL: z.enum(['http', 'https']).optional(),
    /** Loopback port of the local payment fake that the server starts in development. */
    STRIPE_FAKE_PORT: z.coerce.number().int().min(0).max(65535).default(12111),
    /** The fake keeps its customers and invoices in this JSON file (npm start puts it beside the cluster). */
    STRIPE_FAKE_STATE: z.string().optional(),
  })
  .superRefine((v, ctx) => {
    if (v.NODE_ENV === 'production' && !v.AUTH_SECRET) {
      ctx.addIssue({ code: 'custom', path: ['AUTH_SECRET'], message: 'AUTH_SECRET (32+ characters) is required in production' });
    }
    // Production sends real mail unless told otherwise; elsewhere mail stays in the local outbox.
    const mode = v.MAIL_MODE ?? (v.NODE_ENV === 'production' ? 'smtp' : 'outbox');
    if (mode === 'smtp' && !v.SMTP_URL) {
      ctx.addIssue({ code: 'custom', path: ['SMTP_URL'], message: 'SMTP_URL is required when mail is sent by SMTP (MAIL_MODE=smtp, the production default)' });
    }
  });

/**
 * The payment provider as the server reaches it; `fake` when it is the local fake that the server
 * itself starts. Null keys (production without them): billing answers 503 and the rest works.
 */
export type StripeSettings = { secretKey: string | null; webhookSecret: string | null; host?: string; port?: number; protocol?: 'http' | 'https'; fake: boolean };

export type Env = z.infer<typeof schema> & { PUBLIC_URL: string; AUTH_SECRET: string; MAIL_MODE: 'outbox' | 'smtp'; devTools: boolean; stripe: StripeSettings };

/** Parses and checks the environment (process.env by default; tests pass their own). */
export function loadEnv(vars: Record<string, string | undefined> = process.env): Env {
  const parsed = schema.safeParse(vars);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.') || '(env)'}: ${i.message}`);
    throw new Error(`Invalid environment:\n${lines.join('\n')}`);
  }
  const v = parsed.data;
  return {
    ...v,
    MAIL_MODE: v.MAIL_MODE ?? (v.NODE_ENV === 'production' ? 'smtp' : 'outbox'),
    PUBLIC_URL: (v.PUBLIC_URL ?? `http://127.0.0.1:${v.PORT}`).replace(/\/$/, ''),
    // A fixed development secret is fine: it only signs cookies of a loopback-only dev server.
    AUTH_SECRET: v.AUTH_SECRET ?? 'bandwright-development-secret-not-for-production-use',
    devTools: v.NODE_ENV !== 'production',
    stripe: stripeSettings(v),
  };
}

/**
 * Outside production, with no provider host and no key configured, the server talks to the local
 * fake that it starts itself on STRIPE_FAKE_PORT (fixed development key and signing secret).
 * Otherwise the configured host (or the provider's default) and keys are used as given.
 */
function stripeSettings(v: z.infer<typeof schema>): StripeSettings {
  const dev = v.NODE_ENV !== 'production';
  const fake = dev && !v.STRIPE_API_HOST && !v.STRIPE_SECRET_KEY;
  return {
    secretKey: v.STRIPE_SECRET_KEY ?? (dev ? 'sk_test_bandwright_local_fake' : null),
    webhookSecret: v.STRIPE_WEBHOOK_SECRET ?? (dev ? 'whsec_bandwright_local_fake_signing_secret' : null),
    ...(fake
      ? { host: '127.0.0.1', port: v.STRIPE_FAKE_PORT, protocol: 'http' as const }
      : { host: v.STRIPE_API_HOST, port: v.STRIPE_API_PORT, protocol: v.STRIPE_API_PROTOCOL }),
    fake,
  };
}
