import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { ThreadDied, ThreadPool, ThreadTimeout } from '@/server/lib/thread-pool';

/**
 * The worker-thread pool behind large uploads: jobs run off the event loop, one per thread; a job
 * that runs too long or a thread that dies fails that job only, and the pool carries on.
 */

// A plain CommonJS thread script: "spin" loops forever, "die" exits the thread, "grow" fills its heap.
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-pool-'));
const script = path.join(dir, 'thread.cjs');
fs.writeFileSync(
  script,
  `const { parentPort } = require('node:worker_threads');
parentPort.on('message', ({ id, job }) => {
  if (job === 'spin') for (;;) {}
  if (job === 'die') process.exit(3);
  if (job === 'grow') { const keep = []; for (;;) keep.push(new Array(1e5).fill(keep.length)); }
  if (job === 'throw') return parentPort.postMessage({ id, error: 'no such job' });
  parentPort.postMessage({ id, answer: job * 2 });
});`,
);
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

test('jobs are answered in their own promise; more jobs than threads queue', async () => {
  const pool = new ThreadPool<number, number>({ script, size: 2, timeoutMs: 20_000, name: 'test pool' });
  try {
    expect(await Promise.all([1, 2, 3, 4, 5].map((n) => pool.run(n)))).toEqual([2, 4, 6, 8, 10]);
    expect(pool.threads).toBe(2);
    await expect((pool as unknown as ThreadPool<string, number>).run('throw')).rejects.toThrow('no such job');
  } finally {
    await pool.stop();
  }
}, 30_000);

test('a job over its time is stopped with ThreadTimeout; the next job gets a new thread', async () => {
  const pool = new ThreadPool<number | string, number>({ script, size: 1, timeoutMs: 300, name: 'test pool' });
  try {
    const spin = pool.run('spin');
    const after = pool.run(21);
    await expect(spin).rejects.toBeInstanceOf(ThreadTimeout);
    expect(await after).toBe(42);
  } finally {
    await pool.stop();
  }
}, 30_000);

test('a thread that exits, or runs out of its memory limit, fails its job with ThreadDied, not the process', async () => {
  const pool = new ThreadPool<number | string, number>({ script, size: 1, timeoutMs: 20_000, name: 'test pool', resourceLimits: { maxOldGenerationSizeMb: 32 } });
  try {
    await expect(pool.run('die')).rejects.toThrow(/exit code 3/);
    const oom = await pool.run('grow').catch((e: unknown) => e);
    expect(oom).toBeInstanceOf(ThreadDied);
    expect((oom as ThreadDied).outOfMemory).toBe(true);
    expect(await pool.run(5)).toBe(10);
  } finally {
    await pool.stop();
  }
}, 60_000);
