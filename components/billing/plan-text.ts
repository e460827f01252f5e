import { chartPalette, colors } from '@/themes/tokens';
import { formatPrice, INSTITUTIONAL_PLAN, type PlanView } from '@/shared/plans';
import { formatBytes } from '@/shared/bytes';
import { formatDate } from '../results/format';

/**
 * How the plan screen words a group's plan and usage. Pure functions, so the wording is tested
 * without rendering.
 */

export type UsageKind = { key: 'uploads' | 'scanInputs' | 'renders' | 'other'; label: string; bytes: number; detail?: string; color: string };

/**
 * The kinds of stored bytes, in the order the bar stacks them. The quota counts the group's
 * counter; should it hold more than the kinds add up to, the rest is shown as such, not hidden.
 */
export function usageKinds(view: Pick<PlanView, 'usage'>): UsageKind[] {
  const u = view.usage;
  const kinds: UsageKind[] = [
    { key: 'uploads', label: 'Result uploads', bytes: u.uploadsBytes, color: colors.primary },
    { key: 'scanInputs', label: 'Stored scan inputs', bytes: u.scanInputsBytes, color: chartPalette[1] },
    { key: 'renders', label: 'Cached figure renders', bytes: u.rendersBytes, detail: `${u.renderCount} ${u.renderCount === 1 ? 'render' : 'renders'}`, color: chartPalette[2] },
  ];
  const rest = u.totalBytes - u.uploadsBytes - u.scanInputsBytes - u.rendersBytes;
  if (rest > 0) kinds.push({ key: 'other', label: 'Other stored data', bytes: rest, color: colors.borderStrong });
  return kinds;
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

export const INVOICE_STATUS: Record<string, string> = { paid: 'Paid', open: 'Payment failed', void: 'Void', draft: 'Draft', uncollectible: 'Not collected' };
