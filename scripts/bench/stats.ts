/**
 * Benchmark of the statistics engine (`npm run bench:stats`): prints the median time of each
 * target case and whether it meets the target. Not a timed test: machines differ, so CI does not
 * fail on it. All models are invented.
 */
import { computeLimit, computeScan, Random, type CountingModelInput, type ScanPoint } from '@/shared/stats';

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? (sorted[mid] as number) : 0.5 * ((sorted[mid - 1] as number) + (sorted[mid] as number));
}

/** Median over `samples` timings of `batch` calls each, in milliseconds per call. */
function timePerCall(fn: () => void, samples: number, batch: number): number {
  for (let i = 0; i < Math.min(batch * 3, 200); i++) fn(); // warm-up for the JIT
  const times: number[] = [];
  for (let s = 0; s < samples; s++) {
    const t0 = performance.now();
    for (let i = 0; i < batch; i++) fn();
    times.push((performance.now() - t0) / batch);
  }
  return median(times);
}

/** A 30-bin search for a resonance on a falling background, three nuisance parameters. */
function thirtyBinModel(mass: number, seed: number): CountingModelInput {
  const rng = new Random(seed);
  const bins = 30;
  const background: number[] = [];
  const signal: number[] = [];
  const observed: number[] = [];
  for (let i = 0; i < bins; i++) {
    const x = 500 + 50 * i;
    const b = 400 * Math.exp(-(x - 500) / 400) + 2;
    const s = 12 * Math.exp(-0.5 * ((x - mass) / (0.06 * mass)) ** 2);
    background.push(b);
    signal.push(s + 1e-3);
    observed.push(rng.poisson(b));
  }
  return {
    observed,
    signal,
    backgrounds: [{ name: 'falling', yields: background }],
    systematics: [
      { name: 'luminosity', effects: { signal: 0.025, falling: 0.025 } },
      { name: 'background normalisation', effects: { falling: 0.08 } },
      { name: 'background slope', effects: { falling: background.map((_, i) => -0.1 + (0.3 * i) / (bins - 1)) } },
    ],
  };
}

const rows: Array<{ name: string; value: string; target: string; met: boolean }> = [];

// 1. One bin, asymptotic: observed and the five expected limits.
const oneBin: CountingModelInput = { observed: [23], signal: [4.2], backgrounds: [{ name: 'flat', yields: [19.5] }] };
const oneBinMs = timePerCall(() => computeLimit(oneBin), 25, 400);
rows.push({ name: 'one-bin asymptotic limit (observed + 5 expected)', value: `${(oneBinMs * 1000).toFixed(1)} µs`, target: '≤ 100 µs', met: oneBinMs <= 0.1 });

// 2. 30 bins, 3 nuisance parameters, asymptotic.
const model30 = thirtyBinModel(1200, 7);
const thirtyMs = timePerCall(() => computeLimit(model30), 21, 5);
rows.push({ name: '30-bin model, 3 nuisance parameters', value: `${thirtyMs.toFixed(2)} ms`, target: '≤ 5 ms', met: thirtyMs <= 5 });

// 3. A 200-point mass scan of such models.
const points: ScanPoint[] = Array.from({ length: 200 }, (_, j) => {
  const mass = 600 + 7 * j;
  return { x: mass, model: thirtyBinModel(mass, 100 + j), sigmaNominal: 50 * Math.exp(-mass / 300) };
});
const scanMs = timePerCall(() => {
  const out = computeScan(points);
  if (out.some((p) => 'error' in p)) throw new Error('scan point failed');
}, 5, 1);
rows.push({ name: '200-point scan of 30-bin models', value: `${(scanMs / 1000).toFixed(3)} s`, target: '≤ 1 s', met: scanMs <= 1000 });

// 4. One-bin pseudo-experiments: throughput of a full toy-based limit computation.
const toyModel: CountingModelInput = { observed: [4], signal: [1.5], backgrounds: [{ name: 'flat', yields: [3.2] }] };
const toyRates: number[] = [];
for (let r = 0; r < 5; r++) {
  const t0 = performance.now();
  const res = computeLimit(toyModel, { method: 'toys', toys: 5000, seed: 11 + r });
  const seconds = (performance.now() - t0) / 1000;
  toyRates.push((res.toys?.total ?? 0) / seconds);
}
const toyRate = median(toyRates);
rows.push({ name: 'one-bin pseudo-experiments', value: `${Math.round(toyRate).toLocaleString('en-US')} /s`, target: '≥ 20,000 /s', met: toyRate >= 20000 });

const width = Math.max(...rows.map((r) => r.name.length));
console.log('Statistics engine benchmark (medians, one core)\n');
for (const r of rows) console.log(`${r.name.padEnd(width)}  ${r.value.padStart(14)}  target ${r.target.padEnd(12)} ${r.met ? 'met' : 'NOT MET'}`);
const missed = rows.filter((r) => !r.met).length;
console.log(`\n${rows.length - missed} of ${rows.length} targets met`);
