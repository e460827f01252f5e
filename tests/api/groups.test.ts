import request from 'supertest';
import { listMembers } from '@/db/queries/groups';
import { GROUP_ROLES, type GroupRole } from '@/shared/access';
import { groupSchema, memberSchema } from '@/shared/schemas/groups';
import { startTestApp, type TestApp } from '../helpers/app';
import {
  addToGroup,
  makeCrew,
  makeGroup,
  makeGroupWithRoles,
  makeInvitation,
  makePerson,
  probe,
  uniqueGroupName,
  type Crew,
  type Person,
} from '../helpers/factories';

let t: TestApp;
let crew: Crew;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
}, 60_000);
afterAll(async () => t?.close());

const fields = (body: { error?: { details?: Array<{ field: string }> } }) => (body.error?.details ?? []).map((d) => d.field);

async function ownersOf(groupId: string) {
  return (await listMembers(t.ctx.db, groupId)).filter((m) => m.role === 'owner').map((m) => m.userId);
}

describe('create, list, get, change and delete a group', () => {
  test('creating a group makes the caller its only owner', async () => {
    const owner = await makePerson(t, 'Ada Founder');
    const name = uniqueGroupName('Heavy Scalar Search');
    const res = await owner.agent.post('/api/groups').send({ name, description: '  Resonances at the Fictional Collider  ' });
    expect(res.status).toBe(201);
    const g = groupSchema.parse(res.body);
    expect(g).toMatchObject({ name, description: 'Resonances at the Fictional Collider', role: 'owner', memberCount: 1 });
    expect(g.slug).toMatch(/^heavy-scalar-search-/);

    const members = await owner.agent.get(`/api/groups/${g.id}/members`);
    expect(members.status).toBe(200);
    expect(members.body.members).toEqual([expect.objectContaining({ userId: owner.user.id, email: owner.email, role: 'owner' })]);
  });

  test('two groups with the same name get different slugs, also when created at the same moment', async () => {
    const a = await makePerson(t);
    const name = uniqueGroupName('Same Name');
    const [r1, r2] = await Promise.all([a.agent.post('/api/groups').send({ name }), a.agent.post('/api/groups').send({ name })]);
    const r3 = await a.agent.post('/api/groups').send({ name });
    expect([r1.status, r2.status, r3.status]).toEqual([201, 201, 201]);
    expect(new Set([r1.body.slug, r2.body.slug, r3.body.slug]).size).toBe(3);
  });

  test('the list holds exactly my groups, by name, each with my role there', async () => {
    const me = await makePerson(t);
    const other = await makePerson(t);
    const zeta = await makeGroup(t, me, uniqueGroupName('Zeta Search'));
    const alpha = await makeGroup(t, other, uniqueGroupName('Alpha Search'));
    await addToGroup(t, alpha, me, 'editor');
    await makeGroup(t, other, uniqueGroupName('Not Mine'));

    const res = await me.agent.get('/api/groups');
    expect(res.status).toBe(200);
    expect(res.body.groups.map((g: { id: string; role: string }) => [g.id, g.role])).toEqual([
      [alpha, 'editor'],
      [zeta, 'owner'],
    ]);
    const mine = await me.agent.get('/api/me');
    expect(mine.body.groups.map((g: { id: string }) => g.id)).toEqual([alpha, zeta]);
  });

  test('a member reads the group with their own role and the member count', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await crew.editor.agent.get(`/api/groups/${groupId}`);
    expect(res.status).toBe(200);
    expect(groupSchema.parse(res.body)).toMatchObject({ id: groupId, role: 'editor', memberCount: 5 });
  });

  test('the owner renames the group and every member sees the new name', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const name = uniqueGroupName('Renamed Search');
    const res = await crew.owner.agent.patch(`/api/groups/${groupId}`).send({ name });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ id: groupId, name, role: 'owner' });
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}`)).body.name).toBe(name);
    const desc = await crew.owner.agent.patch(`/api/groups/${groupId}`).send({ description: 'Only the description' });
    expect(desc.body).toMatchObject({ name, description: 'Only the description' });
  });

  test('a viewer cannot rename or delete the group, and nothing changes', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const before = (await crew.viewer.agent.get(`/api/groups/${groupId}`)).body;
    const patch = await crew.viewer.agent.patch(`/api/groups/${groupId}`).send({ name: 'Viewer Was Here' });
    expect(patch.status).toBe(403);
    expect(patch.body.error).toMatchObject({ code: 'forbidden', message: expect.stringContaining('viewer') });
    const del = await crew.viewer.agent.delete(`/api/groups/${groupId}`);
    expect(del.status).toBe(403);
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}`)).body).toEqual(before);
  });

  test('deleting a group removes it for every member', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const res = await crew.owner.agent.delete(`/api/groups/${groupId}`);
    expect(res.status).toBe(204);
    for (const role of GROUP_ROLES) {
      expect((await crew[role].agent.get(`/api/groups/${groupId}`)).status).toBe(404);
      const list = await crew[role].agent.get('/api/groups');
      expect(list.body.groups.map((g: { id: string }) => g.id)).not.toContain(groupId);
    }
    // Its invitation links die with it.
    expect((await request(t.app).get(`/api/invitations/${inv.token}`)).status).toBe(404);
  });
});

