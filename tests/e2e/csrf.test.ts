import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Page } from 'playwright-core';
import { newPage, pageErrors, signUpInBrowser, startE2E, type E2E } from '../helpers/browser';
import { sampleCurve, sampleMeta } from '../helpers/factories';

jest.setTimeout(120_000);

/**
 * Cross-site request forgery in a real browser: a signed-in curator opens a page served from
 * another loopback port (the same site as the app, so Chromium sends the `SameSite=Lax` session
 * cookie along) that posts to the publish route, once as a self-submitting form and once as a
 * credentialed `fetch`. The server refuses both (403 `untrusted_origin`) and the draft stays a
 * draft; the same request from the app's own page publishes it.
 */

let e: E2E;
let evil: Server;
let evilBase: string;
/** The publish URL the next evil page posts to (set by each test). */
let target = '';

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

beforeAll(async () => {
  e = await startE2E();
  // The attacker's site: another port of 127.0.0.1.
  evil = http.createServer((req, res) => {
    res.setHeader('Content-Type', 'text/html; charset=utf-8');
    if (req.url === '/form.html') {
      res.end(`<!doctype html><title>Free figures</title>
<form id="f" method="POST" action="${escapeHtml(target)}"><input type="hidden" name="public" value="true"></form>
<script>document.getElementById('f').submit();</script>`);
    } else if (req.url === '/fetch.html') {
      res.end(`<!doctype html><title>Free figures</title><p id="out">sending</p>
<script>
fetch(${JSON.stringify(target)}, { method: 'POST', credentials: 'include', mode: 'no-cors', headers: { 'Content-Type': 'text/plain' }, body: '{"public":true}' })
  .then(() => { document.getElementById('out').textContent = 'sent'; }, (err) => { document.getElementById('out').textContent = 'failed ' + err; });
</script>`);
    } else {
      res.statusCode = 404;
      res.end('not here');
    }
  });
  await new Promise<void>((r) => evil.listen(0, '127.0.0.1', () => r()));
  evilBase = `http://127.0.0.1:${(evil.address() as AddressInfo).port}`;
});
afterAll(async () => {
  await new Promise((r) => evil?.close(r));
  await e?.close();
});

/**
 * A same-origin API call from the app's page (the browser adds the cookie and its Origin). Sent as
 * source text: the test's own code is transpiled, and its helpers do not exist in the page.
 */
async function api(page: Page, method: string, path: string, body?: unknown): Promise<{ status: number; body: Record<string, unknown> }> {
  const init = { method, credentials: 'include', headers: body === undefined ? {} : { 'Content-Type': 'application/json' }, body: body === undefined ? undefined : JSON.stringify(body) };
  return page.evaluate(`fetch(${JSON.stringify(path)}, ${JSON.stringify(init)}).then(async (res) => ({ status: res.status, body: await res.json().catch(() => null) }))`);
}

test('a page on another loopback port cannot publish a signed-in curator’s draft, by form or by fetch', async () => {
  const { page, context } = await newPage(e, 'wide');
  await signUpInBrowser(page, 'Cora Curator', `curator-${Date.now().toString(36)}@lab.example`);
  const group = await api(page, 'POST', '/api/groups', { name: 'Fictional Forgery Watch' });
  expect(group.status).toBe(201);
  const groupId = group.body.id as string;
  const draft = async () => {
    const { curve, theory } = sampleCurve();
    const r = await api(page, 'POST', `/api/groups/${groupId}/results`, { meta: sampleMeta({ title: 'Draft nobody should publish' }), curve, theory });
    expect(r.status).toBe(201);
    return r.body.resultId as string;
  };
  const state = async (resultId: string) => (await api(page, 'GET', `/api/groups/${groupId}/results/${resultId}/versions/1`)).body.state as string;

  // 1. A self-submitting form (a top-level navigation with the cookie).
  const formDraft = await draft();
  target = `${e.base}/api/groups/${groupId}/results/${formDraft}/versions/1/publish`;
  const attacker = await context.newPage();
  const formAnswer = attacker.waitForResponse((r) => r.url() === target);
  await attacker.goto(`${evilBase}/form.html`);
  const answered = await formAnswer;
  expect(answered.status()).toBe(403);
  expect(await answered.json()).toMatchObject({ error: { code: 'untrusted_origin' } });
  expect(await state(formDraft)).toBe('draft');

  // 2. A credentialed fetch (no-cors: the page cannot read the answer, but the request is sent).
  const fetchDraft = await draft();
  target = `${e.base}/api/groups/${groupId}/results/${fetchDraft}/versions/1/publish`;
  // The browser sends it; the answer (403) may reach the page, or be withheld from it by the
  // answer's Cross-Origin-Resource-Policy (then the request "fails" in the page). Either way the
  // draft must stay a draft.
  const fetchSent = attacker.waitForRequest((r) => r.url() === target);
  const fetchEnded = new Promise<number | 'blocked'>((resolve) => {
    attacker.on('response', (r) => r.url() === target && resolve(r.status()));
    attacker.on('requestfailed', (r) => r.url() === target && resolve('blocked'));
  });
  await attacker.goto(`${evilBase}/fetch.html`);
  await fetchSent;
  expect([403, 'blocked']).toContain(await fetchEnded);
  await attacker.locator('#out').filter({ hasNotText: 'sending' }).waitFor();
  expect(await state(fetchDraft)).toBe('draft');

  // The request itself is a good one: from the app's own page it publishes.
  const own = await api(page, 'POST', `/api/groups/${groupId}/results/${fetchDraft}/versions/1/publish`, { public: true });
  expect(own.status).toBe(200);
  expect(await state(fetchDraft)).toBe('published');
  // And the curator is still signed in.
  expect((await api(page, 'GET', '/api/me')).status).toBe(200);
  expect(pageErrors(page)).toEqual([]);
  await context.close();
});
