import { and, eq, sql } from 'drizzle-orm';
import request from 'supertest';
import { listMailTo } from '@/db/queries/mail';
import { user, verification } from '@/db/schema';
import { escapeHtml } from '@/server/lib/html';
import { PASSWORD, signUp, startTestApp, TEST_ORIGIN, uniqueEmail, type TestApp } from '../helpers/app';

/**
 * Password reset (better-auth's request-password-reset and reset-password, mail through our
 * outbox): one neutral answer, a link that works once and for an hour, every session ended.
 */

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => t?.close());

const anon = () => request(t.app);
const NEW_PASSWORD = 'a-brand-new-passphrase';
const askReset = (email: string) => anon().post('/api/auth/request-password-reset').set('Origin', TEST_ORIGIN).send({ email });
const reset = (token: string, newPassword = NEW_PASSWORD) =>
  anon().post('/api/auth/reset-password').set('Origin', TEST_ORIGIN).send({ token, newPassword });
const signIn = (email: string, password: string) => anon().post('/api/auth/sign-in/email').set('Origin', TEST_ORIGIN).send({ email, password });
const resetMails = async (email: string) => (await listMailTo(t.ctx.db, email)).filter((m) => m.kind === 'password-reset');
/** The link of the newest reset mail to `email`. */
async function resetLink(email: string): Promise<URL> {
  const [mail] = await resetMails(email);
  const link = mail?.text.match(/https?:\/\/\S+/)?.[0];
  if (!link) throw new Error(`no reset mail with a link for ${email}`);
  return new URL(link);
}
const tokenFor = async (email: string) => (await resetLink(email)).searchParams.get('token')!;
const resetRowsOf = async (userId: string) => t.ctx.db.select().from(verification).where(eq(verification.value, userId));

describe('asking for a reset', () => {
  test('a known address gets a mail whose link opens the reset screen; an unknown one gets the very same answer and no mail', async () => {
    const person = await signUp(t.app, 'Forgetful Physicist');
    const unknown = uniqueEmail('nobody');

    const known = await askReset(person.email);
    const nobody = await askReset(unknown);
    expect(known.status).toBe(200);
    expect(nobody.status).toBe(200);
    expect(nobody.body).toEqual(known.body);
    expect(known.body).toEqual({ status: true, message: expect.stringMatching(/^If this email exists/) });
    expect(await listMailTo(t.ctx.db, unknown)).toEqual([]);

    const [mail, ...more] = await resetMails(person.email);
    expect(more).toEqual([]);
    expect(mail).toMatchObject({ subject: 'Reset your Bandwright password' });
    expect(mail!.text).toContain('Forgetful Physicist');
    expect(mail!.text).toMatch(/works once, within 60 minutes/);
    const link = await resetLink(person.email);
    expect(`${link.origin}${link.pathname}`).toBe(`${TEST_ORIGIN}/reset-password`);
    expect(link.searchParams.get('token')).toMatch(/^[A-Za-z0-9_-]{20,}$/);
    expect(mail!.html).toContain(`href="${escapeHtml(link.href)}"`);
  });

  test('the address is matched whatever its case and spaces', async () => {
    const person = await signUp(t.app, 'Case Insensitive');
    expect((await askReset(`  ${person.email.toUpperCase()} `)).status).toBe(200);
    expect(await resetMails(person.email)).toHaveLength(1);
  });

  test('the token is stored only as a hash, and runs out one hour after it was made', async () => {
    const person = await signUp(t.app, 'Hash Check');
    await askReset(person.email);
    const token = await tokenFor(person.email);
    const rows = await resetRowsOf(person.user.id);
    expect(rows).toHaveLength(1);
    expect(JSON.stringify(rows)).not.toContain(token);
    const lifetimeSeconds = (rows[0]!.expiresAt.getTime() - rows[0]!.createdAt.getTime()) / 1000;
    expect(lifetimeSeconds).toBeGreaterThan(3595);
    expect(lifetimeSeconds).toBeLessThan(3605);
  });

  test('a bad or missing address → 400 naming it; no mail', async () => {
    for (const body of [{ email: 'not-an-address' }, {}]) {
      const res = await anon().post('/api/auth/request-password-reset').set('Origin', TEST_ORIGIN).send(body);
      expect(res.status).toBe(400);
      expect(res.body.error.code).toBe('validation_failed');
      expect(res.body.error.details.map((d: { field: string }) => d.field)).toEqual(['email']);
    }
  });
});

