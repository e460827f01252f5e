import { desc, eq, sql } from 'drizzle-orm';
import request from 'supertest';
import { devMail, invitations } from '@/db/schema';
import { invitationPreviewSchema, invitationSchema, mailMessageSchema } from '@/shared/schemas/groups';
import { signUp, startTestApp, TEST_ORIGIN, uniqueEmail, type TestApp } from '../helpers/app';
import {
  addToGroup,
  invitationTokenFor,
  makeCrew,
  makeGroup,
  makeGroupWithRoles,
  makeInvitation,
  makePerson,
  probe,
  uniqueGroupName,
  type Crew,
} from '../helpers/factories';

let t: TestApp;
let crew: Crew;
beforeAll(async () => {
  t = await startTestApp();
  crew = await makeCrew(t);
}, 60_000);
afterAll(async () => t?.close());

async function mailsTo(email: string) {
  return t.ctx.db.select().from(devMail).where(eq(devMail.to, email)).orderBy(desc(devMail.createdAt));
}

describe('the invitation round trip', () => {
  test('invite → mail in the outbox → preview → sign up with that address → accept → member with the role', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const groupName = (await crew.owner.agent.get(`/api/groups/${groupId}`)).body.name as string;
    const email = uniqueEmail('new-analyst');

    const sent = await crew.curator.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role: 'analyst' });
    expect(sent.status).toBe(201);
    expect(sent.body).toEqual({ id: expect.any(String) });

    // The mail, straight from the local mail fake's table.
    const mails = await mailsTo(email);
    expect(mails).toHaveLength(1);
    const mail = mails[0]!;
    expect(mail).toMatchObject({ kind: 'invitation', subject: `${crew.curator.user.name} invited you to ${groupName} on Bandwright` });
    expect(mail.text).toContain('as analyst');
    const link = mail.text.match(new RegExp(`${TEST_ORIGIN}/invite/([A-Za-z0-9_-]+)`));
    expect(link).not.toBeNull();
    const token = link![1]!;
    expect(mail.html).toContain(`href="${TEST_ORIGIN}/invite/${token}"`);
    // Only the token's hash is stored.
    const [row] = await t.ctx.db.select().from(invitations).where(eq(invitations.id, sent.body.id));
    expect(row!.tokenHash).not.toBe(token);
    expect(JSON.stringify(row)).not.toContain(token);

    // Anyone holding the link sees whom it is for.
    const preview = await request(t.app).get(`/api/invitations/${token}`);
    expect(preview.status).toBe(200);
    expect(invitationPreviewSchema.parse(preview.body)).toEqual({
      groupName,
      role: 'analyst',
      email,
      invitedBy: crew.curator.user.name,
      state: 'pending',
    });

    // The invitee signs up with the invited address and finds the mail in their inbox.
    const invitee = await signUp(t.app, 'New Analyst', { email });
    const inbox = await invitee.agent.get('/api/dev/inbox');
    expect(inbox.status).toBe(200);
    const messages = inbox.body.messages.map((m: unknown) => mailMessageSchema.parse(m));
    expect(messages).toHaveLength(1);
    expect(messages[0]).toMatchObject({ to: email, kind: 'invitation', subject: mail.subject, text: mail.text });

    const accepted = await invitee.agent.post(`/api/invitations/${token}/accept`);
    expect(accepted.status).toBe(200);
    expect(accepted.body).toEqual({ groupId });
    const g = await invitee.agent.get(`/api/groups/${groupId}`);
    expect(g.status).toBe(200);
    expect(g.body.role).toBe('analyst');
    expect((await invitee.agent.get('/api/groups')).body.groups.map((x: { id: string }) => x.id)).toEqual([groupId]);

    const list = await crew.owner.agent.get(`/api/groups/${groupId}/invitations`);
    const invs = list.body.invitations.map((i: unknown) => invitationSchema.parse(i));
    expect(invs).toEqual([expect.objectContaining({ id: sent.body.id, email, role: 'analyst', state: 'accepted', invitedBy: crew.curator.user.name })]);
    expect((await request(t.app).get(`/api/invitations/${token}`)).body.state).toBe('accepted');
  });

  test('an address given in capitals is invited and accepted as the same address', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const email = uniqueEmail('mixed');
    const res = await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: `  ${email.toUpperCase()} `, role: 'viewer' });
    expect(res.status).toBe(201);
    const token = await invitationTokenFor(t, email);
    const invitee = await signUp(t.app, 'Mixed Case', { email });
    expect((await invitee.agent.post(`/api/invitations/${token}/accept`)).status).toBe(200);
    expect(await probe.role(t, groupId, invitee.user.id)).toBe('viewer');
  });
});

