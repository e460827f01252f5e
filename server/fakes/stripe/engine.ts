import { chargeSucceeds, findTestCard } from './cards';
import { checkoutSessionJson, invoiceJson, subscriptionJson, type WireObject } from './objects';
import {
  newId,
  type FakeCheckoutSession,
  type FakeCustomer,
  type FakeInvoice,
  type FakePrice,
  type FakeProduct,
  type FakeState,
  type FakeSubscription,
  type Metadata,
} from './state';

/**
 * What the fake provider does: customers, prices, checkout, subscriptions and their invoices,
 * renewals and the portal's changes. Every change returns the events it causes, in the order the
 * provider would send them; the caller signs and delivers them.
 */

export type FakeEvent = { id: string; type: string; created: number; object: WireObject };

/** A refusal in the provider's error format (HTTP status, type, message, optional code and param). */
export class FakeApiError extends Error {
  constructor(
    readonly status: number,
    readonly type: 'invalid_request_error' | 'card_error' | 'authentication_error',
    message: string,
    readonly code?: string,
    readonly param?: string,
  ) {
    super(message);
  }
}

export const missing = (what: string, id: string, param = 'id') => new FakeApiError(404, 'invalid_request_error', `No such ${what}: '${id}'`, 'resource_missing', param);

/** The same instant one billing interval later (calendar months and years, in UTC). */
export function addInterval(ts: number, interval: 'month' | 'year'): number {
  const d = new Date(ts * 1000);
  if (interval === 'month') d.setUTCMonth(d.getUTCMonth() + 1);
  else d.setUTCFullYear(d.getUTCFullYear() + 1);
  return Math.floor(d.getTime() / 1000);
}

export type PayOutcome = { ok: true; session: FakeCheckoutSession; events: FakeEvent[] } | { ok: false; message: string };

export class FakeStripeEngine {
  constructor(
    readonly state: FakeState,
    private readonly persist: () => void,
    private readonly baseUrl: () => string,
  ) {}

  /** The fake's clock (unix seconds): real time plus what simulated renewals skipped ahead. */
  now(): number {
    return Math.floor(Date.now() / 1000) + this.state.clockOffset;
  }

  private event(type: string, object: WireObject): FakeEvent {
    return { id: newId('evt', 24), type, created: this.now(), object: structuredClone(object) };
  }

  private done<T>(v: T): T {
    this.persist();
    return v;
  }

  // -------------------------------------------------------------------------------------------
  // Customers, products and prices

  createCustomer(p: { name?: string; email?: string; metadata?: Metadata }): FakeCustomer {
    const c: FakeCustomer = { id: newId('cus', 14), name: p.name ?? null, email: p.email ?? null, metadata: p.metadata ?? {}, created: this.now(), card: null, cardCharges: 0 };
    this.state.customers[c.id] = c;
    return this.done(c);
  }

  customer(id: string, param = 'id'): FakeCustomer {
    const c = this.state.customers[id];
    if (!c) throw missing('customer', id, param);
    return c;
  }

  createProduct(p: { id?: string; name: string }): FakeProduct {
    const id = p.id ?? newId('prod', 14);
    if (this.state.products[id]) throw new FakeApiError(400, 'invalid_request_error', `Product already exists.`, 'resource_already_exists', 'id');
    this.state.products[id] = { id, name: p.name, created: this.now() };
    return this.done(this.state.products[id]!);
  }

  product(id: string): FakeProduct {
    const p = this.state.products[id];
    if (!p) throw missing('product', id);
    return p;
  }

  createPrice(p: { product: string; currency: string; unitAmount: number; interval: 'month' | 'year'; lookupKey?: string; transferLookupKey?: boolean }): FakePrice {
    const product = this.product(p.product);
    if (p.lookupKey) {
      const holder = Object.values(this.state.prices).find((x) => x.lookupKey === p.lookupKey);
      if (holder && !p.transferLookupKey) {
        throw new FakeApiError(400, 'invalid_request_error', `A price (\`${holder.id}\`) already uses that lookup key.`, 'lookup_key_exists', 'lookup_key');
      }
      if (holder) holder.lookupKey = null;
    }
    const price: FakePrice = {
      id: newId('price', 24),
      product: product.id,
      productName: product.name,
      currency: p.currency.toLowerCase(),
      unitAmount: p.unitAmount,
      interval: p.interval,
      lookupKey: p.lookupKey ?? null,
      active: true,
    };
    this.state.prices[price.id] = price;
    return this.done(price);
  }

