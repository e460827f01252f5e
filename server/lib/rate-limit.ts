import type { Request } from 'express';
import { rateLimit } from 'express-rate-limit';

/**
 * A per-client (per IP, as TRUST_PROXY lets Express see it) limit of `limit` requests a minute,
 * answering 429 `rate_limited` in the API's error shape with `message`.
 */
export function perMinuteLimit(opts: { limit: number; message: string; skip?: (req: Request) => boolean }) {
  return rateLimit({
    windowMs: 60_000,
    limit: opts.limit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    ...(opts.skip ? { skip: opts.skip } : {}),
    handler: (_req, res) => {
      res.status(429).json({ error: { code: 'rate_limited', message: opts.message } });
    },
  });
}
