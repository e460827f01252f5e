import { and, eq } from 'drizzle-orm';
import { addMember, getGroupName, getRole } from '@/db/queries/groups';
import { listMailTo } from '@/db/queries/mail';
import { invitations } from '@/db/schema';
import { GROUP_ROLES, type GroupRole } from '@/shared/access';
import { signUp, uniqueEmail, type Agent, type TestApp } from './app';

/**
 * Fixture factories for the API tests. People sign up through the real auth endpoints; groups are
 * created through the API by their owner; extra members are added with the data layer's own
 * `addMember` (the invitation flow has its own tests, and every other test should not depend on it).
 */

export type Person = { agent: Agent; user: { id: string; email: string; name: string }; email: string };

/** One signed-up person per group role. */
export type Crew = Record<GroupRole, Person>;

let groupSeq = 0;
/** A group name nobody in this process has used yet. */
export function uniqueGroupName(prefix = 'Fictional Collider Search'): string {
  groupSeq += 1;
  return `${prefix} ${groupSeq}-${Math.random().toString(36).slice(2, 6)}`;
}

export async function makePerson(t: TestApp, name = 'Test Physicist'): Promise<Person> {
  return signUp(t.app, name);
}

/** Signs up one person per role (owner, curator, analyst, editor, viewer). */
export async function makeCrew(t: TestApp): Promise<Crew> {
  const people = await Promise.all(GROUP_ROLES.map((r) => makePerson(t, `${r[0]!.toUpperCase()}${r.slice(1)} Person`)));
  return Object.fromEntries(GROUP_ROLES.map((r, i) => [r, people[i]!])) as Crew;
}

/** Creates a group through the API as `owner`; returns its id. */
export async function makeGroup(t: TestApp, owner: Person, name = uniqueGroupName()): Promise<string> {
  const res = await owner.agent.post('/api/groups').send({ name });
  if (res.status !== 201) throw new Error(`group creation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id as string;
}

/** Makes `person` a member of the group with `role` (directly, without an invitation). */
export async function addToGroup(t: TestApp, groupId: string, person: Person, role: GroupRole): Promise<void> {
  await addMember(t.ctx.db, groupId, person.user.id, role);
}

/**
 * A group in which every member of `crew` holds the role they are named after (the crew's owner
 * creates it); signs up a new crew when none is given. `extra` adds more members with given roles.
 */
export async function makeGroupWithRoles(
  t: TestApp,
  opts: { crew?: Crew; name?: string; extra?: Array<[Person, GroupRole]> } = {},
): Promise<{ groupId: string; crew: Crew }> {
  const crew = opts.crew ?? (await makeCrew(t));
  const groupId = await makeGroup(t, crew.owner, opts.name);
  for (const role of GROUP_ROLES) if (role !== 'owner') await addToGroup(t, groupId, crew[role], role);
  for (const [person, role] of opts.extra ?? []) await addToGroup(t, groupId, person, role);
  return { groupId, crew };
}

/** The invitation token in the newest invitation mail to `email` (read from the dev_mail outbox). */
export async function invitationTokenFor(t: TestApp, email: string): Promise<string> {
  const mail = (await listMailTo(t.ctx.db, email)).find((m) => m.kind === 'invitation');
  const token = mail?.text.match(/\/invite\/([A-Za-z0-9_-]+)/)?.[1];
  if (!token) throw new Error(`no invitation mail with a link for ${email}`);
  return token;
}

/** Invites `email` through the API as `inviter`; returns the invitation id and the mailed token. */
export async function makeInvitation(
  t: TestApp,
  inviter: Person,
  groupId: string,
  email = uniqueEmail('invitee'),
  role: GroupRole = 'viewer',
): Promise<{ id: string; token: string; email: string }> {
  const res = await inviter.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role });
  if (res.status !== 201) throw new Error(`invitation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return { id: res.body.id as string, token: await invitationTokenFor(t, email), email };
}

/** Database probes for tests that check a refused call changed nothing. */
export const probe = {
  role: (t: TestApp, groupId: string, userId: string) => getRole(t.ctx.db, groupId, userId),
  groupExists: async (t: TestApp, groupId: string) => (await getGroupName(t.ctx.db, groupId)) !== undefined,
  invitationState: async (t: TestApp, invitationId: string) => {
    const rows = await t.ctx.db.select({ state: invitations.state }).from(invitations).where(eq(invitations.id, invitationId));
    return rows[0]?.state;
  },
  openInvitationFor: async (t: TestApp, groupId: string, email: string) => {
    const rows = await t.ctx.db
      .select({ id: invitations.id })
      .from(invitations)
      .where(and(eq(invitations.groupId, groupId), eq(invitations.email, email), eq(invitations.state, 'pending')));
    return rows.length > 0;
  },
};
