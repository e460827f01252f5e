import { eq } from 'drizzle-orm';
import request from 'supertest';
import { apiTokens } from '@/db/schema';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeCrew, makeGroupWithRoles, makePerson, registryProbe, sampleCsv, sampleMeta, type Crew } from '../helpers/factories';

/**
 * Personal API tokens: shown once, stored hashed, acting as their user with the user's current
 * roles, refused once revoked, and managed from a signed-in session only.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
  ({ groupId } = await makeGroupWithRoles(t, { crew }));
}, 60_000);
afterAll(async () => t?.close());

async function newToken(who: keyof Crew, name = 'pipeline') {
  const res = await crew[who].agent.post('/api/tokens').send({ name });
  expect(res.status).toBe(201);
  return res.body as { id: string; name: string; prefix: string; token: string; createdAt: string; lastUsedAt: string | null };
}
const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

describe('creating and listing tokens', () => {
  test('the token is shown once; the list shows name, prefix and dates but never the token; the database keeps only a hash', async () => {
    const created = await newToken('analyst', 'nightly limits push');
    expect(created.token).toMatch(/^bw_[A-Za-z0-9_-]{32}$/);
    expect(created).toMatchObject({ name: 'nightly limits push', prefix: created.token.slice(0, 10), lastUsedAt: null });

    const list = await crew.analyst.agent.get('/api/tokens');
    expect(list.status).toBe(200);
    const mine = list.body.tokens.find((x: { id: string }) => x.id === created.id);
    expect(mine).toEqual({ id: created.id, name: 'nightly limits push', prefix: created.prefix, createdAt: created.createdAt, lastUsedAt: null });
    expect(list.text).not.toContain(created.token);

    const rows = await t.ctx.db.select().from(apiTokens).where(eq(apiTokens.id, created.id));
    expect(rows).toHaveLength(1);
    expect(JSON.stringify(rows)).not.toContain(created.token);
    expect(JSON.stringify(rows)).not.toContain(created.token.slice(10));
    expect(rows[0]!.tokenHash).toMatch(/^[0-9a-f]{64}$/);
  });

  test('each user sees only their own tokens', async () => {
    const a = await newToken('viewer', 'viewer script');
    const others = await crew.editor.agent.get('/api/tokens');
    expect(others.body.tokens.map((x: { id: string }) => x.id)).not.toContain(a.id);
  });

  test('a token needs a name; signed-out callers get 401', async () => {
    const res = await crew.analyst.agent.post('/api/tokens').send({ name: '  ' });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([{ field: 'name', message: 'must not be empty' }]);
    expect((await request(t.app).post('/api/tokens').send({ name: 'x' })).status).toBe(401);
    expect((await request(t.app).get('/api/tokens')).status).toBe(401);
  });
});

describe('using a token', () => {
  test('a Bearer token reads group routes as its user and marks the token used', async () => {
    const { token, id } = await newToken('viewer');
    const res = await request(t.app).get(`/api/groups/${groupId}`).set(bearer(token));
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ id: groupId, role: 'viewer' });
    expect((await request(t.app).get('/api/me').set(bearer(token))).body.user.id).toBe(crew.viewer.user.id);
    const listed = (await crew.viewer.agent.get('/api/tokens')).body.tokens.find((x: { id: string }) => x.id === id);
    expect(Date.parse(listed.lastUsedAt)).toBeGreaterThan(Date.now() - 60_000);
  });

  test('an analyst token uploads a CSV (multipart) that lands as a draft in the group', async () => {
    const { token } = await newToken('analyst');
    const before = await registryProbe.resultCount(t, groupId);
    const res = await request(t.app)
      .post(`/api/groups/${groupId}/results`)
      .set(bearer(token))
      .field('meta', JSON.stringify(sampleMeta({ title: 'Pushed from a pipeline' })))
      .attach('file', Buffer.from(sampleCsv()), 'limits.csv');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ state: 'draft', version: 1, createdBy: 'Analyst Person', meta: { title: 'Pushed from a pipeline' } });
    expect(await registryProbe.resultCount(t, groupId)).toBe(before + 1);
  });

  test("the user's role applies: a viewer's token cannot upload until the viewer is made analyst", async () => {
    const { token } = await newToken('viewer');
    const { groupId: g } = await makeGroupWithRoles(t, { crew });
    const upload = () =>
      request(t.app).post(`/api/groups/${g}/results`).set(bearer(token)).field('meta', JSON.stringify(sampleMeta())).attach('file', Buffer.from(sampleCsv()), 'limits.csv');
    const refused = await upload();
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toContain('(viewer)');
    expect(await registryProbe.resultCount(t, g)).toBe(0);

    expect((await crew.owner.agent.patch(`/api/groups/${g}/members/${crew.viewer.user.id}`).send({ role: 'analyst' })).status).toBe(200);
    expect((await upload()).status).toBe(201);
    expect(await registryProbe.resultCount(t, g)).toBe(1);

    // A group the user is not in stays closed to their token.
    const other = await makeGroupWithRoles(t);
    expect((await request(t.app).get(`/api/groups/${other.groupId}`).set(bearer(token))).status).toBe(404);
  });

  test('an unknown, malformed or revoked token gets 401, also on routes open to anonymous callers', async () => {
    const { token, id } = await newToken('analyst');
    expect((await request(t.app).get(`/api/groups/${groupId}`).set(bearer(token))).status).toBe(200);
    expect((await crew.analyst.agent.delete(`/api/tokens/${id}`)).status).toBe(204);
    for (const value of [`Bearer ${token}`, 'Bearer bw_AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA', 'Bearer nonsense', 'Basic dXNlcjpwdw==']) {
      for (const url of [`/api/groups/${groupId}`, '/api/results', '/api/me']) {
        const res = await request(t.app).get(url).set('Authorization', value);
        expect([value, url, res.status]).toEqual([value, url, 401]);
        expect(res.body.error.code).toBe('unauthorized');
      }
    }
    expect((await crew.analyst.agent.get('/api/tokens')).body.tokens.map((x: { id: string }) => x.id)).not.toContain(id);
  });
});

describe('managing tokens', () => {
  test("another user cannot revoke my token (404), and it keeps working", async () => {
    const { token, id } = await newToken('analyst');
    const other = await makePerson(t, 'Token Thief');
    const res = await other.agent.delete(`/api/tokens/${id}`);
    expect(res.status).toBe(404);
    expect((await crew.owner.agent.delete(`/api/tokens/${id}`)).status).toBe(404);
    expect((await request(t.app).get(`/api/groups/${groupId}`).set(bearer(token))).status).toBe(200);
  });

  test('tokens cannot create, list or revoke tokens', async () => {
    const { token, id } = await newToken('owner');
    const create = await request(t.app).post('/api/tokens').set(bearer(token)).send({ name: 'minted by a token' });
    expect(create.status).toBe(403);
    expect(create.body.error.message).toMatch(/sign in/);
    expect((await request(t.app).get('/api/tokens').set(bearer(token))).status).toBe(403);
    expect((await request(t.app).delete(`/api/tokens/${id}`).set(bearer(token))).status).toBe(403);
    const names = (await crew.owner.agent.get('/api/tokens')).body.tokens.map((x: { name: string }) => x.name);
    expect(names).not.toContain('minted by a token');
    expect((await request(t.app).get(`/api/groups/${groupId}`).set(bearer(token))).status).toBe(200);
  });
});
