import { randomBytes } from 'node:crypto';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { eq, sql } from 'drizzle-orm';
import Stripe from 'stripe';
import { billingAccounts, groups } from '@/db/schema';
import { setCustomerIfMissing } from '@/db/queries/billing';
import { startStripeFake, type StripeFake } from '@/server/fakes/stripe';
import { startTestApp, type TestApp } from './app';

/**
 * Billing fixtures: the real app listening on a free loopback port (so the payment fake can POST
 * its webhooks to it) and the payment fake, in this process, on another free port. The SDK in the
 * app talks to the fake over HTTP exactly as it would to the provider.
 */

export const TEST_STRIPE_KEY = 'sk_test_bandwright_tests';
export const TEST_WEBHOOK_SECRET = 'whsec_bandwright_tests_signing_secret';

export type BillingTestApp = TestApp & { fake: StripeFake; base: string; webhookUrl: string };

/** Env for an app that uses a fake listening on `port`. */
export function fakeStripeEnv(port: number): Record<string, string> {
  return {
    STRIPE_SECRET_KEY: TEST_STRIPE_KEY,
    STRIPE_WEBHOOK_SECRET: TEST_WEBHOOK_SECRET,
    STRIPE_API_HOST: '127.0.0.1',
    STRIPE_API_PORT: String(port),
    STRIPE_API_PROTOCOL: 'http',
  };
}

export async function startBillingTestApp(extraEnv: Record<string, string> = {}): Promise<BillingTestApp> {
  const fake = await startStripeFake({ secretKey: TEST_STRIPE_KEY, webhookSecret: TEST_WEBHOOK_SECRET, log: () => {} });
  const t = await startTestApp({ ...fakeStripeEnv(fake.port), ...extraEnv });
  const server = await new Promise<Server>((resolve) => {
    const s = t.app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const webhookUrl = `${base}/api/billing/webhook`;
  fake.setWebhookUrl(webhookUrl);
  return {
    ...t,
    fake,
    base,
    webhookUrl,
    close: async () => {
      await fake.close();
      await new Promise((r) => {
        server.close(r);
        server.closeAllConnections();
      });
      await t.close();
    },
  };
}

/** Submits the fake's hosted checkout form as a browser would; returns the status and the redirect. */
export async function payOnCheckoutPage(checkoutUrl: string, card = '4242 4242 4242 4242') {
  const res = await fetch(checkoutUrl, {
    method: 'POST',
    headers: { 'Content-Type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams({ card }).toString(),
    redirect: 'manual',
  });
  return { status: res.status, location: res.headers.get('location'), html: res.status === 303 ? '' : await res.text() };
}

/** Submits a form of the fake's billing portal page (`action`: cancel, switch, card, renew). */
export async function portalAction(portalUrl: string, action: 'cancel' | 'switch' | 'card' | 'renew', fields: Record<string, string>) {
  const res = await fetch(`${portalUrl}/${action}`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams(fields).toString(),
    redirect: 'manual',
  });
  return { status: res.status, location: res.headers.get('location') };
}

/** An event signed with `secret` (default: the tests' webhook secret), at `timestamp` (unix s). */
export function signedEvent(type: string, object: object, opts: { created?: number; id?: string; secret?: string; timestamp?: number } = {}) {
  const payload = JSON.stringify({
    id: opts.id ?? `evt_test_${randomBytes(10).toString('hex')}`,
    object: 'event',
    api_version: Stripe.API_VERSION,
    created: opts.created ?? Math.floor(Date.now() / 1000),
    data: { object },
    livemode: false,
    pending_webhooks: 1,
    request: { id: null, idempotency_key: null },
    type,
  });
  const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret: opts.secret ?? TEST_WEBHOOK_SECRET, ...(opts.timestamp ? { timestamp: opts.timestamp } : {}) });
  return { payload, signature };
}

/** Gives the group a customer at the fake (what a first checkout does), for portal checks. */
export async function giveCustomer(t: BillingTestApp, groupId: string): Promise<string> {
  const c = t.fake.engine.createCustomer({ name: 'Fixture customer', metadata: { groupId } });
  return setCustomerIfMissing(t.ctx.db, groupId, c.id);
}

/**
 * Sets the group's storage counter directly: stands in for bytes stored earlier (reaching a
 * 50 MB quota through 5 MB uploads would take most of a test's time).
 */
export async function setStorageBytes(t: TestApp, groupId: string, bytes: number): Promise<void> {
  await t.ctx.db.update(groups).set({ storageBytes: bytes }).where(eq(groups.id, groupId));
}

export async function billingAccountOf(t: TestApp, groupId: string) {
  const rows = await t.ctx.db.select().from(billingAccounts).where(eq(billingAccounts.groupId, groupId));
  return rows[0];
}

export async function countRows(t: TestApp, table: 'invoices' | 'provider_events', groupId?: string): Promise<number> {
  const r = await t.ctx.db.execute<{ n: string }>(
    groupId ? sql`select count(*) as n from ${sql.identifier(table)} where group_id = ${groupId}` : sql`select count(*) as n from ${sql.identifier(table)}`,
  );
  return Number(r.rows[0]?.n ?? 0);
}
