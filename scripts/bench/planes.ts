/**
 * Benchmark of the two-parameter contours (`npm run bench:planes`): prints the median time of the
 * five derived lines of a 100 × 100 plane (grid check included) and whether it meets the target.
 * Then a plane figure (colour map of that plane and 3 overlaid results): scene + SVG, PDF and PNG
 * at 300 dpi, drawn in this process (the routes draw PDF/PNG in a renderer process, with the same code).
 * Not a timed test: machines differ, so CI does not fail on it. The plane is invented.
 */
import { buildFigure } from '@/server/figures/scene';
import { svgToPdf, svgToPng } from '@/server/figures/render';
import type { FigureLayerData } from '@/shared/figure/types';
import { planeContours } from '@/shared/plane/contours';
import { figureSpecSchema } from '@/shared/schemas/figures';
import { planeGrid } from '@/shared/plane/grid';
import type { Plane } from '@/shared/schemas/plane';

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? (sorted[mid] as number) : 0.5 * ((sorted[mid - 1] as number) + (sorted[mid] as number));
}

function timeMs(fn: () => void, samples: number): number {
  for (let i = 0; i < 5; i++) fn(); // warm-up for the JIT
  const times: number[] = [];
  for (let s = 0; s < samples; s++) {
    const t0 = performance.now();
    fn();
    times.push(performance.now() - t0);
  }
  return median(times);
}

/** A 100 × 100 mass plane with irregular spacing and a forbidden triangle (m_y ≥ m_x − 100 missing). */
function invented(): Plane {
  const mx = Array.from({ length: 100 }, (_, i) => 200 + 20 * i + 0.05 * i * i);
  const my = Array.from({ length: 100 }, (_, j) => 15 * j);
  const x: number[] = [];
  const y: number[] = [];
  for (const b of my) for (const a of mx) if (b < a - 100 || b === 0) { x.push(a); y.push(b); }
  const central = x.map((a) => 2000 * Math.exp(-a / 300));
  // An excluded island with a wavy edge, bands as fixed factors.
  const ratio = x.map((a, k) => 0.2 + (((a - 1400) / 700) ** 2 + ((y[k]! - 500) / 350) ** 2) * (1 + 0.1 * Math.sin(a / 90)));
  const limit = central.map((t, k) => t * ratio[k]!);
  return {
    yName: 'm(χ)', yUnit: 'GeV', x, y,
    observed: limit.map((v, k) => v * (1 + 0.15 * Math.sin(x[k]! / 130 + y[k]! / 170))),
    expected: { '-2': limit.map((v) => v * 0.55), '-1': limit.map((v) => v * 0.72), '0': limit, '1': limit.map((v) => v * 1.4), '2': limit.map((v) => v * 1.9) },
    theory: { central, lower: central.map((t) => t * 0.85), upper: central.map((t) => t * 1.15) },
  };
}

const plane = invented();
let lines = 0;
const gridMs = timeMs(() => void planeGrid(plane.x, plane.y), 41);
const allMs = timeMs(() => {
  const out = planeContours(plane, 'xsec');
  if (out.problem) throw new Error(out.problem);
  lines = [out.observed, out.observedTheoryLower, out.observedTheoryUpper, ...Object.values(out.expected)].reduce((s, l) => s + (l?.length ?? 0), 0);
}, 41);

console.log(`Plane contours benchmark (medians, one core): ${plane.x.length} points of a 100 × 100 grid, ${lines} lines\n`);
console.log(`grid check and index (planeGrid)                 ${gridMs.toFixed(2).padStart(7)} ms`);
console.log(`all five lines (planeContours, grid included)    ${allMs.toFixed(2).padStart(7)} ms  target ≤ 20 ms ${allMs <= 20 ? 'met' : 'NOT MET'}`);

// The figure: the plane as colour map and 3 results (the same plane scaled) with their contours.
const IDS = ['11111111-1111-4111-8111-111111111111', '22222222-2222-4222-8222-222222222222', '33333333-3333-4333-8333-333333333333'];
const scaled = (f: number): Plane => ({ ...plane, observed: plane.observed!.map((v) => v * f), expected: Object.fromEntries(Object.entries(plane.expected!).map(([k, v]) => [k, v!.map((x) => x * f)])) });
const data: FigureLayerData[] = [1, 0.7, 1.4].map((f, i) => {
  const p = scaled(f);
  const title = `Invented search ${i + 1}`;
  const meta = { title, model: '', parameterName: 'm(X)', parameterUnit: 'GeV', quantity: 'xsec' as const, quantityUnit: 'fb' as const, sqrtS: 18, luminosity: 140, cl: 0.95, method: 'asymptotic' as const, reference: '', notes: '' };
  return { available: true, resultId: IDS[i]!, version: 1, title, meta, curve: { x: [] }, theory: null, hue: i, plane: { plane: p, contours: planeContours(p, 'xsec') } };
});
const spec = figureSpecSchema.parse({ title: 'Plane', kind: 'plane', theme: 'publication', size: { preset: 'two-column' }, y: { scale: 'linear' }, layers: IDS.map((resultId) => ({ resultId, version: 1 })) });

async function figureRows() {
  let built = buildFigure(spec, data, null);
  const sceneMs = timeMs(() => void (built = buildFigure(spec, data, null)), 21);
  const pdfTimes: number[] = [];
  for (let i = 0; i < 9; i++) {
    const t0 = performance.now();
    await svgToPdf(built.svg, built.scene, built.glyphs, { title: spec.title, created: new Date(0) });
    if (i >= 2) pdfTimes.push(performance.now() - t0);
  }
  const pngMs = timeMs(() => void svgToPng(built.svg, built.scene.widthPt, 300), 9);
  const pdfMs = median(pdfTimes);
  console.log(`\nPlane figure: colour map of ${plane.x.length} points, 3 results' contours, two columns (${(built.svg.length / 1024).toFixed(0)} KB SVG), in this process`);
  console.log(`scene + SVG (typesetting warm)                   ${sceneMs.toFixed(2).padStart(7)} ms  target ≤ 60 ms ${sceneMs <= 60 ? 'met' : 'NOT MET'}`);
  console.log(`PDF (svg2pdf + jsPDF)                            ${pdfMs.toFixed(2).padStart(7)} ms  target ≤ 400 ms ${pdfMs <= 400 ? 'met' : 'NOT MET'}`);
  console.log(`PNG at 300 dpi (resvg)                           ${pngMs.toFixed(2).padStart(7)} ms  target ≤ 500 ms ${pngMs <= 500 ? 'met' : 'NOT MET'}`);
}
void figureRows();
