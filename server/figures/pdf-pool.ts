import path from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Glyphs, Scene } from '../../shared/figure/types';
import type { PdfAnswer, PdfJob } from './pdf-thread';
import type { PdfMeta } from './render';

/**
 * PDFs are written on one worker thread (svg2pdf.js and jsPDF are plain JavaScript: ≈ 0.15–0.2 s
 * per figure that would otherwise stall every other request). The thread starts with the first
 * PDF, answers requests in order, does not keep the process alive, and is started again if it
 * dies (the requests it held fail with the reason). Same input, same bytes as `svgToPdf`.
 */
let worker: Worker | null = null;
let nextId = 1;
const pending = new Map<number, { thread: Worker; resolve: (b: Buffer) => void; reject: (e: Error) => void }>();

/** Fails the requests the thread `w` held (not those of a thread started since). */
function failAll(w: Worker, reason: string) {
  for (const [id, p] of pending) {
    if (p.thread !== w) continue;
    pending.delete(id);
    p.reject(new Error(`the PDF writer stopped: ${reason}`));
  }
}

function thread(): Worker {
  if (worker) return worker;
  const w = new Worker(path.join(__dirname, 'pdf-thread-boot.cjs'));
  w.unref();
  w.on('message', (a: PdfAnswer) => {
    const p = pending.get(a.id);
    if (!p) return;
    pending.delete(a.id);
    if ('error' in a) p.reject(new Error(a.error));
    else p.resolve(Buffer.from(a.pdf.buffer, a.pdf.byteOffset, a.pdf.byteLength));
    if (![...pending.values()].some((p) => p.thread === w)) w.unref();
  });
  w.on('error', (e) => {
    if (worker === w) worker = null;
    failAll(w, e.message);
  });
  w.on('exit', (code) => {
    if (worker === w) worker = null;
    failAll(w, `exit code ${code}`);
  });
  worker = w;
  return w;
}

/** `svgToPdf` on the PDF thread. */
export function svgToPdfOffThread(svg: string, scene: Scene, glyphs: Glyphs, meta: PdfMeta): Promise<Buffer> {
  const w = thread();
  const id = nextId++;
  return new Promise<Buffer>((resolve, reject) => {
    pending.set(id, { thread: w, resolve, reject });
    // Keep the process alive while a PDF is being written (a server shutting down waits for it).
    w.ref();
    w.postMessage({ id, svg, scene, glyphs, meta } satisfies PdfJob);
  });
}

/** Stops the thread (tests and shutdown); a later PDF starts a new one. */
export async function stopPdfThread(): Promise<void> {
  const w = worker;
  worker = null;
  if (w) await w.terminate();
}