  price(id: string): FakePrice {
    const p = this.state.prices[id];
    if (!p) throw missing('price', id, 'price');
    return p;
  }

  // -------------------------------------------------------------------------------------------
  // Checkout

  createCheckoutSession(p: {
    customer?: string;
    clientReferenceId?: string;
    metadata?: Metadata;
    subscriptionMetadata?: Metadata;
    price: string;
    quantity: number;
    successUrl: string;
    cancelUrl?: string;
  }): FakeCheckoutSession {
    if (p.customer) this.customer(p.customer, 'customer');
    this.price(p.price);
    const s: FakeCheckoutSession = {
      id: newId('cs_test', 58),
      customer: p.customer ?? null,
      clientReferenceId: p.clientReferenceId ?? null,
      metadata: p.metadata ?? {},
      subscriptionMetadata: p.subscriptionMetadata ?? {},
      mode: 'subscription',
      price: p.price,
      quantity: p.quantity,
      successUrl: p.successUrl,
      cancelUrl: p.cancelUrl ?? null,
      status: 'open',
      paymentStatus: 'unpaid',
      subscription: null,
      created: this.now(),
      expiresAt: this.now() + 24 * 3600,
    };
    this.state.checkoutSessions[s.id] = s;
    return this.done(s);
  }

  checkoutSession(id: string): FakeCheckoutSession {
    const s = this.state.checkoutSessions[id];
    if (!s) throw missing('checkout.session', id);
    if (s.status === 'open' && s.expiresAt < this.now()) s.status = 'expired';
    return s;
  }

  /**
   * The tester "pays" on the hosted page: a paying test card completes the session and starts
   * the subscription with its first invoice paid; a declining card leaves everything as it was.
   */
  payCheckout(sessionId: string, cardNumber: string): PayOutcome {
    const s = this.checkoutSession(sessionId);
    if (s.status !== 'open') return { ok: false, message: `This checkout is ${s.status === 'complete' ? 'already paid' : 'expired'}.` };
    const card = findTestCard(cardNumber);
    if (!card) return { ok: false, message: 'Your card number is not one of the test cards listed below.' };
    if (!chargeSucceeds(card, true)) return { ok: false, message: card.description.includes('insufficient') ? 'Your card has insufficient funds.' : 'Your card was declined.' };

    const customer = s.customer ? this.customer(s.customer) : this.createCustomer({ metadata: {} });
    customer.card = card.number;
    customer.cardCharges = 1;
    const price = this.price(s.price);
    const now = this.now();
    const sub: FakeSubscription = {
      id: newId('sub', 24),
      itemId: newId('si', 14),
      customer: customer.id,
      status: 'active',
      metadata: { ...s.subscriptionMetadata },
      price: price.id,
      quantity: s.quantity,
      periodStart: now,
      periodEnd: addInterval(now, price.interval),
      created: now,
      canceledAt: null,
      endedAt: null,
      latestInvoice: null,
      failedAttempts: 0,
    };
    this.state.subscriptions[sub.id] = sub;
    const inv = this.newInvoice(sub, 'subscription_create');
    inv.status = 'paid';
    inv.paidAt = now;
    inv.attemptCount = 1;
    s.status = 'complete';
    s.paymentStatus = 'paid';
    s.customer = customer.id;
    s.subscription = sub.id;
    const events = [
      this.event('customer.subscription.created', subscriptionJson(sub, this.state)),
      this.event('invoice.paid', invoiceJson(inv)),
      this.event('checkout.session.completed', checkoutSessionJson(s, this.state, this.baseUrl())),
    ];
    return this.done({ ok: true, session: s, events });
  }

