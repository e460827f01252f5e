import { fork, type ChildProcess } from 'node:child_process';
import path from 'node:path';

/**
 * Scan workers as child processes of the server (`WORKERS`, default 1): the statistics are
 * synchronous, and a pseudo-experiment point can take seconds, so computing inside the server
 * process would stall every request meanwhile. Each child is server/worker.ts (the same program as
 * `npm run worker`) with one loop, run by Node with `--import tsx` as the server is; a
 * child that dies is started again after `restartMs` (its interrupted point is retried by the
 * queue). `stop()` asks every child to finish its current point and resolves when all have exited
 * (or after `graceMs`, when the rest are killed).
 */
export function startWorkerProcesses(count: number, env: NodeJS.ProcessEnv, opts: { restartMs?: number; graceMs?: number; log?: (line: string) => void } = {}) {
  const restartMs = opts.restartMs ?? 2_000;
  const graceMs = opts.graceMs ?? 15_000;
  const log = opts.log ?? ((line: string) => console.log(line));
  const script = path.join(__dirname, '..', 'worker.ts');
  const children: (ChildProcess | null)[] = Array.from({ length: count }, () => null);
  let stopping = false;

  const launch = (slot: number) => {
    const child = fork(script, [], { env: { ...env, WORKERS: '1' }, execArgv: ['--import', 'tsx'], stdio: 'inherit' });
    children[slot] = child;
    child.on('exit', (code, signal) => {
      if (children[slot] === child) children[slot] = null;
      if (stopping) return;
      log(`[server] scan worker ${child.pid} stopped (${signal ?? `exit code ${code}`}); starting another in ${restartMs / 1000} s`);
      setTimeout(() => {
        if (!stopping) launch(slot);
      }, restartMs).unref();
    });
  };
  for (let i = 0; i < count; i++) launch(i);

  return {
    /** Process ids of the running children. */
    pids: () => children.filter((c): c is ChildProcess => c !== null && c.exitCode === null).map((c) => c.pid!),
    stop: async () => {
      stopping = true;
      const running = children.filter((c): c is ChildProcess => c !== null && c.exitCode === null && c.signalCode === null);
      await Promise.all(
        running.map(
          (c) =>
            new Promise<void>((resolve) => {
              const timer = setTimeout(() => c.kill('SIGKILL'), graceMs);
              c.once('exit', () => {
                clearTimeout(timer);
                resolve();
              });
              c.kill('SIGTERM');
            }),
        ),
      );
    },
  };
}
export type WorkerProcesses = ReturnType<typeof startWorkerProcesses>;
