import { Router } from 'express';
import type { ServerLimits } from '../../shared/schemas/common';
import type { Ctx } from '../context';
import { databaseUp } from '../services/health';

export function healthRouter(ctx: Ctx) {
  const r = Router();
  r.get('/health', async (_req, res) => {
    if (await databaseUp(ctx)) res.json({ ok: true, db: 'up' });
    else res.status(503).json({ ok: false, db: 'down' });
  });
  /** Limits the app checks before sending (anyone; they are the server's settings). */
  r.get('/limits', (_req, res) => {
    res.json({ uploadLimitBytes: ctx.env.UPLOAD_LIMIT_BYTES } satisfies ServerLimits);
  });
  return r;
}
