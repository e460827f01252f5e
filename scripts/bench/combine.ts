/**
 * Benchmark of the combination board's maths (`npm run bench:combine`): the median time of the
 * best-expected envelope of 10 inputs × 200 grid points (invented curves on shifted grids, so the
 * union grid has 2,000 points and the choice switches many times). Target ≤ 20 ms.
 */
import { bestExpectedEnvelope, type EnvelopeInput } from '@/shared/combine/envelope';

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
