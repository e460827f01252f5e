import { closeContext, createContext } from './context';
import { createApp } from './app';
import { runMigrations } from './db';
import { loadEnv } from './env';
import { startQueue } from './jobs/queue';
import { startScanWorkers } from './jobs/scan-worker';
import { startStripeFake, type StripeFake } from './fakes/stripe';

/** Server entry: `node --import tsx server/index.ts` (npm start runs it with its own database). */
async function main() {
  const env = loadEnv();
  const ctx = createContext(env);
  await runMigrations(ctx.db);
  ctx.jobs = await startQueue(env);
  let stopWorkers = () => {};
  if (env.WORKERS > 0) {
    stopWorkers = await startScanWorkers(ctx, ctx.jobs, env.WORKERS);
    console.log(`[server] ${env.WORKERS} scan worker(s) running in this process`);
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
    stopWorkers();
    void stripeFake?.close();
    server.close(() => void closeContext(ctx).finally(() => process.exit(0)));
    setTimeout(() => process.exit(0), 12_000).unref();
  };
  process.on('SIGINT', () => stop('SIGINT'));
  process.on('SIGTERM', () => stop('SIGTERM'));
}

main().catch((err) => {
  console.error('[server] failed to start:', err);
  process.exit(1);
});
