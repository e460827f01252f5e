import { Router } from 'express';
import type { MailMessage } from '../../shared/schemas/groups';
import { requireUser } from '../access';
import type { Ctx } from '../context';
import { inboxOf } from '../services/mail';

/** Development-only helpers; not mounted at all in production. */
export function devRouter(ctx: Ctx) {
  const r = Router();
  r.get('/dev/inbox', requireUser(ctx), async (req, res) => {
    const messages: MailMessage[] = await inboxOf(ctx.db, req.user!.email);
    res.json({ messages });
  });
  return r;
}
