import request from 'supertest';
import { z } from 'zod';
import { createApp } from '@/server/app';
import { buildApiDocument, expressPath, type ApiDocument } from '@/server/api-docs/document';
import { apiReference } from '@/server/api-docs/reference';
import { renderApiPage } from '@/server/api-docs/page';
import { createResultSchema } from '@/shared/schemas/results';
import { startTestApp, type TestApp } from '../helpers/app';
import { apiRoutesOf } from '../helpers/routes';

/**
 * The API reference (server/api-docs): the OpenAPI document lists exactly the routes the app
 * registers, is an OpenAPI 3.1 document built from the routes' own zod schemas, and its page
 * shows every operation, escaped, under the security headers.
 */

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => t?.close());

const METHODS = ['get', 'post', 'put', 'patch', 'delete'] as const;
type Op = { summary?: string; operationId?: string; tags?: string[]; parameters?: { name: string; in: string; required?: boolean; schema?: Record<string, unknown> }[]; responses?: Record<string, unknown>; requestBody?: { content: Record<string, { schema: Record<string, unknown> }> }; 'x-access'?: { who: string } };

/** Every operation of a document as `METHOD /api/express/:path`, with the operation. */
function operationsOf(doc: ApiDocument): { key: string; path: string; method: string; op: Op }[] {
  return Object.entries(doc.paths ?? {}).flatMap(([path, item]) =>
    METHODS.filter((m) => (item as Record<string, unknown>)[m]).map((method) => ({ key: `${method.toUpperCase()} ${expressPath(path)}`, path, method, op: (item as Record<string, Op>)[method]! })),
  );
}
const isAuth = (key: string) => key.includes(' /api/auth/');

async function served(app: unknown): Promise<ApiDocument> {
  const res = await request(app as Parameters<typeof request>[0]).get('/api/docs.json');
  expect(res.status).toBe(200);
  expect(res.headers['content-type']).toMatch(/^application\/json/);
  return res.body as ApiDocument;
}

describe('every route is documented, and only routes', () => {
  test('the routes under /api of a development server are exactly the documented operations (method and path)', async () => {
    const registered = apiRoutesOf(t.app);
    // Guard against a walk that finds nothing (e.g. if Express changed its internals).
    expect(registered).toEqual(expect.arrayContaining(['GET /api/health', 'GET /api/docs', 'POST /api/groups/:groupId/results', 'GET /api/dev/inbox']));
    const documented = operationsOf(await served(t.app)).map((o) => o.key).filter((k) => !isAuth(k));
    expect([...documented].sort()).toEqual(registered);
    expect(new Set(documented).size).toBe(documented.length);
  });

  test('in production the development routes are neither mounted nor documented', async () => {
    const prodApp = createApp({ ...t.ctx, env: { ...t.ctx.env, NODE_ENV: 'production', devTools: false } });
    const documented = operationsOf(await served(prodApp)).map((o) => o.key).filter((k) => !isAuth(k));
    expect([...documented].sort()).toEqual(apiRoutesOf(prodApp));
    expect(documented).not.toContain('GET /api/dev/inbox');
  });

  test('the auth routes the server checks itself are documented, and every documented auth route exists at better-auth', async () => {
    const doc = await served(t.app);
    const documented = operationsOf(doc).filter((o) => isAuth(o.key));
    const checked = apiRoutesOf(t.app, { auth: true });
    expect(checked).toEqual(expect.arrayContaining(['POST /api/auth/sign-in/email', 'POST /api/auth/sign-up/email']));
    expect(documented.map((o) => o.key)).toEqual(expect.arrayContaining(checked));
    // better-auth answers 404 for a path it does not have; anything else means the route is there.
    for (const o of documented) {
      const url = expressPath(o.path);
      const res = o.method === 'get' ? await request(t.app).get(url) : await request(t.app).post(url).send({});
      expect({ route: o.key, notFound: res.status === 404 }).toEqual({ route: o.key, notFound: false });
    }
  });
});

