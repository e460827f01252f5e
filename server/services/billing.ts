import Stripe from 'stripe';
import { BILLING_INTERVALS, formatMoney, FREE_PLAN, INSTITUTIONAL_PLAN, PLANS, type BillingInterval, type Invoice, type PlanView, type SubscriptionStatus } from '../../shared/plans';
import { formatBytes } from '../../shared/bytes';
import { possessive } from '../../shared/words';
import * as q from '../../db/queries/billing';
import { getGroupName } from '../../db/queries/groups';
import type { Ctx } from '../context';
import type { Executor } from '../../db/client';
import { AppError, notFound } from '../lib/errors';
import { linkMail, type OutgoingMail } from '../clients/mail';
import { effectivePlan, isReadOnly, lapseNotice } from './plans';
import * as storage from './storage';
import { formatDate } from '../../shared/dates';

/**
 * Billing through the payment provider's official SDK: customers, Checkout sessions on prices
 * kept by lookup key, the billing portal, and webhook events that move a group's plan. In
 * development and tests the SDK talks to the local fake (server/fakes/stripe) on loopback.
 */

/** Signed events older than this are refused (the provider's own default tolerance). */
export const WEBHOOK_TOLERANCE_SECONDS = 300;

const PRODUCT_ID = 'bandwright_institutional';
const lookupKey = (interval: BillingInterval) => `bandwright_institutional_${interval}`;

function requireStripe(ctx: Ctx): Stripe {
  if (!ctx.stripe) throw new AppError(503, 'billing_unavailable', 'Billing is not configured on this server (STRIPE_SECRET_KEY is not set)');
  return ctx.stripe;
}

/** Calls the provider, turning its failures into answers a user can act on. */
async function provider<T>(what: string, fn: () => Promise<T>): Promise<T> {
  try {
    return await fn();
  } catch (e) {
    if (e instanceof Stripe.errors.StripeConnectionError) {
      throw new AppError(502, 'payment_provider_unreachable', `The payment provider cannot be reached (${what}); nothing was charged. Try again in a minute`);
    }
    if (e instanceof Stripe.errors.StripeError) {
      console.error(`[billing] ${what}: ${e.type} ${e.code ?? ''} ${e.message}`);
      throw new AppError(502, 'payment_provider_error', `The payment provider refused ${what}: ${e.message}`);
    }
    throw e;
  }
}

// ---------------------------------------------------------------------------------------------
// Plan, usage and invoices

export async function getPlanView(ctx: Ctx, groupId: string): Promise<PlanView> {
  const [account, usage] = await Promise.all([q.getBillingAccount(ctx.db, groupId), storage.usage(ctx.db, groupId)]);
  if (!usage) throw notFound('Group');
  const eff = effectivePlan(account);
  const readOnly = isReadOnly(eff, usage.totalBytes);
  let notice: string | null = null;
  if (eff.lapse) notice = lapseNotice(eff.lapse, usage.totalBytes);
  else if (usage.totalBytes > eff.plan.quotaBytes) {
    notice = `This group uses ${formatBytes(usage.totalBytes)}, more than the ${eff.plan.name} plan's ${formatBytes(eff.plan.quotaBytes)}: nothing new can be stored until it uses less${eff.plan.id === 'free' ? ' or an owner upgrades' : ''}.`;
  } else if (account?.status === 'incomplete') notice = 'A checkout was started but not paid; the group stays on the Free plan.';
  return {
    groupId,
    plan: eff.plan,
    status: account?.status ?? 'none',
    interval: account?.interval ?? null,
    currentPeriodEnd: account?.currentPeriodEnd?.toISOString() ?? null,
    usage,
    quotaBytes: eff.plan.quotaBytes,
    readOnly,
    notice,
    hasBillingAccount: !!account?.customerId,
    plans: [PLANS.free, PLANS.institutional],
  };
}

export async function listInvoices(ctx: Ctx, groupId: string): Promise<Invoice[]> {
  return (await q.listInvoices(ctx.db, groupId)).map((i) => ({
    id: i.id,
    amountCents: i.amountCents,
    currency: i.currency,
    status: i.status,
    periodStart: i.periodStart?.toISOString() ?? null,
    periodEnd: i.periodEnd?.toISOString() ?? null,
    paidAt: i.paidAt?.toISOString() ?? null,
    createdAt: i.createdAt.toISOString(),
  }));
}

