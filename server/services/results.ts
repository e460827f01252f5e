import { randomBytes } from 'node:crypto';
import { can, type GroupRole } from '../../shared/access';
import { curveToCsv } from '../../shared/curves/csv';
import { contoursToCsv, planeToCsv } from '../../shared/curves/plane';
import type { Plane } from '../../shared/schemas/plane';
import type {
  ResultDetail,
  ResultListQuery,
  ResultPage,
  ResultState,
  ResultVersion,
  Theory,
  UpdateDraftInput,
  VersionMeta,
} from '../../shared/schemas/results';
import { versionSearchText } from '../../shared/search';
import { exclusionOrProblem } from '../../shared/stats/exclusion';
import * as q from '../../db/queries/results';
import * as notices from './result-notices';
import { scanOfVersion } from '../../db/queries/scans';
import type { Ctx } from '../context';
import type { Executor } from '../../db/client';
import { AppError, conflict, forbidden, notFound } from '../lib/errors';
import { safeFileName, slugify } from '../../shared/slug';
import * as storage from './storage';
import {
  assertCurveValid,
  assertPlaneValid,
  canonicalCurve,
  canonicalMeta,
  canonicalPlane,
  canonicalTheory,
  contoursFileOf,
  contoursOf,
  limitFileOf,
  planeFileOf,
  storedBytesOf,
  type NormalizedVersion,
} from './result-upload';

/**
 * The results registry's rules: versions are numbered under a lock on the result, only drafts
 * change, publishing supersedes the previous published version, retraction keeps the version
 * readable with its reason, and every stored byte is counted toward the group's storage.
 */

export type Actor = { id: string; role: GroupRole };
type ListQuery = Required<Pick<ResultListQuery, 'sort' | 'page' | 'pageSize'>> & Omit<ResultListQuery, 'sort' | 'page' | 'pageSize'>;

const SLUG_SUFFIX_LENGTH = 5;

function newSlug(title: string): string {
  const suffix = Array.from(randomBytes(SLUG_SUFFIX_LENGTH), (b) => 'abcdefghijklmnopqrstuvwxyz0123456789'[b % 36]).join('');
  return `${slugify(title, { fallback: 'result', max: 80 - SLUG_SUFFIX_LENGTH - 1 })}-${suffix}`;
}

const immutable = (version: number, state: ResultState) =>
  new AppError(
    409,
    'immutable',
    state === 'published'
      ? `Version ${version} is published and cannot change; create a new version`
      : `Version ${version} is ${state} and cannot change; create a new version`,
  );

/**
 * The columns of a version from its provenance and numbers (the meta keys are column names): a
 * curve with its theory, or a plane with the contour lines derived from it now (stored, so reads
 * and downloads never recompute them).
 */
function versionColumns(v: { meta: VersionMeta; curve: NormalizedVersion['curve']; theory: Theory | null; plane?: Plane | null }) {
  const meta = canonicalMeta(v.meta);
  const common = { ...meta, searchText: versionSearchText(meta) };
  if (v.plane) {
    const plane = canonicalPlane(v.plane);
    return { ...common, curve: null, theory: null, plane, planeContours: contoursOf(plane, meta.quantity) };
  }
  if (!v.curve) throw new Error('a version has a curve or a plane');
  return { ...common, curve: canonicalCurve(v.curve), theory: canonicalTheory(v.theory), plane: null, planeContours: null };
}

/** Bytes of a version's columns (as `versionColumns` made them) plus its uploaded file. */
const bytesOfColumns = (meta: VersionMeta, c: ReturnType<typeof versionColumns>, sourceBytes: number) =>
  storedBytesOf({ meta, curve: c.curve, theory: c.theory, plane: c.plane, planeContours: c.planeContours, sourceBytes });

const metaOf = (row: q.VersionRow): VersionMeta => canonicalMeta({ ...row, quantityUnit: row.quantityUnit as VersionMeta['quantityUnit'] });

/**
 * Excluded ranges against the stored theory curve (which is in the version's own unit), or why
 * there are none.
 */
export function exclusionOf(curve: NormalizedVersion['curve'], theory: Theory | null, quantity: VersionMeta['quantity']): ResultVersion['exclusion'] {
  if (!curve) return { ranges: null, problem: 'This result is over two parameters: its excluded region is bounded by its contour lines' };
  return exclusionOrProblem(curve, theory, quantity);
}