describe('validation', () => {
  const cases: Array<[string, object, string, RegExp]> = [
    ['an empty name', { name: '' }, 'name', /empty/],
    ['a name of spaces only', { name: '   ' }, 'name', /empty/],
    ['a name longer than 80 characters', { name: 'x'.repeat(81) }, 'name', /at most 80/],
    ['a name with a control character', { name: 'Bell\u0007Search' }, 'name', /control characters/],
    ['a name with a line break', { name: 'Two\nLines' }, 'name', /control characters/],
    ['a missing name', { description: 'no name' }, 'name', /./],
    ['a name that is not text', { name: 42 }, 'name', /./],
    ['a description longer than 500 characters', { name: 'Fine', description: 'd'.repeat(501) }, 'description', /at most 500/],
  ];

  test.each(cases)('creating a group with %s → 400 naming the field', async (_what, body, field, reason) => {
    const me = await makePerson(t);
    const res = await me.agent.post('/api/groups').send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(res.body.error.details).toEqual(expect.arrayContaining([{ field, message: expect.stringMatching(reason) }]));
    expect(res.body.error.message).toContain(field);
    expect((await me.agent.get('/api/groups')).body.groups).toEqual([]);
  });

  test('changing a group needs a name or a description; a bad name is refused with its field', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const empty = await crew.owner.agent.patch(`/api/groups/${groupId}`).send({});
    expect(empty.status).toBe(400);
    expect(empty.body.error.code).toBe('validation_failed');
    expect(empty.body.error.details).toHaveLength(1);
    expect(empty.body.error.details[0].message).toMatch(/name or a description/);
    const bad = await crew.owner.agent.patch(`/api/groups/${groupId}`).send({ name: 'x'.repeat(81) });
    expect(bad.status).toBe(400);
    expect(fields(bad.body)).toEqual(['name']);
  });

  test('an unknown role is refused when changing a role and when inviting', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const change = await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.viewer.user.id}`).send({ role: 'admin' });
    expect(change.status).toBe(400);
    expect(change.body.error.code).toBe('validation_failed');
    expect(change.body.error.details).toEqual([{ field: 'role', message: expect.stringContaining('owner, curator, analyst, editor, viewer') }]);
    expect(await probe.role(t, groupId, crew.viewer.user.id)).toBe('viewer');

    const inv = await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: 'new@lab.example', role: 'superuser' });
    expect(inv.status).toBe(400);
    expect(fields(inv.body)).toEqual(['role']);
    const noRole = await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.viewer.user.id}`).send({});
    expect(fields(noRole.body)).toEqual(['role']);
  });

  test('an invitation to something that is not an e-mail address is refused with field "email"', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: 'not-an-address', role: 'viewer' });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([{ field: 'email', message: 'must be a valid e-mail address' }]);
  });

  test('an id that is not a group id answers 404, not 500', async () => {
    const res = await crew.owner.agent.get('/api/groups/not-a-uuid');
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('not_found');
    expect((await crew.owner.agent.get('/api/groups/00000000-0000-4000-8000-000000000000')).status).toBe(404);
  });
});

