/**
 * `npm run bench:figures`: median timings of the figure renderers (targets from the figures issue).
 * 1. Scene + SVG of a 6-layer figure with 200 points per layer (typesetting warm: the label cache
 *    is filled by the warm-up, as on a running server), one-column publication size.
 * 2. PDF of that figure (svg2pdf + jsPDF, fonts embedded).
 * 3. PNG of that figure at 300 dpi (resvg).
 * 4. A cached render served, through the app listening on loopback (a kept-alive connection, a
 *    throwaway PostgreSQL) after a first request filled the cache: the time in the server (request
 *    arrival to the last byte handed to the socket) and the round trip the client sees, on the
 *    public route (anonymous) and on the member route (session cookie, answered by the server's session cache after the first request).
 * `--no-http` skips the database part; BENCH_PARTS=1 splits the scene + SVG time. All data are
 * invented.
 */
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import request from 'supertest';
import { createApp } from '../../server/app';
import { closeContext, createContext } from '../../server/context';
import { runMigrations } from '../../db/client';
import { loadEnv } from '../../server/env';
import { createRenderPool } from '../../server/figures/render-pool';
import { svgToPdf } from '../../server/figures/render';
import { buildFigure } from '../../server/figures/scene';
import { buildScene, resolveFigureTheme, sceneToSvg } from '../../shared/figure';
import type { FigureLayerData, Glyphs } from '../../shared/figure/types';
import { measureFromGlyphs } from '../../server/figures/typeset';
import { figureSpecSchema, type FigureSpec } from '../../shared/schemas/figures';
import type { Curve, Theory, VersionMeta } from '../../shared/schemas/results';
import { ensureDatabase, startCluster, stopCluster, tmpRoot } from '../lib/postgres';
import { formatBytes } from '../../shared/bytes';

const ORIGIN = 'http://127.0.0.1:8080';
const LAYERS = 6;
const POINTS = 200;

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid]! : 0.5 * (s[mid - 1]! + s[mid]!);
};

async function timeMs(fn: () => unknown, samples: number, warmup = 3): Promise<number> {
  for (let i = 0; i < warmup; i++) await fn();
  const times: number[] = [];
  for (let i = 0; i < samples; i++) {
    const t0 = performance.now();
    await fn();
    times.push(performance.now() - t0);
  }
  return median(times);
}

/** Layer k: a falling limit with bands and a theory curve on 200 points (invented numbers). */
function layerCurve(k: number): { curve: Curve; theory: Theory } {
  const x = Array.from({ length: POINTS }, (_, i) => Number((0.5 + (6.5 * i) / (POINTS - 1)).toFixed(4)));
  const exp = x.map((m) => (40 + 15 * k) * Math.exp(-m / (0.8 + 0.05 * k)));
  const r = (v: number) => Number(v.toPrecision(5));
  return {
    curve: {
      x,
      observed: exp.map((e, i) => r(e * Math.exp(0.2 * Math.sin(i / 9 + k)))),
      expected: { '-2': exp.map((e) => r(e / 1.8)), '-1': exp.map((e) => r(e / 1.35)), '0': exp.map(r), '1': exp.map((e) => r(e * 1.35)), '2': exp.map((e) => r(e * 1.8)) },
    },
    theory: { label: `Benchmark model ${k + 1} (NLO)`, x, central: x.map((m) => r(900 * Math.exp(-m / 0.6))), lower: x.map((m) => r(800 * Math.exp(-m / 0.6))), upper: x.map((m) => r(1000 * Math.exp(-m / 0.6))) },
  };
}

function meta(k: number): VersionMeta {
  return {
    title: `Search ${k + 1} for a heavy resonance V′ → two jets`,
    model: 'Invented benchmark',
    parameterName: "m(V')",
    parameterUnit: 'TeV',
    quantity: 'xsec',
    quantityUnit: 'fb',
    sqrtS: 18,
    luminosity: 140,
    cl: 0.95,
    method: 'asymptotic',
    reference: `LF-BENCH-${k + 1}`,
    notes: '',
  };
}

const uuid = (k: number) => `00000000-0000-4000-8000-${String(k + 1).padStart(12, '0')}`;

