import { closeContext, createContext } from './context';
import { runMigrations } from '../db/client';
import { loadEnv } from './env';
import { startQueue } from './jobs/queue';
import { startScanWorkers } from './jobs/scan-worker';

/**
 * A scan worker process. The server starts `WORKERS` of them beside itself; `npm run worker` starts
 * more by hand: point it at the same DATABASE_URL as the server, on this machine or another, to
 * compute scans in parallel. Ctrl-C lets the current asymptotic point finish and hands a running
 * chunk of pseudo-experiments back to the queue.
 */
async function main() {
  const env = loadEnv();
  const ctx = createContext(env);
  await runMigrations(ctx.db);
  ctx.jobs = await startQueue(env);
  const stopWorkers = await startScanWorkers(ctx, ctx.jobs, Math.max(1, env.WORKERS));
  console.log(`[worker] ready (pid ${process.pid}); waiting for scan points`);
  let stopping = false;
  const stop = (signal: string) => {
    if (stopping) return;
    stopping = true;
    console.log(`[worker] ${signal}: finishing the current point (a chunk of pseudo-experiments goes back to the queue)`);
    void stopWorkers()
      .then(() => closeContext(ctx))
      .finally(() => process.exit(0));
    setTimeout(() => process.exit(0), 15_000).unref();
  };
  process.on('SIGINT', () => stop('SIGINT'));
  process.on('SIGTERM', () => stop('SIGTERM'));
  // Started by the server (server/jobs/worker-processes.ts): stop with it, even when it was killed.
  if (process.send) process.on('disconnect', () => stop('server gone'));
}

main().catch((err) => {
  console.error('[worker] failed to start:', err);
  process.exit(1);
});
