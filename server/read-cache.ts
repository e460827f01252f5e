import { LRUCache } from 'lru-cache';
import { Client } from 'pg';

/** The channel the registry's tables notify on every change (migration 0005, statement triggers). */
export const REGISTRY_CHANNEL = 'bw_registry_changed';

/**
 * Answers of registry reads (result lists, permanent links) remembered until the registry changes.
 * A list over 10,000 results costs ≈ 40–90 ms of database time; the same page asked again is
 * served from memory.
 *
 * Exactness: an answer is stored under the *generation* that was current when its query started,
 * and only served while that generation is still current. The generation moves on
 * - when PostgreSQL reports a change: triggers on results, result_versions, memberships and
 *   groups `pg_notify` this channel, and a notification is delivered only after the writing
 *   transaction has committed — so a read whose snapshot predates a commit can never be stored
 *   under a generation that postdates it; this covers writes by other processes (scan workers,
 *   the seed, a psql session);
 * - when this process starts and finishes answering a request that may write (every non-GET
 *   request), so a client that reads right after its own write never waits for the notification;
 * - when the listening connection is lost: the cache is bypassed until it is back.
 * Entries also expire after `ttlMs` (30 s), a bound should anything else be missed. Concurrent
 * misses of one key share one query. The key must name everything the answer depends on (the
 * viewer and the query).
 */
export function createReadCache(databaseUrl: string, opts: { max?: number; ttlMs?: number; listen?: boolean } = {}) {
  const cache = new LRUCache<string, { generation: number; value: unknown }>({ max: opts.max ?? 2_000, ttl: opts.ttlMs ?? 30_000 });
  const inFlight = new Map<string, { generation: number; promise: Promise<unknown> }>();
  let generation = 0;
  let listening = false;
  let closed = false;
  let client: Client | undefined;
  let retry: NodeJS.Timeout | undefined;
  let ready: Promise<void> = Promise.resolve();

  const bump = () => {
    generation++;
    cache.clear();
    inFlight.clear();
  };

  async function listen(): Promise<void> {
    if (closed) return;
    const c = new Client({ connectionString: databaseUrl });
    client = c;
    const lost = () => {
      if (client !== c) return;
      listening = false;
      bump();
      client = undefined;
      c.end().catch(() => {});
      if (!closed) retry = setTimeout(() => void (ready = listen()), 1_000);
    };
    c.on('error', lost);
    c.on('end', lost);
    c.on('notification', () => bump());
    try {
      await c.connect();
      await c.query(`listen ${REGISTRY_CHANNEL}`);
      if (client !== c) return;
      bump();
      listening = true;
    } catch {
      lost();
    }
  }
  // The listening connection opens with the first read (scan workers and scripts never read).
  let started = opts.listen === false;
  const start = () => {
    if (started) return;
    started = true;
    ready = listen();
  };

  return {
    /** `load()`'s answer for `key`, from memory when nothing has changed since it was read. */
    async get<T>(key: string, load: () => Promise<T>): Promise<T> {
      start();
      if (!listening) return load();
      const hit = cache.get(key);
      if (hit && hit.generation === generation) return hit.value as T;
      const shared = inFlight.get(key);
      if (shared && shared.generation === generation) return shared.promise as Promise<T>;
      const started = generation;
      const promise = load();
      inFlight.set(key, { generation: started, promise });
      try {
        const value = await promise;
        if (started === generation) cache.set(key, { generation: started, value });
        return value;
      } finally {
        if (inFlight.get(key)?.promise === promise) inFlight.delete(key);
      }
    },
    /** Forget everything (a write may be under way or has just finished). */
    invalidate: bump,
    /** Starts listening if not yet; resolves once that first attempt has ended (tests, benchmarks). */
    ready: () => {
      start();
      return ready;
    },
    get listening() {
      return listening;
    },
    get size() {
      return cache.size;
    },
    async close() {
      closed = true;
      listening = false;
      if (retry) clearTimeout(retry);
      const c = client;
      client = undefined;
      bump();
      await c?.end().catch(() => {});
    },
  };
}
export type ReadCache = ReturnType<typeof createReadCache>;
