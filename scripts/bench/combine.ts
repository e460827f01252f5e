/**
 * Benchmark of the combination board's maths (`npm run bench:combine`): the median time of the
 * best-expected envelope of 10 inputs × 200 grid points (invented curves on shifted grids, so the
 * union grid has 2,000 points and the choice switches many times). Target ≤ 20 ms. Then the joint
 * combination of 3 scans × 100 points × 30 bins × 3 nuisance parameters (the engine for all points,
 * as the scan worker calls it; see below). Target ≤ 2 s. Last, the summary of excluded ranges of
 * 40 analyses: scene + SVG through the server's figure path with typesetting warm (as on a
 * running server), two-column publication size. Target ≤ 30 ms.
 */
import { bestExpectedEnvelope, type EnvelopeInput } from '@/shared/combine/envelope';
import { jointGrid } from '@/shared/combine/joint';
import { countingModelSchema } from '@/shared/schemas/counting-model';
import { computeScan, fitNuisanceParameters } from '@/shared/stats';
import { buildFigure } from '@/server/figures/scene';
import type { FigureLayerData } from '@/shared/figure/types';
import { figureSpecSchema } from '@/shared/schemas/figures';
import { versionMetaSchema } from '@/shared/schemas/results';

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

function inputs(n: number, points: number): EnvelopeInput[] {
  return Array.from({ length: n }, (_, i) => {
    const x = Array.from({ length: points }, (_, k) => 500 + 25 * k + 2.5 * i);
    const med = x.map((m) => 40 * Math.exp(-m / (900 + 60 * i)) * (1 + 0.15 * Math.sin(m / 300 + i)));
    return {
      name: `input ${i}`,
      units: { parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb' },
      curve: { x, observed: med.map((v, k) => v * (1 + 0.2 * Math.sin(k + i))), expected: { '-2': med.map((v) => v * 0.5), '-1': med.map((v) => v * 0.7), '0': med, '1': med.map((v) => v * 1.4), '2': med.map((v) => v * 2) } },
    };
  });
}

const data = inputs(10, 200);
for (let i = 0; i < 20; i++) bestExpectedEnvelope(data);
const times: number[] = [];
let switches = 0;
for (let i = 0; i < 50; i++) {
  const t = performance.now();
  const env = bestExpectedEnvelope(data);
  times.push(performance.now() - t);
  switches = env.segments.length - 1;
}
const ms = median(times);
console.log(`\nBest-expected envelope, 10 inputs × 200 points (${switches} switches): ${ms.toFixed(2)} ms median   target ≤ 20 ms  ${ms <= 20 ? 'ok' : 'MISSED'}`);

// --- Joint combination ---------------------------------------------------------------------------
// 3 scans × 100 points × 30 bins × 3 nuisance parameters each ("luminosity" shared, two of their own),
// concatenated (shared/combine/joint.ts) into 100 points of 90 bins and 7 parameters, and computed as
// the scan worker computes an asymptotic point: the limit with its 40-point CLs curve and the fitted
// nuisance parameters, one point after another on one core (the queue's own round trips, ≈ 13 ms per
// point in `npm run bench:scans`, are not in this figure). Target ≤ 2 s.
{
  const channels = Array.from({ length: 3 }, (_, c) => ({
    points: Array.from({ length: 100 }, (_, k) => {
      const m = 500 + 20 * k;
      const b = Array.from({ length: 30 }, (_, i) => (80 + 20 * c) * Math.exp(-(m + 15 * i) / 900));
      const model = countingModelSchema.parse({
        observed: b.map((v, i) => Math.round(v * (1 + 0.08 * Math.sin(k + i + c)))),
        signal: b.map((_, i) => (3 + c) * Math.exp(-(((i - 15) / 6) ** 2))),
        backgrounds: [{ name: `background ${c}`, yields: b }],
        systematics: [
          { name: 'luminosity', effects: { signal: 0.02, [`background ${c}`]: 0.02 } },
          { name: `efficiency ${c}`, effects: { signal: 0.05 } },
          { name: `shape ${c}`, effects: { [`background ${c}`]: b.map((_, i) => 0.01 * (i - 15)) } },
        ],
      });
      return { x: m, sigmaNominal: 5 * Math.exp(-m / 1000), model };
    }),
  }));
  const run = () => {
    const grid = jointGrid(channels);
    const limits = computeScan(grid.points.map((p) => ({ x: p.x, sigmaNominal: p.sigmaNominal ?? undefined, model: p.model })), { cl: 0.95, method: 'asymptotic', clsCurve: true });
    for (const p of grid.points) fitNuisanceParameters(p.model);
    return limits;
  };
  const check = run();
  const failed = check.filter((r) => 'error' in r).length;
  const times: number[] = [];
  for (let i = 0; i < 5; i++) {
    const t = performance.now();
    run();
    times.push(performance.now() - t);
  }
  const s = median(times) / 1000;
  console.log(`Joint asymptotic combination, 3 scans × 100 points × 30 bins × 3 nuisance parameters (engine for all points, 1 core${failed ? `, ${failed} points FAILED` : ''}): ${s.toFixed(2)} s median   target ≤ 2 s  ${s <= 2 ? 'ok' : 'MISSED'}`);
}

// --- Summary of excluded ranges ------------------------------------------------------------------
// 40 invented analyses of 4 models on 60-point grids, each against its own theory (one in eight
// without one), drawn as one bar each: scene + outline SVG, the labels typeset once beforehand.
{
  const layers: FigureLayerData[] = Array.from({ length: 40 }, (_, i) => {
    const x = Array.from({ length: 60 }, (_, k) => 0.5 + 0.1 * k);
    const med = x.map((m) => (20 + 7 * (i % 9)) * Math.exp(-m / (0.9 + 0.04 * i)));
    return {
      available: true,
      resultId: `00000000-0000-4000-8000-${String(i).padStart(12, '0')}`,
      version: 1,
      title: `Search ${i + 1} in the ${['dijet', 'dilepton', 'diphoton', 'top pair'][i % 4]} channel`,
      meta: versionMetaSchema.parse({ title: `Search ${i + 1}`, model: `Benchmark model ${(i % 4) + 1}`, parameterName: "$m_{V'}$", parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: [60, 140, 300][i % 3], method: 'asymptotic' }),
      curve: { x, observed: med.map((v, k) => v * (1 + 0.2 * Math.sin(k / 5 + i))), expected: { '0': med } },
      theory: i % 8 === 7 ? null : { x, central: x.map((m) => 900 * Math.exp(-m / 0.6)) },
      hue: i % 12,
    };
  });
  const spec = figureSpecSchema.parse({ title: 'Summary of 40 analyses', kind: 'ranges', theme: 'publication', size: { preset: 'two-column', heightCm: 30 }, layers: layers.map((l) => ({ resultId: l.resultId, version: 1 })), ranges: { sort: 'reach' } });
  for (let i = 0; i < 5; i++) buildFigure(spec, layers, null);
  const times: number[] = [];
  let bytes = 0;
  for (let i = 0; i < 30; i++) {
    const t = performance.now();
    bytes = buildFigure(spec, layers, null).svg.length;
    times.push(performance.now() - t);
  }
  const ms = median(times);
  console.log(`Summary of excluded ranges, 40 analyses, scene + SVG (typesetting warm, ${Math.round(bytes / 1024)} KB): ${ms.toFixed(2)} ms median   target ≤ 30 ms  ${ms <= 30 ? 'ok' : 'MISSED'}`);
}
