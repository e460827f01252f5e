import type { Express } from 'express';
import request from 'supertest';
import { createApp } from '@/server/app';
import { closeContext, createContext, type Ctx } from '@/server/context';
import { loadEnv } from '@/server/env';
import { createTestDatabase } from './db';

export const TEST_ORIGIN = 'http://127.0.0.1:8080';
export const PASSWORD = 'correct-horse-battery';

export type TestApp = { app: Express; ctx: Ctx; close: () => Promise<void> };

/** The real app on a fresh database; `extraEnv` overrides settings (e.g. the rate limit). */
export async function startTestApp(extraEnv: Record<string, string> = {}): Promise<TestApp> {
  const db = await createTestDatabase();
  const ctx = createContext(
    loadEnv({ DATABASE_URL: db.url, NODE_ENV: 'test', PUBLIC_URL: TEST_ORIGIN, AUTH_RATE_LIMIT: '1000', RENDER_RATE_LIMIT: '100000', ...extraEnv }),
  );
  const app = createApp(ctx);
  return {
    app,
    ctx,
    close: async () => {
      await closeContext(ctx);
      await db.drop();
    },
  };
}

let seq = 0;
/** A fresh address nobody has used yet (unique per process). */
export function uniqueEmail(prefix = 'user'): string {
  seq += 1;
  return `${prefix}${seq}-${Math.random().toString(36).slice(2, 8)}@lab.example`;
}

/**
 * Signs up a new user and returns a cookie-carrying agent plus the user. The agent sends the
 * trusted Origin header on every request (better-auth wants it on cookie POSTs such as sign-out).
 */
export async function signUp(app: Express, name = 'Test User', opts: { email?: string; password?: string; verified?: boolean } = {}) {
  const email = opts.email ?? uniqueEmail();
  const agent = request.agent(app).set('Origin', TEST_ORIGIN);
  const res = await agent.post('/api/auth/sign-up/email').send({ name, email, password: opts.password ?? PASSWORD });
  if (res.status !== 200) throw new Error(`sign-up failed: ${res.status} ${JSON.stringify(res.body)}`);
  if (opts.verified) await verifyAddress(agent);
  return { agent, user: res.body.user as { id: string; email: string; name: string }, email };
}

/** The link in the newest mail of `kind` in the signed-in user's development inbox. */
export async function linkInInbox(agent: Agent, kind: string): Promise<URL> {
  const inbox = await agent.get('/api/dev/inbox');
  const mail = (inbox.body.messages as Array<{ kind: string; text: string }> | undefined)?.find((m) => m.kind === kind);
  const link = mail?.text.match(/https?:\/\/\S+/)?.[0];
  if (!link) throw new Error(`no ${kind} mail with a link in this inbox: ${inbox.status} ${JSON.stringify(inbox.body)}`);
  return new URL(link);
}

/**
 * Verifies the signed-in user's address as the app's verification screen does with the link of
 * the newest verification mail in their development inbox.
 */
export async function verifyAddress(agent: Agent): Promise<void> {
  const link = await linkInInbox(agent, 'verification');
  const res = await agent.get(`/api/auth/verify-email?token=${encodeURIComponent(link.searchParams.get('token') ?? '')}`);
  if (res.status !== 200) throw new Error(`verification failed: ${res.status} ${JSON.stringify(res.body)}`);
}

/** An agent whose every request carries the trusted Origin header (better-auth wants it on POSTs). */
export type Agent = ReturnType<typeof request.agent>;
