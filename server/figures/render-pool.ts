import { fork, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import type { Glyphs, Scene, TypesetLabel } from '../../shared/figure/types';
import type { PdfMeta } from './render';

/**
 * The renderers that could end the server run in child processes: PNG (resvg is native code; a
 * Rust panic inside it aborts the process it runs in, and a worker thread would take the server
 * down with it) and PDF (svg2pdf.js + jsPDF: plain JavaScript, but ≈ 0.15–0.2 s of work per
 * figure that would stall every other request, and a runaway input should not end the server
 * either). The SVG itself is written in the server (no native code).
 *
 * A small pool of `size` children (server/figures/render-child.ts, run by Node with tsx as the
 * server is) takes one job each at a time; more jobs wait in order. A child starts with the
 * first job that needs it and stays for the next ones. A child that dies (a native abort, a kill,
 * running out of memory) or takes longer than `timeoutMs` (then it is killed) fails only the job
 * it held, with `RenderFailed` saying why, and the next job starts a new child. Idle children do
 * not keep the server alive; children leave when the server does (their IPC channel closes).
 */

export type RenderJob =
  | { kind: 'png'; svg: string; widthPt: number; dpi: number }
  | { kind: 'pdf'; svg: string; scene: Scene; glyphs: [string, TypesetLabel][]; meta: PdfMeta };
export type RenderRequest = { id: number; job: RenderJob };
export type RenderAnswer = { ready: true } | { id: number; body: Uint8Array } | { id: number; error: string };

/** A render that did not finish: its renderer process stopped, took too long, or threw. */
export class RenderFailed extends Error {
  constructor(
    message: string,
    /** True when the renderer process itself ended (crashed, killed or timed out). */
    readonly crashed: boolean,
  ) {
    super(message);
  }
}

export type RenderPoolOptions = {
  /** How many renderer processes may run at once. */
  size: number;
  /** A job running longer is given up and its process killed. */
  timeoutMs: number;
  log?: (line: string) => void;
};

type Pending = { id: number; job: RenderJob; timeoutMs: number; resolve: (b: Buffer) => void; reject: (e: Error) => void; timer: NodeJS.Timeout | null; timedOut: boolean };
type Slot = { child: ChildProcess; ready: boolean; job: Pending | null };

const CHILD = path.join(__dirname, 'render-child.ts');

export function createRenderPool(opts: RenderPoolOptions) {
  const log = opts.log ?? ((line: string) => console.error(line));
  const slots = new Set<Slot>();
  const queue: Pending[] = [];
  let nextId = 1;
  let stopped = false;

  const idle = (s: Slot) => {
    // An idle child does not keep the server process alive.
    s.child.unref();
    (s.child.channel as { unref?: () => void } | undefined)?.unref?.();
  };
  const busy = (s: Slot) => {
    s.child.ref();
    (s.child.channel as { ref?: () => void } | undefined)?.ref?.();
  };

  /** Takes the job off its slot and stops its clock; returns it. */
  function finish(s: Slot): Pending | null {
    const p = s.job;
    s.job = null;
    if (p?.timer) clearTimeout(p.timer);
    return p;
  }

  function spawn(): Slot {
    const child = fork(CHILD, [], { execArgv: ['--import', 'tsx'], serialization: 'advanced', stdio: ['ignore', 'inherit', 'inherit', 'ipc'] });
    const s: Slot = { child, ready: false, job: null };
    slots.add(s);
    child.on('message', (a: RenderAnswer) => {
      if ('ready' in a) {
        s.ready = true;
        dispatch();
        return;
      }
      if (!s.job || s.job.id !== a.id) return;
      const p = finish(s)!;
      if ('error' in a) p.reject(new RenderFailed(`the renderer failed: ${a.error}`, false));
      else p.resolve(Buffer.from(a.body.buffer, a.body.byteOffset, a.body.byteLength));
      dispatch();
    });
    const gone = (why: string) => {
      if (!slots.delete(s)) return;
      const p = finish(s);
      if (p) {
        const reason = p.timedOut ? `it took longer than ${p.timeoutMs / 1000} s and was stopped` : `the renderer process stopped (${why})`;
        if (!stopped) log(`[render] renderer process ${child.pid ?? '?'}: a ${p.job.kind.toUpperCase()} render failed, ${reason}; the next render starts another process`);
        p.reject(new RenderFailed(reason, true));
      } else if (!s.ready && queue.length && !stopped) {
        // A process that cannot even start fails the job it was started for (no endless restarts).
        const first = queue.shift()!;
        if (first.timer) clearTimeout(first.timer);
        log(`[render] a renderer process could not start (${why})`);
        first.reject(new RenderFailed(`the renderer process could not start (${why})`, true));
      }
      dispatch();
    };
    child.on('exit', (code, signal) => gone(signal ? `signal ${signal}` : `exit code ${code}`));
    child.on('error', (e) => {
      gone(e.message);
      child.kill('SIGKILL');
    });
    idle(s);
    return s;
  }

  function dispatch() {
    if (stopped) return;
    for (const s of slots) {
      if (!queue.length) break;
      if (!s.ready || s.job) continue;
      const p = queue.shift()!;
      s.job = p;
      busy(s);
      s.child.send({ id: p.id, job: p.job } satisfies RenderRequest, (err) => {
        if (err && s.job === p) s.child.kill('SIGKILL');
      });
    }
    // Children still starting will take jobs when ready; start more only for jobs nobody will take.
    const starting = [...slots].filter((s) => !s.ready).length;
    for (let n = queue.length - starting; n > 0 && slots.size < opts.size; n--) spawn();
    for (const s of slots) if (!s.job) idle(s);
  }

  /** Draws `job` in a renderer process; `timeoutMs` overrides the pool's limit for this job. */
  function run(job: RenderJob, limits: { timeoutMs?: number } = {}): Promise<Buffer> {
    const timeoutMs = limits.timeoutMs ?? opts.timeoutMs;
    if (stopped) return Promise.reject(new RenderFailed('the renderers are shut down', false));
    return new Promise<Buffer>((resolve, reject) => {
      const p: Pending = { id: nextId++, job, timeoutMs, resolve, reject, timer: null, timedOut: false };
      // The clock runs from the request: waiting in line counts too.
      p.timer = setTimeout(() => {
        p.timedOut = true;
        const i = queue.indexOf(p);
        if (i >= 0) {
          queue.splice(i, 1);
          reject(new RenderFailed(`it waited longer than ${timeoutMs / 1000} s for a renderer`, false));
          return;
        }
        // Running: its process is killed, and `gone` fails the job.
        for (const s of slots) if (s.job === p) s.child.kill('SIGKILL');
      }, timeoutMs);
      // The clock stays ref'd: a job waiting for a process that is still starting (not ref'd
      // while idle) keeps the caller alive until it is answered.
      queue.push(p);
      dispatch();
    });
  }

  return {
    run,
    /** `svgToPng` in a renderer process. */
    png: (svg: string, widthPt: number, dpi: number) => run({ kind: 'png', svg, widthPt, dpi }),
    /** `svgToPdf` in a renderer process (same bytes). */
    pdf: (svg: string, scene: Scene, glyphs: Glyphs, meta: PdfMeta) => run({ kind: 'pdf', svg, scene, glyphs: [...glyphs], meta }),
    /** Starts every renderer process now (a process takes seconds to load its libraries), so the first renders do not wait. */
    warm: () => {
      while (!stopped && slots.size < opts.size) spawn();
    },
    /** Process ids of the running renderer processes, and of those drawing now (tests, diagnostics). */
    pids: () => [...slots].map((s) => s.child.pid!).filter(Boolean),
    busyPids: () => [...slots].filter((s) => s.job).map((s) => s.child.pid!),
    /** Stops every child; waiting and running jobs fail. A stopped pool refuses new jobs. */
    stop: async () => {
      stopped = true;
      for (const p of queue.splice(0)) {
        if (p.timer) clearTimeout(p.timer);
        p.reject(new RenderFailed('the renderers are shut down', false));
      }
      await Promise.all(
        [...slots].map(
          (s) =>
            new Promise<void>((resolve) => {
              if (s.child.exitCode !== null || s.child.signalCode !== null) return resolve();
              s.child.once('exit', () => resolve());
              // Ref'd again, so the caller stays alive to see it go (an idle child is unref'd).
              s.child.ref();
              s.child.kill('SIGKILL');
            }),
        ),
      );
    },
  };
}
export type RenderPool = ReturnType<typeof createRenderPool>;
