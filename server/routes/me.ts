import { Router } from 'express';
import type { Me } from '../../shared/schemas/groups';
import { requireUser } from '../access';
import type { Ctx } from '../context';
import { isAddressVerified } from '../services/account';
import { listMyGroups } from '../services/groups';

export function meRouter(ctx: Ctx) {
  const r = Router();
  r.get('/me', requireUser(ctx), async (req, res) => {
    const user = req.user!;
    const [groups, emailVerified] = await Promise.all([listMyGroups(ctx, user.id), isAddressVerified(ctx.db, user.id)]);
    const body: Me = { user: { ...user, emailVerified }, groups, devTools: ctx.env.devTools };
    res.json(body);
  });
  return r;
}