function toVersion(ctx: Ctx, row: q.VersionRow): ResultVersion {
  const curve = row.curve;
  const theory = row.theory ?? null;
  return {
    resultId: row.resultId,
    slug: row.slug,
    groupId: row.groupId,
    groupName: row.groupName,
    isPublic: row.isPublic,
    version: row.version,
    state: row.state,
    changeNote: row.changeNote,
    createdBy: row.createdByName,
    createdAt: row.createdAt.toISOString(),
    publishedAt: row.publishedAt?.toISOString() ?? null,
    retractionReason: row.retractionReason,
    meta: metaOf(row),
    curve,
    theory,
    plane: row.plane ?? null,
    planeContours: row.planeContours ?? null,
    exclusion: exclusionOf(curve, theory, row.quantity as VersionMeta['quantity']),
    permalink: row.state === 'draft' ? null : `${ctx.env.PUBLIC_URL}/r/${row.slug}/v${row.version}`,
    sourceFile: row.sourceName !== null && row.sourceBytes !== null ? { name: row.sourceName, bytes: row.sourceBytes } : null,
    fromScan: null,
    inputs: null,
    newerVersion: null,
  };
}

function toPage(rows: Awaited<ReturnType<typeof q.listResults>>, query: ListQuery): ResultPage {
  return {
    items: rows.items.map((r) => ({ ...r, updatedAt: r.updatedAt.toISOString() })),
    total: rows.total,
    page: query.page,
    pageSize: query.pageSize,
  };
}

// ---------------------------------------------------------------------------------------------
// Reads

export async function listInGroup(ctx: Ctx, groupId: string, query: ListQuery): Promise<ResultPage> {
  return ctx.reads.get(`list:group:${groupId}:${JSON.stringify(query)}`, async () =>
    toPage(await q.listResults(ctx.db, { kind: 'group', groupId }, { ...query, groupId: undefined }), query),
  );
}

/**
 * Results the group may build on (figure layers, derived results): its own in any state and other
 * groups' public ones without drafts, each at its newest version the group may pin (the `pinning`
 * reader of the visibility rule). The layer picker lists only these.
 */
export async function listPinnable(ctx: Ctx, groupId: string, query: ListQuery): Promise<ResultPage> {
  return ctx.reads.get(`list:pinning:${groupId}:${JSON.stringify(query)}`, async () =>
    toPage(await q.listResults(ctx.db, { kind: 'pinning', groupId }, { ...query, groupId: undefined }), query),
  );
}

/** Results the caller may see: their groups' (any state) and public ones (no drafts). */
export async function listVisible(ctx: Ctx, userId: string | null, query: ListQuery): Promise<ResultPage> {
  return ctx.reads.get(`list:user:${userId ?? '-'}:${JSON.stringify(query)}`, async () => toPage(await q.listResults(ctx.db, { kind: 'user', userId }, query), query));
}

/** Public results (open versions only), with the signed-in list's filters but no group or state choice. */
export async function listPublic(ctx: Ctx, query: Omit<ListQuery, 'groupId' | 'state'>): Promise<ResultPage> {
  const full: ListQuery = { ...query, groupId: undefined, state: undefined };
  return ctx.reads.get(`list:public:${JSON.stringify(full)}`, async () => toPage(await q.listResults(ctx.db, { kind: 'public' }, full), full));
}

export async function getDetail(ctx: Ctx, groupId: string, resultId: string): Promise<ResultDetail> {
  const r = await q.getResultInGroup(ctx.db, groupId, resultId);
  if (!r) throw notFound('Result');
  const versions = await q.listVersions(ctx.db, groupId, resultId);
  return {
    ...r,
    versions: versions.map((v) => ({
      ...v,
      createdAt: v.createdAt.toISOString(),
      publishedAt: v.publishedAt?.toISOString() ?? null,
    })),
  };
}

async function versionRow(ctx: Ctx, groupId: string, resultId: string, version: number) {
  const row = await q.getVersion(ctx.db, groupId, resultId, version);
  if (!row) throw notFound(`Version ${version} of this result`);
  return row;
}

