import { spawn, type ChildProcess, type SpawnOptions } from 'node:child_process';

/**
 * Keeps one child program running: when it stops without being asked to (a crash, a signal such
 * as SIGKILL from the kernel's OOM killer), it is started again after a back-off that doubles
 * from `firstDelayMs` up to `maxDelayMs`, and returns to the first delay once a run has lasted
 * `stableMs`. After `maxQuickFailures` runs in a row that each ended within `quickMs` of starting
 * (a setting the program refuses, a port that is taken), it gives up and calls `onGiveUp`:
 * restarting would only repeat the same failure.
 */
export type SuperviseOptions = {
  command: string;
  args: string[];
  spawnOptions: SpawnOptions;
  name: string;
  log?: (line: string) => void;
  firstDelayMs?: number;
  maxDelayMs?: number;
  stableMs?: number;
  quickMs?: number;
  maxQuickFailures?: number;
  onStart?: (child: ChildProcess) => void;
  onGiveUp: (lastExit: string) => void;
};

export type Supervisor = {
  /** The running child, if any. */
  current: () => ChildProcess | null;
  /** Stops the child (SIGTERM, then SIGKILL after `graceMs`) and restarts nothing more. */
  stop: (graceMs?: number) => Promise<void>;
};

/** How a child ended, in words: "exit code 1" or "signal SIGKILL". */
export function describeExit(code: number | null, signal: NodeJS.Signals | null): string {
  return signal ? `signal ${signal}` : `exit code ${code}`;
}

export function supervise(o: SuperviseOptions): Supervisor {
  const log = o.log ?? ((line: string) => console.log(line));
  const first = o.firstDelayMs ?? 1000;
  const max = o.maxDelayMs ?? 30_000;
  const stableMs = o.stableMs ?? 60_000;
  const quickMs = o.quickMs ?? 10_000;
  const maxQuick = o.maxQuickFailures ?? 5;
  let child: ChildProcess | null = null;
  let stopped = false;
  let delay = first;
  let quickFailures = 0;
  let restartTimer: NodeJS.Timeout | null = null;

  const launch = () => {
    restartTimer = null;
    if (stopped) return;
    const started = Date.now();
    const c = spawn(o.command, o.args, o.spawnOptions);
    child = c;
    o.onStart?.(c);
    // 'exit' gives (code, signal): a child ended by a signal has code null and must still count.
    c.once('exit', (code, signal) => {
      if (child === c) child = null;
      if (stopped) return;
      const how = describeExit(code, signal);
      const ran = Date.now() - started;
      if (ran >= stableMs) delay = first;
      quickFailures = ran < quickMs ? quickFailures + 1 : 0;
      if (quickFailures >= maxQuick) {
        log(`[start] ${o.name} stopped (${how}) ${quickFailures} times in a row within ${Math.round(quickMs / 1000)} s of starting; giving up (see the messages above)`);
        stopped = true;
        o.onGiveUp(how);
        return;
      }
      log(`[start] ${o.name} stopped unexpectedly (${how}); starting it again in ${formatDelay(delay)}`);
      restartTimer = setTimeout(launch, delay);
      delay = Math.min(max, delay * 2);
    });
    c.once('error', (err) => log(`[start] ${o.name} could not be started: ${err.message}`));
  };
  launch();

  return {
    current: () => child,
    stop: (graceMs = 20_000) => {
      stopped = true;
      if (restartTimer) clearTimeout(restartTimer);
      const c = child;
      if (!c || c.exitCode !== null || c.signalCode !== null) return Promise.resolve();
      return new Promise<void>((resolve) => {
        const kill = setTimeout(() => c.kill('SIGKILL'), graceMs);
        c.once('exit', () => {
          clearTimeout(kill);
          resolve();
        });
        c.kill('SIGTERM');
      });
    },
  };
}

function formatDelay(ms: number): string {
  return ms < 1000 ? `${ms} ms` : `${ms / 1000} s`;
}
