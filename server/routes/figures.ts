import { Router, type Request, type Response } from 'express';
import { perMinuteLimit } from '../lib/rate-limit';
import {
  duplicateFigureSchema,
  figureIdParams,
  figureVersionParams,
  figureVisibilitySchema,
  houseStyleBodySchema,
  hueParams,
  hueSchema,
  layerDataRequestSchema,
  outreachFigureSchema,
  publicFigureListQuery,
  typesetRequestSchema,
  type TypesetResponse,
} from '../../shared/schemas/figure-views';
import { createFigureSchema, figureParams, RENDER_FORMATS, renderQuery, saveFigureSchema, svgRenderQuery } from '../../shared/schemas/figures';
import { groupParams } from '../../shared/schemas/groups';
import { optionalUser, requireGroup, requireUser } from '../access';
import type { Ctx } from '../context';
import { typesetLabels } from '../figures/typeset';
import { handle } from '../lib/validate';
import * as figures from '../services/figures';
import * as renders from '../services/figure-renders';

const exportQuery = renderQuery.pick({ version: true });

/** Header-safe JSON: non-ASCII characters escaped, so notes in any language survive as a header. */
function asciiJson(v: unknown): string {
  return JSON.stringify(v).replace(/[\u007f-\uffff]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/** `download`: `?download=1`, saved as a file (attachment) instead of shown (inline). */
function sendRender(res: Response, out: renders.RenderOutput, cacheControl: string, download: boolean) {
  res.setHeader('Content-Type', out.contentType);
  res.setHeader('Content-Disposition', `${download ? 'attachment' : 'inline'}; filename="${out.fileName}"`);
  res.setHeader('X-Render-Cache', out.cache);
  // Our own ETag (from the cache key) spares Express hashing the body, and lets a browser that
  // has the figure get a 304.
  res.setHeader('ETag', out.etag);
  if (out.notes.length) res.setHeader('X-Figure-Notes', asciiJson(out.notes));
  res.setHeader('Cache-Control', cacheControl);
  // An SVG opened on its own is a document: it may not run or load anything.
  if (out.contentType.startsWith('image/svg')) res.setHeader('Content-Security-Policy', "default-src 'none'; style-src 'unsafe-inline'; sandbox");
  res.send(out.body);
}

function sendExport(res: Response, file: renders.ExportFile) {
  res.setHeader('Content-Type', file.contentType);
  res.attachment(file.fileName);
  res.setHeader('Cache-Control', 'private, no-cache');
  if (file.notes.length) res.setHeader('X-Figure-Notes', asciiJson(file.notes));
  res.send(file.body);
}

/**
 * Figures: group routes (members, by role), the render and export routes addressed by figure id
 * (members of its group, or anyone for a public figure), the public list and renders, the
 * typesetter for the composer's preview, the house style and result hues.
 */
export function figuresRouter(ctx: Ctx) {
  const r = Router();
  const actor = (req: Request): figures.Actor => ({ id: req.user!.id });
  // Renders for callers who are not signed in, per IP: each miss costs the server a render (and a
  // cache row), and nobody is accountable for them. Members are not limited.
  const anonymousRenders = perMinuteLimit({
    limit: ctx.env.RENDER_RATE_LIMIT,
    message: 'Too many figure renders from this address; wait a minute and try again, or sign in',
    skip: (req) => !!req.user,
  });

  // --- Group routes -------------------------------------------------------------------------

  r.get('/groups/:groupId/figures', requireGroup(ctx, 'group.read'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json(await figures.listInGroup(ctx, params.groupId));
  }));

  r.post('/groups/:groupId/figures', requireGroup(ctx, 'figure.write'), handle({ params: groupParams, body: createFigureSchema }, async ({ params, body }, req, res) => {
    res.status(201).json(await figures.createFigure(ctx, params.groupId, actor(req), body));
  }));

  r.get('/groups/:groupId/figures/:figureId', requireGroup(ctx, 'group.read'), handle({ params: figureParams }, async ({ params }, _req, res) => {
    res.json(await figures.getDetail(ctx, params.groupId, params.figureId));
  }));

  r.put('/groups/:groupId/figures/:figureId', requireGroup(ctx, 'figure.write'), handle({ params: figureParams, body: saveFigureSchema }, async ({ params, body }, req, res) => {
    res.json(await figures.saveFigure(ctx, params.groupId, actor(req), params.figureId, body));
  }));

  r.patch('/groups/:groupId/figures/:figureId', requireGroup(ctx, 'figure.write'), handle({ params: figureParams, body: figureVisibilitySchema }, async ({ params, body }, _req, res) => {
    res.json(await figures.setVisibility(ctx, params.groupId, params.figureId, body.public));
  }));

  r.delete('/groups/:groupId/figures/:figureId', requireGroup(ctx, 'figure.write'), handle({ params: figureParams }, async ({ params }, _req, res) => {
    await figures.deleteFigure(ctx, params.groupId, params.figureId);
    res.status(204).end();
  }));

  r.get('/groups/:groupId/figures/:figureId/versions/:version', requireGroup(ctx, 'group.read'), handle({ params: figureVersionParams }, async ({ params }, _req, res) => {
    res.json(await figures.getVersion(ctx, params.groupId, params.figureId, params.version));
  }));

  r.post('/groups/:groupId/figures/:figureId/duplicate', requireGroup(ctx, 'figure.write'), handle({ params: figureParams, body: duplicateFigureSchema }, async ({ params, body }, req, res) => {
    res.status(201).json(await figures.duplicateFigure(ctx, params.groupId, actor(req), params.figureId, body));
  }));

  r.post('/groups/:groupId/figures/:figureId/outreach', requireGroup(ctx, 'figure.write'), handle({ params: figureParams, body: outreachFigureSchema }, async ({ params, body }, req, res) => {
    res.status(201).json(await figures.outreachFigure(ctx, params.groupId, actor(req), params.figureId, body));
  }));

  r.post('/groups/:groupId/layer-data', requireGroup(ctx, 'group.read'), handle({ params: groupParams, body: layerDataRequestSchema }, async ({ params, body }, _req, res) => {
    res.json(await figures.layerData(ctx, params.groupId, body.layers));
  }));

  r.get('/groups/:groupId/style', requireGroup(ctx, 'group.read'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json(await figures.getStyle(ctx, params.groupId));
  }));

  r.put('/groups/:groupId/style', requireGroup(ctx, 'result.publish'), handle({ params: groupParams, body: houseStyleBodySchema }, async ({ params, body }, _req, res) => {
    res.json(await figures.putStyle(ctx, params.groupId, body.style));
  }));

  r.put('/groups/:groupId/results/:resultId/hue', requireGroup(ctx, 'figure.write'), handle({ params: hueParams, body: hueSchema }, async ({ params, body }, _req, res) => {
    res.json(await figures.setResultHue(ctx, params.groupId, params.resultId, body.hue));
  }));

  // --- By figure id: members of its group, or anyone when it is public ------------------------

  // SVG routes take `text` (outline or editable) besides the render query.
  const queryOf = (format: (typeof RENDER_FORMATS)[number]) => (format === 'svg' ? svgRenderQuery : renderQuery);

  for (const format of RENDER_FORMATS) {
    r.get(`/figures/:figureId/render.${format}`, optionalUser(ctx), anonymousRenders, handle({ params: figureIdParams, query: queryOf(format) }, async ({ params, query }, req, res) => {
      const out = await renders.renderForCaller(ctx, params.figureId, req.user?.id ?? null, { format, ...query });
      // What is drawn depends on who asks: no shared cache may keep it.
      sendRender(res, out, 'private, no-cache', query.download === '1');
    }));
  }

  r.get('/figures/:figureId/export.csv', optionalUser(ctx), handle({ params: figureIdParams, query: exportQuery }, async ({ params, query }, req, res) => {
    sendExport(res, await renders.exportFigure(ctx, params.figureId, req.user?.id ?? null, 'csv', query.version));
  }));

  r.get('/figures/:figureId/caption.txt', optionalUser(ctx), handle({ params: figureIdParams, query: exportQuery }, async ({ params, query }, req, res) => {
    sendExport(res, await renders.exportFigure(ctx, params.figureId, req.user?.id ?? null, 'caption', query.version));
  }));

  // --- Public figures, whoever asks ----------------------------------------------------------

  r.get('/public/figures', handle({ query: publicFigureListQuery }, async ({ query }, _req, res) => {
    res.json(await figures.listPublic(ctx, query));
  }));

  r.get('/public/figures/:figureId', handle({ params: figureIdParams }, async ({ params }, _req, res) => {
    res.json(await figures.getPublicDetail(ctx, params.figureId));
  }));

  for (const format of RENDER_FORMATS) {
    r.get(`/public/figures/:figureId/render.${format}`, anonymousRenders, handle({ params: figureIdParams, query: queryOf(format) }, async ({ params, query }, _req, res) => {
      sendRender(res, await renders.renderPublic(ctx, params.figureId, { format, ...query }), 'public, max-age=60', query.download === '1');
    }));
  }

  // --- The typesetter, for the composer's live preview ---------------------------------------

  r.post('/typeset', requireUser(ctx), handle({ body: typesetRequestSchema }, async ({ body }, _req, res) => {
    const glyphs = typesetLabels(body.labels);
    const answer: TypesetResponse = { glyphs: Object.fromEntries(glyphs) };
    res.json(answer);
  }));

  return r;
}
