/**
 * The API's operations, in one list: what the reference at /api/docs and /api/docs.json is built
 * from (server/api-docs/document.ts). Every route of server/app.ts under /api has an entry here
 * and every entry is a route; tests/api/api-docs.test.ts walks the Express router and fails on
 * either kind of difference.
 *
 * Paths are in OpenAPI form, relative to the server's `/api` (`/groups/{groupId}/results`).
 * Parameters and bodies are the zod schemas the routes validate with (shared/schemas); the only
 * schemas made here describe multipart forms and better-auth's own routes, which have none.
 */
import { z } from 'zod';
import type { GroupAction } from '../../shared/access';
import { createCombinationSchema, createEnvelopeSchema, previewEnvelopeSchema } from '../../shared/schemas/combine';
import { checkoutSchema, invoiceParams, invoiceSchema, planViewSchema } from '../../shared/plans';
import { requestPasswordResetSchema, resendVerificationSchema, resetPasswordSchema, signInSchema, signUpSchema } from '../../shared/schemas/auth';
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
} from '../../shared/schemas/figure-views';
import { createFigureSchema, figureParams, RENDER_FORMATS, renderQuery, saveFigureSchema, svgRenderQuery } from '../../shared/schemas/figures';
import {
  changeRoleSchema,
  createGroupSchema,
  groupParams,
  groupSchema,
  invitationParams,
  invitationPreviewSchema,
  invitationSchema,
  invitationTokenParams,
  inviteSchema,
  mailMessageSchema,
  memberParams,
  memberSchema,
  meSchema,
  updateGroupSchema,
} from '../../shared/schemas/groups';
import {
  createResultSchema,
  createTokenSchema,
  createVersionSchema,
  latestLinkParams,
  permalinkParams,
  publicResultListQuery,
  publishSchema,
  resultListQuery,
  resultParams,
  retractSchema,
  tokenParams,
  updateDraftSchema,
  uploadHeadersSchema,
  versionMetaSchema,
  versionParams,
  visibilitySchema,
} from '../../shared/schemas/results';
import { createScanSchema, rerunPointSchema, scanOptionsSchema, scanParams, scanPointParams } from '../../shared/schemas/scans';
import { mappingSchema } from '../services/result-upload';

export type HttpMethod = 'get' | 'post' | 'put' | 'patch' | 'delete';

/** Who may call an operation. */
export type Access =
  /** Anyone; credentials are not read. */
  | { kind: 'anyone' }
  /** Anyone; a signed-in caller (session or token) may see more. An unknown or revoked token is a 401. */
  | { kind: 'optional'; note?: string }
  /** Any signed-in user: session cookie or API token. */
  | { kind: 'user' }
  /** A signed-in session only: API tokens are refused (a token cannot mint or revoke tokens). */
  | { kind: 'session' }
  /** Members of the group in the path whose role allows the action (shared/access.ts). */
  | { kind: 'group'; action: GroupAction }
  /** The payment provider: a signed request, no session. */
  | { kind: 'provider' };

export type Tag = { name: string; description: string };

export const TAGS: Tag[] = [
  { name: 'Service', description: 'Health, server limits and this reference.' },
  { name: 'Account', description: 'Sign-up, sign-in and mailed links (better-auth, under /api/auth), and who you are.' },
  { name: 'Groups', description: 'Groups, their members and invitations.' },
  { name: 'API tokens', description: 'Personal tokens for scripts and pipelines; managed from a signed-in session.' },
  { name: 'Results', description: 'The results registry: uploads, versions, publishing, exports, permanent links.' },
  { name: 'Scans', description: 'Grids of counting models computed by the job queue into draft results.' },
  { name: 'Figures', description: 'Figure specs and versions, renders and exports, house style and hues.' },
  { name: 'Billing', description: 'Plan, storage use and invoices; checkout and the billing portal.' },
  { name: 'Development', description: 'Only on development servers (not mounted in production).' },
];

export type Body =
  | { json: z.ZodType; multipart?: z.ZodObject; multipartNote?: string }
  | { multipart: z.ZodObject; multipartNote?: string; json?: undefined }
  /** Bytes taken as they are (the payment webhook's signed JSON). */
  | { raw: string; description: string };

export type Answer = {
  status: number;
  description: string;
  /** JSON answer described by a zod schema. */
  schema?: z.ZodType;
  /** Another content type (downloads, renders); described in words. */
  contentType?: string;
  headers?: Record<string, string>;
};

export type ApiOperation = {
  method: HttpMethod;
  /** OpenAPI form, relative to /api. */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  access: Access;
  params?: z.ZodObject;
  query?: z.ZodObject;
  headers?: z.ZodObject;
  body?: Body;
  ok: Answer;
  /**
   * Refusals beyond the ones every operation of its access gets (400 on bad input, 401/403/404):
   * the one error shape with this description, or an answer of its own.
   */
  errors?: Record<number, string | Answer>;
  /** Mounted only outside production (`devTools`). */
  devOnly?: boolean;
  /** A route of better-auth, documented here; the router walk of our routes does not see it. */
  auth?: boolean;
};

// --- Multipart forms (the fields server/lib/upload.ts and the upload services read) ---------

const fileField = (description: string) => z.string().meta({ format: 'binary', description });

