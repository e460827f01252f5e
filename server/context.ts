import { createAuth, type Auth } from './auth';
import { createDb, type Db } from './db';
import type { Env } from './env';
import { createMailer, type Mailer } from './services/mail';

/** Everything a route or service needs, built once per process (or per test file). */
export type Ctx = { env: Env; db: Db; auth: Auth; mail: Mailer };

export function createContext(env: Env): Ctx {
  const db = createDb(env.DATABASE_URL);
  return { env, db, auth: createAuth(db, env), mail: createMailer(db, env) };
}

export async function closeContext(ctx: Ctx): Promise<void> {
  await ctx.db.$client.end();
}
