import { Router } from 'express';
import { groupParams } from '../../shared/schemas/groups';
import { rerunPointSchema, scanParams, scanPointParams } from '../../shared/schemas/scans';
import { safeFileName } from '../../shared/slug';
import { requireGroup } from '../access';
import type { Ctx } from '../context';
import { multipartUpload } from '../lib/upload';
import { handle } from '../lib/validate';
import * as scans from '../services/scans';

export function scansRouter(ctx: Ctx) {
  const r = Router();
  const upload = multipartUpload(ctx.env.UPLOAD_LIMIT_BYTES);

  r.get('/groups/:groupId/scans', requireGroup(ctx, 'group.read'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json({ scans: await scans.listScans(ctx, params.groupId) });
  }));

  // JSON body (createScanSchema) or multipart: file (scan CSV/JSON), meta and options as JSON text.
  r.post('/groups/:groupId/scans', requireGroup(ctx, 'result.write'), upload, handle({ params: groupParams }, async ({ params }, req, res) => {
    const request = req.file
      ? scans.scanFromUpload({ name: req.file.originalname, data: req.file.buffer }, req.body ?? {})
      : req.is('multipart/form-data')
        ? scans.scanFromUpload(undefined, req.body ?? {})
        : scans.scanFromJson(req.body);
    res.status(201).json(await scans.startScan(ctx, params.groupId, req.user!.id, request));
  }));

  r.get('/groups/:groupId/scans/:scanId', requireGroup(ctx, 'group.read'), handle({ params: scanParams }, async ({ params }, _req, res) => {
    res.json(await scans.getScan(ctx, params.groupId, params.scanId));
  }));

  r.post('/groups/:groupId/scans/:scanId/cancel', requireGroup(ctx, 'result.write'), handle({ params: scanParams }, async ({ params }, _req, res) => {
    res.json(await scans.cancelScan(ctx, params.groupId, params.scanId));
  }));

  r.get('/groups/:groupId/scans/:scanId/points/:index', requireGroup(ctx, 'group.read'), handle({ params: scanPointParams }, async ({ params }, _req, res) => {
    res.json(await scans.getPointDetail(ctx, params.groupId, params.scanId, params.index));
  }));

  // A new scan: the other points copied as done, this one queued with more pseudo-experiments.
  r.post('/groups/:groupId/scans/:scanId/points/:index/rerun', requireGroup(ctx, 'result.write'), handle({ params: scanPointParams, body: rerunPointSchema }, async ({ params, body }, req, res) => {
    res.status(201).json(await scans.rerunPoint(ctx, params.groupId, req.user!.id, params.scanId, params.index, body));
  }));

  r.get('/groups/:groupId/scans/:scanId/inputs.json', requireGroup(ctx, 'group.read'), handle({ params: scanParams }, async ({ params }, _req, res) => {
    const body = await scans.scanInputs(ctx, params.groupId, params.scanId);
    res.setHeader('Content-Disposition', `attachment; filename="${safeFileName(`scan-${params.scanId.slice(0, 8)}-inputs`, 'json')}"`);
    res.json(body);
  }));

  return r;
}
