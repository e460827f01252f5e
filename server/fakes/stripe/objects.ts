import type { FakeCheckoutSession, FakeCustomer, FakeInvoice, FakePortalSession, FakePrice, FakeProduct, FakeState, FakeSubscription } from './state';

/**
 * The fake's records in the provider's wire format: JSON objects with `id`, `object`, unix-second
 * timestamps, `livemode: false`, lists as `{ object: 'list', data, has_more, url }`. Only the
 * fields a subscription product reads are filled; the SDK does not need more.
 */

export type WireObject = Record<string, unknown> & { id: string; object: string };

export function list(data: WireObject[], url: string, hasMore = false) {
  return { object: 'list', data, has_more: hasMore, url };
}

export function customerJson(c: FakeCustomer): WireObject {
  return {
    id: c.id,
    object: 'customer',
    name: c.name,
    email: c.email,
    metadata: c.metadata,
    created: c.created,
    currency: null,
    delinquent: false,
    description: null,
    invoice_settings: { default_payment_method: c.card ? `pm_card_${c.card.slice(-4)}` : null, custom_fields: null, footer: null, rendering_options: null },
    livemode: false,
  };
}

export function priceJson(p: FakePrice): WireObject {
  return {
    id: p.id,
    object: 'price',
    active: p.active,
    currency: p.currency,
    unit_amount: p.unitAmount,
    unit_amount_decimal: String(p.unitAmount),
    product: p.product,
    type: 'recurring',
    recurring: { interval: p.interval, interval_count: 1, usage_type: 'licensed', meter: null, trial_period_days: null },
    billing_scheme: 'per_unit',
    lookup_key: p.lookupKey,
    nickname: null,
    metadata: {},
    created: 0,
    livemode: false,
  };
}

export function productJson(p: FakeProduct): WireObject {
  return { id: p.id, object: 'product', name: p.name, active: true, description: null, metadata: {}, created: p.created, livemode: false };
}

export function checkoutSessionJson(s: FakeCheckoutSession, state: FakeState, baseUrl: string): WireObject {
  const price = state.prices[s.price];
  return {
    id: s.id,
    object: 'checkout.session',
    mode: s.mode,
    status: s.status,
    payment_status: s.paymentStatus,
    customer: s.customer,
    client_reference_id: s.clientReferenceId,
    metadata: s.metadata,
    success_url: s.successUrl,
    cancel_url: s.cancelUrl,
    url: s.status === 'open' ? `${baseUrl}/checkout/${s.id}` : null,
    subscription: s.subscription,
    currency: price?.currency ?? null,
    amount_subtotal: price ? price.unitAmount * s.quantity : null,
    amount_total: price ? price.unitAmount * s.quantity : null,
    created: s.created,
    expires_at: s.expiresAt,
    livemode: false,
  };
}

export function subscriptionJson(sub: FakeSubscription, state: FakeState): WireObject {
  const price = state.prices[sub.price];
  return {
    id: sub.id,
    object: 'subscription',
    customer: sub.customer,
    status: sub.status,
    metadata: sub.metadata,
    items: list(
      [
        {
          id: sub.itemId,
          object: 'subscription_item',
          price: price ? priceJson(price) : null,
          quantity: sub.quantity,
          subscription: sub.id,
          current_period_start: sub.periodStart,
          current_period_end: sub.periodEnd,
          created: sub.created,
          metadata: {},
        },
      ],
      `/v1/subscription_items?subscription=${sub.id}`,
    ),
    currency: price?.currency ?? null,
    collection_method: 'charge_automatically',
    cancel_at_period_end: false,
    cancel_at: null,
    canceled_at: sub.canceledAt,
    ended_at: sub.endedAt,
    created: sub.created,
    start_date: sub.created,
    billing_cycle_anchor: sub.created,
    latest_invoice: sub.latestInvoice,
    default_payment_method: null,
    trial_start: null,
    trial_end: null,
    livemode: false,
  };
}

export function invoiceJson(inv: FakeInvoice): WireObject {
  const paid = inv.status === 'paid';
  return {
    id: inv.id,
    object: 'invoice',
    number: inv.number,
    customer: inv.customer,
    status: inv.status,
    currency: inv.currency,
    amount_due: inv.amount,
    amount_paid: paid ? inv.amount : 0,
    amount_remaining: paid ? 0 : inv.amount,
    attempt_count: inv.attemptCount,
    attempted: inv.attemptCount > 0,
    billing_reason: inv.billingReason,
    collection_method: 'charge_automatically',
    description: inv.description,
    created: inv.created,
    period_start: inv.periodStart,
    period_end: inv.periodEnd,
    status_transitions: { finalized_at: inv.created, paid_at: inv.paidAt, marked_uncollectible_at: null, voided_at: null },
    next_payment_attempt: paid || inv.status === 'void' ? null : inv.created + 3 * 86400,
    hosted_invoice_url: null,
    invoice_pdf: null,
    parent: {
      type: 'subscription_details',
      quote_details: null,
      subscription_details: { subscription: inv.subscription, metadata: inv.subscriptionMetadata },
    },
    lines: list(
      [
        {
          id: `il_${inv.id.slice(3)}`,
          object: 'line_item',
          amount: inv.amount,
          currency: inv.currency,
          description: inv.description,
          period: { start: inv.periodStart, end: inv.periodEnd },
          quantity: 1,
        },
      ],
      `/v1/invoices/${inv.id}/lines`,
    ),
    livemode: false,
  };
}

export function portalSessionJson(p: FakePortalSession, baseUrl: string): WireObject {
  return {
    id: p.id,
    object: 'billing_portal.session',
    customer: p.customer,
    return_url: p.returnUrl,
    url: `${baseUrl}/portal/${p.id}`,
    created: p.created,
    configuration: 'bpc_fake_default',
    flow: null,
    locale: null,
    on_behalf_of: null,
    livemode: false,
  };
}
