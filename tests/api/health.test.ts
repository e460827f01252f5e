import net, { type AddressInfo } from 'node:net';
import request from 'supertest';
import { createApp } from '@/server/app';
import { closeContext, createContext } from '@/server/context';
import { loadEnv } from '@/server/env';
import { HEALTH_TIMEOUT_MS } from '@/server/services/health';
import { startTestApp, signUp, TEST_ORIGIN, type TestApp } from '../helpers/app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => t.close());

test('GET /api/health answers ok with the database up', async () => {
  const res = await request(t.app).get('/api/health');
  expect(res.status).toBe(200);
  expect(res.body).toEqual({ ok: true, db: 'up' });
});

test('GET /api/limits gives anyone the upload limit the server enforces (the app checks files against it)', async () => {
  const res = await request(t.app).get('/api/limits');
  expect(res.status).toBe(200);
  expect(res.body).toEqual({ uploadLimitBytes: t.ctx.env.UPLOAD_LIMIT_BYTES });
  const small = await startTestApp({ UPLOAD_LIMIT_BYTES: '800000' });
  try {
    expect((await request(small.app).get('/api/limits')).body).toEqual({ uploadLimitBytes: 800000 });
  } finally {
    await small.close();
  }
});

test('unknown API routes answer 404 JSON in the error shape', async () => {
  const res = await request(t.app).get('/api/nope');
  expect(res.status).toBe(404);
  expect(res.body.error.code).toBe('not_found');
});

test('sign-up sets an httpOnly, sameSite session cookie and /api/me knows the user', async () => {
  const email = 'cookie@lab.example';
  const agent = request.agent(t.app);
  const res = await agent.post('/api/auth/sign-up/email').set('Origin', TEST_ORIGIN).send({ name: 'Cookie', email, password: 'long-enough-pw' });
  expect(res.status).toBe(200);
  const cookies = ([] as string[]).concat(res.headers['set-cookie'] ?? []);
  const session = cookies.find((c) => c.includes('session_token'));
  expect(session).toMatch(/HttpOnly/i);
  expect(session).toMatch(/SameSite=Lax/i);
  const me = await agent.get('/api/me');
  expect(me.status).toBe(200);
  expect(me.body.user.email).toBe(email);
  expect(me.body.groups).toEqual([]);
});

test('signUp helper works', async () => {
  const { agent } = await signUp(t.app);
  expect((await agent.get('/api/me')).status).toBe(200);
});

test('GET /api/health answers 503 when the database does not answer', async () => {
  // A port on loopback where nothing listens: every query fails.
  const probe = net.createServer();
  await new Promise<void>((r) => probe.listen(0, '127.0.0.1', r));
  const port = (probe.address() as AddressInfo).port;
  await new Promise((r) => probe.close(r));
  const ctx = createContext(loadEnv({ DATABASE_URL: `postgres://postgres@127.0.0.1:${port}/none`, NODE_ENV: 'test', PUBLIC_URL: TEST_ORIGIN }));
  try {
    const res = await request(createApp(ctx)).get('/api/health');
    expect(res.status).toBe(503);
    expect(res.body).toEqual({ ok: false, db: 'down' });
  } finally {
    await closeContext(ctx);
  }
});

test('GET /api/health answers 503 within its timeout when the database accepts connections but never answers', async () => {
  // A listener on loopback that takes the connection and says nothing, like a stopped PostgreSQL
  // process: without a bound the request would wait as long as the operating system does.
  const sockets = new Set<net.Socket>();
  const silent = net.createServer((socket) => {
    sockets.add(socket);
    socket.on('error', () => {});
  });
  await new Promise<void>((r) => silent.listen(0, '127.0.0.1', r));
  const port = (silent.address() as AddressInfo).port;
  const ctx = createContext(loadEnv({ DATABASE_URL: `postgres://postgres@127.0.0.1:${port}/none`, NODE_ENV: 'test', PUBLIC_URL: TEST_ORIGIN }));
  try {
    const started = Date.now();
    const res = await request(createApp(ctx)).get('/api/health');
    const took = Date.now() - started;
    expect(res.status).toBe(503);
    expect(res.body).toEqual({ ok: false, db: 'down' });
    expect(sockets.size).toBeGreaterThan(0); // the connection was made and then left unanswered
    expect(took).toBeGreaterThanOrEqual(HEALTH_TIMEOUT_MS - 50);
    expect(took).toBeLessThan(HEALTH_TIMEOUT_MS + 1500);
  } finally {
    for (const s of sockets) s.destroy();
    await new Promise((r) => silent.close(r));
    await closeContext(ctx);
  }
});
