import type { Auth } from '@/server/auth';
import { createSessionCache } from '@/server/session-cache';

/**
 * The session cache in front of better-auth (server/session-cache.ts), with a stand-in for
 * better-auth's getSession that counts calls and can be held mid-lookup. The real thing is tested
 * through the API in tests/api/auth.test.ts (sign-out and revocation).
 */
function fakeAuth(expiresInMs = 3_600_000) {
  const calls: string[] = [];
  let hold: Promise<void> | null = null;
  const auth = {
    api: {
      getSession: async ({ headers }: { headers: Headers }) => {
        const cookie = headers.get('cookie') ?? '';
        calls.push(cookie);
        if (hold) await hold;
        if (!cookie.includes('session_token=good')) return null;
        return { user: { id: 'u1', name: 'Ada Quill', email: 'ada@lab.example' }, session: { expiresAt: new Date(Date.now() + expiresInMs) } };
      },
    },
  } as unknown as Auth;
  return {
    auth,
    calls,
    holdNext() {
      let release!: () => void;
      hold = new Promise<void>((r) => (release = r));
      return () => {
        hold = null;
        release();
      };
    },
  };
}

const good = { cookie: 'better-auth.session_token=good.sig' };

test('a session is looked up once and then answered from memory', async () => {
  const f = fakeAuth();
  const c = createSessionCache(f.auth);
  expect(await c.lookup(good)).toEqual({ id: 'u1', name: 'Ada Quill', email: 'ada@lab.example' });
  expect(await c.lookup(good)).toEqual({ id: 'u1', name: 'Ada Quill', email: 'ada@lab.example' });
  expect(f.calls).toHaveLength(1);
});

test('no cookie or no session cookie: no lookup at all; a bad cookie is asked every time (not remembered)', async () => {
  const f = fakeAuth();
  const c = createSessionCache(f.auth);
  expect(await c.lookup({})).toBeUndefined();
  expect(await c.lookup({ cookie: 'theme=dark' })).toBeUndefined();
  expect(f.calls).toHaveLength(0);
  const bad = { cookie: 'better-auth.session_token=forged' };
  expect(await c.lookup(bad)).toBeUndefined();
  expect(await c.lookup(bad)).toBeUndefined();
  expect(f.calls).toHaveLength(2);
});

test('clear() forgets everything (an auth write such as sign-out)', async () => {
  const f = fakeAuth();
  const c = createSessionCache(f.auth);
  await c.lookup(good);
  c.clear();
  expect(c.size).toBe(0);
  await c.lookup(good);
  expect(f.calls).toHaveLength(2);
});

test('a lookup that overlapped a clear() is answered but not remembered (it may predate a sign-out)', async () => {
  const f = fakeAuth();
  const c = createSessionCache(f.auth);
  const release = f.holdNext();
  const pending = c.lookup(good);
  c.clear();
  release();
  expect(await pending).toBeDefined();
  expect(c.size).toBe(0);
});

test('an entry never outlives its session; the time to live is bounded', async () => {
  jest.useFakeTimers({ doNotFake: ['nextTick', 'setImmediate'] });
  try {
    const f = fakeAuth(5_000);
    const c = createSessionCache(f.auth, { ttlMs: 30_000, now: () => Date.now() });
    await c.lookup(good);
    jest.advanceTimersByTime(6_000);
    await c.lookup(good);
    expect(f.calls).toHaveLength(2);
    const g = fakeAuth();
    const d = createSessionCache(g.auth, { ttlMs: 30_000, now: () => Date.now() });
    await d.lookup(good);
    jest.advanceTimersByTime(31_000);
    await d.lookup(good);
    expect(g.calls).toHaveLength(2);
  } finally {
    jest.useRealTimers();
  }
});
