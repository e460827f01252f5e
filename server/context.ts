import type Stripe from 'stripe';
import { createAuth, type Auth } from './auth';
import type { ScanQueue } from './jobs/queue';
import { createDb, type Db } from '../db/client';
import type { Env } from './env';
import { createRenderPool, type RenderPool } from './figures/render-pool';
import { createStripeClient } from './clients/stripe';
import { createMailer, type Mailer } from './clients/mail';
import { createReadCache, type ReadCache } from './read-cache';
import { createSessionCache, type SessionCache } from './session-cache';

/**
 * Everything a route or service needs, built once per process (or per test file). `jobs` is the
 * job queue, set once it has started (scan routes answer 503 without it). `stripe` is the payment
 * provider's SDK client (the local fake outside production; null when billing is not configured).
 * `sessions` answers "who is this session cookie" from memory for a few seconds (server/session-cache.ts);
 * `reads` remembers registry reads until the registry changes (server/read-cache.ts);
 * `renderer` draws PNGs and PDFs in child processes (server/figures/render-pool.ts), started on first use.
 */
export type Ctx = { env: Env; db: Db; auth: Auth; sessions: SessionCache; reads: ReadCache; mail: Mailer; jobs?: ScanQueue; stripe: Stripe | null; renderer: RenderPool };

export function createContext(env: Env): Ctx {
  const db = createDb(env.DATABASE_URL);
  const mail = createMailer(db, env);
  const auth = createAuth(db, env, mail);
  const renderer = createRenderPool({ size: env.RENDER_PROCESSES, timeoutMs: env.RENDER_TIMEOUT_SECONDS * 1000 });
  return { env, db, auth, sessions: createSessionCache(auth), reads: createReadCache(env.DATABASE_URL), mail, stripe: createStripeClient(env.stripe), renderer };
}

export async function closeContext(ctx: Ctx): Promise<void> {
  if (ctx.jobs) await ctx.jobs.stop();
  await ctx.renderer.stop();
  await ctx.reads.close();
  await ctx.db.$client.end();
}
