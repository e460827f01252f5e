import { closeContext, createContext } from './context';
import { createApp } from './app';
import { runMigrations } from '../db/client';
import { childProcessEnv, loadEnv } from './env';
import { startQueue } from './jobs/queue';
import { startWorkerProcesses, type WorkerProcesses } from './jobs/worker-processes';
import { startStripeFake, type StripeFake } from './fakes/stripe';
import { fillSearchText } from './services/results';

/** Server entry: `node --import tsx server/index.ts` (npm start runs it with its own database). */
async function main() {
  const env = loadEnv();
  const ctx = createContext(env);
  await runMigrations(ctx.db);
  // Versions stored before search text existed get it from the same normaliser the writes use.
  const filled = await fillSearchText(ctx);
  if (filled) console.log(`[server] search text written for ${filled} older result version(s)`);
  ctx.jobs = await startQueue(env);
  let workers: WorkerProcesses | undefined;
  if (env.WORKERS > 0) {
    workers = startWorkerProcesses(env.WORKERS, childProcessEnv());
    console.log(`[server] ${env.WORKERS} scan worker process(es) started beside the server`);
  }
  // Development without a configured payment provider: the local fake, on loopback, sending its
  // webhooks to this server.
  let stripeFake: StripeFake | undefined;
  if (env.stripe.fake) {
    stripeFake = await startStripeFake({
      port: env.STRIPE_FAKE_PORT,
      secretKey: env.stripe.secretKey!,
      webhookSecret: env.stripe.webhookSecret!,
      webhookUrl: `http://${env.HOST === '0.0.0.0' || env.HOST === '::' ? '127.0.0.1' : env.HOST}:${env.PORT}/api/billing/webhook`,
      stateFile: env.STRIPE_FAKE_STATE,
    }).catch((err: Error) => {
      throw new Error(`the local payment fake cannot listen on 127.0.0.1:${env.STRIPE_FAKE_PORT} (${err.message}); set STRIPE_FAKE_PORT to a free port`);
    });
    console.log(`[server] local payment fake at ${stripeFake.url} (test cards: see README)`);
  }
  // The PNG/PDF renderer processes load their libraries while the server starts listening.
  ctx.renderer.warm();
  const app = createApp(ctx);
  const server = app.listen(env.PORT, env.HOST, () => {
    console.log(`[server] listening on http://${env.HOST}:${env.PORT} (${env.NODE_ENV})`);
  });
  server.on('error', (err) => {
    console.error('[server] cannot listen:', err.message);
    process.exit(1);
  });
  const stop = (signal: string) => {
    console.log(`[server] ${signal}: closing`);
    void stripeFake?.close();
    const workersDone = workers?.stop() ?? Promise.resolve();
    server.close(() => void Promise.all([workersDone, closeContext(ctx)]).finally(() => process.exit(0)));
    setTimeout(() => process.exit(0), 20_000).unref();
  };
  process.on('SIGINT', () => stop('SIGINT'));
  process.on('SIGTERM', () => stop('SIGTERM'));
}

main().catch((err) => {
  console.error('[server] failed to start:', err);
  process.exit(1);
});
