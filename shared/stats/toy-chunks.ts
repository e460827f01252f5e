/**
 * Pseudo-experiment CLs limits computed in chunks, so that several workers can share one grid
 * point and a cancelled point stops between chunks.
 *
 * The adaptive search of toys.ts (`toyLimits`) asks for CLs at values of μ that depend on the
 * answers before, which cannot be split between machines. Here the values of μ are fixed first: a
 * geometric grid around the asymptotic limits (`planToyPoint`). A chunk is a share of the
 * pseudo-experiments with its own seed; it samples q̃_μ under both hypotheses at every grid value
 * (`ToyChunkRun`, one value per step). `mergeToyChunks` pools the samples of all chunks, computes
 * CLs+b, CLb and CLs at each grid value exactly as `ToyCalculator.evaluate` does for pooled
 * pseudo-experiments, and finds each limit where ln CLs crosses ln α, linearly between the two
 * grid values around the first crossing (common practice for CLs scans in μ).
 *
 * The outcome depends only on the model, the options and the seed, never on how many workers took
 * the chunks or in which order: `computeToyPoint` (all chunks in one call) gives the same numbers.
 */
import type { AsimovChoice, ClsSample, ExpectedLimits, LimitResult } from '../schemas/counting-model';
import { EXPECTED_KEYS } from '../schemas/counting-model';
import { asymptoticExpected, asymptoticObserved, FittedProfile, profileSource, type ClsValues, type ProfileSource } from './asymptotic';
import { edgeWarning, fewToysWarning, fitFailureWarning, resolveOptions } from './limit';
import { prepareModel, type PreparedModel } from './model';
import { Random } from './rng';
import { clsFromSorted, expectedQuantileIndex, MIN_TAIL_TOYS, toyLimitError, ToyCalculator, toysForBands } from './toys';

const { log, max, min, pow, round } = Math;

/** Pseudo-experiments per hypothesis in one chunk (the last chunks of a point may hold one fewer). */
export const TOY_CHUNK_SIZE = 250;
/** Values of μ on a point's grid. */
export const TOY_GRID_POINTS = 40;
/**
 * The grid spans [lowest asymptotic limit / 4, 3 × highest]: pseudo-experiment limits stray from
 * the asymptotic ones by tens of percent at low counts, rarely by factors (from memory). A limit
 * outside the grid is reported at its edge with the edge warning.
 */
const GRID_BELOW = 4;
const GRID_ABOVE = 3;
/** Stream of the chunk seeds (distinct from the hypotheses' streams in toys.ts). */
const CHUNK_STREAM = 0x6a09e667;

export interface ToyPointOptions {
  cl?: number;
  asimov?: AsimovChoice;
  /** Pseudo-experiments per hypothesis and per value of μ, over all chunks. */
  toys: number;
  seed: number;
}

/** A chunk's share: how many pseudo-experiments per hypothesis, and their seed. */
export interface ToyChunkSpec {
  toys: number;
  seed: number;
}

/** How a point's pseudo-experiments are split: ⌈toys / TOY_CHUNK_SIZE⌉ chunks of nearly equal size. */
export function toyChunkSizes(toys: number): number[] {
  const count = Math.max(1, Math.ceil(toys / TOY_CHUNK_SIZE));
  const base = Math.floor(toys / count);
  const extra = toys - base * count;
  return Array.from({ length: count }, (_, c) => base + (c < extra ? 1 : 0));
}

/** The chunks of a point: their sizes (toyChunkSizes) and seeds drawn from the point's seed. */
export function toyChunks(toys: number, seed: number): ToyChunkSpec[] {
  const seeds = new Random(seed ^ CHUNK_STREAM);
  return toyChunkSizes(toys).map((n) => ({ toys: n, seed: seeds.nextUint32() }));
}

/** Everything a chunk or the merge needs, derived deterministically from the model and options. */
export interface ToyPlan {
  readonly model: PreparedModel;
  readonly source: ProfileSource;
  readonly cl: number;
  readonly alpha: number;
  readonly asimovUsed: AsimovChoice;
  readonly toys: number;
  readonly seed: number;
  /** Ascending values of μ at which every chunk samples. */
  readonly grid: Float64Array;
  readonly chunks: readonly ToyChunkSpec[];
  /** Plain-words notes from setting up (fits, Asimov choice). */
  readonly notes: readonly string[];
}

/**
 * Validates the model and options and fixes the grid of μ from the asymptotic limits. Throws
 * StatsInputError naming the field (prefixed with `fieldPrefix`, e.g. "model").
 */
