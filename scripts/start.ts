import path from 'node:path';
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '../server/seed/seed';
import { closeContext, createContext } from '../server/context';
import { runMigrations } from '../db/client';
import { loadEnv } from '../server/env';
import { buildWebIfChanged } from './build-web';
import { clusterHome, ensureDatabase, startCluster, stopCluster, type Cluster } from './lib/postgres';
import { supervise, type Supervisor } from './lib/supervise';

/**
 * `npm start`: PostgreSQL (own cluster unless DATABASE_URL is set), migrations, demo seed, web
 * build when sources changed, then the API server, kept running: a server that dies (a crash, a
 * signal) is started again with a back-off. Ctrl-C, SIGTERM, SIGHUP, a crash of this script or
 * giving up on the server all stop what this started, the cluster included.
 *
 * Settings of this script itself (the server's are in server/env.ts): PGPORT (the cluster's
 * port, 54329), DATA_DIR (where the cluster lives, .data/), SKIP_WEB_BUILD=1 (serve dist/ as it is).
 */
const ROOT = path.resolve(__dirname, '..');

let cluster: Cluster | undefined;
let supervisor: Supervisor | undefined;
let stopping = false;

/** Stops the cluster once; synchronous (pg_ctl), so it also runs from the process's 'exit' event. */
function stopClusterOnce() {
  const c = cluster;
  cluster = undefined;
  if (c) stopCluster(c);
}

function stopAll(code: number, why: string) {
  if (stopping) return;
  stopping = true;
  if (why) console.log(`[start] ${why}: stopping`);
  const finish = () => {
    stopClusterOnce();
    process.exit(code);
  };
  const sup = supervisor;
  if (!sup) return finish();
  void sup.stop(15_000).then(finish, finish);
}

process.on('SIGINT', () => stopAll(0, 'SIGINT'));
process.on('SIGTERM', () => stopAll(0, 'SIGTERM'));
process.on('SIGHUP', () => stopAll(0, 'SIGHUP'));
process.on('uncaughtException', (err) => {
  console.error('[start] unexpected error:', err);
  stopAll(1, 'crash');
});
process.on('unhandledRejection', (err) => {
  console.error('[start] unexpected error:', err);
  stopAll(1, 'crash');
});
// The last way out (process.exit anywhere, the event loop running dry): the cluster never outlives us.
process.on('exit', stopClusterOnce);

async function main() {
  const vars: Record<string, string | undefined> = { ...process.env, NODE_ENV: process.env.NODE_ENV ?? 'development' };
  if (!vars.DATABASE_URL) {
    const home = clusterHome(path.resolve(ROOT, vars.DATA_DIR ?? '.data'));
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
  try {
    await runMigrations(ctx.db);
    console.log('[start] migrations applied');
    if (env.devTools) {
      const { created } = await seedDemo(ctx);
      console.log(created ? '[start] demo data seeded' : '[start] demo data already there');
    }
  } finally {
    await closeContext(ctx);
  }

  if (vars.SKIP_WEB_BUILD === '1') console.log('[web] SKIP_WEB_BUILD=1: serving dist/ as it is');
  else buildWebIfChanged();
  if (stopping) return;

  supervisor = supervise({
    name: 'the server',
    command: process.execPath,
    args: ['--import', 'tsx', 'server/index.ts'],
    spawnOptions: { cwd: ROOT, env: vars as NodeJS.ProcessEnv, stdio: 'inherit' },
    onStart: (child) => console.log(`[start] server process ${child.pid} starting`),
    onGiveUp: () => stopAll(1, 'the server cannot start'),
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
}

main().catch((err: Error) => {
  console.error(`[start] ${err.message}`);
  stopAll(1, 'start failed');
});
