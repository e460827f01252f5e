import type PgBoss from 'pg-boss';
import type Stripe from 'stripe';
import { createAuth, type Auth } from './auth';
import { createDb, type Db } from './db';
import type { Env } from './env';
import { createStripeClient } from './services/billing';
import { createMailer, type Mailer } from './services/mail';

/**
 * Everything a route or service needs, built once per process (or per test file). `jobs` is the
 * job queue, set once it has started (scan routes answer 503 without it). `stripe` is the payment
 * provider's SDK client (the local fake outside production; null when billing is not configured).
 */
export type Ctx = { env: Env; db: Db; auth: Auth; mail: Mailer; jobs?: PgBoss; stripe: Stripe | null };

export function createContext(env: Env): Ctx {
  const db = createDb(env.DATABASE_URL);
  return { env, db, auth: createAuth(db, env), mail: createMailer(db, env), stripe: createStripeClient(env.stripe) };
}

export async function closeContext(ctx: Ctx): Promise<void> {
  if (ctx.jobs) await ctx.jobs.stop({ graceful: true, wait: true, timeout: 10_000 });
  await ctx.db.$client.end();
}