export function planToyPoint(model: unknown, options: ToyPointOptions, fieldPrefix = ''): ToyPlan {
  const resolved = resolveOptions({ cl: options.cl, method: 'toys', asimov: options.asimov, toys: options.toys, seed: options.seed });
  const prepared = prepareModel(model, fieldPrefix);
  const cl = resolved.cl ?? prepared.cl ?? 0.95;
  const alpha = 1 - cl;
  const source = profileSource(prepared, resolved.asimov);
  const expected = asymptoticExpected(source, alpha).limits;
  const observed = asymptoticObserved(source, alpha, expected['0'] + max(0, source.muHat)).value;
  let top = max(observed, expected['2']);
  if (!(Number.isFinite(top) && top > 0)) top = 10 * source.muScale;
  let bottom = min(observed, expected['-2']);
  if (!(Number.isFinite(bottom) && bottom > 0 && bottom < top)) bottom = top / 10;
  const lo = bottom / GRID_BELOW;
  const ratio = (GRID_ABOVE * top) / lo;
  const toys = resolved.toys ?? toysForBands(alpha);
  const grid = new Float64Array(TOY_GRID_POINTS);
  for (let j = 0; j < TOY_GRID_POINTS; j++) grid[j] = lo * pow(ratio, j / (TOY_GRID_POINTS - 1));
  return {
    model: prepared,
    source,
    cl,
    alpha,
    asimovUsed: source instanceof FittedProfile ? source.asimovUsed : resolved.asimov,
    toys,
    seed: resolved.seed,
    grid,
    chunks: toyChunks(toys, resolved.seed),
    notes: [...source.notes],
  };
}

/** A finished chunk: q̃_μ samples per grid value, and its fit counts. */
export interface ToyChunkResult {
  chunk: number;
  toys: number;
  /** For grid value j: `toys` ascending samples under μ, then `toys` under μ = 0, at offset 2·toys·j. */
  samples: Float64Array;
  fits: number;
  failedFits: number;
  generated: number;
}

/** Thrown by `computeToyPoint` when `shouldStop` asked it to stop between chunks. */
export class ToyRunStopped extends Error {
  constructor(
    readonly chunksDone: number,
    readonly chunks: number,
  ) {
    super(`stopped after ${chunksDone} of ${chunks} chunks of pseudo-experiments`);
    this.name = 'ToyRunStopped';
  }
}

/**
 * One chunk of a point, computed one grid value of μ per `step()`, so that the caller can look
 * for a cancel (or renew a lease) between steps.
 */
export class ToyChunkRun {
  private next = 0;
  private readonly calc: ToyCalculator;
  private readonly out: Float64Array;
  readonly toys: number;

  constructor(
    readonly plan: ToyPlan,
    readonly chunk: number,
  ) {
    const spec = plan.chunks[chunk];
    if (!spec) throw new RangeError(`chunk ${chunk} does not exist (the point has ${plan.chunks.length})`);
    this.toys = spec.toys;
    this.calc = new ToyCalculator(plan.model, plan.source, spec.toys, spec.seed);
    this.out = new Float64Array(2 * spec.toys * plan.grid.length);
  }

  /** Grid values sampled so far, of `steps`. */
  get stepsDone(): number {
    return this.next;
  }

  get steps(): number {
    return this.plan.grid.length;
  }

  get done(): boolean {
    return this.next >= this.plan.grid.length;
  }

  /** Samples the next grid value of μ (both hypotheses). */
  step(): void {
    if (this.done) return;
    const n = this.toys;
    const { qsb, qb } = this.calc.samplesAt(this.plan.grid[this.next] as number);
    this.out.set(qsb, 2 * n * this.next);
    this.out.set(qb, 2 * n * this.next + n);
    this.next++;
  }

  /** Runs the remaining steps. */
  finish(): ToyChunkResult {
    while (!this.done) this.step();
    return this.result();
  }

  result(): ToyChunkResult {
    if (!this.done) throw new Error(`chunk ${this.chunk} is not finished (${this.next} of ${this.steps} grid values)`);
    const f = this.calc.fitCounts();
    return { chunk: this.chunk, toys: this.toys, samples: this.out, fits: f.fits, failedFits: f.failed, generated: this.calc.generated };
  }
}

/** Samples as bytes (little-endian doubles) for storage between workers. */
export function encodeToySamples(samples: Float64Array): Uint8Array {
  const bytes = new Uint8Array(samples.length * 8);
  const view = new DataView(bytes.buffer);
  for (let i = 0; i < samples.length; i++) view.setFloat64(8 * i, samples[i] as number, true);
  return bytes;
}