describe('the document', () => {
  test('is an OpenAPI 3.1 document: version, info, server, paths, components, one error shape', async () => {
    const doc = await served(t.app);
    expect(doc.openapi).toBe('3.1.0');
    expect(doc.info.title).toBe('Bandwright API');
    expect(doc.servers).toEqual([{ url: '/api' }]);
    expect(Object.keys(doc.paths ?? {}).length).toBeGreaterThan(50);
    const schemas = doc.components?.schemas as Record<string, { required?: string[] }>;
    expect(schemas.Error?.required).toEqual(['error']);
    expect(Object.keys(doc.components?.securitySchemes ?? {}).sort()).toEqual(['apiToken', 'sessionCookie']);
    expect(doc.components?.securitySchemes?.apiToken).toMatchObject({ type: 'http', scheme: 'bearer' });
    expect(doc.components?.securitySchemes?.sessionCookie).toMatchObject({ type: 'apiKey', in: 'cookie' });
  });

  test('every operation has a summary, a tag of the document, who may call it, a unique id, responses, and every path parameter', async () => {
    const doc = await served(t.app);
    const tags = new Set((doc.tags ?? []).map((tag) => tag.name));
    const ids = new Set<string>();
    for (const { key, path, op } of operationsOf(doc)) {
      expect({ key, summary: !!op.summary, tag: tags.has(op.tags?.[0] ?? ''), who: !!op['x-access']?.who }).toEqual({ key, summary: true, tag: true, who: true });
      expect(ids.has(op.operationId!)).toBe(false);
      ids.add(op.operationId!);
      const statuses = Object.keys(op.responses ?? {});
      expect({ key, success: statuses.some((s) => s.startsWith('2')) }).toEqual({ key, success: true });
      const inPath = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).sort();
      const declared = (op.parameters ?? []).filter((p) => p.in === 'path' && p.required).map((p) => p.name).sort();
      expect({ key, params: declared }).toEqual({ key, params: inPath });
    }
  });

  test('a body schema is the route\'s zod schema: the upload\'s JSON body requires what createResultSchema requires', async () => {
    const doc = await served(t.app);
    const upload = (doc.paths?.['/groups/{groupId}/results']?.post ?? {}) as Op;
    const jsonBody = upload.requestBody!.content['application/json']!.schema as { required: string[]; properties: Record<string, { required?: string[] }> };
    const requiredOf = (schema: z.ZodObject) => Object.entries(schema.shape).filter(([, f]) => !(f as z.ZodType).safeParse(undefined).success).map(([k]) => k).sort();
    expect([...jsonBody.required].sort()).toEqual(requiredOf(createResultSchema));
    expect([...jsonBody.properties.meta!.required!].sort()).toEqual(requiredOf(createResultSchema.shape.meta));
    expect(jsonBody.properties.meta!.required).toEqual(expect.arrayContaining(['title', 'sqrtS', 'method']));
    // Uploads also take a multipart form with the file.
    const form = upload.requestBody!.content['multipart/form-data']!.schema as { required: string[]; properties: Record<string, { format?: string }> };
    expect(form.required).toContain('file');
    expect(form.properties.file!.format).toBe('binary');
    const scan = (doc.paths?.['/groups/{groupId}/scans']?.post ?? {}) as Op;
    expect(Object.keys(scan.requestBody!.content).sort()).toEqual(['application/json', 'multipart/form-data']);
    // The Idempotency-Key header of uploads, with its pattern.
    expect(upload.parameters).toEqual(expect.arrayContaining([expect.objectContaining({ name: 'Idempotency-Key', in: 'header', required: false })]));
  });

  test('numbers in paths and queries are shown as integers with their range', async () => {
    const doc = await served(t.app);
    const list = (doc.paths?.['/public/results']?.get ?? {}) as Op;
    expect(list.parameters?.find((p) => p.name === 'pageSize')?.schema).toEqual({ type: 'integer', minimum: 1, maximum: 100, default: 20 });
    const png = (doc.paths?.['/figures/{figureId}/render.png']?.get ?? {}) as Op;
    expect(png.parameters?.find((p) => p.name === 'dpi')?.schema).toEqual({ type: 'integer', minimum: 36, maximum: 1200, default: 300 });
  });

  test('group operations say the role they need; refusals use the error shape', async () => {
    const doc = await served(t.app);
    const del = (doc.paths?.['/groups/{groupId}']?.delete ?? {}) as Op & { 'x-access': { minRole: string; action: string } };
    expect(del['x-access']).toMatchObject({ kind: 'group', action: 'group.manage', minRole: 'owner' });
    expect(Object.keys(del.responses ?? {}).sort()).toEqual(['204', '400', '401', '403', '404']);
    expect(del.responses?.['403']).toMatchObject({ content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } });
    const tokens = (doc.paths?.['/tokens']?.post ?? {}) as Op & { security: unknown };
    expect(tokens.security).toEqual([{ sessionCookie: [] }]);
  });

  test('is built once and kept', () => {
    expect(apiReference({ devTools: true })).toBe(apiReference({ devTools: true }));
    expect(apiReference({ devTools: false })).not.toBe(apiReference({ devTools: true }));
  });
});

describe('the page at /api/docs', () => {
  test('is HTML for anyone with every operation\'s method and path, no script, under the security headers', async () => {
    const res = await request(t.app).get('/api/docs');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/html/);
    const html = res.text;
    for (const { path, method } of operationsOf(await served(t.app))) {
      expect(html).toContain(`<code class="path">/api${path}</code>`);
      expect(html).toContain(`<span class="method ${method}">${method.toUpperCase()}</span> <code class="path">/api${path}</code>`);
    }
    // Who may call, parameters, body fields with limits, responses.
    expect(html).toContain('Members of the group with the role analyst or above');
    expect(html).toContain('<code>meta.sqrtS</code>');
    expect(html).toContain('Multipart form (multipart/form-data)');
    expect(html).toContain('1–200 characters');
    // No script of any kind (the policy allows none inline) and nothing from elsewhere.
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/(src|href)="https?:/i);
    expect(res.headers['x-frame-options']).toBe('DENY');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    const csp = res.headers['content-security-policy'] as string;
    expect(csp).toContain("script-src 'self'");
    // The page's one <style> element needs inline styles allowed.
    expect(html).toContain('<style>');
    expect(csp).toMatch(/style-src [^;]*'unsafe-inline'/);
  });

  test('escapes every text it draws from the document', () => {
    const doc = buildApiDocument({ devTools: false });
    const hostile = '<script>alert(1)</script>"\'&';
    const op = doc.paths!['/health']!.get!;
    const evil = structuredClone(doc);
    evil.info.title = hostile;
    evil.paths!['/health']!.get = { ...op, summary: hostile, description: `\`${hostile}\``, parameters: [{ name: '"><img src=x onerror=alert(1)>', in: 'query', schema: { type: 'string', pattern: '</td><b>' } }] };
    const html = renderApiPage(evil);
    expect(html).not.toContain('<script>alert');
    expect(html).not.toContain('<img src=x');
    expect(html).not.toContain('</td><b>');
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;&quot;&#39;&amp;');
    expect(html).toContain('<code>&lt;script&gt;');
  });
});
