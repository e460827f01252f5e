import { Router } from 'express';
import { createTokenSchema, tokenParams } from '../../shared/schemas/results';
import { requireSession } from '../access';
import type { Ctx } from '../context';
import { handle } from '../lib/validate';
import * as tokens from '../services/tokens';

/** Personal API tokens: managed from a signed-in session only, each user seeing only their own. */
export function tokensRouter(ctx: Ctx) {
  const r = Router();
  r.get('/tokens', requireSession(ctx), handle({}, async (_in, req, res) => {
    res.json({ tokens: await tokens.listTokens(ctx, req.user!.id) });
  }));
  r.post('/tokens', requireSession(ctx), handle({ body: createTokenSchema }, async ({ body }, req, res) => {
    res.status(201).json(await tokens.createToken(ctx, req.user!.id, body.name));
  }));
  r.delete('/tokens/:tokenId', requireSession(ctx), handle({ params: tokenParams }, async ({ params }, req, res) => {
    await tokens.revokeToken(ctx, req.user!.id, params.tokenId);
    res.status(204).end();
  }));
  return r;
}