/** A version as the group's members see it: with the scan that computed it and its points' warnings. */
export async function getVersion(ctx: Ctx, groupId: string, resultId: string, version: number): Promise<ResultVersion> {
  const [row, scan, inputs] = await Promise.all([versionRow(ctx, groupId, resultId, version), scanOfVersion(ctx.db, groupId, resultId, version), q.listVersionInputs(ctx.db, groupId, resultId, version)]);
  const v = toVersion(ctx, row);
  if (inputs.length) v.inputs = inputs;
  if (scan) {
    v.fromScan = {
      scanId: scan.id,
      ...(scan.combination ? { combination: scan.combination } : {}),
      points: scan.points.map((p) => ({ index: p.index, x: p.x, warnings: p.warnings ?? [], error: p.error ? `${p.error.field}: ${p.error.reason}` : null })),
    };
  }
  return v;
}

/**
 * A version by its permanent link; 404 (revealing nothing) when the caller may not see it. A
 * version with a newer published one the caller may see names it (`newerVersion`).
 */
export async function getByLink(ctx: Ctx, viewer: q.Viewer, slug: string, version: number): Promise<ResultVersion> {
  return ctx.reads.get(`link:${JSON.stringify(viewer)}:${slug}:${version}`, async () => {
    const [row, newer] = await Promise.all([q.getVersionByLink(ctx.db, viewer, slug, version), q.newerPublishedVersion(ctx.db, viewer, slug, version)]);
    if (!row) throw notFound('Result');
    return { ...toVersion(ctx, row), newerVersion: newer ?? null };
  });
}

/**
 * `/r/<slug>`: the result's current version, i.e. the newest published one the caller may see.
 * 404 `not_published` (saying so) when the caller may see the result but none of its versions is
 * published; 404 as for any unknown link otherwise.
 */
export async function getLatestByLink(ctx: Ctx, viewer: q.Viewer, slug: string): Promise<ResultVersion> {
  const latest = await ctx.reads.get(`latest:${JSON.stringify(viewer)}:${slug}`, () => q.getLatestPublishedByLink(ctx.db, viewer, slug));
  if (latest.published === undefined) {
    if (latest.anyVisible) throw new AppError(404, 'not_published', 'This result has no published version yet (only drafts, or every version was retracted)');
    throw notFound('Result');
  }
  return getByLink(ctx, viewer, slug, latest.published);
}

/**
 * Writes the search text of versions stored before the column existed (server start), with the
 * same normaliser the writes use. Returns how many were filled.
 */
export async function fillSearchText(ctx: Ctx, batch = 500): Promise<number> {
  let filled = 0;
  for (;;) {
    const rows = await q.versionsWithoutSearchText(ctx.db, batch);
    for (const r of rows) await q.setSearchText(ctx.db, r.id, versionSearchText(r));
    filled += rows.length;
    if (rows.length < batch) return filled;
  }
}

export type ExportFile = { fileName: string; contentType: string; body: string };

/** A CSV header from a parameter's name and unit; the uploader's text, so kept from reading as a spreadsheet formula. */
function csvHeader(name: string, unit: string): string {
  const h = unit ? `${name} [${unit}]` : name;
  return /^[=+\-@\t\r]/.test(h) ? `'${h}` : h;
}

/** What a download holds: the points (a curve, or a plane's points), or a plane's contour lines. */
export type ExportWhat = 'points' | 'contours';

function exportOf(row: q.VersionRow, format: 'csv' | 'json', what: ExportWhat = 'points'): ExportFile {
  const meta = metaOf(row);
  const x = csvHeader(meta.parameterName, meta.parameterUnit);
  if (what === 'contours') {
    if (!row.plane || !row.planeContours) throw new AppError(404, 'not_found', `Version ${row.version} of this result is over one parameter: it has no contour lines (download its points)`);
    const fileName = safeFileName(`${row.slug}-contours`, format, { version: row.version, fallback: 'result' });
    if (format === 'json') return { fileName, contentType: 'application/json; charset=utf-8', body: JSON.stringify(contoursFileOf(meta, row.plane, row.planeContours)) };
    return { fileName, contentType: 'text/csv; charset=utf-8', body: contoursToCsv(row.planeContours, { x, y: csvHeader(row.plane.yName, row.plane.yUnit) }) };
  }
  const fileName = safeFileName(row.slug, format, { version: row.version, fallback: 'result' });
  if (row.plane) {
    if (format === 'json') return { fileName, contentType: 'application/json; charset=utf-8', body: JSON.stringify(planeFileOf(meta, row.plane)) };
    return { fileName, contentType: 'text/csv; charset=utf-8', body: planeToCsv(row.plane, { x, y: csvHeader(row.plane.yName, row.plane.yUnit) }) };
  }
  const curve = row.curve!;
  if (format === 'json') {
    return { fileName, contentType: 'application/json; charset=utf-8', body: JSON.stringify(limitFileOf(meta, curve, row.theory ?? null)) };
  }
  return { fileName, contentType: 'text/csv; charset=utf-8', body: curveToCsv(curve, row.theory ?? null, { x }) };
}

