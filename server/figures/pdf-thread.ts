import { parentPort } from 'node:worker_threads';
import type { Glyphs, Scene } from '../../shared/figure/types';
import { svgToPdf, type PdfMeta } from './render';

/** The PDF writer on its own thread (see pdf-pool.ts): one request at a time, answered by id. */
export type PdfJob = { id: number; svg: string; scene: Scene; glyphs: Glyphs; meta: PdfMeta };
export type PdfAnswer = { id: number; pdf: Uint8Array } | { id: number; error: string };

parentPort?.on('message', (job: PdfJob) => {
  svgToPdf(job.svg, job.scene, job.glyphs, job.meta).then(
    (pdf) => {
      const bytes = new Uint8Array(pdf.buffer, pdf.byteOffset, pdf.byteLength);
      parentPort!.postMessage({ id: job.id, pdf: bytes } satisfies PdfAnswer);
    },
    (e: unknown) => parentPort!.postMessage({ id: job.id, error: e instanceof Error ? e.message : String(e) } satisfies PdfAnswer),
  );
});
