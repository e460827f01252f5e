/**
 * `npm run bench:api`: HTTP throughput and tail latency of each route class under load, against
 * `GET /api/health` (the stack's own ceiling: Express, the pool and one `select 1`) in the same
 * run. A throwaway PostgreSQL with the demo world plus 10,000 extra results (half of them public,
 * spread over three groups), the real server as its own process (`server/index.ts`, no scan
 * workers), and autocannon in this process with 200 connections (`BENCH_CONNECTIONS`), each
 * route for 8 s (`BENCH_SECONDS`) three times; medians of the three runs are printed.
 *
 * Routes: the public results list, a permanent link (caller-aware), a cached render on the
 * public route, and the results list of a signed-in member (session cookie). All data invented.
 */
import autocannon from 'autocannon';
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { Client } from 'pg';
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '../../server/seed/seed';
import { closeContext, createContext } from '../../server/context';
import { runMigrations } from '../../db/client';
import { loadEnv } from '../../server/env';
import { ensureDatabase, freePort, startCluster, stopCluster, tmpRoot } from '../lib/postgres';

const ROOT = path.resolve(__dirname, '../..');
const EXTRA_RESULTS = Number(process.env.BENCH_RESULTS ?? 10_000);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 200);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 8);
const RUNS = Number(process.env.BENCH_RUNS ?? 3);

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid]! : 0.5 * (s[mid - 1]! + s[mid]!);
};

/** 10,000 results copied from a demo version with new slugs, titles and dates (one SQL statement each). */
async function seedMany(url: string, n: number) {
  const c = new Client({ connectionString: url });
  await c.connect();
  try {
    await c.query('begin');
    await c.query(
      `create temp table src on commit drop as
         select v.*, r.group_id from result_versions v join results r on r.id = v.result_id
         where v.state = 'published' order by v.created_at limit 1`,
    );
    await c.query(
      `create temp table grp on commit drop as select id, row_number() over (order by name) - 1 as k from groups`,
    );
    await c.query(
      `insert into results (id, group_id, slug, is_public, last_version, created_at, updated_at)
         select gen_random_uuid(), (select id from grp where k = i % (select count(*) from grp)),
                'bench-' || i, i % 2 = 0, 1, now() - (i || ' minutes')::interval, now() - (i || ' minutes')::interval
         from generate_series(1, $1::int) i`,
      [n],
    );
    await c.query(
      `insert into result_versions (result_id, version, state, title, model, parameter_name, parameter_unit, quantity,
         quantity_unit, sqrt_s, luminosity, cl, method, reference, notes, curve, theory, stored_bytes, created_at, updated_at, published_at)
       select r.id, 1, case when i % 5 = 4 then 'draft'::result_state else 'published'::result_state end,
              'Bench search ' || i || ' for ' || s.model, s.model, s.parameter_name, s.parameter_unit, s.quantity, s.quantity_unit,
              s.sqrt_s, s.luminosity, s.cl, s.method, 'HR-BENCH-' || i, '', s.curve, s.theory, s.stored_bytes, r.created_at, r.updated_at, r.updated_at
       from results r join lateral (select substring(r.slug from 7)::int as i) n on true cross join src s
       where r.slug like 'bench-%'`,
    );
    await c.query('commit');
    await c.query('analyze');
  } finally {
    await c.end();
  }
}

async function waitHealthy(base: string, ms = 60_000) {
  const until = Date.now() + ms;
  for (;;) {
    if (await fetch(`${base}/api/health`).then((r) => r.ok, () => false)) return;
    if (Date.now() > until) throw new Error('the server did not come up');
    await new Promise((r) => setTimeout(r, 200));
  }
}

type Row = { route: string; rps: number; p50: number; p99: number; errors: number };

async function load(url: string, headers: Record<string, string> = {}): Promise<{ rps: number; p50: number; p99: number; errors: number }> {
  const r = await autocannon({ url, connections: CONNECTIONS, duration: SECONDS, headers, pipelining: 1 });
  return { rps: r.requests.average, p50: r.latency.p50, p99: r.latency.p99, errors: r.errors + r.timeouts + r.non2xx };
}