export async function exportVersion(ctx: Ctx, groupId: string, resultId: string, version: number, format: 'csv' | 'json', what: ExportWhat = 'points'): Promise<ExportFile> {
  return exportOf(await versionRow(ctx, groupId, resultId, version), format, what);
}

export async function exportByLink(ctx: Ctx, viewer: q.Viewer, slug: string, version: number, format: 'csv' | 'json', what: ExportWhat = 'points'): Promise<ExportFile> {
  const row = await q.getVersionByLink(ctx.db, viewer, slug, version);
  if (!row) throw notFound('Result');
  return exportOf(row, format, what);
}

// ---------------------------------------------------------------------------------------------
// Writes

/**
 * Work of a caller inside the writing transaction (the upload's `Idempotency-Key`): `before` runs
 * first, before the registry takes any lock (so it may wait for a concurrent twin and abort by
 * throwing), `after` last, with what was written.
 */
export type WriteHooks = {
  before?: (tx: Executor) => Promise<void>;
  after?: (tx: Executor, written: { resultId: string; version: number }) => Promise<void>;
};

/**
 * Creates a result with version 1 as a draft. `opts.slug` is for the demo seed's fixed links;
 * `opts.admitted` counts a scan's draft without a quota check (its room was reserved when the scan started).
 */
export async function createResult(
  ctx: Ctx,
  groupId: string,
  actor: Actor,
  input: NormalizedVersion,
  opts: { slug?: string; admitted?: boolean; hooks?: WriteHooks } = {},
): Promise<ResultVersion> {
  const resultId = await ctx.db.transaction(async (tx) => {
    await opts.hooks?.before?.(tx);
    const columns = versionColumns(input);
    const storedBytes = bytesOfColumns(input.meta, columns, input.source?.data.length ?? 0);
    await storage.reserve(tx, groupId, storedBytes, 'this upload', { admitted: opts.admitted });
    let result: Awaited<ReturnType<typeof q.insertResult>>;
    for (let attempt = 0; !result; attempt++) {
      if (attempt >= 5) throw new Error('could not find a free result slug');
      if (opts.slug && attempt > 0) throw conflict(`The link name ${opts.slug} is taken`);
      result = await q.insertResult(tx, { groupId, slug: opts.slug ?? newSlug(input.meta.title), createdBy: actor.id });
    }
    await q.insertVersion(tx, {
      resultId: result.id,
      version: 1,
      ...columns,
      changeNote: '',
      sourceName: input.source?.name ?? null,
      sourceData: input.source?.data ?? null,
      storedBytes,
      createdBy: actor.id,
    });
    await opts.hooks?.after?.(tx, { resultId: result.id, version: 1 });
    return result.id;
  });
  const stored = await getVersion(ctx, groupId, resultId, 1);
  await notices.draftAwaitsReview(ctx, actor, stored);
  return stored;
}

