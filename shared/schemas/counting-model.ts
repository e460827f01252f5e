/**
 * Schemas of the statistics engine's inputs and outputs (counting models, limit options, scan
 * points, limit results). The server validates request bodies with them and the app types its
 * forms with them; `shared/stats` runs the same schemas and turns their issues into a
 * `StatsInputError` naming the field (e.g. `systematics[1].effects.dijet[2]`) and the reason.
 *
 * The semantic checks that need the whole model (bin counts agree, effects name known processes,
 * signal not zero everywhere) are in `countingModelSchema` too, as a refinement.
 */
import { z } from 'zod';

/** Names a value by what it is, for error messages that a physicist reads. */
function describeInput(input: unknown): string {
  if (input === undefined) return 'nothing';
  if (input === null) return 'null';
  if (typeof input === 'number') return String(input);
  if (Array.isArray(input)) return 'a list';
  if (typeof input === 'string') return 'text';
  return typeof input;
}

const finiteNumber = () =>
  z.number({
    error: (issue) =>
      issue.input === undefined
        ? 'is required'
        : `must be a finite number (got ${describeInput(issue.input)})`,
  });

const nonNegative = () =>
  finiteNumber().nonnegative({ error: (issue) => `must not be negative (got ${describeInput(issue.input)})` });

const nonEmptyArray = <T extends z.ZodType>(item: T) =>
  z.array(item, { error: (issue) => (issue.input === undefined ? 'is required' : 'must be a list of numbers, one per bin') })
    .min(1, { error: 'must have at least one bin' });

/** A relative effect δ: the yield scales by (1+δ)^θ, so δ ≤ −1 would make the yield vanish or flip sign. */
const effectSize = () =>
  finiteNumber().gt(-1, { error: (issue) => `must be greater than -1: a relative effect of ${describeInput(issue.input)} would remove the whole yield` });

/**
 * The one process name refused: "__proto__" cannot be an ordinary key of a JavaScript object (an
 * assignment sets the object's prototype, and zod's records skip it), so a systematic's effect on
 * such a process would vanish without a word. Every other name — "constructor", "toString",
 * "hasOwnProperty" — is an ordinary name: the engine looks processes up in Sets and Maps, never
 * through an object's prototype.
 */
export const RESERVED_PROCESS_NAME = '__proto__';
const RESERVED_PROCESS_MESSAGE = `"${RESERVED_PROCESS_NAME}" cannot name a process (JavaScript objects cannot hold it as a key, so effects on it would be lost); choose another name`;

/** One background process: a name (used by systematics' effects) and its expected yield per bin. */
export const backgroundSchema = z.object({
  name: z
    .string({ error: 'is required' })
    .trim()
    .min(1, { error: 'must not be empty' })
    .refine((name) => name !== RESERVED_PROCESS_NAME, { error: RESERVED_PROCESS_MESSAGE }),
  yields: nonEmptyArray(nonNegative()),
});

const effectsRecord = z.record(
  z.string(),
  z.union([effectSize(), z.array(effectSize()).min(1, { error: 'must have at least one bin' })], {
    error: 'must be a finite number greater than -1, or a list of them (one per bin)',
  }),
  { error: 'must be an object mapping process names to relative effects' },
);

/** The effects record, refusing an own "__proto__" key by name (zod's record would drop it silently). */
const effectsSchema = z.preprocess((input: z.input<typeof effectsRecord>, ctx) => {
  if (typeof input === 'object' && input !== null && Object.prototype.hasOwnProperty.call(input, RESERVED_PROCESS_NAME)) {
    ctx.addIssue({ code: 'custom', path: [RESERVED_PROCESS_NAME], message: RESERVED_PROCESS_MESSAGE, input });
  }
  return input;
}, effectsRecord);

/**
 * One systematic uncertainty = one nuisance parameter θ with a unit Gaussian constraint. `effects`
 * maps a process name ("signal" or a background's name) to δ: one number (the same relative size in
 * every bin) or one number per bin. The yield responds log-normally, as (1+δ)^θ.
 */
export const systematicSchema = z.object({
  name: z.string({ error: 'is required' }).trim().min(1, { error: 'must not be empty' }),
  effects: effectsSchema,
});