async function main() {
  const home = tmpRoot();
  const cluster = await startCluster({ home, throwaway: true });
  let server: ChildProcess | undefined;
  try {
    await ensureDatabase(cluster, 'bench');
    const dbUrl = cluster.url('bench');
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const vars: NodeJS.ProcessEnv = { ...process.env, NODE_ENV: 'development', DATABASE_URL: dbUrl, PORT: String(port), PUBLIC_URL: base, WORKERS: '0', STRIPE_FAKE_PORT: String(await freePort()), AUTH_RATE_LIMIT: '100000', RENDER_RATE_LIMIT: '100000000' };
    const ctx = createContext(loadEnv(vars));
    await runMigrations(ctx.db);
    await seedDemo(ctx);
    await closeContext(ctx);
    const t0 = performance.now();
    await seedMany(dbUrl, EXTRA_RESULTS);
    console.log(`[bench] ${EXTRA_RESULTS} extra results seeded in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

    server = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], { cwd: ROOT, env: vars, stdio: ['ignore', 'ignore', 'inherit'] });
    await waitHealthy(base);

    // A member's session cookie (the demo analyst), a public permanent link and a public figure.
    const demo = DEMO_USERS.find((u) => u.key === 'analyst') ?? DEMO_USERS[0]!;
    const signIn = await fetch(`${base}/api/auth/sign-in/email`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', origin: base },
      body: JSON.stringify({ email: demo.email, password: DEMO_PASSWORD }),
    });
    const cookie = (signIn.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
    if (!signIn.ok || !cookie) throw new Error(`sign-in failed: ${signIn.status}`);
    const list = (await (await fetch(`${base}/api/public/results?pageSize=5`)).json()) as { items: { slug: string; version: number }[] };
    const link = list.items[0]!;
    const figs = (await (await fetch(`${base}/api/public/figures`)).json()) as { items: { id: string }[] };
    const renderUrl = `${base}/api/public/figures/${figs.items[0]!.id}/render.png?dpi=150`;
    if (!(await fetch(renderUrl)).ok) throw new Error('the public render failed');

    const routes: [string, string, Record<string, string>][] = [
      ['GET /api/health (ceiling)', `${base}/api/health`, {}],
      ['GET /api/public/results (public list)', `${base}/api/public/results`, {}],
      ['GET /api/results/:slug/v:n (permanent link)', `${base}/api/results/${link.slug}/v${link.version}`, {}],
      ['GET /api/public/figures/:id/render.png (cached)', renderUrl, {}],
      ['GET /api/results (signed-in list)', `${base}/api/results`, { cookie }],
    ];
    // Warm every route once (connections, prepared statements, caches) before measuring.
    for (const [, url, headers] of routes) await autocannon({ url, connections: 20, duration: 1, headers });

    const rows: Row[] = [];
    for (const [name, url, headers] of routes) {
      const runs = [];
      for (let i = 0; i < RUNS; i++) runs.push(await load(url, headers));
      rows.push({ route: name, rps: median(runs.map((r) => r.rps)), p50: median(runs.map((r) => r.p50)), p99: median(runs.map((r) => r.p99)), errors: runs.reduce((a, r) => a + r.errors, 0) });
    }
    const ceiling = rows[0]!.rps;
    console.log(`\n${CONNECTIONS} connections, ${SECONDS} s per run, median of ${RUNS} runs, ${EXTRA_RESULTS} extra results\n`);
    console.log('| route | requests/s | share of health | p50 ms | p99 ms | errors |');
    console.log('|---|---|---|---|---|---|');
    for (const r of rows) {
      console.log(`| ${r.route} | ${Math.round(r.rps)} | ${Math.round((100 * r.rps) / ceiling)} % | ${r.p50} | ${r.p99} | ${r.errors} |`);
    }
    const misses = rows.slice(1).filter((r) => r.rps < ceiling / 2 || r.p99 >= 150);
    console.log(misses.length ? `\nbelow target (≥ 50 % of health, p99 < 150 ms): ${misses.map((r) => r.route).join('; ')}` : '\nevery route meets the target (≥ 50 % of health, p99 < 150 ms)');
  } finally {
    if (server && server.exitCode === null) {
      server.kill('SIGTERM');
      await new Promise((r) => server!.once('exit', r));
    }
    stopCluster(cluster);
  }
}

main().catch((err) => {
  console.error(err);
  process.exitCode = 1;
});