/** A new draft version with the next number; concurrent calls queue on the result's row lock. */
export async function addVersion(
  ctx: Ctx,
  groupId: string,
  actor: Actor,
  resultId: string,
  input: NormalizedVersion & { changeNote: string },
  opts: { admitted?: boolean; hooks?: WriteHooks } = {},
): Promise<ResultVersion> {
  const version = await ctx.db.transaction(async (tx) => {
    await opts.hooks?.before?.(tx);
    if (!(await q.lockResult(tx, groupId, resultId))) throw notFound('Result');
    const columns = versionColumns(input);
    const storedBytes = bytesOfColumns(input.meta, columns, input.source?.data.length ?? 0);
    await storage.reserve(tx, groupId, storedBytes, 'this upload', { admitted: opts.admitted });
    const n = await q.takeNextVersion(tx, groupId, resultId);
    await q.insertVersion(tx, {
      resultId,
      version: n,
      ...columns,
      changeNote: input.changeNote,
      sourceName: input.source?.name ?? null,
      sourceData: input.source?.data ?? null,
      storedBytes,
      createdBy: actor.id,
    });
    await opts.hooks?.after?.(tx, { resultId, version: n });
    return n;
  });
  const stored = await getVersion(ctx, groupId, resultId, version);
  await notices.draftAwaitsReview(ctx, actor, stored);
  return stored;
}

/** Locks the result and reads one of its versions (404 when either is not in the group). */
async function lockedVersion(tx: Parameters<Parameters<Ctx['db']['transaction']>[0]>[0], groupId: string, resultId: string, version: number) {
  if (!(await q.lockResult(tx, groupId, resultId))) throw notFound('Result');
  const row = await q.getVersion(tx, groupId, resultId, version);
  if (!row) throw notFound(`Version ${version} of this result`);
  return row;
}

/** Changes a draft; any other state is immutable. */
export async function updateDraft(ctx: Ctx, groupId: string, resultId: string, version: number, patch: UpdateDraftInput & { meta?: VersionMeta; plane?: Plane }): Promise<ResultVersion> {
  await ctx.db.transaction(async (tx) => {
    const row = await lockedVersion(tx, groupId, resultId, version);
    if (row.state !== 'draft') throw immutable(version, row.state);
    const meta = patch.meta ? canonicalMeta(patch.meta) : metaOf(row);
    let columns: ReturnType<typeof versionColumns>;
    if (row.plane) {
      // A draft stays over the parameters it has: a plane takes a plane, a curve a curve.
      const wrong = (['curve', 'theory'] as const).find((k) => patch[k] !== undefined);
      if (wrong) throw new AppError(400, 'validation_failed', `Invalid body: ${wrong} does not apply: version ${version} is over two parameters (send plane)`, [{ field: wrong, message: `does not apply: version ${version} is over two parameters (send plane)` }]);
      const plane = patch.plane ?? row.plane;
      // A changed quantity changes the rules for the theory too (σ×B only).
      if (patch.plane !== undefined || patch.meta !== undefined) assertPlaneValid(plane, meta.quantity);
      columns = versionColumns({ meta, curve: null, theory: null, plane });
    } else {
      if (patch.plane !== undefined) throw new AppError(400, 'validation_failed', `Invalid body: plane does not apply: version ${version} is over one parameter (send curve)`, [{ field: 'plane', message: `does not apply: version ${version} is over one parameter (send curve)` }]);
      const curve = patch.curve ?? row.curve!;
      const theory = patch.theory === undefined ? (row.theory ?? null) : canonicalTheory(patch.theory);
      if (patch.curve !== undefined || patch.theory !== undefined) assertCurveValid(curve, theory);
      columns = versionColumns({ meta, curve, theory });
    }
    const storedBytes = bytesOfColumns(meta, columns, row.sourceBytes ?? 0);
    await storage.resize(tx, groupId, row.storedBytes, storedBytes, 'this change');
    await q.updateVersion(tx, groupId, resultId, version, {
      ...columns,
      ...(patch.changeNote !== undefined ? { changeNote: patch.changeNote } : {}),
      storedBytes,
    });
    await q.touchResult(tx, groupId, resultId);
  });
  return getVersion(ctx, groupId, resultId, version);
}

async function refuseIfUsedByFigures(tx: Parameters<typeof q.listFiguresUsing>[0], target: { groupId: string; resultId: string; version?: number }) {
  const figures = await q.listFiguresUsing(tx, target);
  if (figures.length) {
    const names = figures.map((f) => `"${f.name}"`).join(', ');
    throw new AppError(409, 'in_use', `${target.version ? `Version ${target.version}` : 'This result'} is used by ${figures.length === 1 ? 'the figure' : 'the figures'} ${names}; remove it from ${figures.length === 1 ? 'that figure' : 'those figures'} first`);
  }
}

