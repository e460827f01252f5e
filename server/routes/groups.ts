import { Router } from 'express';
import {
  changeRoleSchema,
  createGroupSchema,
  groupParams,
  invitationParams,
  inviteSchema,
  memberParams,
  updateGroupSchema,
} from '../../shared/schemas/groups';
import { requireGroup, requireUser } from '../access';
import type { Ctx } from '../context';
import { handle } from '../lib/validate';
import * as groups from '../services/groups';
import * as invitations from '../services/invitations';

export function groupsRouter(ctx: Ctx) {
  const r = Router();

  r.get('/groups', requireUser(ctx), handle({}, async (_in, req, res) => {
    res.json({ groups: await groups.listMyGroups(ctx, req.user!.id) });
  }));

  r.post('/groups', requireUser(ctx), handle({ body: createGroupSchema }, async ({ body }, req, res) => {
    res.status(201).json(await groups.createGroup(ctx, req.user!.id, body));
  }));

  r.get('/groups/:groupId', requireGroup(ctx, 'group.read'), handle({ params: groupParams }, async ({ params }, req, res) => {
    res.json(await groups.getGroup(ctx, params.groupId, req.user!.id));
  }));

  r.patch('/groups/:groupId', requireGroup(ctx, 'group.manage'), handle({ params: groupParams, body: updateGroupSchema }, async ({ params, body }, req, res) => {
    res.json(await groups.updateGroup(ctx, params.groupId, req.user!.id, body));
  }));

  r.delete('/groups/:groupId', requireGroup(ctx, 'group.manage'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    await groups.deleteGroup(ctx, params.groupId);
    res.status(204).end();
  }));

  r.get('/groups/:groupId/members', requireGroup(ctx, 'group.read'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json({ members: await groups.listMembers(ctx, params.groupId) });
  }));

  r.patch(
    '/groups/:groupId/members/:userId',
    requireGroup(ctx, 'member.manage'),
    handle({ params: memberParams, body: changeRoleSchema }, async ({ params, body }, req, res) => {
      await groups.changeRole(ctx, params.groupId, { id: req.user!.id, role: req.groupRole! }, params.userId, body.role);
      res.json({ members: await groups.listMembers(ctx, params.groupId) });
    }),
  );

  // Any member may remove themselves (leave); the service checks who may remove whom.
  r.delete('/groups/:groupId/members/:userId', requireGroup(ctx, 'group.read'), handle({ params: memberParams }, async ({ params }, req, res) => {
    await groups.removeMember(ctx, params.groupId, { id: req.user!.id, role: req.groupRole! }, params.userId);
    res.status(204).end();
  }));

  r.get('/groups/:groupId/invitations', requireGroup(ctx, 'member.manage'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json({ invitations: await invitations.listInvitations(ctx, params.groupId) });
  }));

  r.post(
    '/groups/:groupId/invitations',
    requireGroup(ctx, 'member.manage'),
    handle({ params: groupParams, body: inviteSchema }, async ({ params, body }, req, res) => {
      res.status(201).json(await invitations.invite(ctx, params.groupId, { ...req.user!, role: req.groupRole! }, body));
    }),
  );

  r.delete(
    '/groups/:groupId/invitations/:invitationId',
    requireGroup(ctx, 'member.manage'),
    handle({ params: invitationParams }, async ({ params }, _req, res) => {
      await invitations.revokeInvitation(ctx, params.groupId, params.invitationId);
      res.status(204).end();
    }),
  );

  return r;
}
