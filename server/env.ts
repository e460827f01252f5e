import { DEFAULT_UPLOAD_LIMIT_BYTES } from '../shared/bytes';
import { isIP } from 'node:net';
import { z } from 'zod';

/**
 * The one place that reads process.env. The entry point calls `loadEnv()` and passes the result down.
 * Development defaults are chosen so `npm start` works with no configuration; production refuses
 * to start without real secrets (`productionSecrets`).
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
    /**
     * Which reverse proxies may tell the client's address (X-Forwarded-For), for Express's
     * `trust proxy`: unset = none, the connecting address is the client. See `trustProxySetting`.
     */
    TRUST_PROXY: z
      .string()
      .optional()
      .transform((v, ctx) => {
        const r = trustProxySetting(v);
        if (typeof r === 'object') {
          ctx.addIssue({ code: 'custom', message: r.error });
          return z.NEVER;
        }
        return r;
      }),
    /** "outbox": mail is stored in the dev_mail table (the local mail fake); "smtp": sent via SMTP_URL. */
    MAIL_MODE: z.enum(['outbox', 'smtp']).optional(),
    SMTP_URL: z.string().optional(),
    MAIL_FROM: z.string().default('Bandwright <no-reply@bandwright.invalid>'),
    WEB_DIST: z.string().optional(),
    /** Job workers started inside the server process (npm run worker starts more elsewhere). */
    WORKERS: z.coerce.number().int().min(0).max(16).default(1),
    /** A running task whose worker has not renewed its lease for this long is taken for dead (crashed) and retried. */
    JOB_EXPIRE_SECONDS: z.coerce.number().int().min(1).default(900),
    /** How often workers look for scans and points that a dead worker left unsaved or unmerged. */
    JOB_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).default(30),
    /** A task that failed is retried after this many seconds, doubled at every further attempt. */
    JOB_RETRY_SECONDS: z.coerce.number().positive().default(5),
    /** Largest scan accepted, in points × bins × pseudo-experiments (1 per point when asymptotic). */
    SCAN_COST_LIMIT: z.coerce.number().positive().default(200_000_000),
    /** Figure renders per minute per IP for callers who are not signed in (public and by-id render routes). */
    RENDER_RATE_LIMIT: z.coerce.number().int().positive().default(300),
    /** Renderer processes (PNG and PDF are drawn outside the server process, see server/figures/render-pool.ts). */
    RENDER_PROCESSES: z.coerce.number().int().min(1).max(16).default(2),
    /** A PNG or PDF render taking longer (waiting included) is given up with 500 and its renderer process killed. */
    RENDER_TIMEOUT_SECONDS: z.coerce.number().positive().default(60),
    /** Largest result upload accepted (file or JSON body), in bytes; larger ones get 413. */
    UPLOAD_LIMIT_BYTES: z.coerce.number().int().positive().default(DEFAULT_UPLOAD_LIMIT_BYTES),
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
    if (v.NODE_ENV === 'production') productionSecrets(v, ctx);
    // Production sends real mail unless told otherwise; elsewhere mail stays in the local outbox.
    const mode = v.MAIL_MODE ?? (v.NODE_ENV === 'production' ? 'smtp' : 'outbox');
    if (mode === 'smtp' && !v.SMTP_URL) {
      ctx.addIssue({ code: 'custom', path: ['SMTP_URL'], message: 'SMTP_URL is required when mail is sent by SMTP (MAIL_MODE=smtp, the production default)' });
    }
  });

/**
 * Development defaults: they only ever sign cookies of a development server and talk to the local
 * payment fake that the server starts itself. They are in the source, so production refuses them.
 */
export const DEV_AUTH_SECRET = 'bandwright-development-secret-not-for-production-use';
export const DEV_STRIPE_SECRET_KEY = 'sk_test_bandwright_local_fake';
export const DEV_STRIPE_WEBHOOK_SECRET = 'whsec_bandwright_local_fake_signing_secret';

/** Fewer different characters than this is a placeholder ("xxxx…", "changeme…"), not a secret. */
const MIN_DISTINCT_CHARS = 10;

/**
 * Production needs real secrets: AUTH_SECRET set, not the development default and not a
 * placeholder (anyone holding it can forge sessions); the payment provider's key and webhook
 * signing secret both or neither (billing off: it answers 503), never the development ones (the
 * signing secret in the source would let anyone post a "paid" event).
 */
