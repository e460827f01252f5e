import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';

/**
 * The fake's records. They are kept in memory (and, when a state file is given, written to it
 * after every change, so `npm start` keeps its customers across restarts). The wire format is
 * produced from these by objects.ts.
 */

export type Metadata = Record<string, string>;

export type FakeCustomer = {
  id: string;
  name: string | null;
  email: string | null;
  metadata: Metadata;
  created: number;
  /** The default card (a test card number), set at checkout or in the portal. */
  card: string | null;
  /** Charges made with the current card (a "fails later" card pays only its first). */
  cardCharges: number;
};

export type FakeProduct = { id: string; name: string; created: number };

export type FakePrice = {
  id: string;
  product: string;
  productName: string;
  currency: string;
  unitAmount: number;
  interval: 'month' | 'year';
  lookupKey: string | null;
  active: boolean;
};

export type FakeCheckoutSession = {
  id: string;
  customer: string | null;
  clientReferenceId: string | null;
  metadata: Metadata;
  subscriptionMetadata: Metadata;
  mode: 'subscription';
  price: string;
  quantity: number;
  successUrl: string;
  cancelUrl: string | null;
  status: 'open' | 'complete' | 'expired';
  paymentStatus: 'unpaid' | 'paid';
  subscription: string | null;
  created: number;
  expiresAt: number;
};

export type FakeSubscriptionStatus = 'active' | 'past_due' | 'canceled' | 'unpaid' | 'incomplete';

export type FakeSubscription = {
  id: string;
  itemId: string;
  customer: string;
  status: FakeSubscriptionStatus;
  metadata: Metadata;
  price: string;
  quantity: number;
  periodStart: number;
  periodEnd: number;
  created: number;
  canceledAt: number | null;
  endedAt: number | null;
  latestInvoice: string | null;
  /** Failed attempts at the open invoice; the subscription is cancelled after the third. */
  failedAttempts: number;
};

export type FakeInvoice = {
  id: string;
  number: string;
  customer: string;
  subscription: string;
  subscriptionMetadata: Metadata;
  status: 'open' | 'paid' | 'void';
  amount: number;
  currency: string;
  description: string;
  periodStart: number;
  periodEnd: number;
  created: number;
  paidAt: number | null;
  attemptCount: number;
  billingReason: 'subscription_create' | 'subscription_cycle' | 'subscription_update';
};

export type FakePortalSession = { id: string; customer: string; returnUrl: string | null; created: number };

export type FakeState = {
  customers: Record<string, FakeCustomer>;
  products: Record<string, FakeProduct>;
  prices: Record<string, FakePrice>;
  checkoutSessions: Record<string, FakeCheckoutSession>;
  subscriptions: Record<string, FakeSubscription>;
  invoices: Record<string, FakeInvoice>;
  portalSessions: Record<string, FakePortalSession>;
  /** Seconds the fake's clock runs ahead of the real one (simulated renewals move it forward). */
  clockOffset: number;
  invoiceSeq: number;
};

export function emptyState(): FakeState {
  return { customers: {}, products: {}, prices: {}, checkoutSessions: {}, subscriptions: {}, invoices: {}, portalSessions: {}, clockOffset: 0, invoiceSeq: 0 };
}

const ID_ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789';

/** An id in the provider's style: `cus_…`, `cs_test_…`, `evt_…`. */
export function newId(prefix: string, length = 24): string {
  return `${prefix}_${Array.from(randomBytes(length), (b) => ID_ALPHABET[b % ID_ALPHABET.length]).join('')}`;
}

export function loadState(file: string | undefined): FakeState {
  if (!file || !fs.existsSync(file)) return emptyState();
  try {
    return { ...emptyState(), ...(JSON.parse(fs.readFileSync(file, 'utf8')) as Partial<FakeState>) };
  } catch (err) {
    // A damaged state file must not stop the server; start empty and say so.
    console.error(`[stripe-fake] cannot read ${file} (${(err as Error).message}); starting with no customers`);
    return emptyState();
  }
}

export function saveState(file: string | undefined, state: FakeState): void {
  if (!file) return;
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const tmp = `${file}.tmp`;
  fs.writeFileSync(tmp, JSON.stringify(state));
  fs.renameSync(tmp, file);
}