describe('who may accept, and when', () => {
  test('accepting with another account → 403, and the invitation stays open for the invitee', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId, uniqueEmail('rightful'), 'editor');
    const intruder = await makePerson(t, 'Someone Else');
    const res = await intruder.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(res.status).toBe(403);
    expect(res.body.error).toMatchObject({ code: 'forbidden', message: expect.stringContaining(inv.email) });
    expect(await probe.role(t, groupId, intruder.user.id)).toBeUndefined();
    expect(await probe.invitationState(t, inv.id)).toBe('pending');

    // A member of the group with another address cannot use it to change their own role either.
    const viewerTry = await crew.viewer.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(viewerTry.status).toBe(403);
    expect(await probe.role(t, groupId, crew.viewer.user.id)).toBe('viewer');

    const rightful = await signUp(t.app, 'Rightful', { email: inv.email });
    expect((await rightful.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(200);
  });

  test('accepting twice → 409', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const invitee = await signUp(t.app, 'Twice', { email: inv.email });
    expect((await invitee.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(200);
    const again = await invitee.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('conflict');
  });

  test('accepting twice at the same moment: one 200, one 409', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const invitee = await signUp(t.app, 'Double Click', { email: inv.email });
    const both = await Promise.all([
      invitee.agent.post(`/api/invitations/${inv.token}/accept`),
      invitee.agent.post(`/api/invitations/${inv.token}/accept`),
    ]);
    expect(both.map((r) => r.status).sort()).toEqual([200, 409]);
  });

  test('a revoked invitation → 409 on accept, and its preview says revoked', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    expect((await crew.curator.agent.delete(`/api/groups/${groupId}/invitations/${inv.id}`)).status).toBe(204);
    expect((await request(t.app).get(`/api/invitations/${inv.token}`)).body.state).toBe('revoked');
    const invitee = await signUp(t.app, 'Too Late', { email: inv.email });
    const res = await invitee.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/revoked/);
    expect(await probe.role(t, groupId, invitee.user.id)).toBeUndefined();
    // Revoking again: there is no open invitation any more.
    expect((await crew.curator.agent.delete(`/api/groups/${groupId}/invitations/${inv.id}`)).status).toBe(404);
  });

  test('an expired invitation → 410 on accept, and its preview says expired', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    await t.ctx.db.update(invitations).set({ expiresAt: sql`now() - interval '1 minute'` }).where(eq(invitations.id, inv.id));
    expect((await request(t.app).get(`/api/invitations/${inv.token}`)).body.state).toBe('expired');
    const invitee = await signUp(t.app, 'Expired', { email: inv.email });
    const res = await invitee.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(res.status).toBe(410);
    expect(res.body.error.code).toBe('expired');
    expect(await probe.role(t, groupId, invitee.user.id)).toBeUndefined();
  });

  test('an unknown token → 404; a malformed one → 400; anonymous accept → 401', async () => {
    const unknown = 'A'.repeat(32);
    expect((await request(t.app).get(`/api/invitations/${unknown}`)).status).toBe(404);
    const someone = await makePerson(t);
    const res = await someone.agent.post(`/api/invitations/${unknown}/accept`);
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('not_found');
    const bad = await request(t.app).get('/api/invitations/short');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('params.token');

    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    expect((await request(t.app).post(`/api/invitations/${inv.token}/accept`)).status).toBe(401);
    expect(await probe.invitationState(t, inv.id)).toBe('pending');
  });

  test('the link of a deleted group no longer works', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const invitee = await signUp(t.app, 'Orphan', { email: inv.email });
    await crew.owner.agent.delete(`/api/groups/${groupId}`).expect(204);
    expect((await invitee.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(404);
    expect((await invitee.agent.get('/api/groups')).body.groups).toEqual([]);
  });
});

