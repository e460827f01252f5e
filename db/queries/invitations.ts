import { and, desc, eq, sql } from 'drizzle-orm';
import type { GroupRole } from '../../shared/access';
import type { Executor } from '../client';
import { groups, invitations, user } from '../schema';

export async function insertInvitation(
  db: Executor,
  inv: { groupId: string; email: string; role: GroupRole; tokenHash: string; invitedBy: string; expiresAt: Date },
) {
  // Undefined when the address already has an open invitation to the group (the partial unique
  // index), also one inserted by a concurrent request after the service's check.
  const [row] = await db.insert(invitations).values(inv).onConflictDoNothing().returning();
  return row;
}

export async function findPendingInvitation(db: Executor, groupId: string, email: string) {
  const rows = await db
    .select()
    .from(invitations)
    .where(and(eq(invitations.groupId, groupId), eq(sql`lower(${invitations.email})`, email.toLowerCase()), eq(invitations.state, 'pending')));
  return rows[0];
}

export async function listInvitations(db: Executor, groupId: string) {
  return db
    .select({
      id: invitations.id,
      email: invitations.email,
      role: invitations.role,
      state: invitations.state,
      invitedBy: user.name,
      expiresAt: invitations.expiresAt,
      createdAt: invitations.createdAt,
    })
    .from(invitations)
    .leftJoin(user, eq(user.id, invitations.invitedBy))
    .where(eq(invitations.groupId, groupId))
    .orderBy(desc(invitations.createdAt));
}

export async function revokeInvitation(db: Executor, groupId: string, invitationId: string) {
  const rows = await db
    .update(invitations)
    .set({ state: 'revoked' })
    .where(and(eq(invitations.id, invitationId), eq(invitations.groupId, groupId), eq(invitations.state, 'pending')))
    .returning({ id: invitations.id });
  return rows.length > 0;
}

/** The invitation behind a token, with its group's name and the inviter's name; locks the row. */
export async function findInvitationByTokenHash(db: Executor, tokenHash: string, lock = false) {
  const q = db
    .select({
      id: invitations.id,
      groupId: invitations.groupId,
      groupName: groups.name,
      email: invitations.email,
      role: invitations.role,
      state: invitations.state,
      expiresAt: invitations.expiresAt,
      invitedBy: user.name,
    })
    .from(invitations)
    .innerJoin(groups, eq(groups.id, invitations.groupId))
    .leftJoin(user, eq(user.id, invitations.invitedBy))
    .where(eq(invitations.tokenHash, tokenHash));
  const rows = lock ? await q.for('update', { of: invitations }) : await q;
  return rows[0];
}

export async function markInvitationAccepted(db: Executor, invitationId: string) {
  await db.update(invitations).set({ state: 'accepted', acceptedAt: new Date() }).where(eq(invitations.id, invitationId));
}
