import { and, eq } from 'drizzle-orm';
import request from 'supertest';
import { createApp } from '@/server/app';
import { apiTokens, billingAccounts, figures, groups, groupStyles, invoices, providerEvents, resultHues, results, resultVersions, scans } from '@/db/schema';
import { scanPoints, scanTasks } from '@/db/schema/scans';
import { startQueue } from '@/server/jobs/queue';
import { saveDraft } from '@/server/services/scans';
import { computeScan } from '@/shared/stats';
import { GROUP_ROLES, ROLE_RANK, type GroupRole } from '@/shared/access';
import { apiErrorSchema } from '@/shared/schemas/common';
import { uniqueEmail, verifyAddress, type Agent, type TestApp } from '../helpers/app';
import { giveCustomer, signedEvent, startBillingTestApp, type BillingTestApp } from '../helpers/billing';
import { apiRoutesOf, fillPath, type Method } from '../helpers/routes';
import { figureSpec as oneColumnSpec, makeFigure as makeFigureAs } from '../helpers/figures';
import {
  makeCrew,
  makeGroup,
  makeGroupWithRoles,
  makeInvitation,
  makePerson,
  makePlaneResult,
  makeResult,
  makeVersion,
  probe,
  publishVersion,
  sampleCurve,
  sampleMeta,
  uniqueGroupName,
  type Crew,
  type Person,
} from '../helpers/factories';

/**
 * The role × route matrix: every route of the JSON API (better-auth's /api/auth/* aside, tested in
 * auth.test.ts) with the least access it needs, called by every kind of caller. A second test walks
 * the Express router so that a route added without an entry here fails the suite.
 */

/** Who may call: anyone; any signed-in user; or members of the group with at least this role. */
type Access = 'anonymous' | 'signed-in' | GroupRole;
type CallerKind = GroupRole | 'non-member' | 'anonymous';
const CALLERS: CallerKind[] = [...GROUP_ROLES, 'non-member', 'anonymous'];

/** The shared people of this file; groups are made per check where a call changes state. */
type World = { t: TestApp; crew: Crew; target: Person; outsider: Person; host: Person; sharedGroupId: string };
type Caller = { kind: CallerKind; person?: Person };
type Prepared = {
  params: Record<string, string>;
  /** JSON body, or a string sent as is (with `headers` naming its type). */
  body?: object | string;
  headers?: Record<string, string>;
  /** For routes that change state: did the change happen? (must be true when allowed, false when refused) */
  effect?: () => Promise<boolean>;
};
type Entry = {
  method: Method;
  path: string;
  access: Access;
  /** The success status. */
  ok: number;
  /** An allowed call changes state, so every check gets fresh fixtures. */
  mutates: boolean;
  /** Mounted only outside production. */
  devOnly?: boolean;
  /**
   * What an anonymous caller gets when it is not 401: the figure routes by id answer 404 to
   * anyone who may not see the figure, so a private figure's existence is not revealed.
   */
  anonymous?: number;
  /** Builds the concrete params and a valid body for one check; `groupId` is the group under test. */
  prepare: (w: World, groupId: string, caller: Caller) => Promise<Prepared>;
};

