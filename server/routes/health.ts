import { sql } from 'drizzle-orm';
import { Router } from 'express';
import type { ServerLimits } from '../../shared/schemas/common';
import type { Ctx } from '../context';

export function healthRouter(ctx: Ctx) {
  const r = Router();
  r.get('/health', async (_req, res) => {
    try {
      await ctx.db.execute(sql`select 1`);
      res.json({ ok: true, db: 'up' });
    } catch {
      res.status(503).json({ ok: false, db: 'down' });
    }
  });
  /** Limits the app checks before sending (anyone; they are the server's settings). */
  r.get('/limits', (_req, res) => {
    res.json({ uploadLimitBytes: ctx.env.UPLOAD_LIMIT_BYTES } satisfies ServerLimits);
  });
  return r;
}