/** Deletes a draft version (the result too when it was its only version). */
export async function deleteDraft(ctx: Ctx, groupId: string, resultId: string, version: number): Promise<void> {
  await ctx.db.transaction(async (tx) => {
    const row = await lockedVersion(tx, groupId, resultId, version);
    if (row.state !== 'draft') throw immutable(version, row.state);
    await refuseIfUsedByFigures(tx, { groupId, resultId, version });
    await q.deleteVersion(tx, groupId, resultId, version);
    await storage.release(tx, groupId, row.storedBytes);
    if ((await q.versionStates(tx, groupId, resultId)).length === 0) await q.deleteResult(tx, groupId, resultId);
    else await q.touchResult(tx, groupId, resultId);
  });
}

/**
 * Deletes a result with all its versions. Analysts may delete results that were never published;
 * publishing roles any result. A result that a figure uses is kept.
 */
export async function deleteResult(ctx: Ctx, groupId: string, actor: Actor, resultId: string): Promise<void> {
  await ctx.db.transaction(async (tx) => {
    if (!(await q.lockResult(tx, groupId, resultId))) throw notFound('Result');
    const versions = await q.versionStates(tx, groupId, resultId);
    if (!can(actor.role, 'result.publish') && versions.some((v) => v.state !== 'draft')) {
      throw forbidden(`Your role in this group (${actor.role}) can delete only results that were never published; ask a curator or owner`);
    }
    await refuseIfUsedByFigures(tx, { groupId, resultId });
    await q.deleteResult(tx, groupId, resultId);
    await storage.release(tx, groupId, versions.reduce((sum, v) => sum + v.storedBytes, 0));
  });
}

/**
 * Publishes a draft: the previously published version becomes superseded in the same
 * transaction. A draft older than an already released version cannot be published (the newest
 * released version is the current one).
 */
export async function publish(ctx: Ctx, groupId: string, actor: Pick<Actor, 'id'>, resultId: string, version: number, opts: { public?: boolean }): Promise<ResultVersion> {
  await ctx.db.transaction(async (tx) => {
    const row = await lockedVersion(tx, groupId, resultId, version);
    if (row.state !== 'draft') throw conflict(`Version ${version} is ${row.state}; only drafts can be published`);
    const newer = (await q.versionStates(tx, groupId, resultId)).filter((v) => v.version > version && v.state !== 'draft');
    if (newer.length) {
      throw conflict(`Version ${newer[0]!.version} is newer and already ${newer[0]!.state}; create a new version from this draft's data instead`);
    }
    await q.supersedePublished(tx, groupId, resultId);
    await q.updateVersion(tx, groupId, resultId, version, { state: 'published', publishedAt: new Date() });
    if (opts.public !== undefined) await q.setResultPublic(tx, groupId, resultId, opts.public);
    else await q.touchResult(tx, groupId, resultId);
  });
  const done = await getVersion(ctx, groupId, resultId, version);
  await notices.versionDecided(ctx, actor.id, done, { kind: 'published', isPublic: done.isPublic });
  return done;
}

/** Retracts a published or superseded version; the reason is shown to everyone who opens it. */
export async function retract(ctx: Ctx, groupId: string, actor: Pick<Actor, 'id'>, resultId: string, version: number, reason: string): Promise<ResultVersion> {
  await ctx.db.transaction(async (tx) => {
    const row = await lockedVersion(tx, groupId, resultId, version);
    if (row.state === 'draft') throw conflict(`Version ${version} is a draft and was never published; delete it instead`);
    if (row.state === 'retracted') throw conflict(`Version ${version} is already retracted`);
    await q.updateVersion(tx, groupId, resultId, version, { state: 'retracted', retractedAt: new Date(), retractionReason: reason });
    await q.touchResult(tx, groupId, resultId);
  });
  const done = await getVersion(ctx, groupId, resultId, version);
  await notices.versionDecided(ctx, actor.id, done, { kind: 'retracted', reason });
  return done;
}

export async function setVisibility(ctx: Ctx, groupId: string, resultId: string, isPublic: boolean): Promise<ResultDetail> {
  if (!(await q.getResultInGroup(ctx.db, groupId, resultId))) throw notFound('Result');
  await q.setResultPublic(ctx.db, groupId, resultId, isPublic);
  return getDetail(ctx, groupId, resultId);
}