describe('members and roles', () => {
  test('every member sees the member list with names, addresses and roles', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    for (const role of GROUP_ROLES) {
      const res = await crew[role].agent.get(`/api/groups/${groupId}/members`);
      expect(res.status).toBe(200);
      const members = res.body.members.map((m: unknown) => memberSchema.parse(m));
      expect(Object.fromEntries(members.map((m: { email: string; role: string }) => [m.email, m.role]))).toEqual(
        Object.fromEntries(GROUP_ROLES.map((r) => [crew[r].email, r])),
      );
    }
  });

  test('an owner changes anyone, including making another owner', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const down = await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'viewer' });
    expect(down.status).toBe(200);
    expect(down.body.members.find((m: { userId: string }) => m.userId === crew.curator.user.id).role).toBe('viewer');
    const up = await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.viewer.user.id}`).send({ role: 'owner' });
    expect(up.status).toBe(200);
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}`)).body.role).toBe('owner');
    expect((await ownersOf(groupId)).sort()).toEqual([crew.owner.user.id, crew.viewer.user.id].sort());
  });

  test('a curator changes members below owner and grants at most curator', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const c = crew.curator.agent;
    expect((await c.patch(`/api/groups/${groupId}/members/${crew.analyst.user.id}`).send({ role: 'editor' })).status).toBe(200);
    expect((await c.patch(`/api/groups/${groupId}/members/${crew.viewer.user.id}`).send({ role: 'curator' })).status).toBe(200);
    expect(await probe.role(t, groupId, crew.viewer.user.id)).toBe('curator');

    const makeOwner = await c.patch(`/api/groups/${groupId}/members/${crew.editor.user.id}`).send({ role: 'owner' });
    expect(makeOwner.status).toBe(403);
    expect(makeOwner.body.error.code).toBe('forbidden');
    const touchOwner = await c.patch(`/api/groups/${groupId}/members/${crew.owner.user.id}`).send({ role: 'viewer' });
    expect(touchOwner.status).toBe(403);
    const selfPromote = await c.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'owner' });
    expect(selfPromote.status).toBe(403);

    expect(await probe.role(t, groupId, crew.editor.user.id)).toBe('editor');
    expect(await probe.role(t, groupId, crew.owner.user.id)).toBe('owner');
    expect(await probe.role(t, groupId, crew.curator.user.id)).toBe('curator');
  });

  test.each(['analyst', 'editor', 'viewer'] as const)('a %s cannot change roles', async (role) => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await crew[role].agent.patch(`/api/groups/${groupId}/members/${crew[role].user.id}`).send({ role: 'curator' });
    expect(res.status).toBe(403);
    expect(await probe.role(t, groupId, crew[role].user.id)).toBe(role);
  });

  test('changing the role of someone who is not a member answers 404', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const stranger = await makePerson(t);
    const res = await crew.owner.agent.patch(`/api/groups/${groupId}/members/${stranger.user.id}`).send({ role: 'viewer' });
    expect(res.status).toBe(404);
    expect(await probe.role(t, groupId, stranger.user.id)).toBeUndefined();
  });

  test('the last owner cannot be demoted, cannot leave, and cannot be removed', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const demote = await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.owner.user.id}`).send({ role: 'curator' });
    expect(demote.status).toBe(409);
    expect(demote.body.error).toMatchObject({ code: 'conflict', message: expect.stringContaining('at least one owner') });
    const leave = await crew.owner.agent.delete(`/api/groups/${groupId}/members/${crew.owner.user.id}`);
    expect(leave.status).toBe(409);
    const removeByCurator = await crew.curator.agent.delete(`/api/groups/${groupId}/members/${crew.owner.user.id}`);
    expect(removeByCurator.status).toBe(403);
    expect(await ownersOf(groupId)).toEqual([crew.owner.user.id]);
  });

  test('with two owners one may step down, after which the other is the last owner', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'owner' }).expect(200);
    const step = await crew.curator.agent.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'analyst' });
    expect(step.status).toBe(200);
    expect((await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.owner.user.id}`).send({ role: 'viewer' })).status).toBe(409);
    expect(await ownersOf(groupId)).toEqual([crew.owner.user.id]);
  });

  test('two owners demoting each other at the same moment leave the group with an owner', async () => {
    for (let round = 0; round < 6; round++) {
      const { groupId } = await makeGroupWithRoles(t, { crew });
      await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'owner' }).expect(200);
      const [a, b] = await Promise.all([
        crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'viewer' }),
        crew.curator.agent.patch(`/api/groups/${groupId}/members/${crew.owner.user.id}`).send({ role: 'viewer' }),
      ]);
      const statuses = [a.status, b.status].sort();
      // One demotion wins; the other finds either the last owner (409) or that its caller is no longer owner (403).
      expect(statuses[0]).toBe(200);
      expect([403, 409]).toContain(statuses[1]);
      expect(await ownersOf(groupId)).toHaveLength(1);
    }
  });

  test('two owners removing each other at the same moment leave the group with an owner', async () => {
    for (let round = 0; round < 4; round++) {
      const { groupId } = await makeGroupWithRoles(t, { crew });
      await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.curator.user.id}`).send({ role: 'owner' }).expect(200);
      const [a, b] = await Promise.all([
        crew.owner.agent.delete(`/api/groups/${groupId}/members/${crew.curator.user.id}`),
        crew.curator.agent.delete(`/api/groups/${groupId}/members/${crew.owner.user.id}`),
      ]);
      expect([a.status, b.status].sort()).toEqual([204, expect.any(Number)]);
      expect([403, 404, 409]).toContain(Math.max(a.status, b.status));
      expect(await ownersOf(groupId)).toHaveLength(1);
    }
  });
});

describe('leaving and removing', () => {
  test.each(['viewer', 'editor', 'analyst', 'curator'] as const)('a %s may leave the group', async (role: GroupRole) => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await crew[role].agent.delete(`/api/groups/${groupId}/members/${crew[role].user.id}`);
    expect(res.status).toBe(204);
    expect((await crew[role].agent.get(`/api/groups/${groupId}`)).status).toBe(404);
    expect((await crew[role].agent.get('/api/groups')).body.groups.map((g: { id: string }) => g.id)).not.toContain(groupId);
    const members = (await crew.owner.agent.get(`/api/groups/${groupId}/members`)).body.members;
    expect(members.map((m: { userId: string }) => m.userId)).not.toContain(crew[role].user.id);
  });

  test('an owner may leave when another owner remains', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    await crew.owner.agent.patch(`/api/groups/${groupId}/members/${crew.analyst.user.id}`).send({ role: 'owner' }).expect(200);
    expect((await crew.owner.agent.delete(`/api/groups/${groupId}/members/${crew.owner.user.id}`)).status).toBe(204);
    expect(await ownersOf(groupId)).toEqual([crew.analyst.user.id]);
  });

  test('owners and curators remove members below them; others cannot remove anyone', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    expect((await crew.analyst.agent.delete(`/api/groups/${groupId}/members/${crew.viewer.user.id}`)).status).toBe(403);
    expect((await crew.viewer.agent.delete(`/api/groups/${groupId}/members/${crew.editor.user.id}`)).status).toBe(403);
    expect(await probe.role(t, groupId, crew.viewer.user.id)).toBe('viewer');
    expect(await probe.role(t, groupId, crew.editor.user.id)).toBe('editor');

    expect((await crew.curator.agent.delete(`/api/groups/${groupId}/members/${crew.analyst.user.id}`)).status).toBe(204);
    expect((await crew.owner.agent.delete(`/api/groups/${groupId}/members/${crew.curator.user.id}`)).status).toBe(204);
    expect(await probe.role(t, groupId, crew.analyst.user.id)).toBeUndefined();
    expect(await probe.role(t, groupId, crew.curator.user.id)).toBeUndefined();
  });
});

describe('isolation between groups', () => {
  /** Group A (crewA, all roles) and group B (crewB, all roles, one open invitation). */
  async function twoGroups() {
    const a = await makeGroupWithRoles(t);
    const b = await makeGroupWithRoles(t);
    const inv = await makeInvitation(t, b.crew.owner, b.groupId);
    return { a, b, inv };
  }

  test('every member of group A, whatever their role, gets 404 on every route of group B', async () => {
    const { a, b, inv } = await twoGroups();
    const B = b.groupId;
    const victim = b.crew.viewer.user.id;
    const calls: Array<[string, (p: Person) => Promise<request.Response>]> = [
      ['GET group', (p) => p.agent.get(`/api/groups/${B}`)],
      ['PATCH group', (p) => p.agent.patch(`/api/groups/${B}`).send({ name: 'Taken Over' })],
      ['DELETE group', (p) => p.agent.delete(`/api/groups/${B}`)],
      ['GET members', (p) => p.agent.get(`/api/groups/${B}/members`)],
      ['PATCH member', (p) => p.agent.patch(`/api/groups/${B}/members/${victim}`).send({ role: 'owner' })],
      ['PATCH own membership', (p) => p.agent.patch(`/api/groups/${B}/members/${p.user.id}`).send({ role: 'owner' })],
      ['DELETE member', (p) => p.agent.delete(`/api/groups/${B}/members/${victim}`)],
      ['GET invitations', (p) => p.agent.get(`/api/groups/${B}/invitations`)],
      ['POST invitation', (p) => p.agent.post(`/api/groups/${B}/invitations`).send({ email: p.email, role: 'owner' })],
      ['DELETE invitation', (p) => p.agent.delete(`/api/groups/${B}/invitations/${inv.id}`)],
    ];
    for (const role of GROUP_ROLES) {
      for (const [what, call] of calls) {
        const res = await call(a.crew[role]);
        expect({ role, what, status: res.status, code: res.body.error?.code }).toEqual({ role, what, status: 404, code: 'not_found' });
        // The answer is the same as for a group that does not exist: nothing about B leaks.
        expect(res.body.error.message).toBe('Group not found');
      }
    }
    const seen = await b.crew.owner.agent.get(`/api/groups/${B}`);
    expect(seen.body).toMatchObject({ name: expect.not.stringContaining('Taken Over'), memberCount: 5 });
    expect(await probe.role(t, B, victim)).toBe('viewer');
    expect(await probe.invitationState(t, inv.id)).toBe('pending');
    expect(await probe.openInvitationFor(t, B, a.crew.owner.email)).toBe(false);
    // Ten sign-ups and fifty calls: more than jest's 5 s when the machine is busy.
  }, 30_000);

  test("a manager of group A cannot reach group B's members or invitations through A's routes", async () => {
    const { a, b, inv } = await twoGroups();
    const A = a.groupId;
    const victim = b.crew.viewer.user.id;
    const change = await a.crew.owner.agent.patch(`/api/groups/${A}/members/${victim}`).send({ role: 'curator' });
    expect(change.status).toBe(404);
    const remove = await a.crew.owner.agent.delete(`/api/groups/${A}/members/${victim}`);
    expect(remove.status).toBe(404);
    const revoke = await a.crew.owner.agent.delete(`/api/groups/${A}/invitations/${inv.id}`);
    expect(revoke.status).toBe(404);
    expect(await probe.role(t, b.groupId, victim)).toBe('viewer');
    expect(await probe.role(t, A, victim)).toBeUndefined();
    expect(await probe.invitationState(t, inv.id)).toBe('pending');
    const invitations = await a.crew.owner.agent.get(`/api/groups/${A}/invitations`);
    expect(invitations.body.invitations).toEqual([]);
  });

  test('listings never include group B', async () => {
    const { a, b } = await twoGroups();
    for (const role of GROUP_ROLES) {
      const list = await a.crew[role].agent.get('/api/groups');
      expect(list.body.groups.map((g: { id: string }) => g.id)).toEqual([a.groupId]);
      const me = await a.crew[role].agent.get('/api/me');
      expect(me.body.groups.map((g: { id: string }) => g.id)).toEqual([a.groupId]);
      const members = await a.crew[role].agent.get(`/api/groups/${a.groupId}/members`);
      const ids = members.body.members.map((m: { userId: string }) => m.userId);
      for (const r of GROUP_ROLES) expect(ids).not.toContain(b.crew[r].user.id);
    }
  });
});
