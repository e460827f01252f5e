/**
 * Limit results and their versions: payloads of the registry API, shared by server and app.
 * A curve is stored column-wise: `x` plus one array per limit quantity, all of the same length.
 */
import { z } from 'zod';
import { EXPECTED_KEYS } from './counting-model';
import { pageParams, shortText, slugParam, uuidParam, versionParam } from './common';
import { planeSchema, type Plane, type PlaneContours } from './plane';

export const RESULT_STATES = ['draft', 'published', 'superseded', 'retracted'] as const;
export type ResultState = (typeof RESULT_STATES)[number];

export const RESULT_METHODS = ['asymptotic', 'toys', 'imported', 'other'] as const;
export type ResultMethod = (typeof RESULT_METHODS)[number];
export const METHOD_LABELS: Record<ResultMethod, string> = {
  asymptotic: 'Asymptotic CLs',
  toys: 'Pseudo-experiment CLs',
  imported: 'Imported',
  other: 'Other',
};

/** What the limit is on: the signal strength μ, or σ×B in a cross-section unit. */
export const QUANTITIES = ['mu', 'xsec'] as const;
export type Quantity = (typeof QUANTITIES)[number];
export const XSEC_UNITS = ['ab', 'fb', 'pb'] as const;
export type XsecUnit = (typeof XSEC_UNITS)[number];

export const MAX_CURVE_POINTS = 10_000;

const column = z.array(z.number(), { error: 'must be a list of numbers' });

/** A limit curve: x and at least one of observed / expected median; bands are optional. */
export const curveSchema = z.object({
  x: column.min(2, 'must have at least two points').max(MAX_CURVE_POINTS, `must have at most ${MAX_CURVE_POINTS} points`),
  observed: column.optional(),
  expected: z.object(Object.fromEntries(EXPECTED_KEYS.map((k) => [k, column.optional()])) as Record<(typeof EXPECTED_KEYS)[number], z.ZodOptional<typeof column>>).partial().optional(),
});
export type Curve = z.infer<typeof curveSchema>;

/** A theory prediction (same unit as the limit) with an optional band. */
export const theorySchema = z.object({
  label: z.string().trim().max(120, 'must be at most 120 characters').optional(),
  x: column.min(2, 'must have at least two points').max(MAX_CURVE_POINTS),
  central: column,
  lower: column.optional(),
  upper: column.optional(),
});
export type Theory = z.infer<typeof theorySchema>;

const optionalText = (max: number) => z.string().trim().max(max, `must be at most ${max} characters`).default('');

/** Provenance of one version (everything but the numbers). */
export const versionMetaSchema = z
  .object({
    title: shortText(200),
    model: optionalText(200),
    parameterName: shortText(60),
    parameterUnit: z.string().trim().max(20, 'must be at most 20 characters').default(''),
    quantity: z.enum(QUANTITIES, { error: 'must be "mu" (signal strength) or "xsec" (σ×B)' }),
    quantityUnit: z.enum(['', ...XSEC_UNITS], { error: 'must be one of ab, fb, pb (or empty for μ)' }).default(''),
    sqrtS: z.number({ error: 'must be a number (TeV)' }).positive('must be positive').max(10_000, 'must be at most 10000 TeV'),
    luminosity: z.number({ error: 'must be a number (fb⁻¹)' }).positive('must be positive').max(1e7, 'is implausibly large'),
    cl: z.number({ error: 'must be a number' }).gt(0, 'must be between 0 and 1').lt(1, 'must be between 0 and 1').default(0.95),
    method: z.enum(RESULT_METHODS, { error: `must be one of ${RESULT_METHODS.join(', ')}` }),
    reference: optionalText(300),
    notes: optionalText(5000),
  })
  .superRefine((v, ctx) => {
    if (v.quantity === 'xsec' && !v.quantityUnit) ctx.addIssue({ code: 'custom', path: ['quantityUnit'], message: 'is required for σ×B limits (ab, fb or pb)' });
    if (v.quantity === 'mu' && v.quantityUnit) ctx.addIssue({ code: 'custom', path: ['quantityUnit'], message: 'must be empty for limits on μ' });
  });
export type VersionMeta = z.output<typeof versionMetaSchema>;
export type VersionMetaInput = z.input<typeof versionMetaSchema>;

