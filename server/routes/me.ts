import { Router } from 'express';
import type { Me } from '../../shared/schemas/groups';
import { requireUser } from '../access';
import type { Ctx } from '../context';
import { listMyGroups } from '../services/groups';

export function meRouter(ctx: Ctx) {
  const r = Router();
  r.get('/me', requireUser(ctx), async (req, res) => {
    const user = req.user!;
    const body: Me = { user, groups: await listMyGroups(ctx, user.id), devTools: ctx.env.devTools };
    res.json(body);
  });
  return r;
}
