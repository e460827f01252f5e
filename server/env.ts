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
    /** Largest result upload accepted (file or JSON body), in bytes; larger ones get 413. */
    UPLOAD_LIMIT_BYTES: z.coerce.number().int().positive().default(5 * 1024 * 1024),
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

export type Env = z.infer<typeof schema> & { PUBLIC_URL: string; AUTH_SECRET: string; MAIL_MODE: 'outbox' | 'smtp'; devTools: boolean };

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
  };
}
