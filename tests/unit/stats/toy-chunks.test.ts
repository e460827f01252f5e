/**
 * Pseudo-experiments in chunks (shared/stats/toy-chunks.ts): chunks computed apart and merged give
 * exactly the unchunked computation with the same seed, the result agrees with independent
 * calculations within its Monte-Carlo uncertainty, and a run stops between chunks when asked.
 */
import poisson from '@stdlib/stats-base-dists-poisson';
import {
  computeLimit,
  computeToyPoint,
  decodeToySamples,
  encodeToySamples,
  EXPECTED_KEYS,
  mergeToyChunks,
  planToyPoint,
  TOY_CHUNK_SIZE,
  toyChunks,
  ToyChunkRun,
  ToyRunStopped,
  type CountingModelInput,
  type ToyChunkResult,
} from '@/shared/stats';

const ALPHA = 0.05;

const withSystematics: CountingModelInput = {
  observed: [12, 7, 3],
  signal: [2, 3, 1.5],
  backgrounds: [
    { name: 'continuum', yields: [10, 6, 2.5] },
    { name: 'fakes', yields: [1.5, 0.8, 0.4] },
  ],
  systematics: [
    { name: 'luminosity', effects: { signal: 0.02, continuum: 0.02 } },
    { name: 'fake rate', effects: { fakes: 0.3 } },
  ],
};

const oneBin = (n: number, s: number, b: number): CountingModelInput => ({ observed: [n], signal: [s], backgrounds: [{ name: 'flat', yields: [b] }] });

/** Each chunk as a separate worker computes it: its own plan, stored as bytes, read back. */
function chunkAsWorker(model: CountingModelInput, options: Parameters<typeof planToyPoint>[1], chunk: number): ToyChunkResult {
  const r = new ToyChunkRun(planToyPoint(model, options), chunk).finish();
  return { ...r, samples: decodeToySamples(encodeToySamples(r.samples)) };
}

test('chunks split the pseudo-experiments nearly evenly, each with its own seed', () => {
  const chunks = toyChunks(5000, 7);
  expect(chunks).toHaveLength(Math.ceil(5000 / TOY_CHUNK_SIZE));
  expect(chunks.reduce((s, c) => s + c.toys, 0)).toBe(5000);
  const sizes = chunks.map((c) => c.toys);
  expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
  expect(new Set(chunks.map((c) => c.seed)).size).toBe(chunks.length);
  expect(toyChunks(TOY_CHUNK_SIZE + 1, 7).map((c) => c.toys)).toEqual([Math.ceil((TOY_CHUNK_SIZE + 1) / 2), Math.floor((TOY_CHUNK_SIZE + 1) / 2)]);
  expect(toyChunks(100, 7)).toHaveLength(1);
  // Another point's seed gives other chunk seeds.
  expect(toyChunks(5000, 8).map((c) => c.seed)).not.toEqual(chunks.map((c) => c.seed));
});

test('chunks computed apart and merged in any order equal the unchunked computation with the same seed exactly', () => {
  const options = { toys: 3 * TOY_CHUNK_SIZE - 50, seed: 11 };
  const plan = planToyPoint(withSystematics, options);
  expect(plan.chunks.length).toBe(3);
  const chunks = [2, 0, 1].map((c) => chunkAsWorker(withSystematics, options, c));
  const merged = mergeToyChunks(planToyPoint(withSystematics, options), chunks);
  const whole = computeToyPoint(withSystematics, options);
  expect(merged).toEqual(whole);
  expect(whole.toys).toEqual({ perHypothesis: options.toys, total: 2 * options.toys * plan.grid.length, seed: 11 });
  // Another seed: other pseudo-experiments.
  expect(chunkAsWorker(withSystematics, { ...options, seed: 12 }, 0).samples).not.toEqual(chunks[1]!.samples);
});

test('one bin without systematics: the merged limit agrees with the exact calculation within its Monte-Carlo uncertainty', () => {
  // q̃_μ decreases with n below μs + b, so toy CLs estimates P(n ≤ n_obs | s+b)/P(n ≤ n_obs | b)
  // (Read, J. Phys. G 28 (2002) 2693), which @stdlib's Poisson CDF gives exactly.
  const model = oneBin(4, 1.5, 3.2);
  const r = computeToyPoint(model, { toys: 20000, seed: 3 });
  const exactCls = (mu: number) => poisson.cdf(4, mu * 1.5 + 3.2) / poisson.cdf(4, 3.2);
  expect(Math.abs(exactCls(r.observed) - ALPHA)).toBeLessThan(0.004);
  const exact = computeLimit(model, { method: 'exact' });
  expect(Math.abs(r.observed - exact.observed)).toBeLessThan(4 * (r.observedError as number) + 1e-3);
  expect(r.observedError).toBeGreaterThan(0);
});

