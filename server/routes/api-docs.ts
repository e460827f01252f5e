import { Router } from 'express';
import { apiReference } from '../api-docs/reference';
import type { Ctx } from '../context';

/** The API reference (server/api-docs): the OpenAPI document and its page, for anyone. */
export function apiDocsRouter(ctx: Ctx) {
  const r = Router();
  const reference = () => apiReference({ devTools: ctx.env.devTools });
  r.get('/docs.json', (_req, res) => {
    res.type('application/json').setHeader('Cache-Control', 'no-cache');
    res.send(reference().json);
  });
  r.get('/docs', (_req, res) => {
    res.type('text/html').setHeader('Cache-Control', 'no-cache');
    res.send(reference().html);
  });
  return r;
}
