import { can, type GroupRole } from '../../shared/access';
import * as gq from '../../db/queries/groups';
import * as q from '../../db/queries/results';
import { linkMail, type OutgoingMail } from '../clients/mail';
import type { Ctx } from '../context';

/**
 * Mail about a result version's review (the development outbox in development and tests):
 * the group's curators and owners when a member who may not publish leaves a draft for review,
 * and the version's author when a curator publishes or retracts it. Sent after the write has
 * committed; a mail that fails is logged and the change stands.
 */

type Version = { groupId: string; groupName: string; resultId: string; version: number; meta: { title: string } };
type Actor = { id: string; role: GroupRole };

const pageOf = (ctx: Ctx, v: Version) => `${ctx.env.PUBLIC_URL}/groups/${v.groupId}/results/${v.resultId}?v=${v.version}`;

async function sendAll(ctx: Ctx, mails: OutgoingMail[]) {
  for (const m of mails) await ctx.mail.send(m).catch((err: unknown) => console.error(`[mail] ${m.kind} to ${m.to} failed:`, err));
}

/** A new draft by someone who may not publish: every curator and owner of the group is asked to review it. */
export async function draftAwaitsReview(ctx: Ctx, actor: Actor, v: Version): Promise<void> {
  if (can(actor.role, 'result.publish')) return;
  const members = await gq.listMembers(ctx.db, v.groupId);
  const author = members.find((m) => m.userId === actor.id)?.name ?? 'A member';
  const reviewers = members.filter((m) => m.userId !== actor.id && can(m.role, 'result.publish'));
  await sendAll(
    ctx,
    reviewers.map((r) =>
      linkMail({
        to: r.email,
        kind: 'review-request',
        subject: `A draft awaits review: “${v.meta.title}” v${v.version}`,
        lines: [`${author} stored version ${v.version} of “${v.meta.title}” in ${v.groupName} as a draft.`, 'As a curator you can check it and publish it, or ask for changes.'],
        linkLabel: 'Open the draft',
        url: pageOf(ctx, v),
      }),
    ),
  );
}

/** The author of a version hears that a curator published or retracted it (not when they did it themselves). */
export async function versionDecided(ctx: Ctx, actorId: string, v: Version, decision: { kind: 'published'; isPublic: boolean } | { kind: 'retracted'; reason: string }): Promise<void> {
  const author = await q.versionAuthor(ctx.db, v.groupId, v.resultId, v.version);
  if (!author || author.id === actorId) return;
  const lines =
    decision.kind === 'published'
      ? [`Version ${v.version} of “${v.meta.title}” in ${v.groupName} is published${decision.isPublic ? ' and public: anyone can open and cite it' : ' for the group'}.`, 'Published versions never change; a later version supersedes it.']
      : [`Version ${v.version} of “${v.meta.title}” in ${v.groupName} was retracted.`, `Reason given: ${decision.reason}`];
  await sendAll(ctx, [
    linkMail({
      to: author.email,
      kind: decision.kind === 'published' ? 'version-published' : 'version-retracted',
      subject: `${decision.kind === 'published' ? 'Published' : 'Retracted'}: “${v.meta.title}” v${v.version}`,
      lines,
      linkLabel: 'Open the version',
      url: pageOf(ctx, v),
    }),
  ]);
}