const confidenceLevel = () =>
  finiteNumber()
    .gt(0, { error: (issue) => `must be between 0 and 1, e.g. 0.95 (got ${describeInput(issue.input)})` })
    .lt(1, { error: (issue) => `must be between 0 and 1, e.g. 0.95 (got ${describeInput(issue.input)})` });

/** Process name reserved for the signal in `systematics[].effects`. */
export const SIGNAL_PROCESS = 'signal';

const countingModelObject = z.object({
  cl: confidenceLevel().optional(),
  observed: nonEmptyArray(nonNegative()),
  signal: nonEmptyArray(nonNegative()),
  backgrounds: z.array(backgroundSchema, { error: 'must be a list of background processes' }).default([]),
  systematics: z.array(systematicSchema, { error: 'must be a list of systematic uncertainties' }).default([]),
});

/**
 * A counting model: observed counts per bin, the signal yield per bin at signal strength μ = 1,
 * background processes and systematic uncertainties. Expected count in bin i:
 * μ·s_i(θ) + Σ_j b_ij(θ), with every yield scaled by Π_k (1+δ_k)^θ_k.
 */
export const countingModelSchema = countingModelObject.superRefine((model, ctx) => {
  const bins = model.observed.length;
  if (model.signal.length !== bins) {
    ctx.addIssue({ code: 'custom', path: ['signal'], message: `has ${model.signal.length} bins but observed has ${bins}` });
  } else if (model.signal.every((s) => s === 0)) {
    ctx.addIssue({ code: 'custom', path: ['signal'], message: 'is zero in every bin: no limit on μ can be set' });
  }
  const names = new Set<string>([SIGNAL_PROCESS]);
  model.backgrounds.forEach((bg, j) => {
    if (bg.yields.length !== bins) {
      ctx.addIssue({ code: 'custom', path: ['backgrounds', j, 'yields'], message: `has ${bg.yields.length} bins but observed has ${bins}` });
    }
    if (names.has(bg.name)) {
      ctx.addIssue({
        code: 'custom',
        path: ['backgrounds', j, 'name'],
        message: bg.name === SIGNAL_PROCESS ? `"${SIGNAL_PROCESS}" is reserved for the signal process` : `"${bg.name}" is used by another background`,
      });
    }
    names.add(bg.name);
  });
  model.systematics.forEach((syst, k) => {
    for (const [process, effect] of Object.entries(syst.effects)) {
      if (!names.has(process)) {
        ctx.addIssue({
          code: 'custom',
          path: ['systematics', k, 'effects', process],
          message: `names an unknown process "${process}" (known: ${[...names].join(', ')})`,
        });
      } else if (Array.isArray(effect) && effect.length !== bins) {
        ctx.addIssue({ code: 'custom', path: ['systematics', k, 'effects', process], message: `has ${effect.length} bins but observed has ${bins}` });
      }
    }
  });
});

/** A counting model as accepted (before defaults). */
export type CountingModelInput = z.input<typeof countingModelSchema>;
/** A counting model after validation (backgrounds and systematics default to empty lists). */
export type CountingModel = z.output<typeof countingModelSchema>;

export const limitMethodSchema = z.enum(['asymptotic', 'toys', 'exact'], {
  error: 'must be "asymptotic", "toys" or "exact"',
});
export type LimitMethod = z.infer<typeof limitMethodSchema>;

export const asimovChoiceSchema = z.enum(['profiled', 'nominal'], { error: 'must be "profiled" or "nominal"' });
export type AsimovChoice = z.infer<typeof asimovChoiceSchema>;

/**
 * Options of a limit computation.
 * - `cl`: confidence level (default: the model's `cl`, else 0.95).
 * - `method`: "asymptotic" (default), "toys" (pseudo-experiments) or "exact" (one bin, no systematics).
 * - `asimov`: Asimov dataset for the expected limits and σ: "profiled" (default) or "nominal".
 * - `toys`: pseudo-experiments per hypothesis and per tested μ (default: enough for the −2σ band edge,
 *   20/(α·Φ(−2)) rounded up to 1000: 18,000 at 95% CL, 9,000 at 90%).
 * - `seed`: seed of the pseudo-experiments (default 1); the same seed gives the same result.
 * - `clsCurve`: add the CLs-vs-μ diagnostic samples (`true` = 40 points, or a number of points).
 */
