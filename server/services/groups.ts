import { assignableRoles, type GroupRole } from '../../shared/access';
import type { CreateGroupInput, Group, Member, UpdateGroupInput } from '../../shared/schemas/groups';
import { slugify } from '../../shared/slug';
import * as q from '../../db/queries/groups';
import type { Ctx } from '../context';
import { conflict, forbidden, notFound } from '../lib/errors';

type GroupRow = Awaited<ReturnType<typeof q.listGroupsOfUser>>[number];
const toGroup = (g: GroupRow): Group => ({ ...g, createdAt: g.createdAt.toISOString() });

/** A group's slug before any number that makes it unique: its name's words, at most 48 characters. */
export const groupSlug = (name: string) => slugify(name, { fallback: 'group', max: 48 });

export async function listMyGroups(ctx: Ctx, userId: string): Promise<Group[]> {
  return (await q.listGroupsOfUser(ctx.db, userId)).map(toGroup);
}

export async function createGroup(ctx: Ctx, userId: string, input: Required<CreateGroupInput>): Promise<Group> {
  return ctx.db.transaction(async (tx) => {
    const base = groupSlug(input.name);
    // A slug can be taken between the check and the insert (two groups of one name created at
    // once): the insert then returns nothing and the next number is tried.
    let g: Awaited<ReturnType<typeof q.insertGroup>>;
    for (let i = 1; !g; i++) {
      const slug = i === 1 ? base : `${base}-${i}`;
      if (await q.slugTaken(tx, slug)) continue;
      g = await q.insertGroup(tx, { name: input.name, slug, description: input.description, createdBy: userId });
    }
    await q.addMember(tx, g.id, userId, 'owner');
    return toGroup({ ...g, role: 'owner', memberCount: 1 });
  });
}

export async function getGroup(ctx: Ctx, groupId: string, userId: string): Promise<Group> {
  const g = await q.getGroupOfMember(ctx.db, groupId, userId);
  if (!g) throw notFound('Group');
  return toGroup(g);
}

export async function updateGroup(ctx: Ctx, groupId: string, userId: string, patch: UpdateGroupInput): Promise<Group> {
  await q.updateGroup(ctx.db, groupId, patch);
  return getGroup(ctx, groupId, userId);
}

export async function deleteGroup(ctx: Ctx, groupId: string): Promise<void> {
  await q.deleteGroup(ctx.db, groupId);
}

export async function listMembers(ctx: Ctx, groupId: string): Promise<Member[]> {
  return (await q.listMembers(ctx.db, groupId)).map((m) => ({ ...m, joinedAt: m.joinedAt.toISOString() }));
}

/**
 * Role changes follow the role table: owners change anyone; curators change members below owner
 * and grant at most curator. A group always keeps at least one owner (checked under a row lock so
 * two owners demoting each other at once cannot leave it ownerless).
 */
export async function changeRole(ctx: Ctx, groupId: string, actor: { id: string; role: GroupRole }, targetId: string, role: GroupRole) {
  await ctx.db.transaction(async (tx) => {
    const owners = await q.lockOwners(tx, groupId);
    const current = await q.getRole(tx, groupId, targetId);
    if (!current) throw notFound('Member');
    const allowed = assignableRoles(actor.role);
    if (!allowed.includes(current)) throw forbidden(`A ${actor.role} cannot change the role of an ${current}`);
    if (!allowed.includes(role)) throw forbidden(`A ${actor.role} cannot make someone ${role}`);
    if (current === 'owner' && role !== 'owner' && owners <= 1) {
      throw conflict('The group must keep at least one owner: make someone else owner first');
    }
    await q.setRole(tx, groupId, targetId, role);
  });
}

/** Removes a member; anyone may leave, managers may remove members they could re-role. */
export async function removeMember(ctx: Ctx, groupId: string, actor: { id: string; role: GroupRole }, targetId: string) {
  await ctx.db.transaction(async (tx) => {
    const owners = await q.lockOwners(tx, groupId);
    const current = await q.getRole(tx, groupId, targetId);
    if (!current) throw notFound('Member');
    if (actor.id !== targetId && !assignableRoles(actor.role).includes(current)) {
      throw forbidden(actor.role === 'curator' || actor.role === 'owner' ? `A ${actor.role} cannot remove an ${current}` : 'Your role cannot remove other members');
    }
    if (current === 'owner' && owners <= 1) throw conflict('The last owner cannot leave: make someone else owner first, or delete the group');
    await q.removeMember(tx, groupId, targetId);
  });
}
