import { FREE_PLAN, INSTITUTIONAL_PLAN, type Plan } from '../../shared/plans';
import { formatBytes } from '../../shared/bytes';
import * as q from '../../db/queries/billing';
import { queuedCost } from '../../db/queries/scan-tasks';
import type { Executor } from '../../db/client';
import { AppError } from '../lib/errors';
import { formatDate } from '../../shared/dates';

/**
 * Plans in force, what a lapsed plan means (read-only), and the plan's scan queue limit. The
 * storage quota and the render cache's bounds are applied by storage accounting
 * (server/services/storage.ts), which reads the plan in force from here.
 */

export type AccountState = Pick<q.BillingAccount, 'plan' | 'status' | 'currentPeriodEnd' | 'lastEventAt' | 'updatedAt'> | undefined;

/**
 * Why a group that paid is back on the free plan: its payment failed (the provider keeps
 * retrying: past_due, unpaid) or the subscription ended (cancelled, or never completed).
 */
export type Lapse = { reason: 'payment_failed' | 'plan_ended'; since: Date | null };

export type EffectivePlan = { plan: Plan; lapse: Lapse | null };

/**
 * The plan in force for a group's billing account: Institutional only while its subscription is
 * active (the provider's "trialing" is stored as active too); a failed payment or an ended
 * subscription falls back to the free plan's quota. Nothing is deleted: a group above the free
 * quota just cannot add bytes until it pays again or deletes enough (see `reserve` in storage.ts).
 */
export function effectivePlan(account: AccountState): EffectivePlan {
  if (!account || account.status === 'none') return { plan: FREE_PLAN, lapse: null };
  if (account.status === 'active' && account.plan === 'institutional') return { plan: INSTITUTIONAL_PLAN, lapse: null };
  if (account.status === 'past_due' || account.status === 'unpaid') return { plan: FREE_PLAN, lapse: { reason: 'payment_failed', since: account.lastEventAt ?? account.updatedAt } };
  if (account.status === 'canceled') return { plan: FREE_PLAN, lapse: { reason: 'plan_ended', since: account.currentPeriodEnd ?? account.updatedAt } };
  // incomplete: a checkout that never finished paying; the group stays on Free, nothing lapsed.
  return { plan: FREE_PLAN, lapse: null };
}

/** The plan in force for a group now. */
export async function planOfGroup(db: Executor, groupId: string): Promise<EffectivePlan> {
  return effectivePlan(await q.getBillingAccount(db, groupId));
}

const day = (d: Date | null) => (d ? ` on ${formatDate(d, { utc: true })}` : '');

/** What a lapsed plan means for the group and how an owner fixes it (plan screen and 402 answers). */
export function lapseNotice(lapse: Lapse, usedBytes: number): string {
  const over = usedBytes > FREE_PLAN.quotaBytes;
  const why =
    lapse.reason === 'payment_failed'
      ? `The payment for this group's Institutional plan failed${day(lapse.since)}, so the Free plan's ${formatBytes(FREE_PLAN.quotaBytes)} applies until it is paid.`
      : `This group's Institutional plan ended${day(lapse.since)}, so the Free plan's ${formatBytes(FREE_PLAN.quotaBytes)} applies.`;
  const state = over
    ? ` The group uses ${formatBytes(usedBytes)}, so it is read-only: nothing was deleted, and reading, downloading and deleting still work, but nothing new can be stored.`
    : '';
  const fix =
    lapse.reason === 'payment_failed'
      ? ' An owner can update the card under Manage billing on the Plan screen (the open invoice is then charged again)'
      : ' An owner can subscribe again on the Plan screen';
  return `${why}${state}${fix}${over ? `, or delete data until the group uses less than ${formatBytes(FREE_PLAN.quotaBytes)}.` : '.'}`;
}

/** Read-only: a lapsed plan and more stored than the free plan allows. */
export function isReadOnly(p: EffectivePlan, usedBytes: number): boolean {
  return p.lapse !== null && usedBytes > FREE_PLAN.quotaBytes;
}

/** The most pseudo-experiments per hypothesis each of `points` points may have under the plan's queue limit. */
export function planToysPerPoint(plan: Plan, points: number): number {
  return Math.floor(plan.scanQueueLimit / points);
}

/**
 * Checks that the group may queue a scan of `points` grid points with `perPoint` pseudo-experiments
 * per hypothesis each (1 for an asymptotic point) under the plan in force: what it has queued or
 * running now plus this scan must stay within `scanQueueLimit`. Call it in the transaction that
 * inserts the scan's tasks, after the storage `reserve` (whose lock on the group row makes two
 * starts of the same group queue, so they cannot both squeeze in). Throws 413 `scan_over_plan`
 * when the scan alone is too large for the plan, 429 `scan_queue_full` when it would fit once the
 * group's queued work has finished; both name the field (options.toys, or points for an
 * asymptotic scan) and the limit.
 */
export async function assertScanQueueRoom(tx: Executor, groupId: string, scan: { points: number; perPoint: number; toys: boolean; field?: string }): Promise<void> {
  const { plan } = await planOfGroup(tx, groupId);
  const limit = plan.scanQueueLimit;
  const cost = scan.points * scan.perPoint;
  const n = (v: number) => v.toLocaleString('en');
  const field = scan.field ?? (scan.toys ? 'options.toys' : 'points');
  const what = scan.toys ? `${n(scan.points)} points × ${n(scan.perPoint)} pseudo-experiments = ${n(cost)}` : `${n(scan.points)} asymptotic points`;
  const upgrade = plan.id === 'free' ? ' An owner can upgrade to the Institutional plan (Plan screen) for more.' : '';
  if (cost > limit) {
    const most = scan.toys ? `at most ${n(planToysPerPoint(plan, scan.points))} with ${n(scan.points)} points` : `at most ${n(limit)} points`;
    throw new AppError(
      413,
      'scan_over_plan',
      `This scan queues ${what}, more than the ${plan.name} plan lets a group have queued at once (${n(limit)} pseudo-experiments, scanQueueLimit). Use fewer ${scan.toys ? 'pseudo-experiments or points' : 'points'}, or split the scan.${upgrade}`,
      [{ field, message: `${most}: the ${plan.name} plan's limit is ${n(limit)} queued pseudo-experiments` }],
    );
  }
  const queued = await queuedCost(tx, groupId);
  if (queued + cost > limit) {
    const room = Math.max(0, limit - queued);
    throw new AppError(
      429,
      'scan_queue_full',
      `This group's scans already have ${n(queued)} pseudo-experiments queued or running; this scan adds ${what}, beyond the ${plan.name} plan's limit of ${n(limit)} at once. Start it when those scans have finished, or cancel one.${upgrade}`,
      [{ field, message: `room for ${n(room)} more pseudo-experiments now (limit ${n(limit)} on the ${plan.name} plan, ${n(queued)} queued)` }],
    );
  }
}