  // -------------------------------------------------------------------------------------------
  // Subscriptions and invoices

  subscription(id: string): FakeSubscription {
    const s = this.state.subscriptions[id];
    if (!s) throw missing('subscription', id);
    return s;
  }

  private newInvoice(sub: FakeSubscription, reason: FakeInvoice['billingReason']): FakeInvoice {
    const price = this.price(sub.price);
    this.state.invoiceSeq += 1;
    const inv: FakeInvoice = {
      id: newId('in', 24),
      number: `FAKE-${String(this.state.invoiceSeq).padStart(4, '0')}`,
      customer: sub.customer,
      subscription: sub.id,
      subscriptionMetadata: { ...sub.metadata },
      status: 'open',
      amount: price.unitAmount * sub.quantity,
      currency: price.currency,
      description: `${price.productName} (${price.interval === 'month' ? 'monthly' : 'yearly'})`,
      periodStart: sub.periodStart,
      periodEnd: sub.periodEnd,
      created: this.now(),
      paidAt: null,
      attemptCount: 0,
      billingReason: reason,
    };
    this.state.invoices[inv.id] = inv;
    sub.latestInvoice = inv.id;
    return inv;
  }

  /** Charges the customer's card for an open invoice; true when paid. */
  private charge(inv: FakeInvoice): boolean {
    const customer = this.customer(inv.customer);
    const card = customer.card ? findTestCard(customer.card) : undefined;
    inv.attemptCount += 1;
    const ok = card !== undefined && chargeSucceeds(card, customer.cardCharges === 0);
    customer.cardCharges += 1;
    if (ok) {
      inv.status = 'paid';
      inv.paidAt = this.now();
    }
    return ok;
  }

  /** After an attempt at the subscription's open invoice: its events, cancelling after the third failure. */
  private settle(sub: FakeSubscription, inv: FakeInvoice, paid: boolean): FakeEvent[] {
    if (paid) {
      sub.status = 'active';
      sub.failedAttempts = 0;
      return [this.event('invoice.paid', invoiceJson(inv)), this.event('customer.subscription.updated', subscriptionJson(sub, this.state))];
    }
    sub.failedAttempts += 1;
    const failed = this.event('invoice.payment_failed', invoiceJson(inv));
    if (sub.failedAttempts >= 3) {
      inv.status = 'void';
      sub.status = 'canceled';
      sub.canceledAt = sub.endedAt = this.now();
      return [failed, this.event('customer.subscription.deleted', subscriptionJson(sub, this.state))];
    }
    const changed = sub.status !== 'past_due';
    sub.status = 'past_due';
    return changed ? [failed, this.event('customer.subscription.updated', subscriptionJson(sub, this.state))] : [failed];
  }

  /**
   * Simulates the next billing event of a subscription, moving the fake's clock forward: an
   * active subscription renews at its period end (a new invoice is charged); a past-due one has
   * its open invoice retried three days later (the third failure cancels it).
   */
  renew(subscriptionId: string): FakeEvent[] {
    const sub = this.subscription(subscriptionId);
    if (sub.status === 'active') {
      const skip = sub.periodEnd - this.now();
      if (skip > 0) this.state.clockOffset += skip;
      const interval = this.price(sub.price).interval;
      sub.periodStart = sub.periodEnd;
      sub.periodEnd = addInterval(sub.periodStart, interval);
      const inv = this.newInvoice(sub, 'subscription_cycle');
      return this.done(this.settle(sub, inv, this.charge(inv)));
    }
    if (sub.status === 'past_due') {
      this.state.clockOffset += 3 * 86400;
      const inv = sub.latestInvoice ? this.state.invoices[sub.latestInvoice] : undefined;
      if (!inv || inv.status !== 'open') throw new FakeApiError(400, 'invalid_request_error', 'This subscription has no open invoice to retry.');
      return this.done(this.settle(sub, inv, this.charge(inv)));
    }
    throw new FakeApiError(400, 'invalid_request_error', `A ${sub.status} subscription does not renew.`);
  }

