import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import { startStripeFake, type StripeFake } from '@/server/fakes/stripe';

/**
 * The payment fake's own contract, through the official SDK: the wire format and errors the SDK
 * understands, escaping on its pages, and webhook signatures the SDK verifies.
 */

const KEY = 'sk_test_fake_contract';
const SECRET = 'whsec_fake_contract';
let fake: StripeFake;
let stripe: Stripe;
const received: { body: string; signature: string }[] = [];
let hook: Server | undefined;

beforeAll(async () => {
  hook = http.createServer((req, res) => {
    let body = '';
    req.on('data', (c) => (body += c));
    req.on('end', () => {
      received.push({ body, signature: String(req.headers['stripe-signature']) });
      res.writeHead(200).end('{}');
    });
  });
  await new Promise<void>((r) => hook!.listen(0, '127.0.0.1', () => r()));
  const port = (hook.address() as AddressInfo).port;
  fake = await startStripeFake({ secretKey: KEY, webhookSecret: SECRET, webhookUrl: `http://127.0.0.1:${port}/hook`, log: () => {} });
  stripe = new Stripe(KEY, { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0, telemetry: false });
});
afterAll(async () => {
  await fake?.close();
  await new Promise((r) => (hook ? hook.close(r) : r(undefined)));
});

async function product() {
  await stripe.products.create({ id: 'prod_contract', name: 'Contract <plan> & co' }).catch(() => undefined);
  return stripe.prices.create({ product: 'prod_contract', currency: 'eur', unit_amount: 1234, recurring: { interval: 'month' }, lookup_key: 'contract_month', transfer_lookup_key: true });
}

test('objects come back in the wire format the SDK reads', async () => {
  const c = await stripe.customers.create({ name: 'Fictional Lab', email: 'lab@lab.example', metadata: { groupId: 'g-1' } });
  expect(c).toMatchObject({ object: 'customer', name: 'Fictional Lab', metadata: { groupId: 'g-1' }, livemode: false });
  expect(c.id).toMatch(/^cus_/);
  const price = await product();
  expect(price).toMatchObject({ object: 'price', unit_amount: 1234, currency: 'eur', recurring: { interval: 'month' }, lookup_key: 'contract_month' });
  const found = await stripe.prices.list({ lookup_keys: ['contract_month'], active: true });
  expect(found.data.map((p) => p.id)).toEqual([price.id]);
  const session = await stripe.checkout.sessions.create({
    mode: 'subscription',
    customer: c.id,
    client_reference_id: 'g-1',
    line_items: [{ price: price.id, quantity: 1 }],
    success_url: 'http://127.0.0.1:9/plan?ok={CHECKOUT_SESSION_ID}',
    cancel_url: 'http://127.0.0.1:9/plan',
  });
  expect(session).toMatchObject({ object: 'checkout.session', status: 'open', mode: 'subscription', amount_total: 1234 });
  expect(session.url).toBe(`${fake.url}/checkout/${session.id}`);
  expect((await stripe.checkout.sessions.retrieve(session.id)).id).toBe(session.id);
});

test('errors arrive as the SDK error classes, naming the parameter', async () => {
  const wrongKey = new Stripe('sk_test_wrong_key_123', { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0, telemetry: false });
  await expect(wrongKey.customers.create({})).rejects.toBeInstanceOf(Stripe.errors.StripeAuthenticationError);
  await expect(stripe.customers.retrieve('cus_nothere')).rejects.toMatchObject({ type: 'StripeInvalidRequestError', code: 'resource_missing', statusCode: 404 });
  await expect(stripe.checkout.sessions.create({ mode: 'subscription', line_items: [{ price: 'price_x', quantity: 1 }] } as Stripe.Checkout.SessionCreateParams)).rejects.toMatchObject({
    code: 'parameter_missing',
    param: 'success_url',
  });
  await expect(stripe.customers.create({ name: 'x', phone: '123' })).rejects.toMatchObject({ code: 'parameter_unknown', param: 'phone' });
});

test('the hosted pages escape what callers sent, and paying sends webhooks the SDK verifies', async () => {
  const c = await stripe.customers.create({ name: '<img src=x onerror=alert(1)>', email: 'x"y@lab.example' });
  const price = await product();
  const session = await stripe.checkout.sessions.create({
    mode: 'subscription',
    customer: c.id,
    line_items: [{ price: price.id, quantity: 1 }],
    success_url: 'http://127.0.0.1:9/back',
    cancel_url: 'javascript:alert(1)',
  });
  const html = await (await fetch(session.url!)).text();
  expect(html).not.toContain('<img src=x');
  expect(html).toContain('&lt;img src=x onerror=alert(1)&gt;');
  expect(html).toContain('Contract &lt;plan&gt; &amp; co');
  expect(html).not.toContain('href="javascript:');

  received.length = 0;
  const res = await fetch(session.url!, { method: 'POST', body: new URLSearchParams({ card: '4242 4242 4242 4242' }), redirect: 'manual' });
  expect(res.status).toBe(303);
  expect(res.headers.get('location')).toBe('http://127.0.0.1:9/back');
  const events = received.map((r) => stripe.webhooks.constructEvent(r.body, r.signature, SECRET, 300));
  expect(events.map((e) => e.type)).toEqual(['customer.subscription.created', 'invoice.paid', 'checkout.session.completed']);
  const completed = events[2]!;
  if (completed.type !== 'checkout.session.completed') throw new Error('unexpected event');
  const sub = await stripe.subscriptions.retrieve(String(completed.data.object.subscription));
  expect(sub.status).toBe('active');
  expect(sub.items.data[0]!.current_period_end).toBeGreaterThan(sub.items.data[0]!.current_period_start);
  const invoices = await stripe.invoices.list({ customer: c.id });
  expect(invoices.data.map((i) => [i.status, i.amount_paid])).toEqual([['paid', 1234]]);
  expect(() => stripe.webhooks.constructEvent(received[0]!.body, received[0]!.signature, 'whsec_other', 300)).toThrow(Stripe.errors.StripeSignatureVerificationError);

  // Cancelling through the API ends it and says so.
  received.length = 0;
  const cancelled = await stripe.subscriptions.cancel(sub.id);
  expect(cancelled.status).toBe('canceled');
  expect(received.map((r) => JSON.parse(r.body).type)).toEqual(['customer.subscription.deleted']);
});
