import { eq } from 'drizzle-orm';
import request from 'supertest';
import { inspect } from 'node:util';
import { user } from '@/db/schema';
import { apiErrorSchema } from '@/shared/schemas/common';
import { PASSWORD, signUp, startTestApp, TEST_ORIGIN, uniqueEmail, type TestApp } from '../helpers/app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => t?.close());

const anon = () => request.agent(t.app).set('Origin', TEST_ORIGIN);
const fields = (body: { error?: { details?: Array<{ field: string }> } }) => (body.error?.details ?? []).map((d) => d.field).sort();
const sessionCookie = (res: request.Response) =>
  ([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => /session_token=[^;]+/.test(c) && !/Max-Age=0/i.test(c));
const userExists = async (email: string) => (await t.ctx.db.select({ id: user.id }).from(user).where(eq(user.email, email))).length > 0;

describe('sign-up validation (our zod schema, before better-auth)', () => {
  test('a short password and a bad address → 400 naming both fields; no account is made', async () => {
    const res = await anon().post('/api/auth/sign-up/email').send({ name: 'Short', email: 'not-an-address', password: 'short' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(fields(res.body)).toEqual(['email', 'password']);
    expect(res.body.error.details).toEqual(
      expect.arrayContaining([
        { field: 'password', message: 'must be at least 10 characters' },
        { field: 'email', message: 'must be a valid e-mail address' },
      ]),
    );
    expect(await userExists('not-an-address')).toBe(false);
  });

  test('a password of 9 characters is refused, 10 are accepted', async () => {
    const email = uniqueEmail('boundary');
    const nine = await anon().post('/api/auth/sign-up/email').send({ name: 'Nine', email, password: '123456789' });
    expect(nine.status).toBe(400);
    expect(fields(nine.body)).toEqual(['password']);
    expect(await userExists(email)).toBe(false);
    const ten = await anon().post('/api/auth/sign-up/email').send({ name: 'Ten', email, password: '1234567890' });
    expect(ten.status).toBe(200);
    expect(await userExists(email)).toBe(true);
  });

  test.each([
    ['a missing name', { email: 'x@lab.example', password: PASSWORD }, ['name']],
    ['a name with a control character', { name: 'Nul\u0000Name', email: 'y@lab.example', password: PASSWORD }, ['name']],
    ['a password over 128 characters', { name: 'Long', email: 'z@lab.example', password: 'p'.repeat(129) }, ['password']],
    ['an empty body', {}, ['email', 'name', 'password']],
  ])('%s → 400 naming the field', async (_what, body, expected) => {
    const res = await anon().post('/api/auth/sign-up/email').send(body);
    expect(res.status).toBe(400);
    expect(fields(res.body)).toEqual(expected);
  });

  test('signing up twice with one address → an error in the API shape, and the first account still works', async () => {
    const first = await signUp(t.app, 'First');
    const again = await anon().post('/api/auth/sign-up/email').send({ name: 'Second', email: first.email, password: 'another-password-1' });
    expect(again.status).toBeGreaterThanOrEqual(400);
    expect(again.status).toBeLessThan(500);
    expect(apiErrorSchema.strict().safeParse(again.body).success).toBe(true);
    const signIn = await anon().post('/api/auth/sign-in/email').send({ email: first.email, password: PASSWORD });
    expect(signIn.status).toBe(200);
  });

  test('sign-in without a password → 400 naming it', async () => {
    const res = await anon().post('/api/auth/sign-in/email').send({ email: 'who@lab.example' });
    expect(res.status).toBe(400);
    expect(fields(res.body)).toEqual(['password']);
  });
});

describe('signing in and out', () => {
  test('a wrong password → 401 in the { error: { code, message } } shape, the same as an unknown address', async () => {
    const { email } = await signUp(t.app);
    const wrong = await anon().post('/api/auth/sign-in/email').send({ email, password: 'not-the-password' });
    expect(wrong.status).toBe(401);
    expect(wrong.headers['content-type']).toMatch(/json/);
    expect(Object.keys(wrong.body)).toEqual(['error']);
    expect(wrong.body.error).toEqual({ code: expect.any(String), message: expect.any(String) });
    expect(sessionCookie(wrong)).toBeUndefined();

    const unknown = await anon().post('/api/auth/sign-in/email').send({ email: uniqueEmail('nobody'), password: 'not-the-password' });
    expect(unknown.status).toBe(401);
    expect(unknown.body).toEqual(wrong.body);
  });

  test('session cookies are httpOnly and SameSite=Lax, on sign-up and on sign-in', async () => {
    const email = uniqueEmail('cookies');
    const up = await anon().post('/api/auth/sign-up/email').send({ name: 'Cookie Jar', email, password: PASSWORD });
    const inRes = await anon().post('/api/auth/sign-in/email').send({ email, password: PASSWORD });
    for (const res of [up, inRes]) {
      expect(res.status).toBe(200);
      const cookies = ([] as string[]).concat(res.headers['set-cookie'] ?? []);
      expect(cookies.length).toBeGreaterThan(0);
      expect(sessionCookie(res)).toBeDefined();
      for (const c of cookies) {
        expect(c).toMatch(/;\s*HttpOnly/i);
        expect(c).toMatch(/;\s*SameSite=Lax/i);
        expect(c).toMatch(/;\s*Path=\//i);
      }
    }
  });

  test('signing in with the right password gives a working session', async () => {
    const { email } = await signUp(t.app, 'Returning');
    const agent = anon();
    expect((await agent.get('/api/me')).status).toBe(401);
    expect((await agent.post('/api/auth/sign-in/email').send({ email, password: PASSWORD })).status).toBe(200);
    const me = await agent.get('/api/me');
    expect(me.status).toBe(200);
    expect(me.body.user.email).toBe(email);
  });

  test('sign-out ends the session on the server: /api/me → 401, also with the old cookie replayed', async () => {
    const email = uniqueEmail('leaving');
    const agent = anon();
    const up = await agent.post('/api/auth/sign-up/email').send({ name: 'Leaving', email, password: PASSWORD });
    const cookie = sessionCookie(up)!.split(';')[0]!;
    expect((await request(t.app).get('/api/me').set('Cookie', cookie)).status).toBe(200);

    const out = await agent.post('/api/auth/sign-out').send({});
    expect(out.status).toBe(200);
    const me = await agent.get('/api/me');
    expect(me.status).toBe(401);
    expect(me.body.error.code).toBe('unauthorized');
    const replay = await request(t.app).get('/api/me').set('Cookie', cookie);
    expect(replay.status).toBe(401);
    expect((await request(t.app).get('/api/groups').set('Cookie', cookie)).status).toBe(401);
  });

  test('remembered sessions never outlive a revocation: another device signed out through revoke-sessions is refused at once', async () => {
    const email = uniqueEmail('two-devices');
    const laptop = anon();
    await laptop.post('/api/auth/sign-up/email').send({ name: 'Two Devices', email, password: PASSWORD });
    const phone = anon();
    const signIn = await phone.post('/api/auth/sign-in/email').send({ email, password: PASSWORD });
    const phoneCookie = sessionCookie(signIn)!.split(';')[0]!;
    // Both sessions answered once, so both are remembered by the server's session cache.
    expect((await laptop.get('/api/me')).status).toBe(200);
    expect((await request(t.app).get('/api/me').set('Cookie', phoneCookie)).status).toBe(200);
    expect(t.ctx.sessions.size).toBeGreaterThanOrEqual(2);
    // The laptop ends every session of the account (better-auth's route; the app has no button for it yet).
    expect((await laptop.post('/api/auth/revoke-sessions').send({})).status).toBe(200);
    expect((await request(t.app).get('/api/me').set('Cookie', phoneCookie)).status).toBe(401);
    expect((await request(t.app).get('/api/groups').set('Cookie', phoneCookie)).status).toBe(401);
    expect((await laptop.get('/api/me')).status).toBe(401);
  });

  test('a made-up session cookie is not a session', async () => {
    const res = await request(t.app).get('/api/me').set('Cookie', 'better-auth.session_token=forged.value');
    expect(res.status).toBe(401);
  });
});

describe('passwords never reach the logs', () => {
  test('nothing the server writes to the console during sign-up and sign-in contains a password', async () => {
    const chunks: string[] = [];
    const capture = (...args: unknown[]) => {
      chunks.push(args.map((a) => (typeof a === 'string' ? a : inspect(a, { depth: 8 }))).join(' '));
    };
    const spies = [
      ...(['log', 'info', 'warn', 'error', 'debug', 'trace'] as const).map((m) => jest.spyOn(console, m).mockImplementation(capture)),
      jest.spyOn(process.stdout, 'write').mockImplementation((chunk: unknown) => (capture(String(chunk)), true)),
      jest.spyOn(process.stderr, 'write').mockImplementation((chunk: unknown) => (capture(String(chunk)), true)),
    ];
    const secrets = {
      good: 'Kx9-very-secret-good-password',
      wrong: 'Kx9-very-secret-wrong-password',
      invalid: 'Kx9-short',
      dupe: 'Kx9-very-secret-duplicate-password',
      long: `Kx9-${'L'.repeat(200)}`,
    };
    try {
      const email = uniqueEmail('quiet');
      await anon().post('/api/auth/sign-up/email').send({ name: 'Quiet', email, password: secrets.good }).expect(200);
      await anon().post('/api/auth/sign-up/email').send({ name: 'Quiet', email, password: secrets.dupe });
      await anon().post('/api/auth/sign-up/email').send({ name: 'Quiet', email: uniqueEmail('quiet'), password: secrets.invalid }).expect(400);
      await anon().post('/api/auth/sign-up/email').send({ name: 'Quiet', email: uniqueEmail('quiet'), password: secrets.long }).expect(400);
      await anon().post('/api/auth/sign-in/email').send({ email, password: secrets.good }).expect(200);
      await anon().post('/api/auth/sign-in/email').send({ email, password: secrets.wrong }).expect(401);
      await anon().post('/api/auth/sign-in/email').send({ email: uniqueEmail('ghost'), password: secrets.wrong }).expect(401);
      await anon().post('/api/auth/sign-in/email').send({ email, password: secrets.long }).expect(400);
      await anon().post('/api/auth/sign-in/email').set('Content-Type', 'application/json').send(`{"email":"${email}","password":"${secrets.wrong}"`).expect(400);
      // The capture itself works: what the server would print is seen here.
      console.warn('capture-check');
    } finally {
      for (const s of spies) s.mockRestore();
    }
    const all = chunks.join('\n');
    expect(all).toContain('capture-check');
    for (const secret of Object.values(secrets)) expect(all).not.toContain(secret);
    // The request bodies (e-mail + password together) are not dumped either.
    expect(all).not.toMatch(/Kx9-/);
  });
});

describe('malformed requests', () => {
  test('a body that is not JSON → 400 invalid_json, on auth and on API routes', async () => {
    const me = await signUp(t.app);
    const broken = '{"name": "unterminated';
    const a = await anon().post('/api/auth/sign-in/email').set('Content-Type', 'application/json').send(broken);
    const b = await me.agent.post('/api/groups').set('Content-Type', 'application/json').send(broken);
    for (const res of [a, b]) {
      expect(res.status).toBe(400);
      expect(res.body).toEqual({ error: { code: 'invalid_json', message: expect.any(String) } });
    }
    expect((await me.agent.get('/api/groups')).body.groups).toEqual([]);
  });

  test('an oversized body → 413 JSON, on auth (16 kB) and on API routes (1 MB)', async () => {
    const me = await signUp(t.app);
    const a = await anon().post('/api/auth/sign-in/email').send({ email: 'big@lab.example', password: 'p'.repeat(20_000) });
    const b = await me.agent.post('/api/groups').send({ name: 'Big', description: 'd'.repeat(1_100_000) });
    for (const res of [a, b]) {
      expect(res.status).toBe(413);
      expect(res.body).toEqual({ error: { code: 'too_large', message: expect.any(String) } });
    }
  });

  test('unknown routes → 404 JSON, under /api and under /api/auth, and for a wrong method', async () => {
    const me = await signUp(t.app);
    const calls: Array<[string, PromiseLike<request.Response>]> = [
      ['GET /api/no-such-thing', request(t.app).get('/api/no-such-thing')],
      ['GET below a group', me.agent.get('/api/groups/00000000-0000-4000-8000-000000000000/no-such-thing')],
      ['PUT /api/groups', me.agent.put('/api/groups').send({ name: 'x' })],
      ['GET /api/auth/no-such-thing', request(t.app).get('/api/auth/no-such-thing')],
      ['POST /api/auth/no-such-thing', anon().post('/api/auth/no-such-thing').send({})],
      ['GET /api/auth/sign-in/email', request(t.app).get('/api/auth/sign-in/email')],
    ];
    for (const [what, call] of calls) {
      const res = await call;
      expect({ what, status: res.status, type: res.headers['content-type'] }).toEqual({
        what,
        status: 404,
        type: expect.stringMatching(/application\/json/),
      });
      expect(res.body.error).toEqual({ code: 'not_found', message: expect.any(String) });
    }
  });
});

describe('rate limit on sign-in and sign-up', () => {
  let limited: TestApp;
  beforeAll(async () => {
    limited = await startTestApp({ AUTH_RATE_LIMIT: '3' });
  });
  afterAll(async () => limited?.close());

  test('the 4th attempt within a minute → 429 JSON; other routes and other addresses are not affected', async () => {
    const attempt = (ip?: string) => {
      const r = request(limited.app).post('/api/auth/sign-in/email').set('Origin', TEST_ORIGIN);
      return (ip ? r.set('X-Forwarded-For', ip) : r).send({ email: 'someone@lab.example', password: 'guessing-passwords' });
    };
    const statuses = [];
    for (let i = 0; i < 3; i++) statuses.push((await attempt()).status);
    expect(statuses).toEqual([401, 401, 401]);
    const fourth = await attempt();
    expect(fourth.status).toBe(429);
    expect(fourth.body).toEqual({ error: { code: 'rate_limited', message: expect.stringMatching(/wait/) } });
    expect(fourth.headers['retry-after']).toBeDefined();

    // Sign-up from the same client is limited too, even with valid input.
    const up = await request(limited.app)
      .post('/api/auth/sign-up/email')
      .set('Origin', TEST_ORIGIN)
      .send({ name: 'Late', email: uniqueEmail('late'), password: PASSWORD });
    expect(up.status).toBe(429);

    // The rest of the API is not limited.
    expect((await request(limited.app).get('/api/health')).status).toBe(200);
  });

  test('by default no proxy is trusted: a made-up X-Forwarded-For per attempt does not get around the limit', async () => {
    const own = await startTestApp({ AUTH_RATE_LIMIT: '3' });
    try {
      const statuses = [];
      for (let i = 0; i < 6; i++) {
        const res = await request(own.app)
          .post('/api/auth/sign-in/email')
          .set('Origin', TEST_ORIGIN)
          .set('X-Forwarded-For', `203.0.113.${i + 1}`)
          .send({ email: 'someone@lab.example', password: 'guessing-passwords' });
        statuses.push(res.status);
      }
      expect(statuses).toEqual([401, 401, 401, 429, 429, 429]);
    } finally {
      await own.close();
    }
  });

  test('with TRUST_PROXY naming the proxy, clients behind it are counted by their forwarded address', async () => {
    // The tests connect from 127.0.0.1: here that is the trusted proxy.
    const proxied = await startTestApp({ AUTH_RATE_LIMIT: '3', TRUST_PROXY: 'loopback' });
    try {
      const attempt = (ip: string) =>
        request(proxied.app).post('/api/auth/sign-in/email').set('Origin', TEST_ORIGIN).set('X-Forwarded-For', ip).send({ email: 'someone@lab.example', password: 'guessing-passwords' });
      const one = [];
      for (let i = 0; i < 4; i++) one.push((await attempt('203.0.113.7')).status);
      expect(one).toEqual([401, 401, 401, 429]);
      expect((await attempt('198.51.100.20')).status).toBe(401);
    } finally {
      await proxied.close();
    }
  });
});
