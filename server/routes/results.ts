import { Router, type Request, type Response } from 'express';
import { groupParams } from '../../shared/schemas/groups';
import {
  latestLinkParams,
  permalinkParams,
  publicResultListQuery,
  publishSchema,
  resultListQuery,
  resultParams,
  retractSchema,
  updateDraftSchema,
  IDEMPOTENCY_KEY_HEADER,
  uploadHeadersSchema,
  versionParams,
  visibilitySchema,
  type UploadedVersion,
} from '../../shared/schemas/results';
import { optionalUser, requireGroup } from '../access';
import type { Ctx } from '../context';
import { AppError } from '../lib/errors';
import { handle } from '../lib/validate';
import { multipartUpload, rawJsonBody } from '../lib/upload';
import { fromFileUpload, fromJsonUpload, type FileUpload } from '../services/result-upload';
import { requestFingerprint, uploadOnce, type RequestContents, type UploadAnswer } from '../services/upload-idempotency';
import * as results from '../services/results';
import * as combine from '../services/combine';
import { createCombinationSchema, createEnvelopeSchema, previewEnvelopeSchema } from '../../shared/schemas/combine';

const groupListQuery = resultListQuery.omit({ groupId: true });
const MAX_FILE_NAME = 200;

/** The multipart parts of a request (multer put them on req.file and req.body), or undefined for JSON. */
function fileUploadOf(req: Request): FileUpload | undefined {
  if (!req.is('multipart/form-data')) return undefined;
  const fields = (req.body ?? {}) as Record<string, unknown>;
  const f = req.file;
  return { fields, file: f ? { name: (f.originalname || 'upload').slice(0, MAX_FILE_NAME), data: f.buffer } : undefined };
}

/** The upload's `Idempotency-Key`, checked (400 naming the header), or undefined. */
function idempotencyKeyOf(req: Request): string | undefined {
  const parsed = uploadHeadersSchema.safeParse({ 'idempotency-key': req.headers['idempotency-key'] });
  if (parsed.success) return parsed.data['idempotency-key'];
  const message = parsed.error.issues[0]?.message ?? 'is not valid';
  throw new AppError(400, 'validation_failed', `Invalid header: ${IDEMPOTENCY_KEY_HEADER} ${message}`, [{ field: IDEMPOTENCY_KEY_HEADER, message }]);
}

/** What an upload request sent, for its fingerprint. */
function contentsOf(req: Request, file: FileUpload | undefined): RequestContents {
  return file ? { multipart: file } : { json: rawJsonBody(req) ?? Buffer.from(JSON.stringify(req.body ?? {})) };
}

function sendUpload(res: Response, answer: UploadAnswer) {
  if (answer.replayed) res.setHeader('Idempotent-Replayed', 'true');
  res.status(answer.status).json({ ...answer.version, warnings: answer.warnings } satisfies UploadedVersion);
}

function sendExport(res: Response, file: results.ExportFile) {
  res.setHeader('Content-Type', file.contentType);
  res.attachment(file.fileName);
  res.setHeader('Cache-Control', 'no-store');
  res.send(file.body);
}

/**
 * The results registry: group routes (members, by role), the caller-aware list and permanent
 * links (anyone; what they see depends on who they are), and the public routes (public results
 * only, whoever asks).
 */
