import request from 'supertest';
import { trustedOrigins } from '@/server/lib/origins';
import { PASSWORD, startTestApp, TEST_ORIGIN, uniqueEmail, type TestApp } from '../helpers/app';
import { signedEvent } from '../helpers/billing';
import { makeGroup, makeResult, type Person } from '../helpers/factories';
import { apiRoutesOf, fillPath, paramNames, splitRoute } from '../helpers/routes';

/**
 * Cross-site request forgery: a signed-in browser must not change anything for a page of another
 * origin, not even one on another port of the same host (same site, so the `SameSite=Lax` session
 * cookie goes along). Writes with a cookie need a trusted Origin; API tokens and the signed
 * payment webhook are not affected; reads are not either (no CORS headers, so a foreign page
 * cannot read the answers).
 */

jest.setTimeout(60_000);

/** Another port of the same host as the app: same site, other origin. */
const FOREIGN = 'http://127.0.0.1:8081';

let t: TestApp;
let cookie: string;
let owner: Person;

/** Signs up without a default Origin on the agent, keeping the session cookie to send by hand. */
async function signUpForCookie(): Promise<{ cookie: string; person: Person }> {
  const email = uniqueEmail('csrf');
  const res = await request(t.app).post('/api/auth/sign-up/email').set('Origin', TEST_ORIGIN).send({ name: 'Csrf Curator', email, password: PASSWORD });
  expect(res.status).toBe(200);
  const setCookie = ([] as string[]).concat(res.headers['set-cookie'] ?? []);
  const jar = setCookie.map((c) => c.split(';')[0]).join('; ');
  expect(jar).toMatch(/session_token=/);
  const agent = request.agent(t.app).set('Origin', TEST_ORIGIN).set('Cookie', jar);
  return { cookie: jar, person: { agent, user: res.body.user, email } };
}

beforeAll(async () => {
  t = await startTestApp();
  ({ cookie, person: owner } = await signUpForCookie());
});
afterAll(async () => t?.close());

/** A fresh draft of the owner's, and the URL that publishes it. */
async function draft() {
  const groupId = await makeGroup(t, owner);
  const v = await makeResult(owner, groupId);
  return { groupId, resultId: v.resultId, publish: `/api/groups/${groupId}/results/${v.resultId}/versions/1/publish` };
}
const stateOf = async (d: { groupId: string; resultId: string }) =>
  (await owner.agent.get(`/api/groups/${d.groupId}/results/${d.resultId}/versions/1`)).body.state as string;

const withCookie = (method: 'post' | 'get', url: string, headers: Record<string, string>) => {
  let call = request(t.app)[method](url).set('Cookie', cookie);
  for (const [k, v] of Object.entries(headers)) call = call.set(k, v);
  return call;
};

test('the trusted origins are PUBLIC_URL and its loopback twin, the same list better-auth uses', () => {
  expect(trustedOrigins('http://127.0.0.1:8080')).toEqual(['http://127.0.0.1:8080', 'http://localhost:8080']);
  expect(trustedOrigins('http://localhost:3000/')).toEqual(['http://localhost:3000', 'http://127.0.0.1:3000']);
  expect(trustedOrigins('https://registry.example.org')).toEqual(['https://registry.example.org']);
  expect((t.ctx.auth.options as { trustedOrigins?: string[] }).trustedOrigins).toEqual(trustedOrigins(TEST_ORIGIN));
});