  /** Cancels at once (the portal's "Cancel plan"); an open invoice is voided. */
  cancel(subscriptionId: string): FakeEvent[] {
    const sub = this.subscription(subscriptionId);
    if (sub.status === 'canceled') throw new FakeApiError(400, 'invalid_request_error', 'This subscription is already canceled.');
    sub.status = 'canceled';
    sub.canceledAt = sub.endedAt = this.now();
    const open = sub.latestInvoice ? this.state.invoices[sub.latestInvoice] : undefined;
    if (open?.status === 'open') open.status = 'void';
    return this.done([this.event('customer.subscription.deleted', subscriptionJson(sub, this.state))]);
  }

  /** The other prices of a subscription's product (for switching between monthly and yearly). */
  alternativePrices(subscriptionId: string): FakePrice[] {
    const current = this.price(this.subscription(subscriptionId).price);
    return Object.values(this.state.prices).filter((p) => p.active && p.product === current.product && p.id !== current.id && p.lookupKey !== null);
  }

  /**
   * Moves an active subscription to another price of the same product: a new period starts now
   * and its invoice is charged at once (the fake does not prorate).
   */
  switchPrice(subscriptionId: string, priceId: string): FakeEvent[] {
    const sub = this.subscription(subscriptionId);
    if (sub.status !== 'active') throw new FakeApiError(400, 'invalid_request_error', 'Only an active subscription can change its price.');
    const price = this.price(priceId);
    if (price.product !== this.price(sub.price).product) throw new FakeApiError(400, 'invalid_request_error', 'The new price belongs to another product.', undefined, 'price');
    sub.price = price.id;
    sub.periodStart = this.now();
    sub.periodEnd = addInterval(sub.periodStart, price.interval);
    const inv = this.newInvoice(sub, 'subscription_update');
    const paid = this.charge(inv);
    const events = this.settle(sub, inv, paid);
    // A paid switch still changed the subscription: make sure an update goes out either way.
    return this.done(events.some((e) => e.type.startsWith('customer.subscription.')) ? events : [...events, this.event('customer.subscription.updated', subscriptionJson(sub, this.state))]);
  }

  /**
   * A new default card from the portal. A past-due subscription's open invoice is charged again
   * at once with it.
   */
  updateCard(customerId: string, cardNumber: string): { ok: true; events: FakeEvent[] } | { ok: false; message: string } {
    const customer = this.customer(customerId);
    const card = findTestCard(cardNumber);
    if (!card) return { ok: false, message: 'That card number is not one of the test cards listed below.' };
    if (card.behaviour === 'declines') return { ok: false, message: 'Your card was declined.' };
    customer.card = card.number;
    customer.cardCharges = 0;
    const events: FakeEvent[] = [];
    for (const sub of Object.values(this.state.subscriptions)) {
      if (sub.customer !== customerId || sub.status !== 'past_due' || !sub.latestInvoice) continue;
      const inv = this.state.invoices[sub.latestInvoice];
      if (inv?.status === 'open') events.push(...this.settle(sub, inv, this.charge(inv)));
    }
    return this.done({ ok: true, events });
  }

  subscriptionsOf(customerId: string): FakeSubscription[] {
    return Object.values(this.state.subscriptions)
      .filter((s) => s.customer === customerId)
      .sort((a, b) => b.created - a.created);
  }

  invoicesOf(customerId: string): FakeInvoice[] {
    return Object.values(this.state.invoices)
      .filter((i) => i.customer === customerId)
      .sort((a, b) => b.created - a.created || b.id.localeCompare(a.id));
  }

  createPortalSession(p: { customer: string; returnUrl?: string }) {
    this.customer(p.customer, 'customer');
    const s = { id: newId('bps', 24), customer: p.customer, returnUrl: p.returnUrl ?? null, created: this.now() };
    this.state.portalSessions[s.id] = s;
    return this.done(s);
  }

  portalSession(id: string) {
    const s = this.state.portalSessions[id];
    if (!s) throw missing('billing_portal.session', id);
    return s;
  }
}
