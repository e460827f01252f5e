import { desc, eq, sql } from 'drizzle-orm';
import request from 'supertest';
import { createEmailVerificationToken } from 'better-auth/api';
import { devMail, invitations, user } from '@/db/schema';
import { escapeHtml } from '@/server/lib/html';
import { invitationPreviewSchema, invitationSchema, mailMessageSchema } from '@/shared/schemas/groups';
import { linkInInbox, PASSWORD, signUp, startTestApp, TEST_ORIGIN, uniqueEmail, verifyAddress, type TestApp } from '../helpers/app';
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

    // The invitee signs up with the invited address and finds the invitation in their inbox,
    // beside the mail that verifies the address.
    const invitee = await signUp(t.app, 'New Analyst', { email });
    const inbox = await invitee.agent.get('/api/dev/inbox');
    expect(inbox.status).toBe(200);
    const messages = inbox.body.messages.map((m: unknown) => mailMessageSchema.parse(m));
    expect(messages.map((m: { kind: string }) => m.kind).sort()).toEqual(['invitation', 'verification']);
    expect(messages.find((m: { kind: string }) => m.kind === 'invitation')).toMatchObject({ to: email, subject: mail.subject, text: mail.text });

    // Not before the address is verified.
    const early = await invitee.agent.post(`/api/invitations/${token}/accept`);
    expect(early.status).toBe(403);
    expect(early.body.error).toMatchObject({ code: 'email_unverified', message: expect.stringContaining(`Verify your address ${email}`) });
    expect(await probe.invitationState(t, sent.body.id)).toBe('pending');
    await verifyAddress(invitee.agent);

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
    const invitee = await signUp(t.app, 'Mixed Case', { email, verified: true });
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

    const rightful = await signUp(t.app, 'Rightful', { email: inv.email, verified: true });
    expect((await rightful.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(200);
  });

  test('accepting twice → 409', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const invitee = await signUp(t.app, 'Twice', { email: inv.email, verified: true });
    expect((await invitee.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(200);
    const again = await invitee.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('conflict');
  });

  test('accepting twice at the same moment: one 200, one 409', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const invitee = await signUp(t.app, 'Double Click', { email: inv.email, verified: true });
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
    const invitee = await signUp(t.app, 'Too Late', { email: inv.email, verified: true });
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
    const invitee = await signUp(t.app, 'Expired', { email: inv.email, verified: true });
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
    const invitee = await signUp(t.app, 'Orphan', { email: inv.email, verified: true });
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
    expect((await mailsTo(crew.editor.email)).filter((m) => m.kind === 'invitation')).toHaveLength(0);
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
    const invitee = await signUp(t.app, 'Meanwhile', { email: inv.email, verified: true });
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

describe('a verified address is needed to accept', () => {
  const verificationMails = async (email: string) => (await mailsTo(email)).filter((m) => m.kind === 'verification');

  test('sign-up mails a link to the app’s verification screen, carrying the path given at sign-up; its token verifies the address', async () => {
    const email = uniqueEmail('verifies');
    const agent = request.agent(t.app).set('Origin', TEST_ORIGIN);
    const up = await agent.post('/api/auth/sign-up/email').send({ name: 'Vera Fied', email, password: PASSWORD, callbackURL: '/invite/some-token-from-a-mail' });
    expect(up.status).toBe(200);
    expect((await agent.get('/api/me')).body.user).toMatchObject({ email, emailVerified: false });

    const [mail, ...more] = await verificationMails(email);
    expect(more).toEqual([]);
    expect(mail).toMatchObject({ subject: 'Verify your address on Bandwright' });
    expect(mail!.text).toContain('Vera Fied');
    const link = await linkInInbox(agent, 'verification');
    expect(`${link.origin}${link.pathname}`).toBe(`${TEST_ORIGIN}/verify-email`);
    expect(link.searchParams.get('next')).toBe('/invite/some-token-from-a-mail');
    expect(mail!.html).toContain(`href="${escapeHtml(link.href)}"`);

    // What the screen does with the token.
    const verified = await agent.get(`/api/auth/verify-email?token=${link.searchParams.get('token')}`);
    expect(verified.status).toBe(200);
    expect(verified.body).toMatchObject({ status: true });
    expect((await agent.get('/api/me')).body.user.emailVerified).toBe(true);
    const [row] = await t.ctx.db.select({ v: user.emailVerified }).from(user).where(eq(user.email, email));
    expect(row!.v).toBe(true);
    // The link works on another device too (no session needed), and again without harm.
    expect((await request(t.app).get(`/api/auth/verify-email?token=${link.searchParams.get('token')}`)).status).toBe(200);
  });

  test('a path that leads off the app is refused at sign-up (no open redirect through the mail)', async () => {
    for (const callbackURL of ['https://elsewhere.example/phish', '//elsewhere.example/x', '/\\elsewhere.example']) {
      const res = await request(t.app).post('/api/auth/sign-up/email').set('Origin', TEST_ORIGIN).send({ name: 'Redirected', email: uniqueEmail('redirect'), password: PASSWORD, callbackURL });
      expect(res.status).toBe(400);
      expect(res.body.error.details).toEqual([{ field: 'callbackURL', message: 'must be a path in this app, starting with a single /' }]);
    }
  });

  test('accepting from an unverified address → 403 email_unverified and nothing changes; a new mail can be asked for, and after its link the same invitation is accepted', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId, uniqueEmail('unverified'), 'editor');
    const invitee = await signUp(t.app, 'Not Yet', { email: inv.email });

    const res = await invitee.agent.post(`/api/invitations/${inv.token}/accept`);
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('email_unverified');
    expect(res.body.error.message).toMatch(/verification mail/);
    expect(await probe.role(t, groupId, invitee.user.id)).toBeUndefined();
    expect(await probe.invitationState(t, inv.id)).toBe('pending');

    // The first mail was lost: ask for another one that leads back to the invitation.
    const resend = await invitee.agent.post('/api/auth/send-verification-email').send({ email: inv.email, callbackURL: `/invite/${inv.token}` });
    expect(resend.status).toBe(200);
    expect(resend.body).toEqual({ status: true });
    expect(await verificationMails(inv.email)).toHaveLength(2);
    const link = await linkInInbox(invitee.agent, 'verification');
    expect(link.searchParams.get('next')).toBe(`/invite/${inv.token}`);
    await verifyAddress(invitee.agent);

    expect((await invitee.agent.post(`/api/invitations/${inv.token}/accept`)).status).toBe(200);
    expect(await probe.role(t, groupId, invitee.user.id)).toBe('editor');
  });

  test('an API token of an unverified user cannot accept either', async () => {
    const { groupId } = await makeGroupWithRoles(t, { crew });
    const inv = await makeInvitation(t, crew.owner, groupId);
    const invitee = await signUp(t.app, 'Scripted', { email: inv.email });
    const minted = await invitee.agent.post('/api/tokens').send({ name: 'ci' });
    expect(minted.status).toBe(201);
    const res = await request(t.app).post(`/api/invitations/${inv.token}/accept`).set('Authorization', `Bearer ${minted.body.token}`);
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('email_unverified');
    expect(await probe.invitationState(t, inv.id)).toBe('pending');
  });

  test('asking for a verification mail: a bad address → 400 naming it; another address than one’s own or an already verified one → 400; no mail is sent', async () => {
    const someone = await signUp(t.app, 'Asker');
    const bad = await someone.agent.post('/api/auth/send-verification-email').send({ email: 'not-an-address' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details).toEqual([{ field: 'email', message: 'must be a valid e-mail address' }]);

    const other = uniqueEmail('other');
    const mismatch = await someone.agent.post('/api/auth/send-verification-email').send({ email: other });
    expect(mismatch.status).toBe(400);
    expect(Object.keys(mismatch.body)).toEqual(['error']);
    expect(await mailsTo(other)).toHaveLength(0);

    const verified = await signUp(t.app, 'Done Already', { verified: true });
    const again = await verified.agent.post('/api/auth/send-verification-email').send({ email: verified.email });
    expect(again.status).toBe(400);
    expect(again.body.error.code).toBe('email_already_verified');
    expect(await verificationMails(verified.email)).toHaveLength(1);
  });

  test('signed out, the answer is the same for an unknown, a verified and an unverified address; only the last gets mail', async () => {
    const unverified = await signUp(t.app, 'Signed Out Later');
    const verified = await signUp(t.app, 'Verified Later', { verified: true });
    const unknown = uniqueEmail('nobody');
    const ask = (email: string) => request(t.app).post('/api/auth/send-verification-email').set('Origin', TEST_ORIGIN).send({ email });
    const answers = [await ask(unknown), await ask(verified.email), await ask(unverified.email)];
    expect(answers.map((a) => [a.status, a.body])).toEqual(Array(3).fill([200, { status: true }]));
    expect(await mailsTo(unknown)).toHaveLength(0);
    expect(await verificationMails(verified.email)).toHaveLength(1);
    expect(await verificationMails(unverified.email)).toHaveLength(2);
  });

  test('a tampered or expired verification token verifies nothing', async () => {
    const person = await signUp(t.app, 'Tamper Proof');
    const token = (await linkInInbox(person.agent, 'verification')).searchParams.get('token')!;
    const tampered = `${token.slice(0, -2)}${token.endsWith('AA') ? 'BB' : 'AA'}`;
    const bad = await person.agent.get(`/api/auth/verify-email?token=${tampered}`);
    expect(bad.status).toBe(401);
    expect(bad.body.error.code).toBe('invalid_token');

    const expiredToken = await createEmailVerificationToken(t.ctx.env.AUTH_SECRET, person.email, undefined, -60, { userId: person.user.id });
    const expired = await person.agent.get(`/api/auth/verify-email?token=${expiredToken}`);
    expect(expired.status).toBe(401);
    expect(expired.body.error.code).toBe('token_expired');
    expect((await person.agent.get('/api/me')).body.user.emailVerified).toBe(false);
  });
});