export const limitOptionsSchema = z.object({
  cl: confidenceLevel().optional(),
  method: limitMethodSchema.optional(),
  asimov: asimovChoiceSchema.optional(),
  toys: finiteNumber().int({ error: 'must be a whole number' }).min(50, { error: 'must be at least 50' }).max(1_000_000, { error: 'must be at most 1000000' }).optional(),
  seed: finiteNumber().int({ error: 'must be a whole number' }).optional(),
  clsCurve: z.union([z.boolean(), finiteNumber().int().min(5).max(400)], { error: 'must be true, false or a number of points between 5 and 400' }).optional(),
});
export type LimitOptions = z.input<typeof limitOptionsSchema>;

const expectedShape = {
  '-2': z.number(),
  '-1': z.number(),
  '0': z.number(),
  '1': z.number(),
  '2': z.number(),
};
/** Expected limits: median ("0") and the edges of the ±1σ and ±2σ bands ("-2" is the lower, stronger edge). */
export const expectedLimitsSchema = z.object(expectedShape);
export type ExpectedLimits = z.infer<typeof expectedLimitsSchema>;
/** The five band keys, from the strongest (−2σ) to the weakest (+2σ) expected limit. */
export const EXPECTED_KEYS = ['-2', '-1', '0', '1', '2'] as const;
export type ExpectedKey = (typeof EXPECTED_KEYS)[number];

/** One sample of the CLs-vs-μ diagnostic curve. */
export const clsSampleSchema = z.object({ mu: z.number(), cls: z.number(), clsb: z.number(), clb: z.number() });
export type ClsSample = z.infer<typeof clsSampleSchema>;

/**
 * The result of a limit computation; limits are on μ.
 * Pseudo-experiment results also carry their Monte-Carlo uncertainty (`observedError`,
 * `expectedError`, one standard deviation) and how many pseudo-experiments were thrown (`toys`).
 */
export const limitResultSchema = z.object({
  method: limitMethodSchema,
  cl: z.number(),
  asimov: asimovChoiceSchema.optional(),
  observed: z.number(),
  expected: expectedLimitsSchema,
  muHat: z.number(),
  cls: z.array(clsSampleSchema).optional(),
  observedError: z.number().optional(),
  expectedError: expectedLimitsSchema.optional(),
  toys: z.object({ perHypothesis: z.number(), total: z.number(), seed: z.number() }).optional(),
  warnings: z.array(z.string()),
});
export type LimitResult = z.infer<typeof limitResultSchema>;

/** One point of a scan: parameter value(s), its counting model, and optionally σ_nominal (σ×B at μ = 1). */
export const scanPointSchema = z.object({
  x: finiteNumber(),
  y: finiteNumber().optional(),
  model: countingModelSchema,
  sigmaNominal: finiteNumber().positive({ error: 'must be positive' }).optional(),
});
export type ScanPoint = z.input<typeof scanPointSchema>;

/** Limits in σ×B units: μ_up × σ_nominal. */
export const sigmaBLimitsSchema = z.object({ observed: z.number(), expected: expectedLimitsSchema });
export type SigmaBLimits = z.infer<typeof sigmaBLimitsSchema>;

/** The field and reason of an input problem, as carried by a failed scan point. */
export const inputProblemSchema = z.object({ field: z.string(), reason: z.string() });
export type InputProblem = z.infer<typeof inputProblemSchema>;

/** A scan point's outcome: the limit result (plus σ×B limits when σ_nominal was given) or the input problem. */
export const scanPointResultSchema = z.union([
  limitResultSchema.extend({ x: z.number(), y: z.number().optional(), sigmaB: sigmaBLimitsSchema.optional() }),
  z.object({ x: z.number(), y: z.number().optional(), error: inputProblemSchema }),
]);
export type ScanPointResult = z.infer<typeof scanPointResultSchema>;
