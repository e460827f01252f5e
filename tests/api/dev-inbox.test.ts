import request from 'supertest';
import { listMailTo } from '@/db/queries/mail';
import { mailMessageSchema } from '@/shared/schemas/groups';
import { signUp, startTestApp, uniqueEmail, type TestApp } from '../helpers/app';
import { makeGroup, makeInvitation, makePerson } from '../helpers/factories';

describe('the development inbox', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(async () => t?.close());

  test('shows the signed-in user their own mail and nobody else’s', async () => {
    const host = await makePerson(t, 'Host');
    const g1 = await makeGroup(t, host);
    const g2 = await makeGroup(t, host);
    const alice = await makePerson(t, 'Alice');
    const bob = await makePerson(t, 'Bob');
    await makeInvitation(t, host, g1, alice.email);
    await makeInvitation(t, host, g2, alice.email);
    await makeInvitation(t, host, g1, bob.email);
    await makeInvitation(t, host, g1, uniqueEmail('not-registered'));

    const a = await alice.agent.get('/api/dev/inbox');
    expect(a.status).toBe(200);
    const aliceMail = a.body.messages.map((m: unknown) => mailMessageSchema.parse(m));
    // Her two invitations and the verification mail of her sign-up.
    expect(aliceMail.map((m: { kind: string }) => m.kind).sort()).toEqual(['invitation', 'invitation', 'verification']);
    expect(new Set(aliceMail.map((m: { to: string }) => m.to))).toEqual(new Set([alice.email]));
    expect(aliceMail.map((m: { id: string }) => m.id).sort()).toEqual((await listMailTo(t.ctx.db, alice.email)).map((m) => m.id).sort());

    const b = await bob.agent.get('/api/dev/inbox');
    expect(b.body.messages.map((m: { to: string }) => m.to)).toEqual([bob.email, bob.email]);
    // Nothing in the query string widens it to someone else's mail.
    const sneaky = await bob.agent.get(`/api/dev/inbox?to=${encodeURIComponent(alice.email)}&address=${encodeURIComponent(alice.email)}`);
    expect(sneaky.body.messages.map((m: { to: string }) => m.to)).toEqual([bob.email, bob.email]);

    expect((await host.agent.get('/api/dev/inbox')).body.messages.map((m: { kind: string }) => m.kind)).toEqual(['verification']);
  });

  test('needs a signed-in user', async () => {
    const res = await request(t.app).get('/api/dev/inbox');
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('unauthorized');
  });

  test('the app tells the client that development tools are on', async () => {
    const me = await makePerson(t);
    expect((await me.agent.get('/api/me')).body.devTools).toBe(true);
  });
});

describe('in production', () => {
  let prod: TestApp;
  beforeAll(async () => {
    prod = await startTestApp({ NODE_ENV: 'production', AUTH_SECRET: 'tV7pQ2xL9mZc4rB8nK1sW6dF3hJ0yG5a', MAIL_MODE: 'outbox' });
  });
  afterAll(async () => prod?.close());

  test('the inbox route does not exist (404 JSON), signed in or not', async () => {
    const me = await signUp(prod.app, 'Production User');
    const owner = await signUp(prod.app, 'Production Owner');
    const groupId = (await owner.agent.post('/api/groups').send({ name: 'Production Group' })).body.id as string;
    await owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: me.email, role: 'viewer' }).expect(201);

    for (const res of [await me.agent.get('/api/dev/inbox'), await request(prod.app).get('/api/dev/inbox')]) {
      expect(res.status).toBe(404);
      expect(res.headers['content-type']).toMatch(/application\/json/);
      expect(res.body.error.code).toBe('not_found');
    }
    const mine = await me.agent.get('/api/me');
    expect(mine.status).toBe(200);
    expect(mine.body.devTools).toBe(false);
  });

  test('the rest of the API works as usual', async () => {
    expect((await request(prod.app).get('/api/health')).status).toBe(200);
    const someone = await signUp(prod.app, 'Someone', { email: uniqueEmail('prod') });
    expect((await someone.agent.get('/api/groups')).status).toBe(200);
  });
});
