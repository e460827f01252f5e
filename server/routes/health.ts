import { sql } from 'drizzle-orm';
import { Router } from 'express';
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
  return r;
}