function benchFigure(): { spec: FigureSpec; data: FigureLayerData[] } {
  const spec = figureSpecSchema.parse({
    title: 'Benchmark: six overlaid limits',
    theme: 'publication',
    size: { preset: 'one-column' },
    x: { scale: 'linear', label: "$m_{V'}$ [TeV]" },
    y: { scale: 'log', label: '$\\sigma \\times B$ [fb]' },
    layers: Array.from({ length: LAYERS }, (_, k) => ({ resultId: uuid(k), version: 1, label: `Channel ${k + 1}` })),
    annotations: [{ text: 'Lanternfish, invented data', x: 0.05, y: 0.2 }],
  });
  const data: FigureLayerData[] = Array.from({ length: LAYERS }, (_, k) => ({ available: true, resultId: uuid(k), version: 1, title: meta(k).title, meta: meta(k), ...layerCurve(k), hue: k }));
  return { spec, data };
}

/**
 * Cached renders over real HTTP: the app listens on a loopback port and the client keeps its
 * connection open (as a browser does), so the time is the server's work plus one local round trip.
 */
type Timing = { roundTrip: number; server: number };
async function httpCached(): Promise<{ member: Timing; publicRoute: Timing; health: Timing; me: Timing; bytes: number }> {
  const home = tmpRoot();
  const cluster = await startCluster({ home, throwaway: true });
  let server: Server | undefined;
  try {
    await ensureDatabase(cluster, 'bench');
    const env = loadEnv({ DATABASE_URL: cluster.url('bench'), NODE_ENV: 'test', PUBLIC_URL: ORIGIN, AUTH_RATE_LIMIT: '1000', WORKERS: '0' });
    const ctx = createContext(env);
    await runMigrations(ctx.db);
    const app = createApp(ctx);
    const agent = request.agent(app).set('Origin', ORIGIN);
    const signUp = await agent.post('/api/auth/sign-up/email').send({ name: 'Bench', email: 'bench@lab.example', password: 'bench-password-1' });
    const cookie = (signUp.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; ');
    const gid = (await agent.post('/api/groups').send({ name: 'Bench group' })).body.id as string;
    const layers = [];
    for (let k = 0; k < LAYERS; k++) {
      const { curve, theory } = layerCurve(k);
      const v = await agent.post(`/api/groups/${gid}/results`).send({ meta: meta(k), curve, theory });
      await agent.post(`/api/groups/${gid}/results/${v.body.resultId}/versions/1/publish`).send({ public: true });
      layers.push({ resultId: v.body.resultId as string, version: 1 });
    }
    const fig = await agent.post(`/api/groups/${gid}/figures`).send({ spec: { ...benchFigure().spec, layers }, public: true });
    // Server-side time of each request: from its arrival to the last byte handed to the socket.
    const served: number[] = [];
    const outer = express();
    outer.use((_req, res, next) => {
      const t0 = performance.now();
      res.on('finish', () => served.push(performance.now() - t0));
      next();
    });
    outer.use(app);
    server = await new Promise<Server>((resolve) => {
      const s = outer.listen(0, '127.0.0.1', () => resolve(s));
    });
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    let bytes = 0;
    const get = async (url: string, headers: Record<string, string> = {}) => {
      const res = await fetch(`${base}${url}`, { headers });
      const body = Buffer.from(await res.arrayBuffer());
      if (res.status !== 200) throw new Error(`${url}: ${res.status} ${body.toString().slice(0, 200)}`);
      return { cache: res.headers.get('x-render-cache'), body };
    };
    const memberUrl = `/api/figures/${fig.body.id}/render.png?dpi=300`;
    const publicUrl = `/api/public/figures/${fig.body.id}/render.png?dpi=300`;
    if ((await get(memberUrl, { cookie })).cache !== 'miss' || (await get(publicUrl)).cache !== 'miss') throw new Error('expected the first renders to be misses');
    const serverSide = async (fn: () => Promise<unknown>) => {
      for (let i = 0; i < 10; i++) await fn();
      served.length = 0;
      const roundTrip = await timeMs(fn, 60, 0);
      return { roundTrip, server: median(served) };
    };
    const member = await serverSide(async () => {
      const r = await get(memberUrl, { cookie });
      if (r.cache !== 'hit') throw new Error('expected a cache hit');
      bytes = r.body.length;
    });
    const publicRoute = await serverSide(async () => {
      if ((await get(publicUrl)).cache !== 'hit') throw new Error('expected a cache hit');
    });
    // For scale: the cheapest API round trip on this machine (one `select 1`).
    const health = await serverSide(async () => {
      await (await fetch(`${base}/api/health`)).arrayBuffer();
    });
    // For scale: a signed-in JSON route (the session from the server's session cache, the user's groups in one query).
    const me = await serverSide(async () => {
      const res = await fetch(`${base}/api/me`, { headers: { cookie } });
      await res.arrayBuffer();
      if (res.status !== 200) throw new Error(`/api/me: ${res.status}`);
    });
    await closeContext(ctx);
    return { member, publicRoute, health, me, bytes };
  } finally {
    server?.closeAllConnections();
    server?.close();
    stopCluster(cluster);
  }
}

async function main() {
  const { spec, data } = benchFigure();
  const rows: [string, number, number][] = [];
  let built = buildFigure(spec, data, null);
  const svg = () => built.svg;

  rows.push([
    `scene + SVG, ${LAYERS} layers × ${POINTS} points (typesetting warm)`,
    await timeMs(() => {
      built = buildFigure(spec, data, null);
      return svg();
    }, 30),
    30,
  ]);
  const finalSvg = svg();
  rows.push(['PDF (svg2pdf + jsPDF, fonts embedded)', await timeMs(() => svgToPdf(finalSvg, built.scene, built.glyphs, { title: spec.title, created: new Date(0) }), 15), 300]);
  // As the routes make them: in a renderer process (the first call starts it, outside the timing).
  const pool = createRenderPool({ size: 1, timeoutMs: 120_000 });
  await pool.png(finalSvg, built.scene.widthPt, 72);
  rows.push(['  the same in a renderer process (as the routes make it)', await timeMs(() => pool.pdf(finalSvg, built.scene, built.glyphs, { title: spec.title, created: new Date(0) }), 15), 300]);
  rows.push(['PNG at 300 dpi (resvg, in a renderer process as the routes make it)', await timeMs(() => pool.png(finalSvg, built.scene.widthPt, 300), 15), 500]);
  await pool.stop();
  if (!process.argv.includes('--no-http')) {
    const cached = await httpCached();
    rows.push([`cached render served, public route: in the server (PNG 300 dpi, ${formatBytes(cached.bytes)})`, cached.publicRoute.server, 5]);
    rows.push(['  the same, HTTP round trip seen by the client', cached.publicRoute.roundTrip, Number.NaN]);
    rows.push(['cached render served, signed-in member: in the server (session cookie)', cached.member.server, 5]);
    rows.push(['  the same, HTTP round trip seen by the client', cached.member.roundTrip, Number.NaN]);
    rows.push(['for scale: GET /api/health (one select 1), in the server', cached.health.server, Number.NaN]);
    rows.push(['for scale: GET /api/me (session from the cache, the user’s groups in one query), in the server', cached.me.server, Number.NaN]);
  }

  console.log(`\nFigure renderers (${LAYERS} layers × ${POINTS} points, one-column publication figure; medians)\n`);
  for (const [what, ms, target] of rows) {
    const verdict = Number.isNaN(target) ? '' : `target ≤ ${target} ms  ${ms <= target ? 'ok' : 'MISSED'}`;
    console.log(`${what.padEnd(78)} ${ms.toFixed(1).padStart(7)} ms   ${verdict}`);
  }
  console.log(`\nSVG ${formatBytes(finalSvg.length)} (labels as paths, repeated glyphs drawn once)`);
}

if (process.env.BENCH_PARTS) {
  // Where the scene + SVG time goes (for profiling): the builder's layout (labels typeset as it
  // measures them, warm), its SVG writer without and with glyph reuse.
  const { spec, data } = benchFigure();
  const theme = resolveFigureTheme(spec.theme, null);
  const parts: Record<string, number[]> = { scene: [], svg: [], 'svg with glyph reuse': [] };
  for (let i = 0; i < 40; i++) {
    let t = performance.now();
    const glyphs: Glyphs = new Map();
    const scene = buildScene(spec, data, theme, measureFromGlyphs(glyphs));
    parts.scene!.push(performance.now() - t);
    t = performance.now();
    const svg = sceneToSvg(scene, glyphs);
    parts.svg!.push(performance.now() - t);
    t = performance.now();
    sceneToSvg(scene, glyphs, { reuseGlyphs: true });
    parts['svg with glyph reuse']!.push(performance.now() - t);
    if (!svg) throw new Error('empty SVG');
  }
  console.log(Object.entries(parts).map(([k, v]) => `${k} ${median(v.slice(5)).toFixed(2)} ms`).join(', '));
  process.exit(0);
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(e);
    process.exit(1);
  },
);