/** Create a result (first version, a draft) from JSON. */
export const createResultSchema = z.object({
  meta: versionMetaSchema,
  curve: curveSchema,
  theory: theorySchema.optional(),
});
export type CreateResultInput = z.input<typeof createResultSchema>;

/**
 * Create a result over two parameters from JSON: `plane` (shared/schemas/plane.ts) in place of
 * `curve` and `theory` (the plane carries its own theory per point). The upload routes take
 * either body; a body with a `plane` key is read by this schema.
 */
export const createPlaneResultSchema = z.object({ meta: versionMetaSchema, plane: planeSchema });
export type CreatePlaneResultInput = z.input<typeof createPlaneResultSchema>;

/** A new draft version of an existing result; `changeNote` says what changed. */
export const createVersionSchema = createResultSchema.extend({
  changeNote: z.string().trim().min(1, 'say what changed in this version').max(500, 'must be at most 500 characters'),
});
export type CreateVersionInput = z.input<typeof createVersionSchema>;
export const createPlaneVersionSchema = createPlaneResultSchema.extend({ changeNote: createVersionSchema.shape.changeNote });
export type CreatePlaneVersionInput = z.input<typeof createPlaneVersionSchema>;

/**
 * Headers of an upload (`POST …/results`, `…/versions`). `Idempotency-Key` lets a pipeline retry
 * after a dropped connection: the same key with the same request gets the first answer again
 * instead of a second version (kept 24 h per group). Express gives header names in lower case.
 */
export const IDEMPOTENCY_KEY_HEADER = 'Idempotency-Key';
export const uploadHeadersSchema = z.object({
  'idempotency-key': z
    .string()
    .regex(/^[A-Za-z0-9_.:~+/=-]{8,128}$/, 'must be 8 to 128 letters, digits or - _ . : ~ + / = (a random UUID is a good key), sent once')
    .optional(),
});

/** Edit a draft (published versions never change). */
export const updateDraftSchema = z
  .object({
    meta: versionMetaSchema.optional(),
    /** One-parameter drafts only. */
    curve: curveSchema.optional(),
    theory: theorySchema.nullable().optional(),
    /** Two-parameter drafts only. */
    plane: planeSchema.optional(),
    changeNote: z.string().trim().max(500).optional(),
  })
  .refine((v) => Object.keys(v).length > 0, 'give something to change');
export type UpdateDraftInput = z.input<typeof updateDraftSchema>;

/** `public` makes the result public (true) or group-only (false) at the same time; left out, its visibility stays as it is. */
export const publishSchema = z.object({ public: z.boolean({ error: 'must be true or false' }).optional() });
export const retractSchema = z.object({ reason: z.string().trim().min(5, 'give a reason (at least 5 characters); it is shown to everyone who opens the result').max(1000) });
export const visibilitySchema = z.object({ public: z.boolean({ error: 'must be true or false' }) });

export const resultParams = z.object({ groupId: uuidParam, resultId: uuidParam });
export const versionParams = resultParams.extend({ version: versionParam });
export const permalinkParams = z.object({ slug: slugParam, version: versionParam });
export const latestLinkParams = z.object({ slug: slugParam });

export const RESULT_SORTS = ['updated', 'title', 'sqrtS'] as const;
export const resultListQuery = z.object({
  q: z.string().trim().max(200).optional(),
  groupId: uuidParam.optional(),
  parameter: z.string().trim().max(60).optional(),
  sqrtS: z.coerce.number({ error: 'must be a number (TeV)' }).positive('must be positive').max(10_000, 'must be at most 10000 TeV').optional(),
  method: z.enum(RESULT_METHODS).optional(),
  state: z.enum(RESULT_STATES).optional(),
  /** Only results over one parameter (curves) or two (planes), as their listed version is. */
  parameters: z.coerce.number({ error: 'must be 1 or 2' }).int('must be 1 or 2').min(1, 'must be 1 or 2').max(2, 'must be 1 or 2').optional(),
  sort: z.enum(RESULT_SORTS).default('updated'),
  ...pageParams,
});
export type ResultListQuery = Partial<z.output<typeof resultListQuery>>;
/** The public list: the same filters and sort, published public results only (no group or state choice). */
export const publicResultListQuery = resultListQuery.omit({ groupId: true, state: true });
export type PublicResultListQuery = Partial<z.output<typeof publicResultListQuery>>;

