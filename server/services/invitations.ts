import { createHash, randomBytes } from 'node:crypto';
import { assignableRoles, ROLE_LABELS, type GroupRole } from '../../shared/access';
import type { Invitation, InvitationPreview, InviteInput } from '../../shared/schemas/groups';
import * as gq from '../../db/queries/groups';
import * as q from '../../db/queries/invitations';
import type { Ctx } from '../context';
import { AppError, conflict, forbidden, notFound } from '../lib/errors';
import { isAddressVerified } from './account';
import { linkMail } from '../clients/mail';

const INVITATION_DAYS = 14;
const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

export async function listInvitations(ctx: Ctx, groupId: string): Promise<Invitation[]> {
  return (await q.listInvitations(ctx.db, groupId)).map((i) => ({
    ...i,
    expiresAt: i.expiresAt.toISOString(),
    createdAt: i.createdAt.toISOString(),
  }));
}

/** Creates an invitation and mails its link; the token exists only in the mail. */
export async function invite(ctx: Ctx, groupId: string, actor: { id: string; name: string; role: GroupRole }, input: InviteInput) {
  if (!assignableRoles(actor.role).includes(input.role)) throw forbidden(`A ${actor.role} cannot invite someone as ${input.role}`);
  const members = await gq.listMembers(ctx.db, groupId);
  if (members.some((m) => m.email.toLowerCase() === input.email)) throw conflict(`${input.email} is already a member of this group`);
  const alreadyInvited = () => conflict(`${input.email} already has an open invitation; revoke it first to send a new one`);
  if (await q.findPendingInvitation(ctx.db, groupId, input.email)) throw alreadyInvited();
  const token = randomBytes(24).toString('base64url');
  const expiresAt = new Date(Date.now() + INVITATION_DAYS * 86400_000);
  const row = await q.insertInvitation(ctx.db, { groupId, email: input.email, role: input.role, tokenHash: hashToken(token), invitedBy: actor.id, expiresAt });
  if (!row) throw alreadyInvited();
  const groupName = (await gq.getGroupName(ctx.db, groupId)) ?? 'a group';
  await ctx.mail.send(
    linkMail({
      to: input.email,
      kind: 'invitation',
      subject: `${actor.name} invited you to ${groupName} on Bandwright`,
      lines: [
        `${actor.name} invited you to join “${groupName}” on Bandwright as ${ROLE_LABELS[input.role].toLowerCase()}.`,
        `The invitation is valid for ${INVITATION_DAYS} days. Sign in or create an account with this address (${input.email}), and verify it, to accept it.`,
      ],
      linkLabel: 'Open the invitation',
      url: `${ctx.env.PUBLIC_URL}/invite/${token}`,
    }),
  );
  return { id: row.id };
}

export async function revokeInvitation(ctx: Ctx, groupId: string, invitationId: string) {
  if (!(await q.revokeInvitation(ctx.db, groupId, invitationId))) throw notFound('Open invitation');
}

export async function previewInvitation(ctx: Ctx, token: string): Promise<InvitationPreview> {
  const inv = await q.findInvitationByTokenHash(ctx.db, hashToken(token));
  if (!inv) throw notFound('Invitation');
  const state = inv.state === 'pending' && inv.expiresAt < new Date() ? 'expired' : inv.state;
  return { groupName: inv.groupName, role: inv.role, email: inv.email, invitedBy: inv.invitedBy, state };
}

/**
 * Accepts an invitation for the signed-in user, whose address must be the invited one and
 * verified: otherwise anyone could sign up with an address they do not own and take the place
 * meant for its owner.
 */
export async function acceptInvitation(ctx: Ctx, token: string, user: { id: string; email: string }) {
  return ctx.db.transaction(async (tx) => {
    const inv = await q.findInvitationByTokenHash(tx, hashToken(token), true);
    if (!inv) throw notFound('Invitation');
    if (inv.state !== 'pending') throw conflict(`This invitation was already ${inv.state}`);
    if (inv.expiresAt < new Date()) throw new AppError(410, 'expired', 'This invitation has expired; ask for a new one');
    if (inv.email.toLowerCase() !== user.email.toLowerCase()) {
      throw forbidden(`This invitation is for ${inv.email}; sign in with that address to accept it`);
    }
    if (!(await isAddressVerified(tx, user.id))) {
      throw new AppError(
        403,
        'email_unverified',
        `Verify your address ${user.email} first: open the link in the verification mail, or have a new one sent (POST /api/auth/send-verification-email)`,
      );
    }
    await gq.addMember(tx, inv.groupId, user.id, inv.role);
    await q.markInvitationAccepted(tx, inv.id);
    return { groupId: inv.groupId };
  });
}