describe('who may be invited, by whom', () => {
  test('a second open invitation to the same address → 409; after revoking, a new one is allowed', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const dup = await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: inv.email.toUpperCase(), role: 'analyst' });
    expect(dup.status).toBe(409);
    expect(dup.body.error.code).toBe('conflict');
    expect(await mailsTo(inv.email)).toHaveLength(1);
    await crew.owner.agent.delete(`/api/groups/${groupId}/invitations/${inv.id}`).expect(204);
    expect((await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: inv.email, role: 'analyst' })).status).toBe(201);
  });

  test('the same address invited twice at the same moment: one 201, one 409', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const email = uniqueEmail('raced');
    const both = await Promise.all([
      crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role: 'viewer' }),
      crew.curator.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role: 'editor' }),
    ]);
    expect(both.map((r) => r.status).sort()).toEqual([201, 409]);
    expect(await mailsTo(email)).toHaveLength(1);
  });

  test('the same address may have open invitations to two different groups', async () => {
    const a = await makeGroup(t, crew.owner);
    const b = await makeGroup(t, crew.owner);
    const email = uniqueEmail('popular');
    expect((await crew.owner.agent.post(`/api/groups/${a}/invitations`).send({ email, role: 'viewer' })).status).toBe(201);
    expect((await crew.owner.agent.post(`/api/groups/${b}/invitations`).send({ email, role: 'viewer' })).status).toBe(201);
  });

  test('inviting someone who is already a member → 409', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const res = await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: crew.editor.email, role: 'curator' });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain('already a member');
    expect(await probe.role(t, groupId, crew.editor.user.id)).toBe('editor');
    expect(await mailsTo(crew.editor.email)).toHaveLength(0);
  });

  test('a curator cannot invite an owner (403) but can invite up to curator', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const email = uniqueEmail('would-be-owner');
    const res = await crew.curator.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role: 'owner' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('forbidden');
    expect(await probe.openInvitationFor(t, groupId, email)).toBe(false);
    expect(await mailsTo(email)).toHaveLength(0);
    expect((await crew.curator.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role: 'curator' })).status).toBe(201);
    expect((await crew.owner.agent.post(`/api/groups/${groupId}/invitations`).send({ email: uniqueEmail('co-owner'), role: 'owner' })).status).toBe(201);
  });

  test('an accepted invitation does not lower the role of someone who joined meanwhile', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId, uniqueEmail('joined-meanwhile'), 'viewer');
    const invitee = await signUp(t.app, 'Meanwhile', { email: inv.email });
    await addToGroup(t, groupId, invitee, 'curator');
    expect((await invitee.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(200);
    expect(await probe.role(t, groupId, invitee.user.id)).toBe('curator');
  });
});

describe('the mail', () => {
  test('user text in the HTML is escaped: a group name or inviter name with markup shows as text', async () => {
    const owner = await makePerson(t, 'Eve <img src=x onerror="alert(1)">');
    const groupName = `<script>alert("x")</script> & Co ${uniqueGroupName('Escapes')}`;
    const groupId = await makeGroup(t, owner, groupName);
    const inv = await makeInvitation(t, owner, groupId);
    const [mail] = await mailsTo(inv.email);
    expect(mail!.html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; Co');
    expect(mail!.html).toContain('Eve &lt;img src=x onerror=&quot;alert(1)&quot;&gt;');
    expect(mail!.html).not.toMatch(/<script|<img/i);
    // The plain-text part and the preview carry the text as it was typed.
    expect(mail!.text).toContain(groupName);
    expect((await request(t.app).get(`/api/invitations/${inv.token}`)).body.groupName).toBe(groupName);
  });
});
