import type PgBoss from 'pg-boss';
import { createAuth, type Auth } from './auth';
import { createDb, type Db } from './db';
import type { Env } from './env';
import { createMailer, type Mailer } from './services/mail';

/**
 * Everything a route or service needs, built once per process (or per test file). `jobs` is the
 * job queue, set once it has started (scan routes answer 503 without it).
 */
export type Ctx = { env: Env; db: Db; auth: Auth; mail: Mailer; jobs?: PgBoss };

export function createContext(env: Env): Ctx {
  const db = createDb(env.DATABASE_URL);
  return { env, db, auth: createAuth(db, env), mail: createMailer(db, env) };
}

export async function closeContext(ctx: Ctx): Promise<void> {
  if (ctx.jobs) await ctx.jobs.stop({ graceful: true, wait: true, timeout: 10_000 });
  await ctx.db.$client.end();
}