test('agrees with the adaptive (unchunked) pseudo-experiment search within the two Monte-Carlo uncertainties', () => {
  // Independent pseudo-experiments of the same model: the limits differ by their statistical
  // errors only (common practice: compare within a few combined standard deviations).
  const chunked = computeToyPoint(withSystematics, { toys: 1500, seed: 5 });
  const adaptive = computeLimit(withSystematics, { method: 'toys', toys: 1500, seed: 5 });
  const within = (a: number, ea: number, b: number, eb: number) => expect(Math.abs(a - b)).toBeLessThan(4 * Math.hypot(ea, eb) + 1e-3);
  within(chunked.observed, chunked.observedError!, adaptive.observed, adaptive.observedError!);
  for (const key of EXPECTED_KEYS) within(chunked.expected[key], chunked.expectedError![key], adaptive.expected[key], adaptive.expectedError![key]);
  for (let j = 1; j < EXPECTED_KEYS.length; j++) expect(chunked.expected[EXPECTED_KEYS[j]!]).toBeGreaterThanOrEqual(chunked.expected[EXPECTED_KEYS[j - 1]!]);
  expect(chunked.muHat).toBeCloseTo(adaptive.muHat, 8);
  expect(chunked.asimov).toBe(adaptive.asimov);
});

test('agrees with the asymptotic formulae within a few percent at ~100 events per bin', () => {
  // Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554: the asymptotic distributions hold for large counts.
  const model = oneBin(104, 8, 100);
  const asym = computeLimit(model);
  const toys = computeToyPoint(model, { toys: 20000, seed: 9 });
  expect(Math.abs(toys.observed / asym.observed - 1)).toBeLessThan(0.04);
  for (const key of ['-1', '0', '1'] as const) expect(Math.abs(toys.expected[key] / asym.expected[key] - 1)).toBeLessThan(0.05);
});

test('the CLs curve starts at μ = 0 and crosses α at the observed limit', () => {
  const r = computeToyPoint(withSystematics, { toys: 500, seed: 2 });
  const curve = r.cls!;
  expect(curve[0]).toEqual({ mu: 0, cls: 1, clsb: 1, clb: 1 });
  const k = curve.findIndex((p) => p.cls <= ALPHA);
  expect(k).toBeGreaterThan(0);
  expect(curve[k - 1]!.mu).toBeLessThan(r.observed);
  expect(curve[k]!.mu).toBeGreaterThanOrEqual(r.observed);
});

test('a run stops between chunks when asked, and a chunk advances one grid value per step', () => {
  const options = { toys: 4 * TOY_CHUNK_SIZE, seed: 1 };
  let asked = 0;
  let error: unknown;
  try {
    computeToyPoint(withSystematics, options, { shouldStop: () => ++asked > 2 });
  } catch (e) {
    error = e;
  }
  expect(error).toBeInstanceOf(ToyRunStopped);
  expect((error as ToyRunStopped).chunksDone).toBe(2);
  expect((error as ToyRunStopped).chunks).toBe(4);
  expect(asked).toBe(3);

  const run = new ToyChunkRun(planToyPoint(withSystematics, options), 0);
  expect(run.stepsDone).toBe(0);
  run.step();
  run.step();
  expect(run.stepsDone).toBe(2);
  expect(run.done).toBe(false);
  expect(() => run.result()).toThrow(/not finished/);
});

test('a merge refuses a missing or repeated chunk', () => {
  const options = { toys: 2 * TOY_CHUNK_SIZE, seed: 4 };
  const a = chunkAsWorker(withSystematics, options, 0);
  const plan = planToyPoint(withSystematics, options);
  expect(() => mergeToyChunks(plan, [a])).toThrow(/2/);
  expect(() => mergeToyChunks(plan, [a, a])).toThrow(/missing/);
});

test('a bad model is refused with the field named', () => {
  expect(() => planToyPoint({ ...withSystematics, observed: [1, -2, 3] }, { toys: 500, seed: 1 }, 'model')).toThrow(/model\.observed\[1\]/);
});