// ---------------------------------------------------------------------------------------------
// Checkout and portal

/** Price ids per SDK client (tests run several fakes in one process). */
const priceCache = new WeakMap<Stripe, Map<string, string>>();

/**
 * The provider's prices of the Institutional plan, found by lookup key; both intervals are made
 * sure of (the billing portal switches between them), created — taking over the lookup key — when
 * missing or when shared/plans.ts changed an amount. Returns the price id for `interval`.
 */
async function priceFor(stripe: Stripe, interval: BillingInterval): Promise<string> {
  const plan = INSTITUTIONAL_PLAN;
  const cacheKey = (i: BillingInterval) => `${i}:${plan.prices![i]}:${plan.currency}`;
  const cache = priceCache.get(stripe) ?? new Map<string, string>();
  priceCache.set(stripe, cache);
  const cached = cache.get(cacheKey(interval));
  if (cached) return cached;
  const found = await stripe.prices.list({ lookup_keys: BILLING_INTERVALS.map(lookupKey), active: true, limit: 10 });
  for (const i of BILLING_INTERVALS) {
    const amount = plan.prices![i];
    const p = found.data.find((x) => x.lookup_key === lookupKey(i));
    if (p && p.unit_amount === amount && p.currency === plan.currency && p.recurring?.interval === i) {
      cache.set(cacheKey(i), p.id);
      continue;
    }
    await ensureProduct(stripe);
    const created = await stripe.prices.create({
      product: PRODUCT_ID,
      currency: plan.currency,
      unit_amount: amount,
      recurring: { interval: i },
      lookup_key: lookupKey(i),
      transfer_lookup_key: true,
    });
    cache.set(cacheKey(i), created.id);
  }
  return cache.get(cacheKey(interval))!;
}

async function ensureProduct(stripe: Stripe): Promise<void> {
  try {
    await stripe.products.retrieve(PRODUCT_ID);
  } catch (e) {
    if (!(e instanceof Stripe.errors.StripeInvalidRequestError && e.code === 'resource_missing')) throw e;
    await stripe.products.create({ id: PRODUCT_ID, name: 'Bandwright Institutional plan' }).catch((err: unknown) => {
      // Two first checkouts at once: the other one created it.
      if (!(err instanceof Stripe.errors.StripeInvalidRequestError && err.code === 'resource_already_exists')) throw err;
    });
  }
}

/** The group's customer at the provider, created on its first checkout. */
async function customerFor(ctx: Ctx, stripe: Stripe, groupId: string, payer: { email: string }): Promise<string> {
  const account = await q.getBillingAccount(ctx.db, groupId);
  if (account?.customerId) return account.customerId;
  const name = (await getGroupName(ctx.db, groupId)) ?? 'Bandwright group';
  const customer = await stripe.customers.create({ name, email: payer.email, metadata: { groupId } });
  return q.setCustomerIfMissing(ctx.db, groupId, customer.id);
}

const planUrl = (ctx: Ctx, groupId: string, extra = '') => `${ctx.env.PUBLIC_URL}/plan?group=${encodeURIComponent(groupId)}${extra}`;