const MATRIX: Entry[] = [
  { method: 'get', path: '/api/health', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  { method: 'get', path: '/api/limits', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  // The API reference (tests/api/api-docs.test.ts checks that it lists every route).
  { method: 'get', path: '/api/docs', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  { method: 'get', path: '/api/docs.json', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  { method: 'get', path: '/api/me', access: 'signed-in', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  { method: 'get', path: '/api/groups', access: 'signed-in', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  {
    method: 'post',
    path: '/api/groups',
    access: 'signed-in',
    ok: 201,
    mutates: true,
    prepare: async (w) => {
      const name = uniqueGroupName('Matrix New Group');
      return {
        params: {},
        body: { name, description: 'A fictional search' },
        effect: async () => (await w.t.ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.name, name))).length > 0,
      };
    },
  },
  { method: 'get', path: '/api/groups/:groupId', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'patch',
    path: '/api/groups/:groupId',
    access: 'owner',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const description = `changed ${Math.random()}`;
      return {
        params: { groupId },
        body: { description },
        effect: async () => {
          const [g] = await w.t.ctx.db.select({ d: groups.description }).from(groups).where(eq(groups.id, groupId));
          return g?.d === description;
        },
      };
    },
  },
  {
    method: 'delete',
    path: '/api/groups/:groupId',
    access: 'owner',
    ok: 204,
    mutates: true,
    prepare: async (w, groupId) => ({ params: { groupId }, effect: async () => !(await probe.groupExists(w.t, groupId)) }),
  },
  { method: 'get', path: '/api/groups/:groupId/members', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    // Target: another member, a viewer; a curator may change roles below owner.
    method: 'patch',
    path: '/api/groups/:groupId/members/:userId',
    access: 'curator',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => ({
      params: { groupId, userId: w.target.user.id },
      body: { role: 'editor' },
      effect: async () => (await probe.role(w.t, groupId, w.target.user.id)) === 'editor',
    }),
  },
  {
    // Removing another member (a viewer) needs curator; leaving the group oneself is any member's
    // right and is tested in groups.test.ts.
    method: 'delete',
    path: '/api/groups/:groupId/members/:userId',
    access: 'curator',
    ok: 204,
    mutates: true,
    prepare: async (w, groupId) => ({
      params: { groupId, userId: w.target.user.id },
      effect: async () => (await probe.role(w.t, groupId, w.target.user.id)) === undefined,
    }),
  },
  { method: 'get', path: '/api/groups/:groupId/invitations', access: 'curator', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'post',
    path: '/api/groups/:groupId/invitations',
    access: 'curator',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const email = uniqueEmail('matrix-invitee');
      return { params: { groupId }, body: { email, role: 'viewer' }, effect: () => probe.openInvitationFor(w.t, groupId, email) };
    },
  },
  {
    method: 'delete',
    path: '/api/groups/:groupId/invitations/:invitationId',
    access: 'curator',
    ok: 204,
    mutates: true,
    prepare: async (w, groupId) => {
      const inv = await makeInvitation(w.t, w.crew.owner, groupId);
      return { params: { groupId, invitationId: inv.id }, effect: async () => (await probe.invitationState(w.t, inv.id)) === 'revoked' };
    },
  },
  {
    // Whoever holds the link may see whom it is for.
    method: 'get',
    path: '/api/invitations/:token',
    access: 'anonymous',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => ({ params: { token: (await makeInvitation(w.t, w.crew.owner, groupId)).token } }),
  },
  {
    // Any signed-in user may accept an invitation addressed to them (group roles do not matter:
    // the invitation is to another group, whose owner is `host`).
    method: 'post',
    path: '/api/invitations/:token/accept',
    access: 'signed-in',
    ok: 200,
    mutates: true,
    prepare: async (w, _groupId, caller) => {
      const hostGroup = await makeGroup(w.t, w.host);
      // Accepting needs a verified address (tests/api/invitations.test.ts has the unverified case).
      if (caller.person) await verifyAddress(caller.person.agent);
      const inv = await makeInvitation(w.t, w.host, hostGroup, caller.person?.email ?? uniqueEmail('anon-invitee'), 'analyst');
      return {
        params: { token: inv.token },
        effect: async () =>
          caller.person ? (await probe.role(w.t, hostGroup, caller.person.user.id)) === 'analyst' : (await probe.invitationState(w.t, inv.id)) !== 'pending',
      };
    },
  },
  { method: 'get', path: '/api/dev/inbox', access: 'signed-in', ok: 200, mutates: false, devOnly: true, prepare: async () => ({ params: {} }) },

  // --- Results registry ---
  { method: 'get', path: '/api/groups/:groupId/results', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  { method: 'get', path: '/api/groups/:groupId/pinnable-results', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'post',
    path: '/api/groups/:groupId/results',
    access: 'analyst',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const title = uniqueGroupName('Matrix Result');
      return {
        params: { groupId },
        body: { meta: sampleMeta({ title }), curve: sampleCurve(3).curve },
        effect: async () => (await versionsOf(w, groupId)).some((v) => v.title === title),
      };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/envelopes',
    access: 'analyst',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const title = uniqueGroupName('Matrix Envelope');
      const other = await makeResult(w.crew.analyst, groupId, { meta: { title: uniqueGroupName('Matrix Envelope Input') } });
      return {
        params: { groupId },
        body: { title, inputs: [{ resultId: (await sharedResult(w, groupId)).resultId, version: 1 }, { resultId: other.resultId, version: 1 }] },
        effect: async () => (await versionsOf(w, groupId)).some((v) => v.title === title),
      };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/envelopes/preview',
    access: 'analyst',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => {
      const other = await makeResult(w.crew.analyst, groupId, { meta: { title: uniqueGroupName('Matrix Preview Input') } });
      return { params: { groupId }, body: { inputs: [{ resultId: (await sharedResult(w, groupId)).resultId, version: 1 }, { resultId: other.resultId, version: 1 }] } };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/combinations',
    access: 'analyst',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const title = uniqueGroupName('Matrix Combination');
      const inputs = [await computedScanResult(w, groupId, uniqueGroupName('Matrix Channel A')), await computedScanResult(w, groupId, uniqueGroupName('Matrix Channel B'))];
      return { params: { groupId }, body: { title, inputs }, effect: async () => scanTitled(w, groupId, title) };
    },
  },
  { method: 'get', path: '/api/groups/:groupId/results/:resultId', access: 'viewer', ok: 200, mutates: false, prepare: async (w, groupId) => ({ params: { groupId, resultId: (await sharedResult(w, groupId)).resultId } }) },
  {
    method: 'patch',
    path: '/api/groups/:groupId/results/:resultId',
    access: 'curator',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      return {
        params: { groupId, resultId: v.resultId },
        body: { public: true },
        effect: async () => (await w.t.ctx.db.select({ p: results.isPublic }).from(results).where(eq(results.id, v.resultId)))[0]?.p === true,
      };
    },
  },
  {
    // A result that was never published: analysts may delete it (publishing roles may delete any; see results-versions.test.ts).
    method: 'delete',
    path: '/api/groups/:groupId/results/:resultId',
    access: 'analyst',
    ok: 204,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      return { params: { groupId, resultId: v.resultId }, effect: async () => (await w.t.ctx.db.select().from(results).where(eq(results.id, v.resultId))).length === 0 };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/results/:resultId/versions',
    access: 'analyst',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      return {
        params: { groupId, resultId: v.resultId },
        body: { meta: sampleMeta(), curve: sampleCurve(3).curve, changeNote: 'Matrix version' },
        effect: async () => (await versionsOf(w, groupId)).some((x) => x.resultId === v.resultId && x.version === 2),
      };
    },
  },
  {
    method: 'get',
    path: '/api/groups/:groupId/results/:resultId/versions/:version',
    access: 'viewer',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => ({ params: { groupId, resultId: (await sharedResult(w, groupId)).resultId, version: '1' } }),
  },
  {
    method: 'patch',
    path: '/api/groups/:groupId/results/:resultId/versions/:version',
    access: 'analyst',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      return {
        params: { groupId, resultId: v.resultId, version: '1' },
        body: { changeNote: 'Edited by the matrix' },
        effect: async () => (await versionsOf(w, groupId)).some((x) => x.resultId === v.resultId && x.changeNote === 'Edited by the matrix'),
      };
    },
  },
  {
    method: 'delete',
    path: '/api/groups/:groupId/results/:resultId/versions/:version',
    access: 'analyst',
    ok: 204,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      await makeVersion(w.crew.analyst, groupId, v.resultId);
      return { params: { groupId, resultId: v.resultId, version: '2' }, effect: async () => !(await versionsOf(w, groupId)).some((x) => x.resultId === v.resultId && x.version === 2) };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/results/:resultId/versions/:version/publish',
    access: 'curator',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      return {
        params: { groupId, resultId: v.resultId, version: '1' },
        body: {},
        effect: async () => (await versionsOf(w, groupId)).some((x) => x.resultId === v.resultId && x.state === 'published'),
      };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/results/:resultId/versions/:version/retract',
    access: 'curator',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const v = await makeResult(w.crew.analyst, groupId);
      await publishVersion(w.crew.owner, groupId, v.resultId, 1);
      return {
        params: { groupId, resultId: v.resultId, version: '1' },
        body: { reason: 'Retracted by the matrix' },
        effect: async () => (await versionsOf(w, groupId)).some((x) => x.resultId === v.resultId && x.state === 'retracted'),
      };
    },
  },
  ...(['csv', 'json'] as const).map(
    (format): Entry => ({
      method: 'get',
      path: `/api/groups/:groupId/results/:resultId/versions/:version/export.${format}`,
      access: 'viewer',
      ok: 200,
      mutates: false,
      prepare: async (w, groupId) => ({ params: { groupId, resultId: (await sharedResult(w, groupId)).resultId, version: '1' } }),
    }),
  ),
  ...(['csv', 'json'] as const).map(
    (format): Entry => ({
      method: 'get',
      path: `/api/groups/:groupId/results/:resultId/versions/:version/contours.${format}`,
      access: 'viewer',
      ok: 200,
      mutates: false,
      prepare: async (w, groupId) => ({ params: { groupId, resultId: (await sharedPlane(w, groupId)).resultId, version: '1' } }),
    }),
  ),
  // Open to anyone: what they see depends on who they are (results-visibility.test.ts).
  { method: 'get', path: '/api/results', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  { method: 'get', path: '/api/results/:slug/v:version', access: 'anonymous', ok: 200, mutates: false, prepare: async (w) => ({ params: { slug: (await publicResult(w)).slug, version: '1' } }) },
  { method: 'get', path: '/api/public/results', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  ...(['/api/results/:slug/latest', '/api/public/results/:slug/latest'] as const).map(
    (path): Entry => ({ method: 'get', path, access: 'anonymous', ok: 200, mutates: false, prepare: async (w) => ({ params: { slug: (await publicResult(w)).slug } }) }),
  ),
  ...(['', '/export.csv', '/export.json'] as const).map(
    (suffix): Entry => ({
      method: 'get',
      path: `/api/public/results/:slug/v:version${suffix}`,
      access: 'anonymous',
      ok: 200,
      mutates: false,
      prepare: async (w) => ({ params: { slug: (await publicResult(w)).slug, version: '1' } }),
    }),
  ),
  ...(['/contours.csv', '/contours.json'] as const).map(
    (suffix): Entry => ({
      method: 'get',
      path: `/api/public/results/:slug/v:version${suffix}`,
      access: 'anonymous',
      ok: 200,
      mutates: false,
      prepare: async (w) => ({ params: { slug: (await publicPlane(w)).slug, version: '1' } }),
    }),
  ),

  // --- API tokens (a session's own; tokens themselves cannot manage tokens, see tokens.test.ts) ---
  { method: 'get', path: '/api/tokens', access: 'signed-in', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  {
    method: 'post',
    path: '/api/tokens',
    access: 'signed-in',
    ok: 201,
    mutates: true,
    prepare: async (w) => {
      const name = uniqueGroupName('Matrix Token');
      return { params: {}, body: { name }, effect: async () => (await w.t.ctx.db.select().from(apiTokens).where(eq(apiTokens.name, name))).length > 0 };
    },
  },
  {
    // The caller's own token (an anonymous caller aims at the owner's).
    method: 'delete',
    path: '/api/tokens/:tokenId',
    access: 'signed-in',
    ok: 204,
    mutates: true,
    prepare: async (w, _groupId, caller) => {
      const res = await (caller.person ?? w.crew.owner).agent.post('/api/tokens').send({ name: 'to revoke' });
      const id = res.body.id as string;
      return { params: { tokenId: id }, effect: async () => (await w.t.ctx.db.select().from(apiTokens).where(eq(apiTokens.id, id))).length === 0 };
    },
  },

  // --- Scans (computed by workers; no worker runs here, so scans stay queued) ---
  { method: 'get', path: '/api/groups/:groupId/scans', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'post',
    path: '/api/groups/:groupId/scans',
    access: 'analyst',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const title = uniqueGroupName('Matrix Scan');
      return {
        params: { groupId },
        body: scanBody(title),
        effect: async () => (await w.t.ctx.db.select({ id: scans.id }).from(scans).where(eq(scans.groupId, groupId))).some(() => true) && (await scanTitled(w, groupId, title)),
      };
    },
  },
  { method: 'get', path: '/api/groups/:groupId/scans/:scanId', access: 'viewer', ok: 200, mutates: false, prepare: async (w, groupId) => ({ params: { groupId, scanId: await sharedScan(w, groupId) } }) },
  {
    method: 'post',
    path: '/api/groups/:groupId/scans/:scanId/cancel',
    access: 'analyst',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const scanId = await startScan(w, groupId, uniqueGroupName('Matrix Cancel'));
      return { params: { groupId, scanId }, effect: async () => (await w.t.ctx.db.select({ s: scans.state }).from(scans).where(eq(scans.id, scanId)))[0]?.s === 'cancelled' };
    },
  },
  {
    method: 'get',
    path: '/api/groups/:groupId/scans/:scanId/points/:index',
    access: 'viewer',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => ({ params: { groupId, scanId: await sharedScan(w, groupId), index: '1' } }),
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/scans/:scanId/points/:index/rerun',
    access: 'analyst',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const scanId = await cancelledToyScan(w, groupId, uniqueGroupName('Matrix Rerun'));
      return {
        params: { groupId, scanId, index: '1' },
        body: { toys: 200 },
        effect: async () => (await w.t.ctx.db.select({ id: scans.id }).from(scans).where(eq(scans.rerunOf, scanId))).length === 1,
      };
    },
  },
  {
    method: 'get',
    path: '/api/groups/:groupId/scans/:scanId/inputs.json',
    access: 'viewer',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => ({ params: { groupId, scanId: await sharedScan(w, groupId) } }),
  },

  // --- Figures (figure.write = editor and up; the house style needs curator) ---
  { method: 'get', path: '/api/groups/:groupId/figures', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'post',
    path: '/api/groups/:groupId/figures',
    access: 'editor',
    ok: 201,
    mutates: true,
    prepare: async (w, groupId) => {
      const title = uniqueGroupName('Matrix Figure');
      return {
        params: { groupId },
        body: { spec: figureSpec(title, (await sharedResult(w, groupId)).resultId) },
        effect: async () => (await figuresOf(w, groupId)).some((f) => f.title === title),
      };
    },
  },
  { method: 'get', path: '/api/groups/:groupId/figures/:figureId', access: 'viewer', ok: 200, mutates: false, prepare: async (w, groupId) => ({ params: { groupId, figureId: await sharedFigure(w, groupId) } }) },
  {
    method: 'put',
    path: '/api/groups/:groupId/figures/:figureId',
    access: 'editor',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const figureId = await makeFigure(w, groupId);
      return {
        params: { groupId, figureId },
        body: { spec: figureSpec('Saved by the matrix', (await sharedResult(w, groupId)).resultId), note: 'matrix' },
        effect: async () => (await figuresOf(w, groupId)).some((f) => f.id === figureId && f.lastVersion === 2),
      };
    },
  },
  {
    method: 'patch',
    path: '/api/groups/:groupId/figures/:figureId',
    access: 'editor',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const figureId = await makeFigure(w, groupId);
      return { params: { groupId, figureId }, body: { public: true }, effect: async () => (await figuresOf(w, groupId)).some((f) => f.id === figureId && f.isPublic) };
    },
  },
  {
    method: 'delete',
    path: '/api/groups/:groupId/figures/:figureId',
    access: 'editor',
    ok: 204,
    mutates: true,
    prepare: async (w, groupId) => {
      const figureId = await makeFigure(w, groupId);
      return { params: { groupId, figureId }, effect: async () => !(await figuresOf(w, groupId)).some((f) => f.id === figureId) };
    },
  },
  {
    method: 'get',
    path: '/api/groups/:groupId/figures/:figureId/versions/:version',
    access: 'viewer',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => ({ params: { groupId, figureId: await sharedFigure(w, groupId), version: '1' } }),
  },
  ...(['duplicate', 'outreach'] as const).map(
    (action): Entry => ({
      method: 'post',
      path: `/api/groups/:groupId/figures/:figureId/${action}`,
      access: 'editor',
      ok: 201,
      mutates: true,
      prepare: async (w, groupId) => {
        const figureId = await makeFigure(w, groupId);
        return { params: { groupId, figureId }, body: {}, effect: async () => (await figuresOf(w, groupId)).some((f) => f.derivedFrom === figureId) };
      },
    }),
  ),
  {
    method: 'post',
    path: '/api/groups/:groupId/layer-data',
    access: 'viewer',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => ({ params: { groupId }, body: { layers: [{ resultId: (await sharedResult(w, groupId)).resultId, version: 1 }] } }),
  },
  { method: 'get', path: '/api/groups/:groupId/style', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'put',
    path: '/api/groups/:groupId/style',
    access: 'curator',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => ({
      params: { groupId },
      body: { style: { lineScale: 1.5 } },
      effect: async () => (await w.t.ctx.db.select().from(groupStyles).where(eq(groupStyles.groupId, groupId))).length === 1,
    }),
  },
  {
    method: 'put',
    path: '/api/groups/:groupId/results/:resultId/hue',
    access: 'editor',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => {
      const { resultId } = await makeResult(w.crew.analyst, groupId);
      return {
        params: { groupId, resultId },
        body: { hue: 7 },
        effect: async () => (await w.t.ctx.db.select().from(resultHues).where(and(eq(resultHues.groupId, groupId), eq(resultHues.resultId, resultId))))[0]?.hue === 7,
      };
    },
  },
  // By figure id: members of the figure's group; anyone else gets 404 for a private figure
  // (anonymous callers too) and the public variant of a public one (figures-render.test.ts).
  ...['render.svg', 'render.pdf', 'render.png', 'export.csv', 'caption.txt'].map(
    (suffix): Entry => ({
      method: 'get',
      path: `/api/figures/:figureId/${suffix}`,
      access: 'viewer',
      anonymous: 404,
      ok: 200,
      mutates: false,
      prepare: async (w, groupId) => ({ params: { figureId: await sharedFigure(w, groupId) } }),
    }),
  ),
  { method: 'get', path: '/api/public/figures', access: 'anonymous', ok: 200, mutates: false, prepare: async () => ({ params: {} }) },
  { method: 'get', path: '/api/public/figures/:figureId', access: 'anonymous', ok: 200, mutates: false, prepare: async (w) => ({ params: { figureId: await publicFigure(w) } }) },
  ...['render.svg', 'render.pdf', 'render.png'].map(
    (suffix): Entry => ({
      method: 'get',
      path: `/api/public/figures/:figureId/${suffix}`,
      access: 'anonymous',
      ok: 200,
      mutates: false,
      prepare: async (w) => ({ params: { figureId: await publicFigure(w) } }),
    }),
  ),
  { method: 'post', path: '/api/typeset', access: 'signed-in', ok: 200, mutates: false, prepare: async () => ({ params: {}, body: { labels: [{ label: '$\\mu$', size: 8, font: 'sans' }] } }) },

  // --- Plans and billing (owners manage billing; every member reads the plan and usage) ---
  { method: 'get', path: '/api/groups/:groupId/plan', access: 'viewer', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  { method: 'get', path: '/api/groups/:groupId/invoices', access: 'owner', ok: 200, mutates: false, prepare: async (_w, groupId) => ({ params: { groupId } }) },
  {
    method: 'get',
    path: '/api/groups/:groupId/invoices/:invoiceId.pdf',
    access: 'owner',
    ok: 200,
    mutates: false,
    prepare: async (w, groupId) => {
      const invoiceId = `in_matrix${Math.random().toString(36).slice(2, 10)}`;
      await w.t.ctx.db.insert(invoices).values({ id: invoiceId, groupId, amountCents: 4900, currency: 'eur', status: 'paid', paidAt: new Date('2031-03-01T00:00:00Z') });
      return { params: { groupId, invoiceId } };
    },
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/billing/checkout',
    access: 'owner',
    ok: 200,
    mutates: true,
    prepare: async (w, groupId) => ({
      params: { groupId },
      body: { interval: 'month' },
      // A checkout creates the group's customer at the payment fake.
      effect: async () => (await w.t.ctx.db.select({ c: billingAccounts.customerId }).from(billingAccounts).where(eq(billingAccounts.groupId, groupId)))[0]?.c != null,
    }),
  },
  {
    method: 'post',
    path: '/api/groups/:groupId/billing/portal',
    access: 'owner',
    ok: 200,
    mutates: true,
    prepare: async (_w, groupId) => {
      await giveCustomer(t, groupId);
      return { params: { groupId }, body: {} };
    },
  },
  {
    // The provider's webhook: no session, a signature instead (billing.test.ts refuses bad ones).
    method: 'post',
    path: '/api/billing/webhook',
    access: 'anonymous',
    ok: 200,
    mutates: false,
    prepare: async (w) => {
      const e = signedEvent('customer.created', { id: 'cus_matrix', object: 'customer' });
      const id = (JSON.parse(e.payload) as { id: string }).id;
      return {
        params: {},
        headers: { 'Content-Type': 'application/json', 'Stripe-Signature': e.signature },
        body: e.payload,
        effect: async () => (await w.t.ctx.db.select().from(providerEvents).where(eq(providerEvents.id, id))).length === 1,
      };
    },
  },
];