const resultUploadForm = z.object({
  file: fileField('The CSV file (comma, semicolon or tab; UTF-8; columns recognised by their names; a second parameter column makes it a result over two parameters) or the project\'s JSON file ("format": "bandwright-limit-result/1", with `curve` or `plane`).'),
  meta: versionMetaSchema.optional().meta({ description: 'The provenance, as JSON text. Required with a CSV file; with the project\'s JSON file it replaces the file\'s own.' }),
  mapping: mappingSchema.optional().meta({ description: 'JSON text: role → column number from 0 (e.g. {"x":0,"observed":2}), when the headers do not say.' }),
  theoryLabel: z.string().max(120).optional().meta({ description: 'The name of the file\'s theory curve (e.g. "V′ benchmark (NLO)"), shown in figure legends; replaces a name the file gives.' }),
  yName: z.string().max(60).optional().meta({ description: 'For a CSV with two parameter columns: the second parameter\'s name (else read from its header, e.g. "m_chi" of "m_chi [GeV]").' }),
  yUnit: z.string().max(20).optional().meta({ description: 'For a CSV with two parameter columns: the second parameter\'s unit (else read from its header\'s brackets).' }),
});
const versionUploadForm = resultUploadForm.extend({ changeNote: createVersionSchema.shape.changeNote });
const uploadFormNote = 'Parts `meta` and `mapping` are JSON text. One file, at most 20 fields of up to 256 KB each.';

const scanUploadForm = z.object({
  file: fileField('The scan as CSV (a row per grid point) or the project\'s scan JSON ("format": "bandwright-scan/1").'),
  meta: versionMetaSchema.meta({ description: 'The provenance of the draft the scan becomes, as JSON text.' }),
  options: scanOptionsSchema.meta({ description: 'How every point is computed, as JSON text.' }),
  resultId: createScanSchema.shape.resultId.meta({ description: 'Add the scan as a new draft version of this result.' }),
});

// --- Answers ----------------------------------------------------------------------------------

const json = (status: number, description: string, schema?: z.ZodType): Answer => ({ status, description, ...(schema ? { schema } : {}) });
const noContent = (description: string): Answer => ({ status: 204, description });
const file = (contentType: string, description: string): Answer => ({ status: 200, description, contentType, headers: { 'Content-Disposition': 'attachment; filename="…"' } });

const UPLOAD_ERRORS: Record<number, string> = {
  402: '`read_only`: the group\'s plan lapsed and it holds more than the free quota.',
  413: '`too_large` (over UPLOAD_LIMIT_BYTES, see GET /limits) or `quota_exceeded` (the group\'s storage).',
  422: '`idempotency_key_reused`: the same Idempotency-Key with a different request.',
};
const UPLOAD_400 = '`invalid_file` or `validation_failed`: every problem of the file, fields or body, by line and column (the first 100 listed).';
const RENDER_DESC =
  'Query: `version` (default the latest), `size` (a preset instead of the spec\'s), `dpi` (PNG only, default 300), `download=1` (answered as an attachment to save, `Content-Disposition: attachment`; else inline), `text` (SVG only: `outline`, the default, draws labels as glyph outlines; `editable` as SVG text in the shipped fonts, for vector editors). Outside the figure\'s group only the figure\'s own size and PNGs at 72, 96, 150, 300 or 600 dpi are offered. Layers the caller may not see are left out and named in the `X-Figure-Notes` header.';
const RENDER_TYPES: Record<(typeof RENDER_FORMATS)[number], string> = { svg: 'image/svg+xml', pdf: 'application/pdf', png: 'image/png' };

/** better-auth's verification link (its own route: no zod schema of ours checks it). */
const verifyEmailQuery = z.object({ token: z.string().meta({ description: 'The token from the mailed link.' }) });
const authUser = z.object({ user: z.object({ id: z.string(), name: z.string(), email: z.string(), emailVerified: z.boolean() }) });