/** A Checkout session for the Institutional plan; the app sends the owner to its `url`. */
export async function startCheckout(ctx: Ctx, groupId: string, payer: { email: string }, interval: BillingInterval): Promise<{ url: string }> {
  const stripe = requireStripe(ctx);
  const account = await q.getBillingAccount(ctx.db, groupId);
  if (account?.status === 'active' && account.plan === 'institutional') {
    throw new AppError(409, 'already_subscribed', 'This group already has the Institutional plan; switch between monthly and yearly billing under Manage billing');
  }
  if (account?.status === 'past_due' || account?.status === 'unpaid') {
    throw new AppError(409, 'payment_failed', 'The last payment for this group failed; update the card under Manage billing instead of subscribing again');
  }
  const session = await provider('the checkout', async () => {
    const price = await priceFor(stripe, interval);
    const create = (customer: string) =>
      stripe.checkout.sessions.create({
        mode: 'subscription',
        customer,
        client_reference_id: groupId,
        line_items: [{ price, quantity: 1 }],
        // The provider fills in {CHECKOUT_SESSION_ID}; it must stay unencoded.
        success_url: `${planUrl(ctx, groupId, '&checkout=success')}&session={CHECKOUT_SESSION_ID}`,
        cancel_url: planUrl(ctx, groupId, '&checkout=cancelled'),
        metadata: { groupId, interval },
        subscription_data: { metadata: { groupId } },
      });
    const customer = await customerFor(ctx, stripe, groupId, payer);
    try {
      return await create(customer);
    } catch (e) {
      // The provider no longer knows the customer (a development fake whose state was wiped, or a
      // customer deleted in the provider's dashboard): the group gets a new one.
      if (!(e instanceof Stripe.errors.StripeInvalidRequestError && e.code === 'resource_missing' && e.param === 'customer')) throw e;
      await q.clearCustomer(ctx.db, groupId, customer);
      return create(await customerFor(ctx, stripe, groupId, payer));
    }
  });
  if (!session.url) throw new AppError(502, 'payment_provider_error', 'The payment provider gave no checkout page');
  return { url: session.url };
}

/** A billing portal session (change interval, cancel, new card); the app sends the owner to its `url`. */
export async function openPortal(ctx: Ctx, groupId: string): Promise<{ url: string }> {
  const stripe = requireStripe(ctx);
  const account = await q.getBillingAccount(ctx.db, groupId);
  if (!account?.customerId) throw new AppError(409, 'no_billing_account', 'This group has never paid for a plan, so there is no billing to manage yet; upgrade first');
  const session = await provider('the billing portal', () => stripe.billingPortal.sessions.create({ customer: account.customerId!, return_url: planUrl(ctx, groupId) }));
  return { url: session.url };
}

// ---------------------------------------------------------------------------------------------
// Webhooks

const idOf = (v: string | { id: string } | null | undefined) => (v == null ? null : typeof v === 'string' ? v : v.id);

function statusOf(s: Stripe.Subscription.Status): SubscriptionStatus {
  switch (s) {
    case 'active':
    case 'trialing':
      return 'active';
    case 'past_due':
      return 'past_due';
    case 'unpaid':
    case 'paused':
      return 'unpaid';
    case 'incomplete':
      return 'incomplete';
    default:
      return 'canceled';
  }
}

function subscriptionState(sub: Stripe.Subscription, eventAt: Date): q.SubscriptionState {
  const item = sub.items.data[0];
  const interval: string | undefined = item?.price.recurring?.interval;
  const status = statusOf(sub.status);
  const ended = status === 'canceled';
  return {
    plan: status === 'canceled' ? 'free' : 'institutional',
    status,
    interval: interval === 'month' || interval === 'year' ? interval : null,
    currentPeriodEnd: ended ? new Date((sub.ended_at ?? eventAt.getTime() / 1000) * 1000) : item ? new Date(item.current_period_end * 1000) : null,
    customerId: idOf(sub.customer),
    subscriptionId: sub.id,
  };
}

/** Our group of an event's object: from the metadata we set at checkout, else by provider ids. */
async function groupOf(tx: Executor, metadataGroupId: string | null | undefined, ids: { customerId?: string | null; subscriptionId?: string | null }) {
  const groupId = metadataGroupId && /^[0-9a-f-]{36}$/i.test(metadataGroupId) ? metadataGroupId : await q.findGroupByProviderIds(tx, ids);
  return groupId && (await q.groupExists(tx, groupId)) ? groupId : undefined;
}

const day = (unix: number | null | undefined) => (unix ? formatDate(unix * 1000, { utc: true }) : 'an unknown date');

