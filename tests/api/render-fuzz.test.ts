import { spawn, type ChildProcess } from 'node:child_process';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { and, eq } from 'drizzle-orm';
import request from 'supertest';
import { figureVersions } from '@/db/schema';
import { createDb, type Db } from '@/db/client';
import { FIGURE_THEMES, figureSpecSchema, LEGEND_POSITIONS, SIZE_PRESETS, type FigureSpecInput } from '@/shared/schemas/figures';
import { createTestDatabase } from '../helpers/db';
import { sampleCurve, sampleMeta } from '../helpers/factories';

/**
 * Fuzzing the renderers through the real server, run as its own process (as `npm start` runs
 * it): random and hostile figure specs — page sizes from the smallest to the largest, TeX that
 * typesets to absurd boxes, empty, tiny, enormous and inverted axis ranges, many annotations,
 * results with enormous ranges — are saved and drawn as SVG, PDF and PNG, by members (any size
 * and dpi) and by the public. Specs the save refuses are also written straight into the
 * database, as a figure stored before the checks would be. After every case the server must
 * still answer, as the same process, and every answer must be a drawing, a refusal naming a
 * field (400/422), or a contained renderer failure (500 render_failed). The PRNG is seeded
 * (FUZZ_SEED, FUZZ_CASES to explore further), so a failure replays exactly.
 */

const SEED = Number(process.env.FUZZ_SEED ?? 20261202);
const CASES = Number(process.env.FUZZ_CASES ?? 40);
jest.setTimeout(240_000);

/** mulberry32: a small seeded PRNG (common practice for repeatable fuzzing). */
function prng(seed: number) {
  let a = seed >>> 0;
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return {
    next,
    int: (lo: number, hi: number) => lo + Math.floor(next() * (hi - lo + 1)),
    pick: <T,>(xs: readonly T[]): T => xs[Math.floor(next() * xs.length)]!,
    chance: (p: number) => next() < p,
  };
}
type Rng = ReturnType<typeof prng>;

/** Labels: ordinary, hostile TeX (absurd boxes, deep nesting, unknown or refused commands), markup, odd text. */
const LABELS = [
  '',
  'Observed limit',
  "$m_{V'}$ [TeV]",
  '$\\sigma \\times B$ [fb]',
  '$\\rule{1em}{100em}$',
  '$\\rule{100000em}{1em}$',
  '$\\hspace{1000000em}x$',
  '$\\hspace{-1000000em}x$',
  '$\\rule{-5em}{-5em}$',
  '$\\kern9999em x$',
  '$\\mathrm{\\rule{9999em}{1pt}}$',
  '$\\begin{array}{c}a\\\\b\\\\c\\\\d\\\\e\\\\f\\\\g\\\\h\\\\i\\\\j\\\\k\\\\l\\\\m\\\\n\\\\o\\\\p\\end{array}$',
  '$\\frac{1}{\\frac{1}{\\frac{1}{\\frac{1}{\\frac{1}{\\frac{1}{x}}}}}}$',
  '$x^{y^{z^{w^{v^{u}}}}}$',
  '$\\sqrt[100]{\\sqrt{\\sqrt{\\sqrt{x}}}}$',
  '$\\left(\\right.$',
  '$\\unknowncommand{x}$',
  '$\\href{javascript:alert(1)}{x}$',
  '$\\require{bbox}$',
  '$',
  '$$',
  '$x',
  '\\$5',
  '<script>alert(1)</script>',
  '"/><foreignObject>',
  'ﷺ ‮RTL override‬ 🧪 e\u0301 \u0000 \u200b',
  'x'.repeat(200),
  `$${'\\alpha'.repeat(30)}$`,
  '$\\displaystyle\\sum_{i=0}^{\\infty}\\int_0^1$',
  '$\\overbrace{xxxxxxxxxxxxxxxx}^{yyyyyyyyyyyy}$',
];

/** Axis ranges: automatic, ordinary, tiny, enormous, negative, zero-width and inverted (refused), log of ≤ 0 (refused). */
function axis(r: Rng, scale: 'linear' | 'log'): FigureSpecInput['x'] {
  const label = r.pick(LABELS);
  const ranges: [number | null, number | null][] = [
    [null, null],
    [null, null],
    [1, 5],
    [1, 1 + 1e-12],
    [1e-300, 1e300],
    [-1e300, 1e300],
    [-5, -1],
    [3, 3],
    [5, 1],
    [0, 10],
    [-10, 10],
    [null, 1e-300],
    [1e300, null],
    [Number.MIN_VALUE, Number.MAX_VALUE],
  ];
  const [min, max] = r.pick(ranges);
  return { scale, min, max, label };
}

