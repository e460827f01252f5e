import { randomUUID } from 'node:crypto';
import { startQueue } from '@/server/jobs/queue';
import { apiErrorSchema } from '@/shared/schemas/common';
import { startTestApp, TEST_ORIGIN, type TestApp } from '../helpers/app';
import { makeGroup, makePerson, makeResult, publishVersion, sampleMeta, type Person } from '../helpers/factories';
import { figureSpec, makeFigure } from '../helpers/figures';
import { apiRoutesOf, fillPath, paramNames, splitRoute } from '../helpers/routes';

/**
 * Ids and numbers are checked at the edge: every route of the API, walked from the Express router,
 * is called with out-of-range and malformed values in each of its path parameters (and its GETs
 * with such values in the numeric query parameters) and must answer 400 naming the field (or
 * 404 for a group id, whose existence is not revealed), never 500 (a number past PostgreSQL's
 * `integer` used to reach the SQL and fail there).
 */

jest.setTimeout(120_000);

type Kind = 'group' | 'uuid' | 'positive' | 'index' | 'slug' | 'user' | 'token' | 'invoice';

/** The kind of every path parameter of the API; a route with a parameter missing here fails the walk. */
const PARAM_KINDS: Record<string, Kind> = {
  groupId: 'group',
  resultId: 'uuid',
  figureId: 'uuid',
  scanId: 'uuid',
  invitationId: 'uuid',
  tokenId: 'uuid',
  version: 'positive',
  index: 'index',
  slug: 'slug',
  userId: 'user',
  token: 'token',
  invoiceId: 'invoice',
};

const INT_BAD = ['99999999999', '2147483648', '-1', '1.5', 'abc', '1e400', ' ', '0x10'];
const BAD: Record<Kind, string[]> = {
  group: ['99999999999', '-1', 'abc', '00000000-0000-0000-0000-00000000000g', randomUUID().slice(0, 35)],
  uuid: ['99999999999', '-1', '1.5', 'abc', '00000000-0000-0000-0000-00000000000g', randomUUID().slice(0, 35), `${randomUUID()}0`],
  positive: [...INT_BAD, '0'],
  index: INT_BAD,
  slug: ['99999999999'.repeat(8), '-1.5', 'ABC', 'a', '../x', 'a b c'],
  user: ['x'.repeat(101), 'a b', '../x', '%00'],
  token: ['99999999999', '-1', 'abc', 'x'.repeat(101), 'a'.repeat(19) + '!'],
  invoice: ['x'.repeat(81), 'a b', '../x', 'in-1', '%00'],
};

/** Numeric query parameters of the GET routes (version of a render, pages, resolution, energy, …). */
const QUERY_BAD: Record<string, string[]> = {
  version: ['99999999999', '2147483648', '-1', '1.5', 'abc'],
  page: ['99999999999', '2147483648', '0', '1.5'],
  pageSize: ['99999999999', '-1', 'abc'],
  dpi: ['99999999999', '1.5', 'abc'],
  sqrtS: ['-1', 'abc', '1e400'],
  parameters: ['3', '0', '1.5', 'abc'],
  // Not numbers, but values of a closed list: the SVG render's label mode and the download flag.
  text: ['bold', 'EDITABLE'],
  download: ['yes', '2'],
};

let t: TestApp;
let owner: Person;
const good: Record<string, string> = {};

beforeAll(async () => {
  t = await startTestApp();
  t.ctx.jobs = await startQueue(t.ctx.env);
  owner = await makePerson(t, 'Param Walker');
  const groupId = await makeGroup(t, owner);
  const r = await makeResult(owner, groupId);
  const published = await publishVersion(owner, groupId, r.resultId, 1, true);
  const fig = await makeFigure(owner, groupId, figureSpec([{ resultId: r.resultId, version: 1 }]), true);
  const scan = await owner.agent.post(`/api/groups/${groupId}/scans`).send({
    points: [1000, 1500].map((x) => ({ x, model: { observed: [10, 12], signal: [1, 2], backgrounds: [{ name: 'continuum', yields: [10, 11] }] } })),
    options: {},
    meta: { ...sampleMeta(), quantity: 'mu', quantityUnit: '', method: 'asymptotic' },
  });
  expect(scan.status).toBe(201);
  // Real ids, so the one bad value of a call is the only thing wrong with it.
  Object.assign(good, {
    groupId,
    resultId: r.resultId,
    figureId: fig.id,
    scanId: scan.body.id,
    invitationId: randomUUID(),
    tokenId: randomUUID(),
    version: '1',
    index: '0',
    slug: published.slug,
    userId: owner.user.id,
    token: 'a'.repeat(32),
    invoiceId: 'in_not_issued',
  });
}, 60_000);
afterAll(async () => t?.close());