function productionSecrets(v: { AUTH_SECRET?: string; STRIPE_SECRET_KEY?: string; STRIPE_WEBHOOK_SECRET?: string }, ctx: z.RefinementCtx) {
  const issue = (path: string, message: string) => ctx.addIssue({ code: 'custom', path: [path], message });
  const placeholder = (value: string) => new Set(value).size < MIN_DISTINCT_CHARS;
  if (!v.AUTH_SECRET) issue('AUTH_SECRET', 'AUTH_SECRET (32+ random characters, e.g. `openssl rand -base64 32`) is required in production');
  else if (v.AUTH_SECRET === DEV_AUTH_SECRET) issue('AUTH_SECRET', 'AUTH_SECRET is the development default from the source; set a random one (e.g. `openssl rand -base64 32`)');
  else if (placeholder(v.AUTH_SECRET)) issue('AUTH_SECRET', `AUTH_SECRET looks like a placeholder (fewer than ${MIN_DISTINCT_CHARS} different characters); set a random one (e.g. \`openssl rand -base64 32\`)`);
  if (v.STRIPE_SECRET_KEY === DEV_STRIPE_SECRET_KEY) issue('STRIPE_SECRET_KEY', "STRIPE_SECRET_KEY is the local fake's key from the source; set the provider's secret key, or leave both STRIPE_ variables unset to run without billing");
  if (v.STRIPE_WEBHOOK_SECRET === DEV_STRIPE_WEBHOOK_SECRET) {
    issue('STRIPE_WEBHOOK_SECRET', "STRIPE_WEBHOOK_SECRET is the local fake's signing secret from the source (anyone could sign events with it); set the webhook endpoint's signing secret from the provider");
  } else if (v.STRIPE_WEBHOOK_SECRET && placeholder(v.STRIPE_WEBHOOK_SECRET)) {
    issue('STRIPE_WEBHOOK_SECRET', `STRIPE_WEBHOOK_SECRET looks like a placeholder (fewer than ${MIN_DISTINCT_CHARS} different characters); set the webhook endpoint's signing secret from the provider`);
  }
  if (v.STRIPE_SECRET_KEY && !v.STRIPE_WEBHOOK_SECRET) {
    issue('STRIPE_WEBHOOK_SECRET', 'STRIPE_WEBHOOK_SECRET is required with STRIPE_SECRET_KEY: without it no payment would ever change a plan');
  }
  if (v.STRIPE_WEBHOOK_SECRET && !v.STRIPE_SECRET_KEY) issue('STRIPE_SECRET_KEY', 'STRIPE_SECRET_KEY is required with STRIPE_WEBHOOK_SECRET (or leave both unset to run without billing)');
}

const PROXY_WORDS = new Set(['loopback', 'linklocal', 'uniquelocal']);

/**
 * TRUST_PROXY as Express's `trust proxy` value. Unset, empty or `false`: no proxy is trusted and
 * X-Forwarded-For is ignored (a client cannot choose the address the sign-in rate limit counts).
 * A number: that many proxies in front (the address that many hops back). Otherwise a comma-separated
 * list of the proxies' addresses or subnets (`10.0.0.2`, `10.0.0.0/8`, `::1`) or `loopback`,
 * `linklocal`, `uniquelocal`. `true` (trust any sender) is refused: every client could then pick
 * its own address.
 */
export function trustProxySetting(raw: string | undefined): false | number | string | { error: string } {
  const v = raw?.trim() ?? '';
  if (v === '' || v === 'false' || v === '0') return false;
  if (v === 'true') return { error: 'TRUST_PROXY=true would let any client set its own address; give the number of proxies in front (e.g. 1) or their addresses (e.g. loopback, 10.0.0.2)' };
  if (/^\d+$/.test(v)) {
    const hops = Number(v);
    return hops <= 10 ? hops : { error: 'TRUST_PROXY: at most 10 proxies in front of the server' };
  }
  const parts = v.split(',').map((p) => p.trim());
  const bad = parts.filter((p) => {
    if (PROXY_WORDS.has(p)) return false;
    const [addr, bits, ...rest] = p.split('/');
    if (rest.length || !addr || !isIP(addr)) return true;
    if (bits === undefined) return false;
    return !/^\d{1,3}$/.test(bits) || Number(bits) > (isIP(addr) === 4 ? 32 : 128);
  });
  if (bad.length) return { error: `TRUST_PROXY: not an address, subnet, number of proxies or one of loopback, linklocal, uniquelocal: ${bad.join(', ')}` };
  return parts.join(',');
}

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
    // Never used in production (productionSecrets requires a real one there).
    AUTH_SECRET: v.AUTH_SECRET ?? DEV_AUTH_SECRET,
    devTools: v.NODE_ENV !== 'production',
    stripe: stripeSettings(v),
  };
}

/**
 * The environment the server's child processes start with (the scan workers, which read it with
 * their own `loadEnv()`): the server's own, handed on from here so that no other module reads
 * process.env.
 */
export function childProcessEnv(): NodeJS.ProcessEnv {
  return { ...process.env };
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
    secretKey: v.STRIPE_SECRET_KEY ?? (dev ? DEV_STRIPE_SECRET_KEY : null),
    webhookSecret: v.STRIPE_WEBHOOK_SECRET ?? (dev ? DEV_STRIPE_WEBHOOK_SECRET : null),
    ...(fake
      ? { host: '127.0.0.1', port: v.STRIPE_FAKE_PORT, protocol: 'http' as const }
      : { host: v.STRIPE_API_HOST, port: v.STRIPE_API_PORT, protocol: v.STRIPE_API_PROTOCOL }),
    fake,
  };
}
