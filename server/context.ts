import type PgBoss from 'pg-boss';
import type Stripe from 'stripe';
import { createAuth, type Auth } from './auth';
import { createDb, type Db } from './db';
import type { Env } from './env';
import { createRenderPool, type RenderPool } from './figures/render-pool';
import { createStripeClient } from './services/billing';
import { createMailer, type Mailer } from './services/mail';
import { createSessionCache, type SessionCache } from './session-cache';

/**
 * Everything a route or service needs, built once per process (or per test file). `jobs` is the
 * job queue, set once it has started (scan routes answer 503 without it). `stripe` is the payment
 * provider's SDK client (the local fake outside production; null when billing is not configured).
 * `sessions` answers "who is this session cookie" from memory for a few seconds (server/session-cache.ts).
 * `renderer` draws PNGs and PDFs in child processes (server/figures/render-pool.ts), started on first use.
 */
export type Ctx = { env: Env; db: Db; auth: Auth; sessions: SessionCache; mail: Mailer; jobs?: PgBoss; stripe: Stripe | null; renderer: RenderPool };

export function createContext(env: Env): Ctx {
  const db = createDb(env.DATABASE_URL);
  const auth = createAuth(db, env);
  const renderer = createRenderPool({ size: env.RENDER_PROCESSES, timeoutMs: env.RENDER_TIMEOUT_SECONDS * 1000 });
  return { env, db, auth, sessions: createSessionCache(auth), mail: createMailer(db, env), stripe: createStripeClient(env.stripe), renderer };
}

export async function closeContext(ctx: Ctx): Promise<void> {
  if (ctx.jobs) await ctx.jobs.stop({ graceful: true, wait: true, timeout: 10_000 });
  await ctx.renderer.stop();
  await ctx.db.$client.end();
}
