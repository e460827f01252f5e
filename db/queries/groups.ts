import { and, asc, count, eq, sql } from 'drizzle-orm';
import type { GroupRole } from '../../shared/access';
import type { Executor } from '../client';
import { groups, memberships, user } from '../schema';

/** Inserts a group; undefined when its slug is taken (also by a concurrent insert). */
export async function insertGroup(db: Executor, g: { name: string; slug: string; description: string; createdBy: string }) {
  const [row] = await db.insert(groups).values(g).onConflictDoNothing({ target: groups.slug }).returning();
  return row;
}

export async function slugTaken(db: Executor, slug: string): Promise<boolean> {
  const rows = await db.select({ id: groups.id }).from(groups).where(eq(groups.slug, slug)).limit(1);
  return rows.length > 0;
}

const memberCount = sql<number>`(select count(*)::int from ${memberships} m where m.group_id = ${groups.id})`;

/** Every group the user belongs to, with the user's role there. */
export async function listGroupsOfUser(db: Executor, userId: string) {
  return db
    .select({
      id: groups.id,
      name: groups.name,
      slug: groups.slug,
      description: groups.description,
      createdAt: groups.createdAt,
      role: memberships.role,
      memberCount,
      storageBytes: groups.storageBytes,
    })
    .from(memberships)
    .innerJoin(groups, eq(groups.id, memberships.groupId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(groups.name));
}

/** One group seen by one member; undefined when the user is not a member (or it does not exist). */
export async function getGroupOfMember(db: Executor, groupId: string, userId: string) {
  const rows = await db
    .select({
      id: groups.id,
      name: groups.name,
      slug: groups.slug,
      description: groups.description,
      createdAt: groups.createdAt,
      role: memberships.role,
      memberCount,
      storageBytes: groups.storageBytes,
    })
    .from(memberships)
    .innerJoin(groups, eq(groups.id, memberships.groupId))
    .where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
  return rows[0];
}

export async function getGroupName(db: Executor, groupId: string) {
  const rows = await db.select({ name: groups.name }).from(groups).where(eq(groups.id, groupId));
  return rows[0]?.name;
}

export async function getRole(db: Executor, groupId: string, userId: string): Promise<GroupRole | undefined> {
  const rows = await db
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
  return rows[0]?.role;
}

export async function updateGroup(db: Executor, groupId: string, patch: { name?: string; description?: string }) {
  await db.update(groups).set(patch).where(eq(groups.id, groupId));
}

export async function deleteGroup(db: Executor, groupId: string) {
  await db.delete(groups).where(eq(groups.id, groupId));
}

export async function listMembers(db: Executor, groupId: string) {
  return db
    .select({ userId: user.id, name: user.name, email: user.email, role: memberships.role, joinedAt: memberships.createdAt })
    .from(memberships)
    .innerJoin(user, eq(user.id, memberships.userId))
    .where(eq(memberships.groupId, groupId))
    .orderBy(asc(user.name));
}

/** Adds a member, or raises nothing if they already are one (their role is kept). */
export async function addMember(db: Executor, groupId: string, userId: string, role: GroupRole) {
  await db.insert(memberships).values({ groupId, userId, role }).onConflictDoNothing();
}

export async function setRole(db: Executor, groupId: string, userId: string, role: GroupRole) {
  await db
    .update(memberships)
    .set({ role })
    .where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
}

export async function removeMember(db: Executor, groupId: string, userId: string) {
  await db.delete(memberships).where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
}

/** Locks the group's owner rows for the rest of the transaction and counts them. */
export async function lockOwners(db: Executor, groupId: string): Promise<number> {
  const rows = await db
    .select({ userId: memberships.userId })
    .from(memberships)
    .where(and(eq(memberships.groupId, groupId), eq(memberships.role, 'owner')))
    .for('update');
  return rows.length;
}

export async function countGroups(db: Executor) {
  const [row] = await db.select({ n: count() }).from(groups);
  return row?.n ?? 0;
}
