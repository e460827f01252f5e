import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '../db/seed';
import { closeContext, createContext } from '../server/context';
import { runMigrations } from '../server/db';
import { loadEnv } from '../server/env';
import { buildWebIfChanged } from './build-web';
import { clusterHome, ensureDatabase, startCluster, stopCluster, type Cluster } from './lib/postgres';

/**
 * `npm start`: PostgreSQL (own cluster unless DATABASE_URL is set), migrations, demo seed, web
 * build when sources changed, then the API server. Ctrl-C stops everything this started.
 */
const ROOT = path.resolve(__dirname, '..');

async function main() {
  const vars: Record<string, string | undefined> = { ...process.env, NODE_ENV: process.env.NODE_ENV ?? 'development' };
  let cluster: Cluster | undefined;
  const children: ChildProcess[] = [];
  let stopping = false;
  const stopAll = (code: number) => {
    if (stopping) return;
    stopping = true;
    for (const c of children) if (c.exitCode === null) c.kill('SIGTERM');
    const done = () => {
      if (cluster) stopCluster(cluster);
      process.exit(code);
    };
    const waiting = children.filter((c) => c.exitCode === null);
    if (waiting.length === 0) return done();
    let left = waiting.length;
    for (const c of waiting) c.once('exit', () => --left === 0 && done());
    setTimeout(done, 8000).unref();
  };
  process.on('SIGINT', () => stopAll(0));
  process.on('SIGTERM', () => stopAll(0));

  try {
    if (!vars.DATABASE_URL) {
      const home = clusterHome(path.join(ROOT, '.data'));
      cluster = await startCluster({ home, port: Number(vars.PGPORT ?? 54329) });
      // The local payment fake keeps its customers beside the database they belong with.
      vars.STRIPE_FAKE_STATE ??= path.join(home, 'stripe-fake.json');
      await ensureDatabase(cluster, 'bandwright');
      vars.DATABASE_URL = cluster.url('bandwright');
    } else {
      console.log('[start] DATABASE_URL is set: using that database, starting none');
    }
    const env = loadEnv(vars);
    const ctx = createContext(env);
    await runMigrations(ctx.db);
    console.log('[start] migrations applied');
    if (env.devTools) {
      const { created } = await seedDemo(ctx);
      console.log(created ? '[start] demo data seeded' : '[start] demo data already there');
    }
    await closeContext(ctx);

    buildWebIfChanged();

    const server = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], { cwd: ROOT, env: vars as NodeJS.ProcessEnv, stdio: 'inherit' });
    children.push(server);
    server.on('exit', (code) => {
      if (!stopping) {
        console.error(`[start] the server exited (${code}); stopping`);
        stopAll(code ?? 1);
      }
    });

    console.log(`
  Bandwright is starting at ${env.PUBLIC_URL}
${env.devTools ? `
  Demo accounts (development only), password "${DEMO_PASSWORD}":
${DEMO_USERS.map((u) => `    ${u.email.padEnd(28)} ${u.name} (${u.key} of Lanternfish Dijet Resonances)`).join('\n')}
  Mail sent by the app lands in the development inbox (menu: Inbox (development)).${env.stripe.fake ? `
  Payments go to the local fake on 127.0.0.1:${env.STRIPE_FAKE_PORT}: pay with 4242 4242 4242 4242.` : ''}
` : ''}
  Press Ctrl-C to stop.
`);
  } catch (err) {
    console.error(`[start] ${(err as Error).message}`);
    stopAll(1);
  }
}

void main();
