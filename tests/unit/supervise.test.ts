import { supervise } from '@/scripts/lib/supervise';

/** A child program that exits at once with `code`, or is killed by `signal` (it kills itself). */
const node = process.execPath;
const exitWith = (code: number) => [node, ['-e', `process.exit(${code})`]] as const;
const killSelf = (signal: string) => [node, ['-e', `process.kill(process.pid, '${signal}')`]] as const;

function collect() {
  const lines: string[] = [];
  return { lines, log: (l: string) => lines.push(l) };
}

test('a child killed by a signal is started again, with the signal named and a growing delay', async () => {
  const { lines, log } = collect();
  const [command, args] = killSelf('SIGKILL');
  let starts = 0;
  const gaveUp = new Promise<string>((resolve) => {
    supervise({ name: 'the child', command, args: [...args], spawnOptions: { stdio: 'ignore' }, log, firstDelayMs: 20, maxDelayMs: 80, maxQuickFailures: 4, onStart: () => starts++, onGiveUp: resolve });
  });
  expect(await gaveUp).toBe('signal SIGKILL');
  // Three restarts after the first three deaths, then the fourth quick death gives up.
  expect(starts).toBe(4);
  expect(lines.slice(0, 3)).toEqual([
    '[start] the child stopped unexpectedly (signal SIGKILL); starting it again in 20 ms',
    '[start] the child stopped unexpectedly (signal SIGKILL); starting it again in 40 ms',
    '[start] the child stopped unexpectedly (signal SIGKILL); starting it again in 80 ms',
  ]);
  expect(lines[3]).toMatch(/stopped \(signal SIGKILL\) 4 times in a row within 10 s of starting; giving up/);
});

test('a failing exit code is restarted too; a run longer than quickMs resets the give-up count', async () => {
  const { lines, log } = collect();
  // Runs 150 ms, then fails: each run is "not quick" (quickMs 100), so it never gives up.
  const args = ['-e', 'setTimeout(() => process.exit(3), 150)'];
  let starts = 0;
  let gaveUp = false;
  const sup = supervise({ name: 'the child', command: node, args, spawnOptions: { stdio: 'ignore' }, log, firstDelayMs: 10, quickMs: 100, maxQuickFailures: 2, onStart: () => starts++, onGiveUp: () => (gaveUp = true) });
  // Until the third start (a node child takes a few hundred ms to start on a loaded machine, so a
  // fixed wait would count fewer runs than the rule allows); the test's timeout bounds it.
  while (starts < 3 && !gaveUp) await new Promise((r) => setTimeout(r, 50));
  await sup.stop(1000);
  expect(gaveUp).toBe(false);
  expect(starts).toBeGreaterThanOrEqual(3);
  expect(lines[0]).toBe('[start] the child stopped unexpectedly (exit code 3); starting it again in 10 ms');
});

test('stop() ends the child and nothing is restarted afterwards', async () => {
  const { lines, log } = collect();
  let starts = 0;
  const sup = supervise({ name: 'the child', command: node, args: ['-e', 'setInterval(() => {}, 1000)'], spawnOptions: { stdio: 'ignore' }, log, firstDelayMs: 10, onStart: () => starts++, onGiveUp: () => undefined });
  await new Promise((r) => setTimeout(r, 200));
  const child = sup.current();
  expect(child?.pid).toBeGreaterThan(0);
  await sup.stop(1000);
  expect(child?.signalCode).toBe('SIGTERM');
  await new Promise((r) => setTimeout(r, 100));
  expect(starts).toBe(1);
  expect(sup.current()).toBeNull();
  expect(lines).toEqual([]);
});

test('exit codes without a signal are not mistaken for a clean stop', async () => {
  const { log } = collect();
  const [command, args] = exitWith(0);
  const how = await new Promise<string>((resolve) => {
    supervise({ name: 'the child', command, args: [...args], spawnOptions: { stdio: 'ignore' }, log, firstDelayMs: 5, maxQuickFailures: 2, onGiveUp: resolve });
  });
  expect(how).toBe('exit code 0');
});
