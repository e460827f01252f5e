import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { freePort, tmpRoot } from '@/scripts/lib/postgres';

/**
 * `npm start` as a user runs it (its own cluster in a temporary DATA_DIR): the server killed by a
 * signal is started again, and every way out of the start script stops the cluster.
 */
jest.setTimeout(120_000);
const ROOT = path.resolve(__dirname, '../..');

type Started = { proc: ChildProcess; out: () => string; port: number; dataDir: string; waitFor: (re: RegExp, ms?: number) => Promise<RegExpMatchArray> };

async function startScript(): Promise<Started> {
  const dataDir = tmpRoot();
  const [port, pgPort, fakePort] = [await freePort(), await freePort(), await freePort()];
  let out = '';
  const proc = spawn(process.execPath, ['--import', 'tsx', 'scripts/start.ts'], {
    cwd: ROOT,
    env: { ...process.env, NODE_ENV: 'development', PORT: String(port), PGPORT: String(pgPort), STRIPE_FAKE_PORT: String(fakePort), DATA_DIR: dataDir, SKIP_WEB_BUILD: '1', WORKERS: '0', DATABASE_URL: '' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  proc.stdout!.on('data', (b: Buffer) => (out += b.toString()));
  proc.stderr!.on('data', (b: Buffer) => (out += b.toString()));
  const waitFor = async (re: RegExp, ms = 60_000) => {
    const until = Date.now() + ms;
    for (;;) {
      const m = out.match(re);
      if (m) return m;
      if (Date.now() > until) throw new Error(`timed out waiting for ${re}; output:\n${out}`);
      await new Promise((r) => setTimeout(r, 100));
    }
  };
  return { proc, out: () => out, port, dataDir, waitFor };
}

async function healthy(port: number, ms = 30_000): Promise<void> {
  const until = Date.now() + ms;
  for (;;) {
    const ok = await fetch(`http://127.0.0.1:${port}/api/health`).then((r) => r.ok, () => false);
    if (ok) return;
    if (Date.now() > until) throw new Error('the server did not answer /api/health');
    await new Promise((r) => setTimeout(r, 200));
  }
}

const exited = (p: ChildProcess) => new Promise<number | null>((resolve) => (p.exitCode !== null ? resolve(p.exitCode) : p.once('exit', (code) => resolve(code))));
const clusterRunning = (dataDir: string) => fs.existsSync(path.join(dataDir, 'pg', 'postmaster.pid'));

let current: Started | undefined;
afterEach(async () => {
  // Never leave a cluster behind, whatever the test did.
  if (current && current.proc.exitCode === null) {
    current.proc.kill('SIGTERM');
    await exited(current.proc);
  }
  if (current) fs.rmSync(current.dataDir, { recursive: true, force: true });
  current = undefined;
});

test('a server killed with SIGKILL is started again, then SIGTERM to npm start stops the server and the cluster', async () => {
  const s = (current = await startScript());
  const first = Number((await s.waitFor(/server process (\d+) starting/))[1]);
  await healthy(s.port);
  expect(clusterRunning(s.dataDir)).toBe(true);

  process.kill(first, 'SIGKILL');
  await s.waitFor(/the server stopped unexpectedly \(signal SIGKILL\); starting it again in 1 s/);
  const second = Number((await s.waitFor(/server process \d+ starting[\s\S]*server process (\d+) starting/))[1]);
  expect(second).not.toBe(first);
  await healthy(s.port);

  s.proc.kill('SIGTERM');
  expect(await exited(s.proc)).toBe(0);
  expect(s.out()).toMatch(/\[postgres\] stopped/);
  expect(clusterRunning(s.dataDir)).toBe(false);
});

test('SIGHUP (the terminal closed) also stops the cluster', async () => {
  const s = (current = await startScript());
  await s.waitFor(/server process \d+ starting/);
  await healthy(s.port);
  s.proc.kill('SIGHUP');
  await exited(s.proc);
  expect(s.out()).toMatch(/SIGHUP: stopping/);
  expect(clusterRunning(s.dataDir)).toBe(false);
});