export function resultsRouter(ctx: Ctx) {
  const r = Router();
  const upload = multipartUpload(ctx.env.UPLOAD_LIMIT_BYTES);
  const actor = (req: Request): results.Actor => ({ id: req.user!.id, role: req.groupRole! });

  // --- Group routes -------------------------------------------------------------------------

  r.get('/groups/:groupId/results', requireGroup(ctx, 'group.read'), handle({ params: groupParams, query: groupListQuery }, async ({ params, query }, _req, res) => {
    res.json(await results.listInGroup(ctx, params.groupId, query));
  }));

  // A best-expected envelope of other result versions, stored as a draft of the group.
  r.post('/groups/:groupId/envelopes/preview', requireGroup(ctx, 'result.write'), handle({ params: groupParams, body: previewEnvelopeSchema }, async ({ params, body }, _req, res) => {
    res.json(await combine.previewEnvelope(ctx, params.groupId, body));
  }));

  r.post('/groups/:groupId/envelopes', requireGroup(ctx, 'result.write'), handle({ params: groupParams, body: createEnvelopeSchema }, async ({ params, body }, req, res) => {
    res.status(201).json(await combine.createEnvelope(ctx, params.groupId, actor(req), body));
  }));

  // A joint combination of scan-computed results, started as a scan (201), or its plan only (dry run, 200).
  r.post('/groups/:groupId/combinations', requireGroup(ctx, 'result.write'), handle({ params: groupParams, body: createCombinationSchema }, async ({ params, body }, req, res) => {
    const answer = await combine.createCombination(ctx, params.groupId, actor(req), body);
    res.status(answer.dryRun ? 200 : 201).json(answer);
  }));

  // What the group may pin in its figures: its own results (any state), other groups' public ones.
  r.get('/groups/:groupId/pinnable-results', requireGroup(ctx, 'group.read'), handle({ params: groupParams, query: groupListQuery }, async ({ params, query }, _req, res) => {
    res.json(await results.listPinnable(ctx, params.groupId, query));
  }));

  r.post('/groups/:groupId/results', requireGroup(ctx, 'result.write'), upload, handle({ params: groupParams }, async ({ params }, req, res) => {
    const file = fileUploadOf(req);
    const userId = req.user!.id;
    const answer = await uploadOnce(
      ctx,
      params.groupId,
      userId,
      idempotencyKeyOf(req),
      () => requestFingerprint(userId, { kind: 'result' }, contentsOf(req, file)),
      async () => (file ? fromFileUpload(file, { changeNote: false }) : fromJsonUpload(req.body, { changeNote: false })),
      (input, hooks) => results.createResult(ctx, params.groupId, actor(req), input, { hooks }),
    );
    sendUpload(res, answer);
  }));

  r.get('/groups/:groupId/results/:resultId', requireGroup(ctx, 'group.read'), handle({ params: resultParams }, async ({ params }, _req, res) => {
    res.json(await results.getDetail(ctx, params.groupId, params.resultId));
  }));

  r.patch('/groups/:groupId/results/:resultId', requireGroup(ctx, 'result.publish'), handle({ params: resultParams, body: visibilitySchema }, async ({ params, body }, _req, res) => {
    res.json(await results.setVisibility(ctx, params.groupId, params.resultId, body.public));
  }));

  r.delete('/groups/:groupId/results/:resultId', requireGroup(ctx, 'result.write'), handle({ params: resultParams }, async ({ params }, req, res) => {
    await results.deleteResult(ctx, params.groupId, actor(req), params.resultId);
    res.status(204).end();
  }));

  r.post('/groups/:groupId/results/:resultId/versions', requireGroup(ctx, 'result.write'), upload, handle({ params: resultParams }, async ({ params }, req, res) => {
    const file = fileUploadOf(req);
    const userId = req.user!.id;
    const answer = await uploadOnce(
      ctx,
      params.groupId,
      userId,
      idempotencyKeyOf(req),
      () => requestFingerprint(userId, { kind: 'version', resultId: params.resultId }, contentsOf(req, file)),
      async (): Promise<Parameters<typeof results.addVersion>[4]> => {
        const { changeNote = '', ...parsed } = file ? await fromFileUpload(file, { changeNote: true }) : fromJsonUpload(req.body, { changeNote: true });
        return { ...parsed, changeNote };
      },
      (input, hooks) => results.addVersion(ctx, params.groupId, actor(req), params.resultId, input, { hooks }),
    );
    sendUpload(res, answer);
  }));

  r.get('/groups/:groupId/results/:resultId/versions/:version', requireGroup(ctx, 'group.read'), handle({ params: versionParams }, async ({ params }, _req, res) => {
    res.json(await results.getVersion(ctx, params.groupId, params.resultId, params.version));
  }));

  r.patch('/groups/:groupId/results/:resultId/versions/:version', requireGroup(ctx, 'result.write'), handle({ params: versionParams, body: updateDraftSchema }, async ({ params, body }, _req, res) => {
    res.json(await results.updateDraft(ctx, params.groupId, params.resultId, params.version, body));
  }));

  r.delete('/groups/:groupId/results/:resultId/versions/:version', requireGroup(ctx, 'result.write'), handle({ params: versionParams }, async ({ params }, _req, res) => {
    await results.deleteDraft(ctx, params.groupId, params.resultId, params.version);
    res.status(204).end();
  }));

  r.post('/groups/:groupId/results/:resultId/versions/:version/publish', requireGroup(ctx, 'result.publish'), handle({ params: versionParams, body: publishSchema }, async ({ params, body }, req, res) => {
    res.json(await results.publish(ctx, params.groupId, actor(req), params.resultId, params.version, body));
  }));

  r.post('/groups/:groupId/results/:resultId/versions/:version/retract', requireGroup(ctx, 'result.publish'), handle({ params: versionParams, body: retractSchema }, async ({ params, body }, req, res) => {
    res.json(await results.retract(ctx, params.groupId, actor(req), params.resultId, params.version, body.reason));
  }));

  // Downloads: the points (`export.*`, a curve or a plane's points) and a two-parameter version's contour lines (`contours.*`).
  for (const format of ['csv', 'json'] as const) {
    r.get(`/groups/:groupId/results/:resultId/versions/:version/export.${format}`, requireGroup(ctx, 'group.read'), handle({ params: versionParams }, async ({ params }, _req, res) => {
      sendExport(res, await results.exportVersion(ctx, params.groupId, params.resultId, params.version, format));
    }));
    r.get(`/groups/:groupId/results/:resultId/versions/:version/contours.${format}`, requireGroup(ctx, 'group.read'), handle({ params: versionParams }, async ({ params }, _req, res) => {
      sendExport(res, await results.exportVersion(ctx, params.groupId, params.resultId, params.version, format, 'contours'));
    }));
  }

  // --- Everything the caller may see (members: their groups; everyone: public results) ------

  r.get('/results', optionalUser(ctx), handle({ query: resultListQuery }, async ({ query }, req, res) => {
    res.json(await results.listVisible(ctx, req.user?.id ?? null, query));
  }));

  // `/r/<slug>`: the current (newest published) version the caller may see.
  r.get('/results/:slug/latest', optionalUser(ctx), handle({ params: latestLinkParams }, async ({ params }, req, res) => {
    res.json(await results.getLatestByLink(ctx, { kind: 'user', userId: req.user?.id ?? null }, params.slug));
  }));

  r.get('/results/:slug/v:version', optionalUser(ctx), handle({ params: permalinkParams }, async ({ params }, req, res) => {
    res.json(await results.getByLink(ctx, { kind: 'user', userId: req.user?.id ?? null }, params.slug, params.version));
  }));

  // --- Public results, whoever asks ----------------------------------------------------------

  r.get('/public/results', handle({ query: publicResultListQuery }, async ({ query }, _req, res) => {
    res.json(await results.listPublic(ctx, query));
  }));

  r.get('/public/results/:slug/latest', handle({ params: latestLinkParams }, async ({ params }, _req, res) => {
    res.json(await results.getLatestByLink(ctx, { kind: 'public' }, params.slug));
  }));

  r.get('/public/results/:slug/v:version', handle({ params: permalinkParams }, async ({ params }, _req, res) => {
    res.json(await results.getByLink(ctx, { kind: 'public' }, params.slug, params.version));
  }));

  for (const format of ['csv', 'json'] as const) {
    r.get(`/public/results/:slug/v:version/export.${format}`, handle({ params: permalinkParams }, async ({ params }, _req, res) => {
      sendExport(res, await results.exportByLink(ctx, { kind: 'public' }, params.slug, params.version, format));
    }));
    r.get(`/public/results/:slug/v:version/contours.${format}`, handle({ params: permalinkParams }, async ({ params }, _req, res) => {
      sendExport(res, await results.exportByLink(ctx, { kind: 'public' }, params.slug, params.version, format, 'contours'));
    }));
  }

  return r;
}
