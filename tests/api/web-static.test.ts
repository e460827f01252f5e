import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { startTestApp, type TestApp } from '../helpers/app';

/**
 * How the exported web app is served: pages asked again every time, the hashed bundle kept for a
 * year, text answers gzipped. A small stand-in export is written to a temporary folder (WEB_DIST).
 */
let t: TestApp;
let dist: string;
const BUNDLE = '/_expo/static/js/web/entry-0123abcd.js';
beforeAll(async () => {
  dist = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-dist-'));
  fs.mkdirSync(path.join(dist, '_expo/static/js/web'), { recursive: true });
  fs.writeFileSync(path.join(dist, 'index.html'), `<!doctype html><html><body><script src="${BUNDLE}"></script></body></html>`);
  fs.writeFileSync(path.join(dist, BUNDLE), 'console.log("a web bundle");\n'.repeat(2000));
  t = await startTestApp({ WEB_DIST: dist });
});
afterAll(async () => {
  await t?.close();
  fs.rmSync(dist, { recursive: true, force: true });
});

test('pages are revalidated every time; the hashed bundle is immutable for a year and sent gzipped', async () => {
  const page = await request(t.app).get('/').set('Accept', 'text/html');
  expect(page.status).toBe(200);
  expect(page.headers['cache-control']).toBe('no-cache');
  const route = await request(t.app).get('/figures').set('Accept', 'text/html');
  expect(route.status).toBe(200);
  expect(route.headers['cache-control']).toBe('no-cache');

  const js = await request(t.app).get(BUNDLE).set('Accept-Encoding', 'gzip');
  expect(js.status).toBe(200);
  expect(js.headers['cache-control']).toBe('public, max-age=31536000, immutable');
  expect(js.headers['content-encoding']).toBe('gzip');
  expect(js.text).toContain('a web bundle');
});

test('small answers and clients that do not accept gzip get the bytes as they are', async () => {
  const small = await request(t.app).get('/api/health').set('Accept-Encoding', 'gzip');
  expect(small.status).toBe(200);
  // Under the 1 KB threshold: sent as is.
  expect(small.headers['content-encoding']).toBeUndefined();
  const plain = await request(t.app).get(BUNDLE).set('Accept-Encoding', 'identity');
  expect(plain.status).toBe(200);
  expect(plain.headers['content-encoding']).toBeUndefined();
  expect(Number(plain.headers['content-length'])).toBe(fs.statSync(path.join(dist, BUNDLE)).size);
});

test('the example input files download from /examples/, and nothing else of the repository does', async () => {
  for (const name of ['scan-example.csv', 'scan-example.json', 'limits.csv']) {
    const res = await request(t.app).get(`/examples/${name}`).buffer(true).parse((r, cb) => {
      let body = '';
      r.on('data', (c: Buffer) => (body += c.toString('utf8')));
      r.on('end', () => cb(null, body));
    });
    expect(res.status).toBe(200);
    expect(res.headers['content-disposition']).toBe(`attachment; filename="${name}"`);
    expect(res.body).toBe(fs.readFileSync(path.resolve(__dirname, '../../assets/examples', name), 'utf8'));
  }
  for (const p of ['/examples/../package.json', '/examples/%2e%2e/package.json', '/examples/nothing.csv']) {
    const res = await request(t.app).get(p).set('Accept', 'application/json');
    expect(res.status).toBe(404);
  }
});
