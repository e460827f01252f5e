import { Router } from 'express';
import { invitationTokenParams } from '../../shared/schemas/groups';
import { requireUser } from '../access';
import type { Ctx } from '../context';
import { handle } from '../lib/validate';
import * as invitations from '../services/invitations';

/** Invitation links: anyone holding the token may see whom it is for; only that person accepts. */
export function invitationsRouter(ctx: Ctx) {
  const r = Router();
  r.get('/invitations/:token', handle({ params: invitationTokenParams }, async ({ params }, _req, res) => {
    res.json(await invitations.previewInvitation(ctx, params.token));
  }));
  r.post('/invitations/:token/accept', requireUser(ctx), handle({ params: invitationTokenParams }, async ({ params }, req, res) => {
    res.json(await invitations.acceptInvitation(ctx, params.token, req.user!));
  }));
  return r;
}