const scanModel = (n: number) => ({ observed: [n, n + 2], signal: [1, 2], backgrounds: [{ name: 'continuum', yields: [n, n + 1] }] });
const scanBody = (title: string) => ({
  points: [{ x: 1000, model: scanModel(10) }, { x: 1500, model: scanModel(6) }],
  options: {},
  meta: { ...sampleMeta(), title, quantity: 'mu', quantityUnit: '', method: 'asymptotic' },
});
/** Starts a scan in the group as its analyst; returns its id. */
async function startScan(w: World, groupId: string, title: string): Promise<string> {
  const res = await w.crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send(scanBody(title));
  if (res.status !== 201) throw new Error(`scan start failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id as string;
}
/** A pseudo-experiment scan started and cancelled at once by the group's analyst (an ended scan whose points may be rerun). */
async function cancelledToyScan(w: World, groupId: string, title: string): Promise<string> {
  const res = await w.crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send({ ...scanBody(title), options: { method: 'toys', toys: 100 } });
  if (res.status !== 201) throw new Error(`scan start failed: ${res.status} ${JSON.stringify(res.body)}`);
  const cancel = await w.crew.analyst.agent.post(`/api/groups/${groupId}/scans/${res.body.id}/cancel`).send({});
  if (cancel.status !== 200) throw new Error(`scan cancel failed: ${cancel.status}`);
  return res.body.id as string;
}
/**
 * A scan-computed result version (no worker runs here): a scan started through the API, its points
 * computed by the engine and stored as a worker would, its tasks closed, its draft saved by the
 * scans service. The input of a joint combination.
 */
async function computedScanResult(w: World, groupId: string, title: string): Promise<{ resultId: string; version: number }> {
  const scanId = await startScan(w, groupId, title);
  const db = w.t.ctx.db;
  const computed = computeScan(scanBody(title).points);
  for (const [index, r] of computed.entries()) {
    if ('error' in r) throw new Error('engine failed');
    await db.update(scanPoints).set({ state: 'done', result: r as unknown as Record<string, unknown> }).where(and(eq(scanPoints.scanId, scanId), eq(scanPoints.index, index)));
  }
  await db.update(scanTasks).set({ state: 'done' }).where(eq(scanTasks.scanId, scanId));
  await db.update(scans).set({ state: 'running', donePoints: computed.length }).where(eq(scans.id, scanId));
  await saveDraft(w.t.ctx, scanId, 'done');
  const [row] = await db.select({ resultId: scans.resultId, version: scans.resultVersion }).from(scans).where(eq(scans.id, scanId));
  return { resultId: row!.resultId!, version: row!.version! };
}
async function scanTitled(w: World, groupId: string, title: string) {
  const rows = await w.t.ctx.db.select({ meta: scans.meta }).from(scans).where(eq(scans.groupId, groupId));
  return rows.some((r) => r.meta.title === title);
}
const sharedScans = new Map<string, Promise<string>>();
function sharedScan(w: World, groupId: string) {
  if (!sharedScans.has(groupId)) sharedScans.set(groupId, startScan(w, groupId, uniqueGroupName('Matrix Shared Scan')));
  return sharedScans.get(groupId)!;
}

/** A minimal figure spec pinning one result of the group. */
const figureSpec = (title: string, resultId: string) => oneColumnSpec([{ resultId, version: 1 }], { title });
async function makeFigure(w: World, groupId: string, isPublic = false): Promise<string> {
  return (await makeFigureAs(w.crew.editor, groupId, figureSpec(uniqueGroupName('Matrix Figure'), (await sharedResult(w, groupId)).resultId), isPublic)).id;
}
async function figuresOf(w: World, groupId: string) {
  return w.t.ctx.db.select().from(figures).where(eq(figures.groupId, groupId));
}
/** One private figure per group for the read-only checks, made on first use. */
const sharedFigures = new Map<string, Promise<string>>();
function sharedFigure(w: World, groupId: string) {
  if (!sharedFigures.has(groupId)) sharedFigures.set(groupId, makeFigure(w, groupId));
  return sharedFigures.get(groupId)!;
}
/** One public figure (in a group of the host) for the public routes. */
let publicFig: Promise<string> | undefined;
function publicFigure(w: World) {
  publicFig ??= (async () => {
    const groupId = await makeGroup(w.t, w.host);
    const v = await makeResult(w.host, groupId);
    await publishVersion(w.host, groupId, v.resultId, 1, true);
    return (await makeFigureAs(w.host, groupId, figureSpec('Matrix public figure', v.resultId), true)).id;
  })();
  return publicFig;
}

/** Every version in a group, for effect checks. */
async function versionsOf(w: World, groupId: string) {
  return w.t.ctx.db
    .select({ resultId: resultVersions.resultId, version: resultVersions.version, state: resultVersions.state, title: resultVersions.title, changeNote: resultVersions.changeNote })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(eq(results.groupId, groupId));
}

/** One draft result per group for the read-only checks, made on first use. */
const shared = new Map<string, Promise<{ resultId: string; slug: string }>>();
function sharedResult(w: World, groupId: string) {
  if (!shared.has(groupId)) shared.set(groupId, makeResult(w.crew.analyst, groupId));
  return shared.get(groupId)!;
}
/** One two-parameter draft per group for the contour downloads, made on first use. */
const sharedPlanes = new Map<string, Promise<{ resultId: string; slug: string }>>();
function sharedPlane(w: World, groupId: string) {
  if (!sharedPlanes.has(groupId)) sharedPlanes.set(groupId, makePlaneResult(w.crew.analyst, groupId));
  return sharedPlanes.get(groupId)!;
}
let publicPlaneOne: Promise<{ slug: string }> | undefined;
function publicPlane(w: World) {
  publicPlaneOne ??= (async () => {
    const groupId = await makeGroup(w.t, w.host);
    const v = await makePlaneResult(w.host, groupId);
    return publishVersion(w.host, groupId, v.resultId, 1, true);
  })();
  return publicPlaneOne;
}
/** One public published result (in a group of the host) for the anonymous routes. */
let publicOne: Promise<{ slug: string }> | undefined;
function publicResult(w: World) {
  publicOne ??= (async () => {
    const groupId = await makeGroup(w.t, w.host);
    const v = await makeResult(w.host, groupId);
    return publishVersion(w.host, groupId, v.resultId, 1, true);
  })();
  return publicOne;
}

function expectedStatus(entry: Entry, caller: CallerKind): number {
  if (entry.access === 'anonymous') return entry.ok;
  if (caller === 'anonymous') return entry.anonymous ?? 401;
  if (entry.access === 'signed-in') return entry.ok;
  if (caller === 'non-member') return 404;
  return ROLE_RANK[caller] >= ROLE_RANK[entry.access] ? entry.ok : 403;
}

const ERROR_CODE: Record<number, string> = { 401: 'unauthorized', 403: 'forbidden', 404: 'not_found' };

let t: BillingTestApp;
let w: World;

beforeAll(async () => {
  // With the payment fake, so that checkout and the portal reach a provider.
  t = await startBillingTestApp();
  t.ctx.jobs = await startQueue(t.ctx.env);
  const [crew, target, outsider, host] = await Promise.all([
    makeCrew(t),
    makePerson(t, 'Target Member'),
    makePerson(t, 'Outsider Owner'),
    makePerson(t, 'Host Owner'),
  ]);
  // The outsider is not a stranger: they own (and so may manage) a group of their own.
  await makeGroup(t, outsider, uniqueGroupName('Outsider Group'));
  const { groupId } = await makeGroupWithRoles(t, { crew, extra: [[target, 'viewer']] });
  w = { t, crew, target, outsider, host, sharedGroupId: groupId };
}, 60_000);
afterAll(async () => t?.close());

const cells = MATRIX.flatMap((entry) =>
  CALLERS.map((caller) => ({ entry, caller, expected: expectedStatus(entry, caller) })),
);

describe('role × route matrix', () => {
  test.each(cells.map((c) => [`${c.entry.method.toUpperCase()} ${c.entry.path} as ${c.caller} → ${c.expected}`, c] as const))(
    '%s',
    async (_name, { entry, caller, expected }) => {
      const groupId = entry.mutates ? (await makeGroupWithRoles(t, { crew: w.crew, extra: [[w.target, 'viewer']] })).groupId : w.sharedGroupId;
      const person = caller === 'anonymous' ? undefined : caller === 'non-member' ? w.outsider : w.crew[caller];
      const prepared = await entry.prepare(w, groupId, { kind: caller, person });
      const agent: Agent = person?.agent ?? request.agent(t.app);
      const url = fillPath(entry.path, prepared.params);
      let call = agent[entry.method](url);
      if (prepared.headers) call = call.set(prepared.headers);
      if (prepared.body !== undefined) call = call.send(prepared.body);
      const res = await call;

      expect({ status: res.status, body: res.body }).toMatchObject({ status: expected });
      if (expected >= 400) {
        expect(apiErrorSchema.safeParse(res.body).success).toBe(true);
        expect(res.body.error.code).toBe(ERROR_CODE[expected]);
      }
      if (prepared.effect) expect(await prepared.effect()).toBe(expected < 400);
    },
  );
});

// ---------------------------------------------------------------------------------------------
// Every registered route has an entry.

const key = (e: Entry) => `${e.method.toUpperCase()} ${e.path}`;

describe('the matrix covers every route', () => {
  test('every /api route registered in the app (development mode) has a matrix entry, and every entry is registered', () => {
    const registered = apiRoutesOf(t.app);
    // Guard against a walk that finds nothing (e.g. if Express changed its internals).
    expect(registered).toEqual(expect.arrayContaining(['GET /api/health', 'GET /api/groups/:groupId']));
    expect(registered).toEqual([...new Set(MATRIX.map(key))].sort());
  });

  test('in production exactly the dev-only entries are missing', () => {
    const prodApp = createApp({ ...t.ctx, env: { ...t.ctx.env, NODE_ENV: 'production', devTools: false } });
    expect(apiRoutesOf(prodApp)).toEqual(MATRIX.filter((e) => !e.devOnly).map(key).sort());
  });

  test('the matrix has one entry per method and path', () => {
    const keys = MATRIX.map(key);
    expect(new Set(keys).size).toBe(keys.length);
  });
});