function randomSpec(r: Rng, resultIds: string[]): FigureSpecInput {
  const preset = r.pick([...(Object.keys(SIZE_PRESETS) as (keyof typeof SIZE_PRESETS)[]), 'custom' as const]);
  const cm = () => r.pick([3, 3, 60, 60, 4.2, 12, 33.3]);
  const layers = Array.from({ length: r.int(0, 3) }, () => ({
    resultId: r.pick(resultIds),
    version: 1,
    label: r.chance(0.4) ? r.pick(LABELS) : '',
    show: { observed: r.chance(0.8), expected: r.chance(0.8), band1: r.chance(0.6), band2: r.chance(0.6), theory: r.chance(0.7), theoryBand: r.chance(0.5), crossings: r.chance(0.5) },
    hue: r.chance(0.3) ? r.int(0, 11) : null,
  }));
  return {
    title: r.chance(0.8) ? `Fuzz figure ${r.int(1, 1e6)}` : r.pick(LABELS.filter((l) => l.trim().length > 0)).slice(0, 200),
    theme: r.pick(FIGURE_THEMES),
    size: preset === 'custom' ? { preset, widthCm: cm(), heightCm: cm() } : { preset },
    x: axis(r, r.pick(['linear', 'log'] as const)),
    y: axis(r, r.pick(['linear', 'log'] as const)),
    layers,
    bandsLayer: layers.length && r.chance(0.8) ? r.int(0, layers.length - 1) : null,
    legend: { position: r.pick(LEGEND_POSITIONS), columns: r.pick([1, 2] as const) },
    annotations: Array.from({ length: r.chance(0.3) ? r.int(0, 10) : 0 }, () => ({ text: r.pick(LABELS.filter((l) => l.length > 0)), x: r.next(), y: r.next() })),
    energyLabel: r.chance(0.7),
    clLabel: r.chance(0.7),
    excludedShading: r.chance(0.5),
  };
}

let child: ChildProcess;
let base: string;
let db: Db;
let dropDb: () => Promise<void>;
let output = '';

const freePort = () =>
  new Promise<number>((resolve) => {
    const s: Server = createServer();
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as AddressInfo).port;
      s.close(() => resolve(port));
    });
  });

