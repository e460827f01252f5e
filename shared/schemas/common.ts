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

export const uuidParam = z.uuid('must be a valid id');

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