export function decodeToySamples(bytes: Uint8Array): Float64Array {
  if (bytes.length % 8 !== 0) throw new Error(`stored samples have ${bytes.length} bytes, not a whole number of doubles`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Float64Array(bytes.length / 8);
  for (let i = 0; i < out.length; i++) out[i] = view.getFloat64(8 * i, true);
  return out;
}

/** CLs, CLs+b and CLb per grid value for the observed data (slot 0) and the five expected bands. */
interface GridCls {
  cls: Float64Array[];
  clsb: Float64Array[];
  clb: Float64Array[];
}

/**
 * The limits of a point from all of its chunks (in any order). Throws when a chunk is missing,
 * repeated or does not belong to this plan.
 */
export function mergeToyChunks(plan: ToyPlan, results: readonly ToyChunkResult[]): LimitResult {
  const chunks = [...results].sort((a, b) => a.chunk - b.chunk);
  const G = plan.grid.length;
  if (chunks.length !== plan.chunks.length) throw new Error(`${chunks.length} chunks given, the point has ${plan.chunks.length}`);
  chunks.forEach((c, i) => {
    if (c.chunk !== i) throw new Error(`chunk ${i} is missing (or another is repeated)`);
    if (c.toys !== plan.chunks[i]!.toys || c.samples.length !== 2 * c.toys * G) throw new Error(`chunk ${i} does not match the point's plan`);
  });
  const n = plan.toys;
  const qsb = new Float64Array(n);
  const qb = new Float64Array(n);
  const slots = 1 + EXPECTED_KEYS.length;
  const grid: GridCls = {
    cls: Array.from({ length: slots }, () => new Float64Array(G)),
    clsb: Array.from({ length: slots }, () => new Float64Array(G)),
    clb: Array.from({ length: slots }, () => new Float64Array(G)),
  };
  for (let j = 0; j < G; j++) {
    let at = 0;
    for (const c of chunks) {
      const offset = 2 * c.toys * j;
      qsb.set(c.samples.subarray(offset, offset + c.toys), at);
      qb.set(c.samples.subarray(offset + c.toys, offset + 2 * c.toys), at);
      at += c.toys;
    }
    qsb.sort();
    qb.sort();
    const put = (slot: number, q: number) => {
      const v = clsFromSorted(qsb, qb, q);
      grid.cls[slot]![j] = v.cls;
      grid.clsb[slot]![j] = v.clsb;
      grid.clb[slot]![j] = v.clb;
    };
    put(0, plan.source.qObserved(plan.grid[j] as number));
    EXPECTED_KEYS.forEach((key, k) => put(k + 1, qb[expectedQuantileIndex(key, n)] as number));
  }

  let atEdge = false;
  let fewestInTail = Number.POSITIVE_INFINITY;
  let smallestTail = 1;
  const solve = (slot: number) => {
    const limit = gridLimit(plan.grid, grid.cls[slot]!, plan.alpha);
    atEdge ||= limit.atEdge;
    const mu = limit.value;
    const at = interpolate(plan.grid, grid, slot, mu);
    fewestInTail = min(fewestInTail, round(at.clsb * n), round(at.clb * n));
    // A tail that is empty here still holds fewer than one pseudo-experiment in n.
    smallestTail = min(smallestTail, max(at.clsb, 0.5 / n), max(at.clb, 0.5 / n));
    const slope = (interpolate(plan.grid, grid, slot, 0.9 * mu).cls - interpolate(plan.grid, grid, slot, 1.1 * mu).cls) / (0.2 * mu);
    return { value: mu, error: toyLimitError(at, n, slope, mu) };
  };
  const obs = solve(0);
  const expected = {} as ExpectedLimits;
  const expectedError = {} as ExpectedLimits;
  EXPECTED_KEYS.forEach((key, k) => {
    const r = solve(k + 1);
    expected[key] = r.value;
    expectedError[key] = r.error;
  });
  // Never inverted: an edge that ties with (or crosses) the one inside it takes its value, as the
  // one-process search does (shared/stats/toys.ts).
  expected['-1'] = min(expected['-1'], expected['0']);
  expected['-2'] = min(expected['-2'], expected['-1']);
  expected['1'] = max(expected['1'], expected['0']);
  expected['2'] = max(expected['2'], expected['1']);

  const warnings = [...plan.notes];
  if (atEdge) warnings.push(edgeWarning());
  if (fewestInTail < MIN_TAIL_TOYS) warnings.push(fewToysWarning(fewestInTail, Math.ceil(MIN_TAIL_TOYS / smallestTail)));
  const sourceFits = plan.source.fitCounts();
  const fitWarning = fitFailureWarning({
    fits: sourceFits.fits + chunks.reduce((s, c) => s + c.fits, 0),
    failed: sourceFits.failed + chunks.reduce((s, c) => s + c.failedFits, 0),
  });
  if (fitWarning) warnings.push(fitWarning);

  // The diagnostic curve: μ = 0 (CLs = 1 by construction) and the grid up to 1.5 × the weakest limit.
  const shownTo = 1.5 * max(obs.value, expected['2']);
  const cls: ClsSample[] = [{ mu: 0, cls: 1, clsb: 1, clb: 1 }];
  for (let j = 0; j < G; j++) {
    const mu = plan.grid[j] as number;
    cls.push({ mu, cls: grid.cls[0]![j]!, clsb: grid.clsb[0]![j]!, clb: grid.clb[0]![j]! });
    if (mu > shownTo) break;
  }
  return {
    method: 'toys',
    cl: plan.cl,
    asimov: plan.asimovUsed,
    observed: obs.value,
    expected,
    muHat: plan.source.muHat,
    observedError: obs.error,
    expectedError,
    warnings,
    cls,
    toys: { perHypothesis: n, total: chunks.reduce((s, c) => s + c.generated, 0), seed: plan.seed },
  };
}

/**
 * The smallest μ with CLs ≤ α: linear in ln CLs between the grid values around the first
 * crossing; at the grid's edge (flagged) when CLs is already below α at its first value or never
 * reaches α.
 */
function gridLimit(mus: Float64Array, cls: Float64Array, alpha: number): { value: number; atEdge: boolean } {
  const lnAlpha = log(alpha);
  const f = (j: number) => log(max(cls[j] as number, 1e-300)) - lnAlpha;
  if (f(0) <= 0) return { value: mus[0] as number, atEdge: true };
  for (let j = 1; j < mus.length; j++) {
    const fj = f(j);
    if (fj <= 0) {
      const fPrev = f(j - 1);
      const m0 = mus[j - 1] as number;
      const m1 = mus[j] as number;
      return { value: m0 + (fPrev / (fPrev - fj)) * (m1 - m0), atEdge: false };
    }
  }
  return { value: mus[mus.length - 1] as number, atEdge: true };
}

/** CLs (linear in ln CLs), CLs+b and CLb (linear) of a slot at μ, held constant outside the grid. */
function interpolate(mus: Float64Array, grid: GridCls, slot: number, mu: number): ClsValues {
  const cls = grid.cls[slot]!;
  const clsb = grid.clsb[slot]!;
  const clb = grid.clb[slot]!;
  const last = mus.length - 1;
  if (mu <= (mus[0] as number)) return { cls: cls[0]!, clsb: clsb[0]!, clb: clb[0]! };
  if (mu >= (mus[last] as number)) return { cls: cls[last]!, clsb: clsb[last]!, clb: clb[last]! };
  let j = 1;
  while ((mus[j] as number) < mu) j++;
  const m0 = mus[j - 1] as number;
  const t = (mu - m0) / ((mus[j] as number) - m0);
  const lin = (a: Float64Array) => (a[j - 1] as number) + t * ((a[j] as number) - (a[j - 1] as number));
  const l0 = log(max(cls[j - 1] as number, 1e-300));
  const l1 = log(max(cls[j] as number, 1e-300));
  return { cls: Math.exp(l0 + t * (l1 - l0)), clsb: lin(clsb), clb: lin(clb) };
}

/**
 * All chunks of a point in one call, each set up afresh as a separate worker would, then merged:
 * the unchunked form of the same computation. `shouldStop` is asked before every chunk; when it
 * answers true the run ends with ToyRunStopped.
 */
export function computeToyPoint(model: unknown, options: ToyPointOptions, opts: { fieldPrefix?: string; shouldStop?: () => boolean } = {}): LimitResult {
  const plan = planToyPoint(model, options, opts.fieldPrefix);
  const results: ToyChunkResult[] = [];
  for (let c = 0; c < plan.chunks.length; c++) {
    if (opts.shouldStop?.()) throw new ToyRunStopped(c, plan.chunks.length);
    results.push(new ToyChunkRun(planToyPoint(model, options, opts.fieldPrefix), c).finish());
  }
  return mergeToyChunks(plan, results);
}