describe('a write with the session cookie', () => {
  test('from a page on another port of the same host is refused with 403 untrusted_origin, and the draft stays a draft', async () => {
    const d = await draft();
    const res = await withCookie('post', d.publish, { Origin: FOREIGN, 'Sec-Fetch-Site': 'same-site' }).type('form').send('');
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('untrusted_origin');
    expect(res.body.error.message).toContain(FOREIGN);
    expect(await stateOf(d)).toBe('draft');
  });

  test.each([
    ['Origin: null (a sandboxed frame or a no-referrer page)', { Origin: 'null' }],
    ['another host', { Origin: 'http://bandwright.example.net' }],
    ['the right host over another scheme', { Origin: 'https://127.0.0.1:8080' }],
    ['no Origin, Sec-Fetch-Site cross-site', { 'Sec-Fetch-Site': 'cross-site' }],
    ['no Origin, Sec-Fetch-Site same-site (another port)', { 'Sec-Fetch-Site': 'same-site' }],
    ['no Origin or Sec-Fetch-Site, a foreign Referer', { Referer: `${FOREIGN}/evil.html` }],
  ])('from %s is refused', async (_name, headers) => {
    const d = await draft();
    const res = await withCookie('post', d.publish, headers).send({});
    expect({ status: res.status, code: res.body.error?.code }).toEqual({ status: 403, code: 'untrusted_origin' });
    expect(await stateOf(d)).toBe('draft');
  });

  test.each([
    ['its own origin', { Origin: TEST_ORIGIN, 'Sec-Fetch-Site': 'same-origin' }],
    ['the localhost twin of its origin', { Origin: 'http://localhost:8080' }],
    ['no Origin but Sec-Fetch-Site same-origin', { 'Sec-Fetch-Site': 'same-origin' }],
    ['no Origin, no Sec-Fetch-Site, its own Referer', { Referer: `${TEST_ORIGIN}/groups` }],
    // Not a browser (all current ones send Origin on cross-origin writes): a script with a copied cookie.
    ['no browser headers at all', {}],
  ])('from %s goes through', async (_name, headers) => {
    const d = await draft();
    const res = await withCookie('post', d.publish, headers).send({});
    expect(res.status).toBe(200);
    expect(await stateOf(d)).toBe('published');
  });

  test('every route that changes state is guarded (walked from the router), the payment webhook aside', async () => {
    const fill = (path: string) => fillPath(path, Object.fromEntries(paramNames(path).map((p) => [p, p === 'version' || p === 'index' ? '1' : '00000000-0000-4000-8000-000000000000'])));
    const writes = apiRoutesOf(t.app).filter((r) => !r.startsWith('GET '));
    expect(writes.length).toBeGreaterThan(25);
    const unguarded: string[] = [];
    for (const key of writes) {
      const { method, path } = splitRoute(key);
      const res = await request(t.app)[method](fill(path)).set('Cookie', cookie).set('Origin', FOREIGN).send({});
      if (res.status !== 403 || res.body.error?.code !== 'untrusted_origin') unguarded.push(`${key}: ${res.status}`);
    }
    expect(unguarded).toEqual(['POST /api/billing/webhook: 400']);
    // better-auth's routes too (sign-out ends the session: a forged one is refused).
    const out = await request(t.app).post('/api/auth/sign-out').set('Cookie', cookie).set('Origin', FOREIGN).send({});
    expect(out.status).toBe(403);
    expect(out.body.error.code).toBe('untrusted_origin');
    expect((await owner.agent.get('/api/me')).status).toBe(200);
  });

  test('reads with the cookie from another origin are answered (no CORS headers, so that page cannot read them)', async () => {
    const res = await withCookie('get', '/api/me', { Origin: FOREIGN, 'Sec-Fetch-Site': 'same-site' });
    expect(res.status).toBe(200);
    expect(res.headers['access-control-allow-origin']).toBeUndefined();
  });
});

describe('requests without the session cookie are not affected', () => {
  test('an API token works from anywhere, also when a cookie rides along', async () => {
    const d = await draft();
    const token = (await owner.agent.post('/api/tokens').send({ name: 'publisher' })).body.token as string;
    const res = await withCookie('post', d.publish, { Origin: FOREIGN, 'Sec-Fetch-Site': 'same-site', Authorization: `Bearer ${token}` }).send({});
    expect(res.status).toBe(200);
    expect(await stateOf(d)).toBe('published');
  });

  test('no cookie: the usual 401, not a 403', async () => {
    const d = await draft();
    const res = await request(t.app).post(d.publish).set('Origin', FOREIGN).send({});
    expect(res.status).toBe(401);
  });

  test('the signed payment webhook is answered whatever its Origin and cookies', async () => {
    const e = signedEvent('customer.created', { id: 'cus_csrfcheck', object: 'customer' }, { secret: t.ctx.env.stripe.webhookSecret! });
    const res = await request(t.app)
      .post('/api/billing/webhook')
      .set('Cookie', cookie)
      .set('Origin', FOREIGN)
      .set('Content-Type', 'application/json')
      .set('Stripe-Signature', e.signature)
      .send(e.payload);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ received: true, duplicate: false });
  });
});