export const OPERATIONS: ApiOperation[] = [
  // --- Service ---
  { method: 'get', path: '/health', tag: 'Service', summary: 'Is the server up and does it reach its database?', access: { kind: 'anyone' }, ok: json(200, '`{ ok: true, db: "up" }`', z.object({ ok: z.literal(true), db: z.literal('up') })), errors: { 503: json(503, '`{ ok: false, db: "down" }`: the database does not answer.', z.object({ ok: z.literal(false), db: z.literal('down') })) } },
  { method: 'get', path: '/limits', tag: 'Service', summary: 'The server\'s limits a client checks before sending (largest upload).', access: { kind: 'anyone' }, ok: json(200, '`{ uploadLimitBytes }`', z.object({ uploadLimitBytes: z.number().int() })) },
  { method: 'get', path: '/docs', tag: 'Service', summary: 'This reference as a web page.', access: { kind: 'anyone' }, ok: { status: 200, description: 'An HTML page.', contentType: 'text/html' } },
  { method: 'get', path: '/docs.json', tag: 'Service', summary: 'This reference as an OpenAPI 3.1 document.', access: { kind: 'anyone' }, ok: json(200, 'The OpenAPI document.') },

  // --- Account (better-auth) ---
  { method: 'post', path: '/auth/sign-up/email', tag: 'Account', auth: true, summary: 'Create an account; a verification link is mailed to the address.', access: { kind: 'anyone' }, body: { json: signUpSchema }, ok: json(200, 'The new user; the session cookie is set.', authUser), errors: { 422: 'An account with this address exists.', 429: '`rate_limited`: too many attempts from this address.' } },
  { method: 'post', path: '/auth/sign-in/email', tag: 'Account', auth: true, summary: 'Sign in with e-mail and password.', access: { kind: 'anyone' }, body: { json: signInSchema }, ok: json(200, 'The user; the session cookie is set.', authUser), errors: { 401: 'Wrong e-mail or password.', 429: '`rate_limited`: too many attempts from this address.' } },
  { method: 'post', path: '/auth/sign-out', tag: 'Account', auth: true, summary: 'End the session of this cookie.', access: { kind: 'session' }, ok: json(200, '`{ success: true }`; the cookie is cleared.') },
  { method: 'get', path: '/auth/verify-email', tag: 'Account', auth: true, summary: 'Confirm an address with the token of the mailed link.', access: { kind: 'anyone' }, query: verifyEmailQuery, ok: json(200, 'The address is verified.'), errors: { 401: '`token_expired` or `invalid_token`.' } },
  { method: 'post', path: '/auth/send-verification-email', tag: 'Account', auth: true, summary: 'Mail a new verification link (signed in: only for your own unverified address).', access: { kind: 'optional' }, body: { json: resendVerificationSchema }, ok: json(200, 'The same answer for every address.'), errors: { 429: '`rate_limited`.' } },
  { method: 'post', path: '/auth/request-password-reset', tag: 'Account', auth: true, summary: 'Mail a password reset link (the same answer whether or not the address has an account).', access: { kind: 'anyone' }, body: { json: requestPasswordResetSchema }, ok: json(200, 'The same answer for every address.'), errors: { 429: '`rate_limited`.' } },
  { method: 'post', path: '/auth/reset-password', tag: 'Account', auth: true, summary: 'Set a new password with the token of the mailed link; every session of the account ends.', access: { kind: 'anyone' }, body: { json: resetPasswordSchema }, ok: json(200, 'The password is changed.'), errors: { 400: '`invalid_token`: used, expired or made up; or a password that breaks the rules.', 429: '`rate_limited`.' } },
  { method: 'get', path: '/me', tag: 'Account', summary: 'Who you are and your groups with your role in each.', access: { kind: 'user' }, ok: json(200, 'You and your groups.', meSchema) },

  // --- Groups ---
  { method: 'get', path: '/groups', tag: 'Groups', summary: 'Your groups with your role in each.', access: { kind: 'user' }, ok: json(200, '`{ groups }`', z.object({ groups: z.array(groupSchema) })) },
  { method: 'post', path: '/groups', tag: 'Groups', summary: 'Create a group; you become its owner.', access: { kind: 'user' }, body: { json: createGroupSchema }, ok: json(201, 'The new group.', groupSchema) },
  { method: 'get', path: '/groups/{groupId}', tag: 'Groups', summary: 'One group.', access: { kind: 'group', action: 'group.read' }, params: groupParams, ok: json(200, 'The group.', groupSchema) },
  { method: 'patch', path: '/groups/{groupId}', tag: 'Groups', summary: 'Rename a group or change its description.', access: { kind: 'group', action: 'group.manage' }, params: groupParams, body: { json: updateGroupSchema }, ok: json(200, 'The group as changed.', groupSchema) },
  { method: 'delete', path: '/groups/{groupId}', tag: 'Groups', summary: 'Delete a group with everything in it.', access: { kind: 'group', action: 'group.manage' }, params: groupParams, ok: noContent('Deleted.') },
  { method: 'get', path: '/groups/{groupId}/members', tag: 'Groups', summary: 'The members and their roles.', access: { kind: 'group', action: 'group.read' }, params: groupParams, ok: json(200, '`{ members }`', z.object({ members: z.array(memberSchema) })) },
  { method: 'patch', path: '/groups/{groupId}/members/{userId}', tag: 'Groups', summary: 'Change a member\'s role (curators: below owner, up to curator).', access: { kind: 'group', action: 'member.manage' }, params: memberParams, body: { json: changeRoleSchema }, ok: json(200, '`{ members }` as changed.', z.object({ members: z.array(memberSchema) })), errors: { 409: '`conflict`: the last owner cannot step down.' } },
  { method: 'delete', path: '/groups/{groupId}/members/{userId}', tag: 'Groups', summary: 'Remove a member, or leave the group (your own id: any member).', description: 'Removing someone else needs curator (or owner for an owner); the last owner cannot leave.', access: { kind: 'group', action: 'group.read' }, params: memberParams, ok: noContent('Removed.'), errors: { 403: '`forbidden`: your role may not remove this member.', 409: '`conflict`: the last owner cannot leave.' } },
  { method: 'get', path: '/groups/{groupId}/invitations', tag: 'Groups', summary: 'Open and past invitations.', access: { kind: 'group', action: 'member.manage' }, params: groupParams, ok: json(200, '`{ invitations }`', z.object({ invitations: z.array(invitationSchema) })) },
  { method: 'post', path: '/groups/{groupId}/invitations', tag: 'Groups', summary: 'Invite someone by e-mail with a role; the link is mailed.', access: { kind: 'group', action: 'member.manage' }, params: groupParams, body: { json: inviteSchema }, ok: json(201, 'The invitation.', invitationSchema), errors: { 409: '`conflict`: already a member or invited.' } },
  { method: 'delete', path: '/groups/{groupId}/invitations/{invitationId}', tag: 'Groups', summary: 'Revoke an invitation.', access: { kind: 'group', action: 'member.manage' }, params: invitationParams, ok: noContent('Revoked.') },
  { method: 'get', path: '/invitations/{token}', tag: 'Groups', summary: 'Whom an invitation link is for (anyone holding the link).', access: { kind: 'anyone' }, params: invitationTokenParams, ok: json(200, 'The group\'s name, the role and the address.', invitationPreviewSchema) },
  { method: 'post', path: '/invitations/{token}/accept', tag: 'Groups', summary: 'Accept an invitation addressed to you (needs a verified address).', access: { kind: 'user' }, params: invitationTokenParams, ok: json(200, 'The group joined.'), errors: { 403: '`email_unverified`, or `forbidden`: not your address.', 404: '`not_found`: no such invitation.', 409: '`conflict`: already accepted or revoked.', 410: '`expired`.' } },

  // --- API tokens ---
  { method: 'get', path: '/tokens', tag: 'API tokens', summary: 'Your tokens (names, prefixes, last use; never the secret).', access: { kind: 'session' }, ok: json(200, '`{ tokens: [{ id, name, prefix, createdAt, lastUsedAt }] }`') },
  { method: 'post', path: '/tokens', tag: 'API tokens', summary: 'Create a token; its secret is in this answer only.', access: { kind: 'session' }, body: { json: createTokenSchema }, ok: json(201, '`{ id, name, prefix, createdAt, lastUsedAt, token }`: the secret `bw_…`, shown once.') },
  { method: 'delete', path: '/tokens/{tokenId}', tag: 'API tokens', summary: 'Revoke one of your tokens.', access: { kind: 'session' }, params: tokenParams, ok: noContent('Revoked.') },

  // --- Results: group routes ---
  { method: 'get', path: '/groups/{groupId}/results', tag: 'Results', summary: 'The group\'s results in any state (search, filters, pages).', access: { kind: 'group', action: 'group.read' }, params: groupParams, query: resultListQuery.omit({ groupId: true }), ok: json(200, '`{ items, total, page, pageSize }`: each result with its newest version. Each row says `parameters` (1: a curve; 2: a plane, with `secondParameter: { name, unit }`, else null); `?parameters=1|2` keeps one sort.') },
  { method: 'post', path: '/groups/{groupId}/envelopes/preview', tag: 'Results', summary: 'The best-expected envelope as it would be stored, checked and computed but not stored: the builder\'s preview. The same refusals as building it (naming `inputs.N`).', access: { kind: 'group', action: 'result.write' }, params: groupParams, body: { json: previewEnvelopeSchema }, ok: json(200, '`{ meta, curve, theory, choice, inputs }`.') },
  { method: 'post', path: '/groups/{groupId}/envelopes', tag: 'Results', summary: 'Build the best-expected envelope of 2–20 result versions the group may use (its own, or other groups\' public ones) and store it as a draft result, or as a new version of `resultId`, with its inputs recorded. The answer adds `choice`: per curve point, the index of the input chosen there, the crossings and the stretches of each input.', access: { kind: 'group', action: 'result.write' }, params: groupParams, body: { json: createEnvelopeSchema }, ok: json(201, 'The stored draft version with `choice`.') },
  {
    method: 'post',
    path: '/groups/{groupId}/combinations',
    tag: 'Results',
    summary: 'Combine 2–10 result versions computed by scans as independent channels: at every parameter value all inputs have, their counting models side by side in one likelihood and one limit on a common μ, computed as a scan of the group (same queue, progress, cancel and draft).',
    description: 'Inputs follow the same rule as an envelope\'s (the group\'s own results, other groups\' public published versions) and must have stored counting models. Nuisance parameters with the same name are one parameter unless listed in `unlinked` (then one per input, named with the input index). The limit is in σ×B when every input gives the same nominal σ×B at every common value, else on μ (said in `combination.quantityNote` and the draft\'s notes). With `dryRun: true` only the plan is answered: each input\'s nuisance parameters and missing parameter values, the common grid, the shared names. The scan is bounded like any scan (`SCAN_COST_LIMIT`, the plan\'s queue room).',
    access: { kind: 'group', action: 'result.write' },
    params: groupParams,
    body: { json: createCombinationSchema },
    ok: json(201, 'The started scan with `combination` (the plan, also stored with the scan and shown on its draft). A dry run answers 200 `{ dryRun: true, combination }`.'),
    errors: { 413: '`scan_too_large` / `scan_over_plan`: the combined scan is over the cost limit or the plan.', 429: '`scan_queue_full`: the group\'s queue is full.', 503: '`no_queue`: the job queue is not running.' },
  },
  { method: 'get', path: '/groups/{groupId}/pinnable-results', tag: 'Results', summary: 'What the group may pin in its figures: its own results in any state and other groups\' public ones, each at its newest version the group may use (search, filters, pages).', access: { kind: 'group', action: 'group.read' }, params: groupParams, query: resultListQuery.omit({ groupId: true }), ok: json(200, '`{ items, total, page, pageSize }`. Each row says `parameters` (1: a curve; 2: a plane, with `secondParameter: { name, unit }`, else null); `?parameters=1|2` keeps one sort. The figure composer asks for the sort its kind draws.') },
  {
    method: 'post',
    path: '/groups/{groupId}/results',
    tag: 'Results',
    summary: 'Upload a new result: version 1, a draft.',
    description: 'A file with its provenance (multipart) or the numbers as JSON: `curve` (and `theory`) for one parameter, or, in place of them, `plane` for two (`createPlaneResultSchema` / `createPlaneVersionSchema` of shared/schemas/results.ts: `{ meta, plane: { yName, yUnit, x, y, observed, expected, theory } }`, points x[k], y[k] on a rectangular grid of at most 200 × 200, holes allowed; its contour lines are computed and stored with it; the schema below is the one-parameter body). Nothing is stored unless all of it is valid; problems name the field (`plane.x.17`) or the file\'s line and column. With `Idempotency-Key`, a retry of the same request gets the first answer (`Idempotent-Replayed: true`) and stores nothing new.',
    access: { kind: 'group', action: 'result.write' },
    params: groupParams,
    headers: uploadHeadersSchema,
    body: { json: createResultSchema, multipart: resultUploadForm, multipartNote: uploadFormNote },
    ok: { ...json(201, 'The stored version with its `resultId`, `slug`, excluded ranges and `warnings` (columns left unused).'), headers: { 'Idempotent-Replayed': '`true` on a replayed answer' } },
    errors: { 400: UPLOAD_400, ...UPLOAD_ERRORS },
  },
  { method: 'get', path: '/groups/{groupId}/results/{resultId}', tag: 'Results', summary: 'A result with all its versions.', access: { kind: 'group', action: 'group.read' }, params: resultParams, ok: json(200, 'The result and its version list.') },
  { method: 'patch', path: '/groups/{groupId}/results/{resultId}', tag: 'Results', summary: 'Make a result public or group-only.', access: { kind: 'group', action: 'result.publish' }, params: resultParams, body: { json: visibilitySchema }, ok: json(200, 'The result as changed.') },
  { method: 'delete', path: '/groups/{groupId}/results/{resultId}', tag: 'Results', summary: 'Delete a result with its versions.', access: { kind: 'group', action: 'result.write' }, params: resultParams, ok: noContent('Deleted.'), errors: { 409: '`in_use`: a figure pins one of its versions.' } },
  {
    method: 'post',
    path: '/groups/{groupId}/results/{resultId}/versions',
    tag: 'Results',
    summary: 'Upload a new version (a draft) of a result, saying what changed.',
    description: 'As the first upload (a curve or a plane), plus `changeNote`.',
    access: { kind: 'group', action: 'result.write' },
    params: resultParams,
    headers: uploadHeadersSchema,
    body: { json: createVersionSchema, multipart: versionUploadForm, multipartNote: uploadFormNote },
    ok: { ...json(201, 'The stored version with `warnings`.'), headers: { 'Idempotent-Replayed': '`true` on a replayed answer' } },
    errors: { 400: UPLOAD_400, ...UPLOAD_ERRORS },
  },
  { method: 'get', path: '/groups/{groupId}/results/{resultId}/versions/{version}', tag: 'Results', summary: 'One version: provenance, curve and theory with excluded ranges, or plane with its contour lines.', access: { kind: 'group', action: 'group.read' }, params: versionParams, ok: json(200, 'The version.') },
  { method: 'patch', path: '/groups/{groupId}/results/{resultId}/versions/{version}', tag: 'Results', summary: 'Edit a draft (published versions never change).', access: { kind: 'group', action: 'result.write' }, params: versionParams, body: { json: updateDraftSchema }, ok: json(200, 'The draft as changed.'), errors: { 409: '`immutable`: not a draft.', 413: '`quota_exceeded`.' } },
  { method: 'delete', path: '/groups/{groupId}/results/{resultId}/versions/{version}', tag: 'Results', summary: 'Delete a draft.', access: { kind: 'group', action: 'result.write' }, params: versionParams, ok: noContent('Deleted.'), errors: { 409: '`immutable` (not a draft) or `in_use` (pinned by a figure).' } },
  { method: 'post', path: '/groups/{groupId}/results/{resultId}/versions/{version}/publish', tag: 'Results', summary: 'Publish a draft; the previously published version is superseded.', access: { kind: 'group', action: 'result.publish' }, params: versionParams, body: { json: publishSchema }, ok: json(200, 'The published version.'), errors: { 409: '`conflict`: not a draft, or a newer version is already published.' } },
  { method: 'post', path: '/groups/{groupId}/results/{resultId}/versions/{version}/retract', tag: 'Results', summary: 'Retract a published version with a reason shown to every reader.', access: { kind: 'group', action: 'result.publish' }, params: versionParams, body: { json: retractSchema }, ok: json(200, 'The retracted version.'), errors: { 409: '`conflict`: a draft, or already retracted.' } },
  { method: 'get', path: '/groups/{groupId}/results/{resultId}/versions/{version}/export.csv', tag: 'Results', summary: 'Download a version as CSV.', access: { kind: 'group', action: 'group.read' }, params: versionParams, ok: file('text/csv', 'The curve as CSV with its provenance in `#` lines.') },
  { method: 'get', path: '/groups/{groupId}/results/{resultId}/versions/{version}/export.json', tag: 'Results', summary: 'Download a version as the project\'s JSON file.', access: { kind: 'group', action: 'group.read' }, params: versionParams, ok: file('application/json', 'A `bandwright-limit-result/1` file (with `plane` for two parameters).') },
  { method: 'get', path: '/groups/{groupId}/results/{resultId}/versions/{version}/contours.csv', tag: 'Results', summary: 'Download the contour lines of a two-parameter version as CSV.', access: { kind: 'group', action: 'group.read' }, params: versionParams, ok: file('text/csv', 'One row per vertex: line, which (observed, expected, expected_minus_1sigma, …), closed, vertex, x, y.'), errors: { 404: 'Also for a version over one parameter (it has no contour lines).' } },
  { method: 'get', path: '/groups/{groupId}/results/{resultId}/versions/{version}/contours.json', tag: 'Results', summary: 'Download the contour lines of a two-parameter version as JSON.', access: { kind: 'group', action: 'group.read' }, params: versionParams, ok: file('application/json', 'A `bandwright-plane-contours/1` file: both parameters, the quantity and the lines.'), errors: { 404: 'Also for a version over one parameter (it has no contour lines).' } },

  // --- Results: what the caller may see, and public ---
  { method: 'get', path: '/results', tag: 'Results', summary: 'Results you may see: your groups\' in any state and every public one.', access: { kind: 'optional', note: 'Signed out: public results only.' }, query: resultListQuery, ok: json(200, '`{ items, total, page, pageSize }`. Each row says `parameters` (1: a curve; 2: a plane, with `secondParameter: { name, unit }`, else null); `?parameters=1|2` keeps one sort.') },
  { method: 'get', path: '/results/{slug}/latest', tag: 'Results', summary: 'The current version of a result: its newest published version you may see (the app\'s `/r/<slug>`).', access: { kind: 'optional', note: 'Signed out: public results only.' }, params: latestLinkParams, ok: json(200, 'The version, with `newerVersion: null`.'), errors: { 404: '`not_found`, or `not_published`: you may see the result but none of its versions is published.' } },
  { method: 'get', path: '/results/{slug}/v{version}', tag: 'Results', summary: 'A version by its permanent link.', access: { kind: 'optional', note: 'Members see their groups\' drafts; everyone sees public, published versions.' }, params: permalinkParams, ok: json(200, 'The version; `newerVersion` names a newer published version you may see.') },
  { method: 'get', path: '/public/results', tag: 'Results', summary: 'Public results (search, the filters and sort of the signed-in list, pages); published public results only.', access: { kind: 'anyone' }, query: publicResultListQuery, ok: json(200, '`{ items, total, page, pageSize }`. Each row says `parameters` (1: a curve; 2: a plane, with `secondParameter: { name, unit }`, else null); `?parameters=1|2` keeps one sort.') },
  { method: 'get', path: '/public/results/{slug}/latest', tag: 'Results', summary: 'The current version of a public result (its newest published version).', access: { kind: 'anyone' }, params: latestLinkParams, ok: json(200, 'The version.'), errors: { 404: '`not_found`, or `not_published`: the result is public but none of its versions is published.' } },
  { method: 'get', path: '/public/results/{slug}/v{version}', tag: 'Results', summary: 'A public version by its permanent link.', access: { kind: 'anyone' }, params: permalinkParams, ok: json(200, 'The version.') },
  { method: 'get', path: '/public/results/{slug}/v{version}/export.csv', tag: 'Results', summary: 'Download a public version as CSV.', access: { kind: 'anyone' }, params: permalinkParams, ok: file('text/csv', 'The curve as CSV.') },
  { method: 'get', path: '/public/results/{slug}/v{version}/export.json', tag: 'Results', summary: 'Download a public version as the project\'s JSON file.', access: { kind: 'anyone' }, params: permalinkParams, ok: file('application/json', 'A `bandwright-limit-result/1` file (with `plane` for two parameters).') },
  { method: 'get', path: '/public/results/{slug}/v{version}/contours.csv', tag: 'Results', summary: 'Download the contour lines of a public two-parameter version as CSV.', access: { kind: 'anyone' }, params: permalinkParams, ok: file('text/csv', 'One row per vertex, as the group route.'), errors: { 404: 'Also for a version over one parameter.' } },
  { method: 'get', path: '/public/results/{slug}/v{version}/contours.json', tag: 'Results', summary: 'Download the contour lines of a public two-parameter version as JSON.', access: { kind: 'anyone' }, params: permalinkParams, ok: file('application/json', 'A `bandwright-plane-contours/1` file.'), errors: { 404: 'Also for a version over one parameter.' } },

  // --- Scans ---
  { method: 'get', path: '/groups/{groupId}/scans', tag: 'Scans', summary: 'The group\'s scans with their progress.', access: { kind: 'group', action: 'group.read' }, params: groupParams, ok: json(200, '`{ scans }`') },
  {
    method: 'post',
    path: '/groups/{groupId}/scans',
    tag: 'Scans',
    summary:
      'Start a scan: a grid of counting models computed by the job queue into a draft result. Over two parameters when the points give `y` (JSON) or the CSV has a `y` column, named by `meta.yName`/`meta.yUnit`: the grid is checked as a two-parameter result (duplicates, off-grid points, one row, at most 200 × 200, at least half the cells; 400 naming `points.N.x`, `points` or the CSV line) and the draft is a plane with its contour lines; failed points are holes.',
    access: { kind: 'group', action: 'result.write' },
    params: groupParams,
    body: { json: createScanSchema, multipart: scanUploadForm, multipartNote: 'Parts `meta` and `options` are JSON text.' },
    ok: json(201, 'The queued scan.'),
    errors: { 413: '`scan_too_large`, `scan_over_plan`, `too_large` or `quota_exceeded`.', 429: '`scan_queue_full`: it fits once the group\'s queue drains.' },
  },
  { method: 'get', path: '/groups/{groupId}/scans/{scanId}', tag: 'Scans', summary: 'A scan\'s progress: points, tasks, retries, time left.', access: { kind: 'group', action: 'group.read' }, params: scanParams, ok: json(200, 'The scan with its points.') },
  { method: 'post', path: '/groups/{groupId}/scans/{scanId}/cancel', tag: 'Scans', summary: 'Cancel a scan; the points done so far become the draft.', access: { kind: 'group', action: 'result.write' }, params: scanParams, ok: json(200, 'The scan as cancelled.'), errors: { 409: '`finished`: the scan has ended.' } },
  { method: 'get', path: '/groups/{groupId}/scans/{scanId}/points/{index}', tag: 'Scans', summary: 'One grid point\'s diagnostics: CLs curve, μ̂, fitted nuisance parameters.', access: { kind: 'group', action: 'group.read' }, params: scanPointParams, ok: json(200, 'The point.') },
  {
    method: 'post',
    path: '/groups/{groupId}/scans/{scanId}/points/{index}/rerun',
    tag: 'Scans',
    summary: 'Rerun one point of an ended pseudo-experiment scan with more pseudo-experiments: a new scan whose other points are copied as computed; its draft becomes a new version of the same result.',
    access: { kind: 'group', action: 'result.write' },
    params: scanPointParams,
    body: { json: rerunPointSchema },
    ok: json(201, 'The new scan, queued (a two-parameter scan keeps every point\'s y).'),
    errors: { 409: '`running`: the scan has not ended; `not_pseudo_experiments`: an asymptotic scan.', 413: '`quota_exceeded`.', 429: '`scan_queue_full`: it fits once the group\'s queue drains.' },
  },
  { method: 'get', path: '/groups/{groupId}/scans/{scanId}/inputs.json', tag: 'Scans', summary: 'Download a scan\'s inputs (points and options) as JSON.', access: { kind: 'group', action: 'group.read' }, params: scanParams, ok: file('application/json', 'A `bandwright-scan/1` file.') },

  // --- Figures: group routes ---
  { method: 'get', path: '/groups/{groupId}/figures', tag: 'Figures', summary: 'The group\'s figures.', access: { kind: 'group', action: 'group.read' }, params: groupParams, ok: json(200, 'The figures.') },
  { method: 'post', path: '/groups/{groupId}/figures', tag: 'Figures', summary: 'Create a figure from a spec (version 1).', access: { kind: 'group', action: 'figure.write' }, params: groupParams, body: { json: createFigureSchema }, ok: json(201, 'The figure.'), errors: { 422: '`label_too_large`: a label cannot fit the page.' } },
  { method: 'get', path: '/groups/{groupId}/figures/{figureId}', tag: 'Figures', summary: 'A figure: its latest spec, layers and version list.', access: { kind: 'group', action: 'group.read' }, params: figureParams, ok: json(200, 'The figure.') },
  { method: 'put', path: '/groups/{groupId}/figures/{figureId}', tag: 'Figures', summary: 'Save a new version of a figure.', access: { kind: 'group', action: 'figure.write' }, params: figureParams, body: { json: saveFigureSchema }, ok: json(200, 'The figure.'), errors: { 422: '`label_too_large`.' } },
  { method: 'patch', path: '/groups/{groupId}/figures/{figureId}', tag: 'Figures', summary: 'Make a figure public or group-only.', access: { kind: 'group', action: 'figure.write' }, params: figureParams, body: { json: figureVisibilitySchema }, ok: json(200, 'The figure.') },
  { method: 'delete', path: '/groups/{groupId}/figures/{figureId}', tag: 'Figures', summary: 'Delete a figure with its versions and renders.', access: { kind: 'group', action: 'figure.write' }, params: figureParams, ok: noContent('Deleted.') },
  { method: 'get', path: '/groups/{groupId}/figures/{figureId}/versions/{version}', tag: 'Figures', summary: 'One version of a figure.', access: { kind: 'group', action: 'group.read' }, params: figureVersionParams, ok: json(200, 'The version.') },
  { method: 'post', path: '/groups/{groupId}/figures/{figureId}/duplicate', tag: 'Figures', summary: 'Copy a figure.', access: { kind: 'group', action: 'figure.write' }, params: figureParams, body: { json: duplicateFigureSchema }, ok: json(201, 'The copy.') },
  { method: 'post', path: '/groups/{groupId}/figures/{figureId}/outreach', tag: 'Figures', summary: 'Make the plain-language (outreach) copy of a figure.', access: { kind: 'group', action: 'figure.write' }, params: figureParams, body: { json: outreachFigureSchema }, ok: json(201, 'The copy.') },
  { method: 'post', path: '/groups/{groupId}/layer-data', tag: 'Figures', summary: 'The data and hues of a spec\'s layers, saved or not (the composer\'s preview).', access: { kind: 'group', action: 'group.read' }, params: groupParams, body: { json: layerDataRequestSchema }, ok: json(200, '`{ layers }`') },
  { method: 'get', path: '/groups/{groupId}/style', tag: 'Figures', summary: 'The group\'s house style.', access: { kind: 'group', action: 'group.read' }, params: groupParams, ok: json(200, '`{ style, updatedAt }`') },
  { method: 'put', path: '/groups/{groupId}/style', tag: 'Figures', summary: 'Set the group\'s house style.', access: { kind: 'group', action: 'result.publish' }, params: groupParams, body: { json: houseStyleBodySchema }, ok: json(200, '`{ style, updatedAt }`') },
  { method: 'put', path: '/groups/{groupId}/results/{resultId}/hue', tag: 'Figures', summary: 'Set the hue a result is drawn with in the group\'s figures.', access: { kind: 'group', action: 'figure.write' }, params: hueParams, body: { json: hueSchema }, ok: json(200, '`{ resultId, hue }`') },

  // --- Figures by id, public figures, the typesetter ---
  ...RENDER_FORMATS.map(
    (format): ApiOperation => ({
      method: 'get',
      path: `/figures/{figureId}/render.${format}`,
      tag: 'Figures',
      summary: `Draw a figure as ${format.toUpperCase()}.`,
      description: RENDER_DESC,
      access: { kind: 'optional', note: 'Members of the figure\'s group; anyone for a public figure (the public variant). Otherwise 404, signed out too. Signed-out callers are rate-limited.' },
      params: figureIdParams,
      query: format === 'svg' ? svgRenderQuery : renderQuery,
      ok: { status: 200, description: `The drawing (\`X-Render-Cache\`: hit, miss or uncached).`, contentType: RENDER_TYPES[format] },
      errors: { 429: '`rate_limited` (signed out).', 500: '`render_failed`.' },
    }),
  ),
  { method: 'get', path: '/figures/{figureId}/export.csv', tag: 'Figures', summary: 'The data a figure draws, as CSV.', access: { kind: 'optional', note: 'As the renders.' }, params: figureIdParams, query: renderQuery.pick({ version: true }), ok: file('text/csv', 'The CSV.') },
  { method: 'get', path: '/figures/{figureId}/caption.txt', tag: 'Figures', summary: 'A caption for a figure, as text.', access: { kind: 'optional', note: 'As the renders.' }, params: figureIdParams, query: renderQuery.pick({ version: true }), ok: file('text/plain', 'The caption.') },
  { method: 'get', path: '/public/figures', tag: 'Figures', summary: 'Public figures (search and pages).', access: { kind: 'anyone' }, query: publicFigureListQuery, ok: json(200, '`{ items, total, page, pageSize }`') },
  { method: 'get', path: '/public/figures/{figureId}', tag: 'Figures', summary: 'A public figure\'s page: title, group, caption, the result versions it pins that the public may see (with permanent links).', access: { kind: 'anyone' }, params: figureIdParams, ok: json(200, '`{ id, title, theme, groupName, version, savedAt, permalink, caption, pins, hiddenLayers }`.') },
  ...RENDER_FORMATS.map(
    (format): ApiOperation => ({
      method: 'get',
      path: `/public/figures/{figureId}/render.${format}`,
      tag: 'Figures',
      summary: `Draw a public figure as ${format.toUpperCase()} (the public variant).`,
      description: RENDER_DESC,
      access: { kind: 'anyone' },
      params: figureIdParams,
      query: format === 'svg' ? svgRenderQuery : renderQuery,
      ok: { status: 200, description: 'The drawing; may be cached by others for 60 s.', contentType: RENDER_TYPES[format] },
      errors: { 404: '`not_found`: no such public figure.', 429: '`rate_limited` (signed out).', 500: '`render_failed`.' },
    }),
  ),
  { method: 'post', path: '/typeset', tag: 'Figures', summary: 'Typeset labels (text with $…$ TeX) into glyph outlines, for a live preview.', access: { kind: 'user' }, body: { json: typesetRequestSchema }, ok: json(200, '`{ glyphs }` by label key.') },

  // --- Billing ---
  { method: 'get', path: '/groups/{groupId}/plan', tag: 'Billing', summary: 'The group\'s plan in force, storage use and the plans on offer.', access: { kind: 'group', action: 'group.read' }, params: groupParams, ok: json(200, 'The plan view.', planViewSchema) },
  { method: 'get', path: '/groups/{groupId}/invoices/{invoiceId}.pdf', tag: 'Billing', summary: 'One invoice of the group as a PDF, to file.', access: { kind: 'group', action: 'billing.manage' }, params: invoiceParams, ok: file('application/pdf', 'The invoice (the same bytes every time).') },
  { method: 'get', path: '/groups/{groupId}/invoices', tag: 'Billing', summary: 'The group\'s invoices.', access: { kind: 'group', action: 'billing.manage' }, params: groupParams, ok: json(200, '`{ invoices }`', z.object({ invoices: z.array(invoiceSchema) })) },
  { method: 'post', path: '/groups/{groupId}/billing/checkout', tag: 'Billing', summary: 'Start a checkout for the Institutional plan; answers the payment page\'s address.', access: { kind: 'group', action: 'billing.manage' }, params: groupParams, body: { json: checkoutSchema }, ok: json(200, '`{ url }`'), errors: { 409: '`already_subscribed`.', 502: 'The payment provider failed or cannot be reached.', 503: '`billing_unavailable`: no payment provider configured.' } },
  { method: 'post', path: '/groups/{groupId}/billing/portal', tag: 'Billing', summary: 'Open the payment provider\'s billing portal; answers its address.', access: { kind: 'group', action: 'billing.manage' }, params: groupParams, ok: json(200, '`{ url }`'), errors: { 409: '`no_billing_account`: the group never started a checkout.', 502: 'The payment provider failed or cannot be reached.', 503: '`billing_unavailable`.' } },
  {
    method: 'post',
    path: '/billing/webhook',
    tag: 'Billing',
    summary: 'Events from the payment provider (not for scripts).',
    description: 'Verified on its raw bytes with the `Stripe-Signature` header (300 s tolerance); a replayed event changes nothing.',
    access: { kind: 'provider' },
    body: { raw: 'application/json', description: 'The provider\'s signed event, as sent.' },
    ok: json(200, '`{ received: true, duplicate, applied }`: a replayed event answers `duplicate: true`.'),
    errors: { 400: '`invalid_signature` or `invalid_payload`.', 502: 'The provider could not be asked about the subscription; it sends the event again.' },
  },

  // --- Development ---
  { method: 'get', path: '/dev/inbox', tag: 'Development', summary: 'Your mail on a development server (the local mail fake).', access: { kind: 'user' }, devOnly: true, ok: json(200, '`{ messages }`', z.object({ messages: z.array(mailMessageSchema) })) },
];
