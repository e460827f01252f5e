import { Client } from 'pg';
import request from 'supertest';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeCrew, makeGroupWithRoles, makeResult, publishVersion, type Crew } from '../helpers/factories';
import { createReadCache } from '@/server/read-cache';
import type { ResultPage } from '@/shared/schemas/results';

/**
 * The remembered registry reads (server/read-cache.ts) against real PostgreSQL: served from
 * memory while nothing changes, never stale after a change — by this process (a POST), by
 * another connection (the database's notification), or overlapping a query — and bypassed while
 * the listening connection is lost.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;

const until = async (ok: () => Promise<boolean> | boolean, ms = 5_000) => {
  const end = Date.now() + ms;
  while (!(await ok())) {
    if (Date.now() > end) throw new Error('condition not met in time');
    await new Promise((r) => setTimeout(r, 20));
  }
};

beforeAll(async () => {
  t = await startTestApp();
  await t.ctx.reads.ready();
  crew = await makeCrew(t);
  ({ groupId } = await makeGroupWithRoles(t, { crew }));
  const first = await makeResult(crew.analyst, groupId, { meta: { title: 'Linnet resonance, first' } });
  await publishVersion(crew.curator, groupId, first.resultId, 1, true);
});
afterAll(() => t.close());

const publicTitles = async () => ((await request(t.app).get('/api/public/results')).body as ResultPage).items.map((i) => i.title);

test('the listener is up once the context is ready', () => {
  expect(t.ctx.reads.listening).toBe(true);
});

test('a repeated public list is answered from memory, and a write through the API is seen at once', async () => {
  expect(await publicTitles()).toEqual(['Linnet resonance, first']);
  const before = t.ctx.reads.size;
  expect(before).toBeGreaterThan(0);
  const spy = jest.spyOn(t.ctx.db, 'select');
  expect(await publicTitles()).toEqual(['Linnet resonance, first']);
  expect(spy).not.toHaveBeenCalled();
  spy.mockRestore();

  // The curator publishes a second result: the very next read shows it (no waiting).
  const second = await makeResult(crew.analyst, groupId, { meta: { title: 'Linnet resonance, second' } });
  await publishVersion(crew.curator, groupId, second.resultId, 1, true);
  expect((await publicTitles()).sort()).toEqual(['Linnet resonance, first', 'Linnet resonance, second']);
});

test('a change made by another connection (another process) reaches the cache through the notification', async () => {
  const titles = await publicTitles();
  expect(titles.length).toBeGreaterThan(0);
  const other = new Client({ connectionString: t.ctx.env.DATABASE_URL });
  await other.connect();
  try {
    await other.query(`update result_versions set title = 'Renamed by another process' where title = 'Linnet resonance, first'`);
  } finally {
    await other.end();
  }
  await until(async () => (await publicTitles()).includes('Renamed by another process'));
});

test('a read that overlapped a change is not kept; concurrent misses share one load', async () => {
  const cache = createReadCache(t.ctx.env.DATABASE_URL);
  await cache.ready();
  try {
    let release!: (v: string) => void;
    let loads = 0;
    const slow = () => {
      loads++;
      return new Promise<string>((r) => (release = r));
    };
    const a = cache.get('k', slow);
    const b = cache.get('k', slow);
    expect(loads).toBe(1);
    cache.invalidate(); // a write happened while the query ran
    release('old');
    expect(await a).toBe('old');
    expect(await b).toBe('old');
    let fresh = 0;
    expect(await cache.get('k', async () => (++fresh, 'new'))).toBe('new');
    expect(await cache.get('k', async () => (++fresh, 'newer'))).toBe('new');
    expect(fresh).toBe(1);
  } finally {
    await cache.close();
  }
});

test('a failed load is not remembered', async () => {
  const cache = createReadCache(t.ctx.env.DATABASE_URL);
  await cache.ready();
  try {
    await expect(cache.get('k', async () => Promise.reject(new Error('not found')))).rejects.toThrow('not found');
    expect(await cache.get('k', async () => 'found')).toBe('found');
  } finally {
    await cache.close();
  }
});

test('while the listening connection is lost, reads bypass the cache, and it listens again', async () => {
  const cache = createReadCache(t.ctx.env.DATABASE_URL);
  await cache.ready();
  const admin = new Client({ connectionString: t.ctx.env.DATABASE_URL });
  await admin.connect();
  try {
    expect(await cache.get('k', async () => 'one')).toBe('one');
    expect(await cache.get('k', async () => 'two')).toBe('one');
    await admin.query(`select pg_terminate_backend(pid) from pg_stat_activity where query ilike 'listen %' and pid <> pg_backend_pid() and datname = current_database() and backend_start > now() - interval '1 minute'`);
    await until(() => !cache.listening);
    expect(await cache.get('k', async () => 'three')).toBe('three');
    expect(await cache.get('k', async () => 'four')).toBe('four');
    await until(() => cache.listening, 10_000);
    expect(await cache.get('k', async () => 'five')).toBe('five');
    expect(await cache.get('k', async () => 'six')).toBe('five');
  } finally {
    await admin.end();
    await cache.close();
  }
});