/** One row of a results list: the result with its latest visible version. */
export type ResultSummary = {
  id: string;
  slug: string;
  groupId: string;
  groupName: string;
  isPublic: boolean;
  version: number;
  state: ResultState;
  title: string;
  model: string;
  parameterName: string;
  parameterUnit: string;
  quantity: Quantity;
  quantityUnit: string;
  sqrtS: number;
  luminosity: number;
  method: ResultMethod;
  reference: string;
  updatedAt: string;
  /** Over one parameter (a curve against `parameterName`) or two (a plane; the first is `parameterName`). */
  parameters: 1 | 2;
  /** The second parameter of a two-parameter result (null for one parameter). */
  secondParameter: { name: string; unit: string } | null;
};
export type ResultPage = { items: ResultSummary[]; total: number; page: number; pageSize: number };

export type VersionSummary = {
  version: number;
  state: ResultState;
  changeNote: string;
  createdBy: string | null;
  createdAt: string;
  publishedAt: string | null;
  retractionReason: string | null;
};

export type ResultDetail = {
  id: string;
  slug: string;
  groupId: string;
  groupName: string;
  isPublic: boolean;
  versions: VersionSummary[];
};

/** A full version, with the derived numbers computed by shared/stats `exclusionRanges`. */
export type ResultVersion = VersionSummary & {
  resultId: string;
  slug: string;
  groupId: string;
  groupName: string;
  isPublic: boolean;
  meta: VersionMeta;
  /** The limit curve of a one-parameter version; null when the version is over two parameters (`plane`). */
  curve: Curve | null;
  theory: Theory | null;
  /** The points of a two-parameter version (null for one parameter), with its contour lines as stored. */
  plane: Plane | null;
  planeContours: PlaneContours | null;
  /** Excluded ranges against the theory curve (null without theory or when not computable, with the reason). */
  exclusion: { ranges: import('../stats/exclusion').ExclusionRanges | null; problem: string | null };
  permalink: string | null;
  sourceFile: { name: string; bytes: number } | null;
  /**
   * For members: the scan that computed this version, with the grid points whose computation
   * warned (too few pseudo-experiments, low counts…) or failed. Null for uploads and public reads.
   */
  fromScan: {
    scanId: string;
    points: { index: number; x: number; warnings: string[]; error: string | null }[];
    /** When the scan was a joint combination: its inputs, the parameters unlinked and shared, the grid. */
    combination?: import('./combine').CombinationPlan | null;
  } | null;
  /**
   * For members: the result versions a derived version (an envelope) was built from, in order, with
   * the newest published version of each that the group may use (`null` resultId: deleted or no
   * longer visible; the title stays).
   */
  inputs: { position: number; resultId: string | null; version: number; title: string; slug: string | null; latestPublished: number | null }[] | null;
  /**
   * On permanent-link reads: the newest published version after this one that the caller may see
   * (this one is then superseded or retracted), else null.
   */
  newerVersion: number | null;
};

/**
 * The answer to an upload: the stored version, and what the upload left out without being wrong
 * (`warnings`, e.g. a column with numbers but no role), in the error detail shape.
 */
export type UploadedVersion = ResultVersion & { warnings: import('../errors').ErrorDetail[] };

/** The project's own JSON file format for one limit result (upload and download). */
export const LIMIT_FILE_FORMAT = 'bandwright-limit-result/1';
export const limitFileSchema = z.object({
  format: z.literal(LIMIT_FILE_FORMAT, { error: `must be "${LIMIT_FILE_FORMAT}"` }),
  meta: versionMetaSchema,
  curve: curveSchema,
  theory: theorySchema.optional(),
});
export type LimitFile = z.input<typeof limitFileSchema>;
/** The same file format for a result over two parameters: `plane` in place of `curve` and `theory`. */
export const planeFileSchema = z.object({
  format: z.literal(LIMIT_FILE_FORMAT, { error: `must be "${LIMIT_FILE_FORMAT}"` }),
  meta: versionMetaSchema,
  plane: planeSchema,
});
export type PlaneFile = z.input<typeof planeFileSchema>;

export const createTokenSchema = z.object({ name: shortText(80) });
export const tokenParams = z.object({ tokenId: uuidParam });
export type ApiTokenSummary = { id: string; name: string; prefix: string; createdAt: string; lastUsedAt: string | null };
