import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { contentSecurityPolicy } from '@/server/lib/security-headers';
import { startTestApp, type TestApp } from '../helpers/app';

/**
 * Security headers on pages and API answers: a content security policy the web export works under
 * (checked in Chromium by every e2e test, which fails on a CSP refusal in the console), no framing,
 * no MIME sniffing, a referrer policy, and no cross-site embedding except of public answers.
 */

let t: TestApp;
let dist: string;
beforeAll(async () => {
  dist = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-dist-'));
  fs.writeFileSync(path.join(dist, 'index.html'), '<!doctype html><html><head><style id="expo-reset">#root{display:flex}</style></head><body><div id="root"></div><script src="/_expo/static/js/web/entry-0.js" defer></script></body></html>');
  t = await startTestApp({ WEB_DIST: dist });
});
afterAll(async () => {
  await t?.close();
  fs.rmSync(dist, { recursive: true, force: true });
});

/** The policy's directives by name. */
function directives(header: string | undefined): Record<string, string[]> {
  expect(header).toBeDefined();
  return Object.fromEntries(
    header!
      .split(';')
      .map((d) => d.trim().split(/\s+/))
      .filter((d) => d[0])
      .map(([name, ...values]) => [name!, values]),
  );
}

function expectCommonHeaders(h: Record<string, string>) {
  expect(h['x-frame-options']).toBe('DENY');
  expect(h['x-content-type-options']).toBe('nosniff');
  expect(h['referrer-policy']).toBe('same-origin');
  expect(h['x-powered-by']).toBeUndefined();
  const csp = directives(h['content-security-policy']);
  expect(csp['frame-ancestors']).toEqual(["'none'"]);
  expect(csp['default-src']).toEqual(["'self'"]);
  expect(csp['object-src']).toEqual(["'none'"]);
}

test('a page of the app gets the policy the export needs: own scripts only, inline styles, own and data: fonts and images', async () => {
  for (const url of ['/', '/groups/some-client-route']) {
    const res = await request(t.app).get(url).set('Accept', 'text/html');
    expect(res.status).toBe(200);
    expectCommonHeaders(res.headers);
    const csp = directives(res.headers['content-security-policy']);
    expect(csp['script-src']).toEqual(["'self'"]);
    expect(csp['style-src']).toEqual(["'self'", "'unsafe-inline'"]);
    expect(csp['font-src']).toEqual(["'self'", 'data:']);
    expect(csp['img-src']).toEqual(["'self'", 'data:', 'blob:']);
    expect(csp['connect-src']).toEqual(["'self'"]);
    // Plain HTTP here: no upgrade to an HTTPS port that is not there, no HSTS.
    expect(csp['upgrade-insecure-requests']).toBeUndefined();
    expect(res.headers['strict-transport-security']).toBeUndefined();
    expect(res.headers['cross-origin-resource-policy']).toBe('same-origin');
  }
});

test('API answers carry them too, errors included; public answers may be embedded anywhere', async () => {
  for (const [url, status] of [['/api/health', 200], ['/api/me', 401], ['/api/no-such-route', 404]] as const) {
    const res = await request(t.app).get(url);
    expect(res.status).toBe(status);
    expectCommonHeaders(res.headers);
    expect(res.headers['cross-origin-resource-policy']).toBe('same-origin');
  }
  const pub = await request(t.app).get('/api/public/results');
  expect(pub.status).toBe(200);
  expectCommonHeaders(pub.headers);
  expect(pub.headers['cross-origin-resource-policy']).toBe('cross-origin');
});

test('behind HTTPS the policy also upgrades requests and HSTS is sent', async () => {
  expect(contentSecurityPolicy({ https: true })['upgrade-insecure-requests']).toEqual([]);
  const secure = await startTestApp({ PUBLIC_URL: 'https://registry.example.org' });
  try {
    const res = await request(secure.app).get('/api/health');
    expect(directives(res.headers['content-security-policy'])['upgrade-insecure-requests']).toEqual([]);
    expect(res.headers['strict-transport-security']).toMatch(/^max-age=\d+/);
  } finally {
    await secure.close();
  }
});
