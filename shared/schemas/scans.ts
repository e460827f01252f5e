/**
 * Scan jobs: a grid of counting models whose limits are computed in the job queue and stored as a
 * draft result. Shared by the server (validation) and the app (forms, previews).
 */
import { z } from 'zod';
import { asimovChoiceSchema, type CountingModelInput } from './counting-model';
import { versionMetaSchema, type VersionMeta } from './results';
import { intField, intParam, shortText, uuidParam } from './common';

const sigmaValue = z.number({ error: 'must be a number' }).positive('must be positive').refine(Number.isFinite, 'must be finite').optional();

/**
 * One grid point: the parameter value, an optional nominal σ×B (the draft's theory curve) with an
 * optional band (`sigmaNominalLow` ≤ `sigmaNominal` ≤ `sigmaNominalHigh`, both or neither), and its
 * counting model. The model is only required to be an object here: the statistics engine checks it
 * when the point is computed, so one bad point fails alone with its field-level error instead of
 * the whole scan.
 */
export const scanInputPointSchema = z
  .object({
    x: z.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number'),
    /** The second parameter (scans over two parameters: every point has one, named by meta.yName). */
    y: z.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number').optional(),
    sigmaNominal: sigmaValue,
    sigmaNominalLow: sigmaValue,
    sigmaNominalHigh: sigmaValue,
    model: z.record(z.string(), z.unknown(), { error: 'must be a counting model (an object with observed, signal, backgrounds, systematics)' }),
  })
  .superRefine((p, ctx) => {
    const lo = p.sigmaNominalLow;
    const hi = p.sigmaNominalHigh;
    if ((lo === undefined) !== (hi === undefined)) {
      ctx.addIssue({ code: 'custom', path: [lo === undefined ? 'sigmaNominalLow' : 'sigmaNominalHigh'], message: 'is required with the other edge of the σ×B band' });
      return;
    }
    if (lo === undefined || hi === undefined) return;
    if (p.sigmaNominal === undefined) ctx.addIssue({ code: 'custom', path: ['sigmaNominal'], message: 'is required when the point gives a σ×B band' });
    else if (!(lo <= p.sigmaNominal && p.sigmaNominal <= hi)) ctx.addIssue({ code: 'custom', path: ['sigmaNominalLow'], message: `the band must hold sigmaNominal: ${lo} ≤ ${p.sigmaNominal} ≤ ${hi} does not hold` });
  });
export type ScanInputPoint = { x: number; y?: number; sigmaNominal?: number; sigmaNominalLow?: number; sigmaNominalHigh?: number; model: CountingModelInput };

export const SCAN_METHODS = ['asymptotic', 'toys'] as const;

/** The most pseudo-experiments per hypothesis a point may ask for (whatever the plan). */
export const MAX_TOYS_PER_POINT = 1_000_000;

/** How every point is computed. */
export const scanOptionsSchema = z
  .object({
    cl: z.number({ error: 'must be a number' }).gt(0, 'must be between 0 and 1').lt(1, 'must be between 0 and 1').default(0.95),
    method: z.enum(SCAN_METHODS, { error: 'must be "asymptotic" or "toys"' }).default('asymptotic'),
    asimov: asimovChoiceSchema.default('profiled'),
    toys: z.number({ error: 'must be a number' }).int('must be a whole number').min(100, 'must be at least 100').max(MAX_TOYS_PER_POINT, 'must be at most 1,000,000').default(5000),
    seed: z.number({ error: 'must be a number' }).int('must be a whole number').min(0).max(2 ** 31 - 1).default(1),
  })
  .default({ cl: 0.95, method: 'asymptotic', asimov: 'profiled', toys: 5000, seed: 1 });
export type ScanOptions = z.output<typeof scanOptionsSchema>;

/** The name of the theory curve a scan's draft gets from the points' nominal σ×B. */
export const theoryLabelSchema = z.string({ error: 'must be text' }).trim().max(120, 'must be at most 120 characters').optional();
/** The name a scan's theory curve gets when none is given. */
export const DEFAULT_SCAN_THEORY_LABEL = 'Nominal $\\sigma \\times B$ of the signal model';

/** The project's JSON scan file, also the JSON body of "start a scan". */
export const SCAN_FILE_FORMAT = 'bandwright-scan/1';
export const scanFileSchema = z.object({
  format: z.literal(SCAN_FILE_FORMAT, { error: `must be "${SCAN_FILE_FORMAT}"` }).optional(),
  points: z.array(scanInputPointSchema, { error: 'must be a list of grid points' }).min(1, 'must have at least one grid point'),
});
export type ScanFile = z.input<typeof scanFileSchema>;

/**
 * The second parameter of a scan over two parameters, given with the scan's meta under the names a
 * two-parameter result uses (shared/schemas/plane.ts `yName`, `yUnit`); absent in one-parameter scans.
 */
export const scanSecondParameterSchema = z.object({
  yName: shortText(60).optional(),
  yUnit: z.string({ error: 'must be text' }).trim().max(20, 'must be at most 20 characters').optional(),
});
/** A scan's meta: the draft's provenance, plus the second parameter of a scan over two. */
export const scanMetaSchema = z.intersection(versionMetaSchema, scanSecondParameterSchema);
export type ScanMeta = VersionMeta & { yName?: string; yUnit?: string };

/** Start a scan from JSON: the points, the options and the provenance of the draft it becomes. */
export const createScanSchema = z.object({
  points: scanFileSchema.shape.points,
  options: scanOptionsSchema,
  meta: scanMetaSchema,
  /** Add the scan as a new draft version of this result instead of creating a result. */
  resultId: uuidParam.optional(),
  /** The name of the draft's theory curve (the points' nominal σ×B); TeX allowed. */
  theoryLabel: theoryLabelSchema,
});
export type CreateScanInput = z.input<typeof createScanSchema>;

/** Route parameters of one scan and of one of its grid points. */
export const scanParams = z.object({ groupId: uuidParam, scanId: uuidParam });
export const scanPointParams = scanParams.extend({ index: intParam({ min: 0 }) });

/**
 * Rerun one point of an ended pseudo-experiment scan with more pseudo-experiments per hypothesis
 * (more than the point's current count, within the bound its diagnostics give as `rerun.maxToys`).
 */
export const rerunPointSchema = z.object({ toys: intField({ min: 1 }) });
export type RerunPointInput = z.input<typeof rerunPointSchema>;
