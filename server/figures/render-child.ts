import type { Glyphs } from '../../shared/figure/types';
import { svgToPdf, svgToPng } from './render';
import type { RenderAnswer, RenderRequest } from './render-pool';

/**
 * One renderer process of the pool (server/figures/render-pool.ts): PNG (resvg, native code) and
 * PDF (svg2pdf.js + jsPDF), one job at a time, answered by id. It lives apart from the server so
 * that a native abort (resvg panics on some inputs, and a Rust panic across its Node binding ends
 * the whole process) ends only this process; the pool answers the job with an error and starts
 * another. It exits when the server goes away (the IPC channel closes).
 */
// The server may be gone by the time an answer is ready: then there is nobody to answer.
const send = (a: RenderAnswer) => {
  if (process.connected) process.send!(a, (e: Error | null) => e && process.exit(0));
};

process.on('message', async (req: RenderRequest) => {
  try {
    const body =
      req.job.kind === 'png'
        ? svgToPng(req.job.svg, req.job.widthPt, req.job.dpi)
        : await svgToPdf(req.job.svg, req.job.scene, new Map(req.job.glyphs) as Glyphs, req.job.meta);
    send({ id: req.id, body: new Uint8Array(body.buffer, body.byteOffset, body.byteLength) });
  } catch (e) {
    send({ id: req.id, error: e instanceof Error ? e.message : String(e) });
  }
});
process.on('disconnect', () => process.exit(0));
send({ ready: true });
