import type { ZodType } from 'zod';
import { ApiError } from '@/shared/api-client';

export type FieldErrors = Record<string, string>;

/** Checks a form with the payload's shared zod schema; errors keyed by top-level field. */
export function checkForm<T>(schema: ZodType<T>, values: unknown): { data?: T; errors: FieldErrors } {
  const r = schema.safeParse(values);
  if (r.success) return { data: r.data, errors: {} };
  const errors: FieldErrors = {};
  for (const issue of r.error.issues) {
    const key = String(issue.path[0] ?? '_');
    errors[key] ??= capitalise(issue.message);
  }
  return { errors };
}

/** Field errors the server sent back (validation details), merged under the same keys. */
export function serverFieldErrors(error: unknown): FieldErrors {
  if (!(error instanceof ApiError)) return {};
  const out: FieldErrors = {};
  for (const d of error.details) out[d.field.split('.')[0] ?? '_'] ??= capitalise(d.message);
  return out;
}

export function errorMessage(error: unknown): string | undefined {
  if (!error) return undefined;
  if (error instanceof Error) return error.message;
  return 'Something went wrong';
}

const capitalise = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);