describe('choosing the new password', () => {
  test('the link works once: the new password signs in, the old one is refused, the same token again → 400', async () => {
    const person = await signUp(t.app, 'Once Only');
    await askReset(person.email);
    const token = await tokenFor(person.email);

    const done = await reset(token);
    expect(done.status).toBe(200);
    expect(done.body).toEqual({ status: true });
    expect((await signIn(person.email, NEW_PASSWORD)).status).toBe(200);
    const old = await signIn(person.email, PASSWORD);
    expect(old.status).toBe(401);

    const again = await reset(token, 'yet-another-passphrase');
    expect(again.status).toBe(400);
    expect(again.body.error).toEqual({ code: 'invalid_token', message: expect.stringMatching(/already used|expired/) });
    expect((await signIn(person.email, 'yet-another-passphrase')).status).toBe(401);
    expect(await resetRowsOf(person.user.id)).toEqual([]);
  });

  test('every session of the account ends, on every device (also the remembered ones); other accounts keep theirs', async () => {
    const person = await signUp(t.app, 'Many Devices');
    const laptop = request.agent(t.app).set('Origin', TEST_ORIGIN);
    expect((await laptop.post('/api/auth/sign-in/email').send({ email: person.email, password: PASSWORD })).status).toBe(200);
    const bystander = await signUp(t.app, 'Bystander');
    // Both sessions answered once, so the session cache remembers them.
    for (const a of [person.agent, laptop, bystander.agent]) expect((await a.get('/api/me')).status).toBe(200);

    await askReset(person.email);
    expect((await reset(await tokenFor(person.email))).status).toBe(200);

    expect((await person.agent.get('/api/me')).status).toBe(401);
    expect((await laptop.get('/api/me')).status).toBe(401);
    expect((await bystander.agent.get('/api/me')).status).toBe(200);
    expect((await t.ctx.db.execute(sql`select count(*)::int as n from session where user_id = ${person.user.id}`)).rows[0]).toEqual({ n: 0 });
  });

  test('an older link stops working once the password was reset with a newer one', async () => {
    const person = await signUp(t.app, 'Asked Twice');
    await askReset(person.email);
    const first = await tokenFor(person.email);
    await askReset(person.email);
    const second = await tokenFor(person.email);
    expect(second).not.toBe(first);
    expect((await reset(second)).status).toBe(200);
    const stale = await reset(first, 'an-attackers-passphrase');
    expect(stale.status).toBe(400);
    expect((await signIn(person.email, NEW_PASSWORD)).status).toBe(200);
  });

  test('two resets with one token at the same moment: one 200, one 400', async () => {
    const person = await signUp(t.app, 'Double Submit');
    await askReset(person.email);
    const token = await tokenFor(person.email);
    const both = await Promise.all([reset(token, 'first-racing-passphrase'), reset(token, 'second-racing-passphrase')]);
    expect(both.map((r) => r.status).sort()).toEqual([200, 400]);
    const winner = both[0]!.status === 200 ? 'first-racing-passphrase' : 'second-racing-passphrase';
    expect((await signIn(person.email, winner)).status).toBe(200);
  });

  test('an expired link → 400 with a clear message, and the password stays as it was', async () => {
    const person = await signUp(t.app, 'Too Slow');
    await askReset(person.email);
    const token = await tokenFor(person.email);
    await t.ctx.db.update(verification).set({ expiresAt: sql`now() - interval '1 second'` }).where(eq(verification.value, person.user.id));
    const res = await reset(token);
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({ code: 'invalid_token', message: expect.stringMatching(/expired/) });
    expect((await signIn(person.email, PASSWORD)).status).toBe(200);
    expect((await signIn(person.email, NEW_PASSWORD)).status).toBe(401);
  });

  test('a made-up token → 400 invalid_token', async () => {
    const res = await reset('A'.repeat(24));
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('invalid_token');
  });

  test('a new password that breaks the shared rule → 400 naming newPassword, and the link still works afterwards', async () => {
    const person = await signUp(t.app, 'Short Password');
    await askReset(person.email);
    const token = await tokenFor(person.email);
    const short = await reset(token, '123456789');
    expect(short.status).toBe(400);
    expect(short.body.error.details).toEqual([{ field: 'newPassword', message: 'must be at least 10 characters' }]);
    const long = await reset(token, 'p'.repeat(129));
    expect(long.body.error.details).toEqual([{ field: 'newPassword', message: 'must be at most 128 characters' }]);
    const noToken = await anon().post('/api/auth/reset-password').set('Origin', TEST_ORIGIN).send({ newPassword: NEW_PASSWORD });
    expect(noToken.status).toBe(400);
    expect(noToken.body.error.details).toEqual([{ field: 'token', message: expect.any(String) }]);
    // A token in the query string does not get round the check of the body.
    const viaQuery = await anon().post(`/api/auth/reset-password?token=${token}`).set('Origin', TEST_ORIGIN).send({ newPassword: 'short' });
    expect(viaQuery.status).toBe(400);

    expect((await reset(token)).status).toBe(200);
    const [row] = await t.ctx.db.select({ id: user.id }).from(user).where(and(eq(user.email, person.email)));
    expect(row).toBeDefined();
    expect((await signIn(person.email, NEW_PASSWORD)).status).toBe(200);
  });
});

describe('rate limit', () => {
  let limited: TestApp;
  beforeAll(async () => {
    limited = await startTestApp({ AUTH_RATE_LIMIT: '3', TRUST_PROXY: 'loopback' }) // behind a proxy on loopback: X-Forwarded-For names the client;
  });
  afterAll(async () => limited?.close());

  test('asking for resets is limited per client like sign-in, and counts with it: the 4th auth attempt in a minute → 429', async () => {
    const ask = (email: string, ip?: string) => {
      const r = request(limited.app).post('/api/auth/request-password-reset').set('Origin', TEST_ORIGIN);
      return (ip ? r.set('X-Forwarded-For', ip) : r).send({ email });
    };
    const statuses = [];
    for (let i = 0; i < 3; i++) statuses.push((await ask(uniqueEmail('spray'))).status);
    expect(statuses).toEqual([200, 200, 200]);
    const fourth = await ask(uniqueEmail('spray'));
    expect(fourth.status).toBe(429);
    expect(fourth.body.error.code).toBe('rate_limited');
    // The same budget as sign-in and setting the password.
    expect((await request(limited.app).post('/api/auth/sign-in/email').set('Origin', TEST_ORIGIN).send({ email: uniqueEmail(), password: 'guessing-passwords' })).status).toBe(429);
    expect((await request(limited.app).post('/api/auth/reset-password').set('Origin', TEST_ORIGIN).send({ token: 'A'.repeat(24), newPassword: NEW_PASSWORD })).status).toBe(429);
    // Another client is counted apart.
    expect((await ask(uniqueEmail('elsewhere'), '203.0.113.9')).status).toBe(200);
  });
});