const routes = () => apiRoutesOf(t.app);

/**
 * What is wrong with an answer to a bad value, or null when it is right: a 400 naming the field,
 * or (where allowed) a 404 in the API's error shape.
 */
function problem(res: { status: number; body: unknown }, field: string, notFoundAllowed: boolean, what: string): string | null {
  const body = res.body as { error?: { details?: { field: string }[] } };
  if (notFoundAllowed && res.status === 404) return apiErrorSchema.safeParse(res.body).success ? null : `${what}: 404 without the error shape`;
  const fields = body.error?.details?.map((d) => d.field) ?? [];
  if (res.status === 400 && fields.includes(field)) return null;
  return `${what}: ${res.status} ${JSON.stringify(body.error ?? body).slice(0, 160)}`;
}

test('the walk sees the routes with parameters, and every parameter has a kind', () => {
  const withParams = routes().filter((r) => paramNames(r).length > 0);
  expect(withParams).toEqual(expect.arrayContaining(['GET /api/results/:slug/v:version', 'GET /api/groups/:groupId/scans/:scanId/points/:index']));
  const unknown = withParams.flatMap((r) => paramNames(r).filter((p) => !(p in PARAM_KINDS)).map((p) => `${r} :${p}`));
  expect(unknown).toEqual([]);
});

test('every route answers a malformed or out-of-range path parameter with 400 naming it (404 for a group), never 500', async () => {
  const problems: string[] = [];
  let calls = 0;
  for (const key of routes()) {
    const { method, path } = splitRoute(key);
    for (const name of paramNames(path)) {
      const kind = PARAM_KINDS[name]!;
      for (const bad of BAD[kind]) {
        const url = fillPath(path, { ...good, [name]: bad });
        const res = await owner.agent[method](url).set('Origin', TEST_ORIGIN).send(method === 'get' ? undefined : {});
        calls += 1;
        const p = problem(res, `params.${name}`, kind === 'group', `${key} with :${name} = ${JSON.stringify(bad)}`);
        if (p) problems.push(p);
      }
    }
  }
  expect(problems).toEqual([]);
  expect(calls).toBeGreaterThan(200);
});

test('every GET answers out-of-range numbers in its query with 400 naming them, never 500', async () => {
  const problems: string[] = [];
  let refused = 0;
  for (const key of routes()) {
    const { method, path } = splitRoute(key);
    if (method !== 'get') continue;
    for (const [name, values] of Object.entries(QUERY_BAD)) {
      for (const bad of values) {
        const url = `${fillPath(path, good)}?${new URLSearchParams({ [name]: bad })}`;
        const res = await owner.agent.get(url);
        const what = `${key} with ?${name}=${JSON.stringify(bad)}`;
        // Routes that take no such parameter ignore it; the others refuse it by name.
        if (res.status === 500) problems.push(`${what}: 500`);
        else if (res.status === 400) {
          const p = problem(res, `query.${name}`, false, what);
          if (p) problems.push(p);
          refused += 1;
        }
      }
    }
  }
  expect(problems).toEqual([]);
  // The list, render and export routes take these: most bad values were refused by name.
  expect(refused).toBeGreaterThan(40);
});

test('the largest integer a version column holds is still a plain "not found"', async () => {
  const res = await owner.agent.get(`/api/groups/${good.groupId}/results/${good.resultId}/versions/2147483647`);
  expect(res.status).toBe(404);
  const slugRes = await owner.agent.get(`/api/public/results/${good.slug}/v2147483647`);
  expect(slugRes.status).toBe(404);
});

test('a pinned version past the integer range in a JSON body is a 400 naming the field, not a 500', async () => {
  const spec = figureSpec([{ resultId: good.resultId!, version: 99_999_999_999 }]);
  const res = await owner.agent.post(`/api/groups/${good.groupId}/figures`).send({ spec });
  expect(res.status).toBe(400);
  expect(res.body.error.details).toContainEqual({ field: 'spec.layers.0.version', message: 'must be at most 2147483647' });
  const data = await owner.agent.post(`/api/groups/${good.groupId}/layer-data`).send({ layers: [{ resultId: good.resultId, version: 2_147_483_648 }] });
  expect(data.status).toBe(400);
  expect(data.body.error.details).toContainEqual({ field: 'layers.0.version', message: 'must be at most 2147483647' });
});
