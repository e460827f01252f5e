import { z } from 'zod';
import { GB, MB } from './bytes';

/**
 * Storage plans: the one place their numbers live. The server enforces them
 * (server/services/plans.ts), the app shows the same numbers on the Plan screen, and the payment
 * provider is sent the prices from here (no price objects to keep in sync elsewhere).
 * Sizes are binary: 1 MB = 1024² bytes, like the upload limit.
 */

export const PLAN_IDS = ['free', 'institutional'] as const;
export type PlanId = (typeof PLAN_IDS)[number];

export const BILLING_INTERVALS = ['month', 'year'] as const;
export type BillingInterval = (typeof BILLING_INTERVALS)[number];

/** Subscription states as stored (the provider's states folded into these). */
export const SUBSCRIPTION_STATUSES = ['none', 'incomplete', 'active', 'past_due', 'canceled', 'unpaid'] as const;
export type SubscriptionStatus = (typeof SUBSCRIPTION_STATUSES)[number];

export type Plan = {
  id: PlanId;
  name: string;
  /** One line for the plan screen. */
  summary: string;
  /** Bytes of uploads and stored scan inputs the group may keep (what the group stores for its results). */
  quotaBytes: number;
  /**
   * Cached figure renders: how many and how many bytes the group keeps, and how long an unused
   * one stays. Renders never count toward the quota (anyone may ask for a public figure, so what
   * they take must not decide what members can store); beyond these bounds the least recently
   * used are dropped.
   */
  renderCache: { maxRenders: number; maxBytes: number; maxAgeDays: number };
  /**
   * Scan work the group may have queued or running at once, in pseudo-experiments per hypothesis
   * summed over the grid points of its unfinished scans (points × toys; an asymptotic point
   * counts 1). Keeps one group from filling the shared workers for hours; the queue is also fair
   * between groups whatever this limit.
   */
  scanQueueLimit: number;
  /** Prices in cents per billing interval; null for the free plan. */
  prices: Record<BillingInterval, number> | null;
  currency: 'eur';
};

/** The plans. Prices are invented for this product. */
export const PLANS: Record<PlanId, Plan> = {
  free: {
    id: 'free',
    name: 'Free',
    summary: 'For trying Bandwright out and for small groups.',
    quotaBytes: 50 * MB,
    renderCache: { maxRenders: 100, maxBytes: 20 * MB, maxAgeDays: 7 },
    scanQueueLimit: 200_000,
    prices: null,
    currency: 'eur',
  },
  institutional: {
    id: 'institutional',
    name: 'Institutional',
    summary: 'For analysis teams and combination boards, paid by the institute.',
    quotaBytes: 20 * GB,
    renderCache: { maxRenders: 20_000, maxBytes: 2 * GB, maxAgeDays: 180 },
    scanQueueLimit: 20_000_000,
    prices: { month: 4_900, year: 49_000 },
    currency: 'eur',
  },
};

export const FREE_PLAN = PLANS.free;
export const INSTITUTIONAL_PLAN = PLANS.institutional;

/** "€49.00" from cents. */
export function formatMoney(cents: number, currency: string): string {
  const symbol: Record<string, string> = { eur: '€', usd: '$', gbp: '£', chf: 'CHF ' };
  const amount = (cents / 100).toFixed(2);
  const s = symbol[currency.toLowerCase()];
  return s ? `${s}${amount}` : `${amount} ${currency.toUpperCase()}`;
}

/** "€49.00 per month" / "€490.00 per year". */
export function formatPrice(plan: Plan, interval: BillingInterval): string {
  if (!plan.prices) return 'free';
  return `${formatMoney(plan.prices[interval], plan.currency)} per ${interval}`;
}

/** Share of the quota in use, 0…1 (more than 1 when over quota; 0 for an empty quota). */
export function usageFraction(usedBytes: number, quotaBytes: number): number {
  return quotaBytes > 0 ? usedBytes / quotaBytes : 0;
}

// ---------------------------------------------------------------------------------------------
// API payloads

export const checkoutSchema = z.object({
  interval: z.enum(BILLING_INTERVALS, { error: 'must be "month" or "year"' }),
});
export type CheckoutInput = z.infer<typeof checkoutSchema>;

export const planSchema = z.object({
  id: z.enum(PLAN_IDS),
  name: z.string(),
  summary: z.string(),
  quotaBytes: z.number(),
  renderCache: z.object({ maxRenders: z.number(), maxBytes: z.number(), maxAgeDays: z.number() }),
  scanQueueLimit: z.number(),
  prices: z.object({ month: z.number(), year: z.number() }).nullable(),
  currency: z.literal('eur'),
});

export const usageSchema = z.object({
  /** The counter that quotas are checked against (always uploads plus scan inputs). */
  totalBytes: z.number(),
  uploadsBytes: z.number(),
  scanInputsBytes: z.number(),
  /** The render cache: not part of `totalBytes`, bounded by the plan's `renderCache` instead. */
  rendersBytes: z.number(),
  renderCount: z.number(),
});
export type Usage = z.infer<typeof usageSchema>;

/** GET /api/groups/:groupId/plan */
export const planViewSchema = z.object({
  groupId: z.string(),
  /** The plan in force now (Free when an Institutional subscription lapsed). */
  plan: planSchema,
  status: z.enum(SUBSCRIPTION_STATUSES),
  interval: z.enum(BILLING_INTERVALS).nullable(),
  currentPeriodEnd: z.string().nullable(),
  usage: usageSchema,
  quotaBytes: z.number(),
  /** Storage-adding writes are refused until usage is under the free quota or payment resumes. */
  readOnly: z.boolean(),
  /** Why the group is read-only or why its plan lapsed, and how to fix it; null when all is well. */
  notice: z.string().nullable(),
  /** The group has a customer at the payment provider (Manage billing works). */
  hasBillingAccount: z.boolean(),
  plans: z.array(planSchema),
});
export type PlanView = z.infer<typeof planViewSchema>;

export const invoiceSchema = z.object({
  id: z.string(),
  amountCents: z.number(),
  currency: z.string(),
  status: z.string(),
  periodStart: z.string().nullable(),
  periodEnd: z.string().nullable(),
  paidAt: z.string().nullable(),
  createdAt: z.string(),
});
export type Invoice = z.infer<typeof invoiceSchema>;

/** How an invoice's state reads, on the plan screen and on the invoice itself. */
export const INVOICE_STATUS: Record<string, string> = { paid: 'Paid', open: 'Payment failed', void: 'Void', draft: 'Draft', uncollectible: 'Not collected' };

/** Route parameters of one invoice: the provider's id (letters, digits and underscores). */
export const invoiceParams = z.object({
  groupId: z.uuid({ error: 'must be a valid id' }),
  invoiceId: z.string().regex(/^[A-Za-z0-9_]{1,80}$/, 'must be an invoice id (letters, digits, underscores)'),
});
