import { z } from 'zod';

/** Trimmed, non-empty, bounded single-line text (names, titles). */
export const shortText = (max: number) =>
  z
    .string()
    .trim()
    .min(1, 'must not be empty')
    .max(max, `must be at most ${max} characters`)
    // eslint-disable-next-line no-control-regex -- control characters are exactly what is refused
    .refine((s) => !/[\u0000-\u001f\u007f]/.test(s), 'must not contain control characters');

export const email = z.string().trim().toLowerCase().pipe(z.email('must be a valid e-mail address').max(254));

// --- Ids and numbers at the edge -----------------------------------------------------------
// Every route parameter and numeric query value is checked here before it reaches the SQL: a
// number past PostgreSQL's `integer` (int32) would otherwise fail in the database as a 500.

/** The largest value of a PostgreSQL `integer` column (version numbers, grid point indexes, pages). */
export const INT32_MAX = 2_147_483_647;

/** A record id (a UUID). */
export const uuidParam = z.uuid('must be a valid id');

/**
 * A whole number written in decimal digits (a route parameter or query value: text), from `min`
 * up to `max` (at most INT32_MAX, what an `integer` column holds). "1.5", "-1", "1e3", "0x10",
 * " " and numbers past the column are refused with a message naming the range.
 */
export function intParam(opts: { min?: number; max?: number } = {}) {
  const min = opts.min ?? 1;
  const max = Math.min(opts.max ?? INT32_MAX, INT32_MAX);
  const range = `must be a whole number from ${min} to ${max}`;
  return z
    .string({ error: range })
    .regex(/^\d{1,10}$/, range)
    .transform(Number)
    .pipe(z.number().int().min(min, range).max(max, range));
}

/** A version number (1, 2, …) in a route or query. */
export const versionParam = intParam({ min: 1 });

/** A whole number in a JSON body that must fit an `integer` column (e.g. a pinned version). */
export const intField = (opts: { min?: number; max?: number } = {}) => {
  const min = opts.min ?? 1;
  const max = Math.min(opts.max ?? INT32_MAX, INT32_MAX);
  return z.number({ error: 'must be a number' }).int('must be a whole number').min(min, `must be ${min} or more`).max(max, `must be at most ${max}`);
};

/** Page and page size of a list (query strings). */
export const pageParams = {
  page: intParam({ min: 1 }).default(1),
  pageSize: intParam({ min: 1, max: 100 }).default(20),
};

/** The permanent link name of a result. */
export const slugParam = z.string().regex(/^[a-z0-9-]{3,80}$/, 'must be a result link name (3–80 lowercase letters, digits and dashes)');

/** A user id as better-auth makes them (letters, digits, `_` and `-`). */
export const userIdParam = z.string().regex(/^[A-Za-z0-9_-]{1,100}$/, 'must be a user id');

/** The JSON error every API route answers with. */
export const apiErrorSchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    details: z.array(z.object({ field: z.string(), message: z.string() })).optional(),
  }),
});
export type ApiErrorBody = z.infer<typeof apiErrorSchema>;

/** `GET /api/limits`: server settings the app checks before sending. */
export type ServerLimits = { uploadLimitBytes: number };