async function billingMails(tx: Executor, ctx: Ctx, groupId: string, inv: Stripe.Invoice, kind: 'paid' | 'failed'): Promise<OutgoingMail[]> {
  // One after another: they share the transaction's single connection.
  const owners = await q.listOwners(tx, groupId);
  const groupName = await getGroupName(tx, groupId);
  const usage = await storage.usage(tx, groupId);
  const amount = formatMoney(kind === 'paid' ? inv.amount_paid : inv.amount_due, inv.currency);
  const line = inv.lines.data[0];
  const period = line ? `${day(line.period.start)} to ${day(line.period.end)}` : `${day(inv.period_start)} to ${day(inv.period_end)}`;
  const name = groupName ?? 'your group';
  const number = inv.number ?? inv.id;
  const url = planUrl(ctx, groupId);
  const used = usage?.totalBytes ?? 0;
  return owners.map((o) =>
    kind === 'paid'
      ? linkMail({
          to: o.email,
          kind: 'billing_receipt',
          subject: `Receipt: ${amount} for ${possessive(name)} Institutional plan`,
          lines: [
            `Hello ${o.name},`,
            `${name} paid ${amount} for the Bandwright Institutional plan. Thank you.`,
            `Invoice ${number}, paid on ${day(inv.status_transitions?.paid_at ?? inv.created)}, for ${period}.`,
            `The group may store ${formatBytes(INSTITUTIONAL_PLAN.quotaBytes)}; it uses ${formatBytes(used)}.`,
          ],
          linkLabel: 'Plan and invoices',
          url,
        })
      : linkMail({
          to: o.email,
          kind: 'billing_payment_failed',
          subject: `Payment failed: ${possessive(name)} Institutional plan`,
          lines: [
            `Hello ${o.name},`,
            `The payment of ${amount} for ${possessive(name)} Institutional plan (invoice ${number}, ${period}) failed on ${day(inv.created)}${inv.attempt_count > 1 ? ` (attempt ${inv.attempt_count})` : ''}.`,
            `Until it is paid the Free plan's ${formatBytes(FREE_PLAN.quotaBytes)} applies. The group uses ${formatBytes(used)}${used > FREE_PLAN.quotaBytes ? ', so it becomes read-only: nothing is deleted, and reading, downloading and deleting still work, but nothing new can be stored' : ''}.`,
            'Update the card under Manage billing on the Plan screen; the open invoice is then charged again.',
          ],
          linkLabel: 'Plan and billing',
          url,
        }),
  );
}

export type WebhookOutcome = { received: true; duplicate: boolean; applied: boolean };

/**
 * The subscription as the provider has it now, or null when the provider does not know it. Events
 * carry a snapshot from when they were made and are stamped in whole seconds, so two of the same
 * second (an update and the cancellation right after it) cannot be put in order from the event;
 * the provider's current object can. Unreachable: 502, the event is not recorded and the provider
 * sends it again.
 */
async function currentSubscription(stripe: Stripe, id: string): Promise<Stripe.Subscription | null> {
  return provider('the subscription of an event', async () => {
    try {
      return await stripe.subscriptions.retrieve(id);
    } catch (e) {
      if (!(e instanceof Stripe.errors.StripeInvalidRequestError && e.code === 'resource_missing')) throw e;
      console.error(`[billing] subscription ${id} of an event is unknown to the provider; the event is recorded and changes nothing`);
      return null;
    }
  });
}

/**
 * Applies the provider's current state of subscription `subId` to the group: the account row is
 * locked first and the subscription read after, so events of one group apply one at a time and
 * the state read last is the state written last, whatever order the events came in. A late event
 * about an earlier subscription must not end the one the group pays now.
 */
async function applyCurrentSubscription(tx: Executor, stripe: Stripe, groupId: string, subId: string, eventAt: Date): Promise<boolean> {
  const account = await q.lockBillingAccount(tx, groupId);
  if (account.subscriptionId && account.subscriptionId !== subId && account.status !== 'canceled' && account.status !== 'none') return false;
  const sub = await currentSubscription(stripe, subId);
  if (!sub) return false;
  return q.applySubscriptionState(tx, account, subscriptionState(sub, eventAt), eventAt);
}

/**
 * Handles one provider event: verifies its signature on the raw bytes (400 when unsigned,
 * tampered, signed with another secret or older than the tolerance), records its id in the same
 * transaction as its effect (a replay is recognised and does nothing), applies the subscription's
 * current state read from the provider (so events may come in any order, also within one second),
 * always keeps invoices, and mails receipts and payment failures to the group's owners after the
 * change is committed. The provider is asked while the group's account row is locked: one
 * group's events queue behind each other (a slow provider holds that row, no other group's).
 */
