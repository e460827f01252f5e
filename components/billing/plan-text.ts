import { chartPalette, colors } from '@/themes/tokens';
import { formatPrice, INSTITUTIONAL_PLAN, type PlanView } from '@/shared/plans';
import { formatBytes } from '@/shared/bytes';
import { formatDate } from '../results/format';

/**
 * How the plan screen words a group's plan and usage. Pure functions, so the wording is tested
 * without rendering.
 */

export type UsageKind = { key: 'uploads' | 'scanInputs' | 'other'; label: string; bytes: number; detail?: string; color: string };

/**
 * The kinds of stored bytes, in the order the bar stacks them. The quota counts the group's
 * counter; should it hold more than the kinds add up to, the rest is shown as such, not hidden.
 * Cached figure renders are not among them: they never count toward the quota (`renderCacheLine`).
 */
export function usageKinds(view: Pick<PlanView, 'usage'>): UsageKind[] {
  const u = view.usage;
  const kinds: UsageKind[] = [
    { key: 'uploads', label: 'Result uploads', bytes: u.uploadsBytes, color: colors.primary },
    { key: 'scanInputs', label: 'Stored scan inputs', bytes: u.scanInputsBytes, color: chartPalette[1] },
  ];
  const rest = u.totalBytes - u.uploadsBytes - u.scanInputsBytes;
  if (rest > 0) kinds.push({ key: 'other', label: 'Other stored data', bytes: rest, color: colors.borderStrong });
  return kinds;
}

/** "Cached figure renders: 3.1 MB in 12 renders, not counted toward the quota (at most 20 MB are kept)." */
export function renderCacheLine(view: Pick<PlanView, 'usage' | 'plan'>): string {
  const u = view.usage;
  return `Cached figure renders: ${formatBytes(u.rendersBytes)} in ${u.renderCount} ${u.renderCount === 1 ? 'render' : 'renders'}, not counted toward the quota (at most ${formatBytes(view.plan.renderCache.maxBytes)} are kept; the least recently used go first).`;
}

/** "1.2 MB of 50 MB used (2%)". */
export function usageSummary(view: Pick<PlanView, 'usage' | 'quotaBytes'>): string {
  const pct = view.quotaBytes > 0 ? (view.usage.totalBytes / view.quotaBytes) * 100 : 0;
  const shown = pct > 0 && pct < 1 ? '<1' : String(Math.floor(pct));
  return `${formatBytes(view.usage.totalBytes)} of ${formatBytes(view.quotaBytes)} used (${shown}%)`;
}

/** One line on the plan in force and its subscription. */
export function statusLine(view: Pick<PlanView, 'plan' | 'status' | 'interval' | 'currentPeriodEnd'>): string {
  switch (view.status) {
    case 'active': {
      const interval = view.interval ?? 'month';
      return `Billed ${interval === 'year' ? 'yearly' : 'monthly'} (${formatPrice(INSTITUTIONAL_PLAN, interval)}); renews on ${formatDate(view.currentPeriodEnd)}.`;
    }
    case 'past_due':
    case 'unpaid':
      return 'The last payment failed: the Free plan applies until it is paid.';
    case 'canceled':
      return `The Institutional plan ended on ${formatDate(view.currentPeriodEnd)}; the Free plan applies.`;
    case 'incomplete':
      return 'A checkout was started but not paid; the Free plan applies.';
    default:
      return 'No paid subscription: the Free plan applies.';
  }
}

export { INVOICE_STATUS } from '@/shared/plans';
