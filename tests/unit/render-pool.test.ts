import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { svgToPdf, svgToPng } from '@/server/figures/render';
import { createRenderPool, RenderFailed, type RenderPool } from '@/server/figures/render-pool';
import { buildFigure } from '@/server/figures/scene';
import { dijet, dilepton, spec } from './figure/fixtures';

/**
 * The renderer processes: PNG and PDF drawn outside the calling process, the very same bytes as
 * in-process; an input that makes resvg abort natively ends only its renderer process (the job
 * fails with the reason, the next one gets a new process, and this test process lives on); a
 * job that takes too long is given up and its process killed.
 */

jest.setTimeout(120_000);

/**
 * A filled shape clipped to a rectangle that lies wholly off the canvas: resvg 2.6 panics on it
 * (an unwrap in its geometry code), and the panic aborts the process. The plot frame of a figure
 * whose label pushed it off the page was exactly this.
 */
const ABORTS_RESVG =
  '<svg xmlns="http://www.w3.org/2000/svg" width="100" height="100" viewBox="0 0 100 100"><clipPath id="c"><rect x="500" y="10" width="1" height="50"/></clipPath><path d="M499,40A2,2 0 1,0 503,40A2,2 0 1,0 499,40Z" fill="#fff" clip-path="url(#c)"/></svg>';

const built = buildFigure(spec(), [dijet, dilepton], null);
const svg = built.svg;
const meta = { title: 'Pool test figure', created: new Date('2026-01-02T03:04:05Z') };

let pool: RenderPool;
const lines: string[] = [];
beforeAll(() => {
  pool = createRenderPool({ size: 2, timeoutMs: 60_000, log: (l) => lines.push(l) });
});
afterAll(async () => pool?.stop());

test('the input really aborts a process that draws it in-process (why the renderers live apart)', () => {
  const root = path.resolve(__dirname, '../..');
  const r = spawnSync(process.execPath, ['-e', `new (require('@resvg/resvg-js').Resvg)(process.argv[1]).render()`, ABORTS_RESVG], { cwd: root, encoding: 'utf8' });
  expect(r.signal).toBe('SIGABRT');
  expect(r.stderr).toMatch(/panicked/);
});

test('a figure whose curves and markers lie far outside a fixed axis range no longer aborts resvg (found by the fuzz test)', () => {
  const far = buildFigure(spec({ theme: 'outreach', size: { preset: 'slide' }, x: { scale: 'linear', min: 1e300, max: null, label: 'x' } }), [dijet, dilepton], null);
  const root = path.resolve(__dirname, '../..');
  const draw = `let s='';process.stdin.on('data',d=>s+=d).on('end',()=>{new (require('@resvg/resvg-js').Resvg)(s).render();console.log('drawn')})`;
  const r = spawnSync(process.execPath, ['-e', draw], { cwd: root, input: far.svg, encoding: 'utf8' });
  expect({ signal: r.signal, status: r.status, out: r.stdout.trim() }).toEqual({ signal: null, status: 0, out: 'drawn' });
});

test('PNG and PDF from the pool are the very bytes drawn in-process', async () => {
  const [png, pdf] = await Promise.all([pool.png(svg, built.scene.widthPt, 150), pool.pdf(svg, built.scene, built.glyphs, meta)]);
  expect(png.equals(svgToPng(svg, built.scene.widthPt, 150))).toBe(true);
  expect(pdf.equals(await svgToPdf(svg, built.scene, built.glyphs, meta))).toBe(true);
  expect(pool.pids().length).toBeGreaterThanOrEqual(1);
  expect(pool.pids()).not.toContain(process.pid);
});

test('a native abort fails only its job; the next job gets a new process', async () => {
  await Promise.all([pool.png(svg, built.scene.widthPt, 72), pool.png(svg, built.scene.widthPt, 72)]);
  expect(pool.pids()).toHaveLength(2);
  const crash = pool.run({ kind: 'png', svg: ABORTS_RESVG, widthPt: 72, dpi: 72 });
  const [crashing] = pool.busyPids();
  const ok = pool.png(svg, built.scene.widthPt, 72);
  const err = await crash.then(() => null, (e: unknown) => e);
  expect(err).toBeInstanceOf(RenderFailed);
  expect((err as RenderFailed).crashed).toBe(true);
  expect((err as RenderFailed).message).toMatch(/renderer process stopped \(signal SIGABRT\)/);
  // The job drawn beside it is not lost, and later ones work.
  expect((await ok).equals(svgToPng(svg, built.scene.widthPt, 72))).toBe(true);
  expect(pool.pids()).not.toContain(crashing);
  // Two at once: a new process is started beside the survivor.
  const again = await Promise.all([pool.png(svg, built.scene.widthPt, 96), pool.png(svg, built.scene.widthPt, 96)]);
  expect(again.every((b) => b.equals(svgToPng(svg, built.scene.widthPt, 96)))).toBe(true);
  expect(pool.pids()).toHaveLength(2);
  expect(pool.pids()).not.toContain(crashing);
  expect(lines.some((l) => /PNG render failed, the renderer process stopped \(signal SIGABRT\)/.test(l))).toBe(true);
});

test('a job that takes longer than its limit is given up and its process killed; the pool goes on', async () => {
  // Both processes ready and idle, so the job is handed over at once; a 1200 dpi PNG (≈ 16
  // megapixels) takes far longer than the millisecond it is given.
  await Promise.all([pool.png(svg, built.scene.widthPt, 72), pool.png(svg, built.scene.widthPt, 72)]);
  const slow = await pool.run({ kind: 'png', svg, widthPt: built.scene.widthPt, dpi: 1200 }, { timeoutMs: 1 }).then(
    () => null,
    (e: unknown) => e,
  );
  expect(slow).toBeInstanceOf(RenderFailed);
  expect((slow as RenderFailed).message).toMatch(/took longer than 0.001 s and was stopped/);
  expect((await pool.png(svg, built.scene.widthPt, 72)).length).toBeGreaterThan(0);
});

test('a stopped pool fails what it held and refuses new jobs', async () => {
  const own = createRenderPool({ size: 1, timeoutMs: 60_000, log: () => {} });
  const held = own.png(svg, built.scene.widthPt, 72).then(
    () => null,
    (e: unknown) => e,
  );
  await own.stop();
  expect(await held).toBeInstanceOf(RenderFailed);
  await expect(own.png(svg, built.scene.widthPt, 72)).rejects.toThrow('shut down');
  expect(own.pids()).toEqual([]);
});

test('a script that only waits for the pool is kept alive until its jobs are answered and the pool has stopped', () => {
  // Idle renderer processes are unref'd (they must not keep a server alive); a caller waiting on
  // a job, or on stop(), must still see it through.
  const root = path.resolve(__dirname, '../..');
  const script = `
    const { createRenderPool } = require('./server/figures/render-pool');
    const pool = createRenderPool({ size: 1, timeoutMs: 60000, log: () => {} });
    pool.png('<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"/>', 10, 72)
      .then((b) => { console.log('drawn ' + b.length); return pool.stop(); })
      .then(() => console.log('stopped'));`;
  const r = spawnSync(process.execPath, ['--import', 'tsx', '-e', script], { cwd: root, encoding: 'utf8', timeout: 90_000 });
  expect(r.stdout.trim().split('\n')).toEqual([expect.stringMatching(/^drawn \d+$/), 'stopped']);
});