export async function handleWebhook(ctx: Ctx, raw: unknown, signature: string | undefined): Promise<WebhookOutcome> {
  const stripe = requireStripe(ctx);
  const secret = ctx.env.stripe.webhookSecret;
  if (!secret) throw new AppError(503, 'billing_unavailable', 'Webhooks are not configured on this server (STRIPE_WEBHOOK_SECRET is not set)');
  if (!Buffer.isBuffer(raw) || raw.length === 0) throw new AppError(400, 'invalid_payload', 'Send the event as a raw JSON body with Content-Type: application/json');
  if (!signature) throw new AppError(400, 'invalid_signature', 'The Stripe-Signature header is missing');
  let event: Stripe.Event;
  try {
    event = stripe.webhooks.constructEvent(raw, signature, secret, WEBHOOK_TOLERANCE_SECONDS);
  } catch (e) {
    if (e instanceof Stripe.errors.StripeSignatureVerificationError) throw new AppError(400, 'invalid_signature', `The event's signature does not verify: ${e.message}`);
    throw new AppError(400, 'invalid_payload', `The event cannot be read: ${(e as Error).message}`);
  }

  const eventAt = new Date(event.created * 1000);
  let applied = false;
  let mails: OutgoingMail[] = [];
  const fresh = await ctx.db.transaction(async (tx) => {
    if (!(await q.recordProviderEvent(tx, { id: event.id, type: event.type, createdAt: eventAt }))) return false;
    switch (event.type) {
      case 'checkout.session.completed': {
        const s = event.data.object;
        const groupId = await groupOf(tx, s.client_reference_id ?? s.metadata?.groupId, { customerId: idOf(s.customer) });
        if (!groupId) break;
        const customerId = idOf(s.customer);
        if (customerId) await q.setCustomerIfMissing(tx, groupId, customerId);
        const subId = idOf(s.subscription);
        if (subId) applied = await applyCurrentSubscription(tx, stripe, groupId, subId, eventAt);
        break;
      }
      case 'customer.subscription.created':
      case 'customer.subscription.updated':
      case 'customer.subscription.deleted': {
        const sub = event.data.object;
        const groupId = await groupOf(tx, sub.metadata?.groupId, { customerId: idOf(sub.customer), subscriptionId: sub.id });
        if (!groupId) break;
        applied = await applyCurrentSubscription(tx, stripe, groupId, sub.id, eventAt);
        break;
      }
      case 'invoice.paid':
      case 'invoice.payment_failed': {
        const inv = event.data.object;
        const subDetails = inv.parent?.subscription_details;
        const groupId = await groupOf(tx, subDetails?.metadata?.groupId, { customerId: idOf(inv.customer), subscriptionId: idOf(subDetails?.subscription) });
        if (!groupId) break;
        const line = inv.lines.data[0];
        const paid = event.type === 'invoice.paid';
        await q.upsertInvoice(tx, {
          id: inv.id,
          groupId,
          amountCents: paid ? inv.amount_paid : inv.amount_due,
          currency: inv.currency,
          status: paid ? 'paid' : (inv.status ?? 'open'),
          periodStart: new Date((line?.period.start ?? inv.period_start) * 1000),
          periodEnd: new Date((line?.period.end ?? inv.period_end) * 1000),
          paidAt: paid ? new Date((inv.status_transitions?.paid_at ?? event.created) * 1000) : null,
          createdAt: new Date(inv.created * 1000),
        });
        applied = true;
        mails = await billingMails(tx, ctx, groupId, inv, paid ? 'paid' : 'failed');
        break;
      }
      default:
        // Recorded, so the provider stops sending it; nothing else to do.
        break;
    }
    return true;
  });
  // After the commit, so a rolled-back event sends nothing. The outbox is our own table; a real
  // mail server that fails here is logged and the state change stands.
  for (const m of mails) {
    await ctx.mail.send(m).catch((err: unknown) => console.error(`[billing] mail to ${m.to} failed:`, err));
  }
  return { received: true, duplicate: !fresh, applied };
}
