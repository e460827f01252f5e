import type { ErrorRequestHandler } from 'express';
import { ZodError } from 'zod';
import { StatsInputError } from '../../shared/stats/errors';

import type { ErrorDetail } from '../../shared/errors';
export type { ErrorDetail };

/** The one error type of the API: mapped to `{ error: { code, message, details } }` by `errorHandler`. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: ErrorDetail[],
  ) {
    super(message);
  }
}

export const badRequest = (message: string, details?: ErrorDetail[]) => new AppError(400, 'bad_request', message, details);
export const unauthorized = (message = 'Sign in first') => new AppError(401, 'unauthorized', message);
export const forbidden = (message: string) => new AppError(403, 'forbidden', message);
export const notFound = (what: string) => new AppError(404, 'not_found', `${what} not found`);
export const conflict = (message: string) => new AppError(409, 'conflict', message);

/** Zod issues → `{ field, message }` with a dotted path such as `backgrounds.0.yields.2`. */
export function zodDetails(error: ZodError, prefix?: string): ErrorDetail[] {
  return error.issues.map((i) => ({
    field: [prefix, ...i.path.map(String)].filter(Boolean).join('.') || prefix || '(body)',
    message: i.message,
  }));
}

export function validationError(error: ZodError, where: string): AppError {
  const details = zodDetails(error, where === 'body' ? undefined : where);
  const first = details[0];
  const message = first ? `Invalid ${where}: ${first.field} ${first.message}` : `Invalid ${where}`;
  return new AppError(400, 'validation_failed', message, details);
}

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (err instanceof AppError) {
    res.status(err.status).json({ error: { code: err.code, message: err.message, ...(err.details ? { details: err.details } : {}) } });
    return;
  }
  if (err instanceof StatsInputError) {
    res.status(400).json({
      error: { code: 'validation_failed', message: err.message, details: err.problems.map((p) => ({ field: p.field, message: p.reason })) },
    });
    return;
  }
  if (err instanceof ZodError) {
    const e = validationError(err, 'body');
    res.status(400).json({ error: { code: e.code, message: e.message, details: e.details } });
    return;
  }
  // Body parser errors carry a status and a type.
  const status = typeof err?.status === 'number' ? err.status : typeof err?.statusCode === 'number' ? err.statusCode : 500;
  if (status === 413) {
    res.status(413).json({ error: { code: 'too_large', message: 'The request body is larger than the server accepts' } });
    return;
  }
  if (status === 400 && err?.type === 'entity.parse.failed') {
    res.status(400).json({ error: { code: 'invalid_json', message: 'The request body is not valid JSON' } });
    return;
  }
  if (status >= 400 && status < 500) {
    res.status(status).json({ error: { code: 'bad_request', message: String(err?.message ?? 'Bad request') } });
    return;
  }
  console.error(`[error] ${req.method} ${req.originalUrl}`, err);
  res.status(500).json({ error: { code: 'internal', message: 'Something went wrong on the server; nothing was changed' } });
};