async function waitForHealth(deadlineMs: number) {
  const until = Date.now() + deadlineMs;
  for (;;) {
    if (child.exitCode !== null || child.signalCode !== null) throw new Error(`the server stopped while starting:\n${output.slice(-3000)}`);
    const ok = await fetch(`${base}/api/health`).then((r) => r.ok, () => false);
    if (ok) return;
    if (Date.now() > until) throw new Error(`the server did not answer:\n${output.slice(-3000)}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

beforeAll(async () => {
  const database = await createTestDatabase();
  dropDb = database.drop;
  db = createDb(database.url);
  const port = await freePort();
  base = `http://127.0.0.1:${port}`;
  const root = path.resolve(__dirname, '../..');
  child = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], {
    cwd: root,
    env: {
      PATH: process.env.PATH,
      HOME: process.env.HOME,
      DATABASE_URL: database.url,
      NODE_ENV: 'test',
      HOST: '127.0.0.1',
      PORT: String(port),
      PUBLIC_URL: base,
      WORKERS: '0',
      STRIPE_FAKE_PORT: '0',
      AUTH_RATE_LIMIT: '10000',
      RENDER_RATE_LIMIT: '100000',
      RENDER_PROCESSES: '2',
      RENDER_TIMEOUT_SECONDS: '60',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout!.on('data', (d: Buffer) => (output += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (output += d.toString()));
  await waitForHealth(120_000);
});

afterAll(async () => {
  if (child && child.exitCode === null && child.signalCode === null) {
    const done = new Promise((r) => child.once('exit', r));
    child.kill('SIGTERM');
    let timer: NodeJS.Timeout | undefined;
    await Promise.race([done, new Promise((r) => (timer = setTimeout(r, 10_000)))]);
    clearTimeout(timer);
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  }
  await db?.$client.end();
  await dropDb?.();
});

test(`${CASES} random and hostile figures drawn as SVG, PDF and PNG leave the server up (seed ${SEED})`, async () => {
  const r = prng(SEED);
  const pid = child.pid;
  const owner = request.agent(base).set('Origin', base);
  const signUp = await owner.post('/api/auth/sign-up/email').send({ name: 'Fuzz Owner', email: `fuzz-${SEED}@lab.example`, password: 'correct-horse-battery' });
  expect(signUp.status).toBe(200);
  const group = await owner.post('/api/groups').send({ name: 'Fuzzing group of the Halcyon Ring' });
  expect(group.status).toBe(201);
  const groupId = group.body.id as string;

  // Results: an ordinary one, one spanning an enormous range, one flat with two points.
  const { curve, theory } = sampleCurve(8);
  const span = Array.from({ length: 13 }, (_, i) => 10 ** (i - 6));
  const bodies = [
    { meta: sampleMeta({ title: 'Ordinary search' }), curve, theory },
    { meta: sampleMeta({ title: 'Enormous range' }), curve: { x: span, observed: span.map((_, i) => 10 ** (200 - 33 * i)), expected: { '0': span.map((_, i) => 10 ** (190 - 32 * i)) } } },
    { meta: sampleMeta({ title: 'Flat two points' }), curve: { x: [1, 1.000001], observed: [7, 7] } },
  ];
  const resultIds: string[] = [];
  for (const body of bodies) {
    const res = await owner.post(`/api/groups/${groupId}/results`).send(body);
    expect({ title: body.meta.title, status: res.status }).toEqual({ title: body.meta.title, status: 201 });
    const id = res.body.resultId as string;
    expect((await owner.post(`/api/groups/${groupId}/results/${id}/versions/1/publish`).send({ public: true })).status).toBe(200);
    resultIds.push(id);
  }
  // A fallback figure whose stored spec is replaced by specs the save refused.
  const carrier = await owner.post(`/api/groups/${groupId}/figures`).send({ spec: { title: 'Carrier', theme: 'publication', size: { preset: 'one-column' }, layers: [] }, public: true });
  expect(carrier.status).toBe(201);

  const contained: unknown[] = [];
  const tally = { cases: 0, saved: 0, refusedOnSave: 0, storedDirectly: 0, drawn: 0, refused: 0, contained: 0 };
  const allowed = (status: number, body: { error?: { code?: string } }) => status === 200 || status === 400 || status === 422 || (status === 500 && body?.error?.code === 'render_failed');

  for (let i = 0; i < CASES; i++) {
    tally.cases++;
    if (r.chance(0.15)) {
      // Now and then a house style that scales all type up or down.
      const style = r.pick([{}, { typeScale: 2 }, { typeScale: 0.6, font: 'serif' as const }, { lineScale: 3 }]);
      expect((await owner.put(`/api/groups/${groupId}/style`).send({ style })).status).toBe(200);
    }
    const input = randomSpec(r, resultIds);
    const created = await owner
      .post(`/api/groups/${groupId}/figures`)
      .send({ spec: input, public: true })
      .catch((e: Error) => {
        throw new Error(`case ${i}: saving failed: ${e.message}\n${JSON.stringify(input)}\n${output.slice(-3000)}`);
      });
    let figureId: string | null = null;
    if (created.status === 201) {
      tally.saved++;
      figureId = created.body.id as string;
    } else {
      expect({ case: i, status: created.status, spec: input }).toMatchObject({ case: i, status: 400 });
      tally.refusedOnSave++;
      // Schema-valid but refused (a label too large): stored directly, as before the check.
      const parsed = figureSpecSchema.safeParse(input);
      if (parsed.success) {
        await db.update(figureVersions).set({ spec: parsed.data }).where(and(eq(figureVersions.figureId, carrier.body.id as string), eq(figureVersions.version, 1)));
        figureId = carrier.body.id as string;
        tally.storedDirectly++;
      }
    }
    if (figureId) {
      const dpi = r.pick([36, 72, 96]);
      const size = r.chance(0.4) ? `size=${r.pick(Object.keys(SIZE_PRESETS))}` : '';
      const urls = [
        `/api/figures/${figureId}/render.svg?${size}`,
        `/api/figures/${figureId}/render.pdf?${size}`,
        `/api/figures/${figureId}/render.png?dpi=${dpi}&${size}`,
        `/api/public/figures/${figureId}/render.png?dpi=${r.pick([72, 96])}`,
      ];
      // All four at once, as a page full of figures asks for them.
      const answers = await Promise.all(
        urls.map(async (url) => {
          const t0 = Date.now();
          const res = await owner
            .get(url)
            .buffer(true)
            .catch((e: Error) => {
              throw new Error(`case ${i}: ${url} failed after ${Date.now() - t0} ms: ${e.message}; server ${child.exitCode === null && child.signalCode === null ? 'running' : `ended (${child.exitCode ?? child.signalCode})`}\n${JSON.stringify(input)}\n${output.slice(-3000)}`);
            });
          return { url, res };
        }),
      );
      for (const { url, res } of answers) {
        expect({ case: i, url, status: res.status, ok: allowed(res.status, res.body), spec: input }).toMatchObject({ case: i, url, ok: true });
        if (res.status === 200) tally.drawn++;
        else if (res.status === 500) {
          tally.contained++;
          contained.push({ case: i, url, spec: input });
        }
        else tally.refused++;
      }
    }
    // Still up, and still the same process.
    expect(child.exitCode).toBeNull();
    expect(child.signalCode).toBeNull();
    expect(child.pid).toBe(pid);
    const health = await fetch(`${base}/api/health`).then((res) => res.status, (e: Error) => `no answer: ${e.message}\n${output.slice(-3000)}`);
    expect({ case: i, health }).toEqual({ case: i, health: 200 });
  }
  // The run exercised every kind of outcome it is meant to.
  expect(tally.saved).toBeGreaterThan(0);
  expect(tally.storedDirectly).toBeGreaterThan(0);
  expect(tally.drawn).toBeGreaterThan(0);
  expect(tally.refused).toBeGreaterThan(0);
  console.log(`[render-fuzz] seed ${SEED}: ${JSON.stringify(tally)}${contained.length ? `\ncontained renderer failures:\n${JSON.stringify(contained, null, 1)}` : ''}`);
});
