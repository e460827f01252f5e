import { eq } from 'drizzle-orm';
import request from 'supertest';
import { listMailTo } from '@/db/queries/mail';
import { invoices, providerEvents, scans } from '@/db/schema';
import { subscriptionJson, invoiceJson } from '@/server/fakes/stripe/objects';
import { eventPayload } from '@/server/fakes/stripe/webhooks';
import { FREE_PLAN, INSTITUTIONAL_PLAN, type PlanView } from '@/shared/plans';
import { GB, MB } from '@/shared/bytes';
import { startQueue } from '@/server/jobs/queue';
import { createStripeClient } from '@/server/clients/stripe';
import {
  billingAccountOf,
  countRows,
  payOnCheckoutPage,
  portalAction,
  setStorageBytes,
  signedEvent,
  startBillingTestApp,
  type BillingTestApp,
} from '../helpers/billing';
import { makeGroupWithRoles, makeResult, registryProbe, sampleCurve, sampleMeta, type Crew, type Person } from '../helpers/factories';

jest.setTimeout(60_000);

let t: BillingTestApp;
beforeAll(async () => {
  t = await startBillingTestApp();
  // Scans are queued (no worker runs here, so they stay queued).
  t.ctx.jobs = await startQueue(t.ctx.env);
});
afterAll(async () => t?.close());

const plan = async (p: Person, groupId: string) => {
  const res = await p.agent.get(`/api/groups/${groupId}/plan`);
  expect(res.status).toBe(200);
  return res.body as PlanView;
};

/** Starts a checkout as the owner and pays it on the fake's page; returns the subscription id. */
async function subscribe(crew: Crew, groupId: string, opts: { interval?: 'month' | 'year'; card?: string } = {}): Promise<string> {
  const res = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: opts.interval ?? 'month' });
  expect(res.status).toBe(200);
  const paid = await payOnCheckoutPage(res.body.url, opts.card);
  expect(paid.status).toBe(303);
  const account = await billingAccountOf(t, groupId);
  expect(account?.subscriptionId).toMatch(/^sub_/);
  return account!.subscriptionId!;
}

async function portalUrl(owner: Person, groupId: string): Promise<string> {
  const res = await owner.agent.post(`/api/groups/${groupId}/billing/portal`).send({});
  expect(res.status).toBe(200);
  return res.body.url as string;
}

const mailsOf = async (p: Person, kind: string) => (await listMailTo(t.ctx.db, p.email)).filter((m) => m.kind === kind);

const postEvent = (e: { payload: string; signature?: string }, contentType = 'application/json') => {
  let call = request(t.app).post('/api/billing/webhook').set('Content-Type', contentType);
  if (e.signature) call = call.set('Stripe-Signature', e.signature);
  return call.send(e.payload);
};

const upload = (p: Person, groupId: string, title = 'Quota probe') => {
  const { curve, theory } = sampleCurve();
  return p.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta({ title }), curve, theory });
};

const scanBody = (title: string) => ({
  points: [1000, 1500, 2000].map((x, i) => ({ x, model: { observed: [10 + i, 12], signal: [1, 2], backgrounds: [{ name: 'continuum', yields: [10, 11] }] } })),
  options: {},
  meta: { ...sampleMeta({ title }), quantity: 'mu', quantityUnit: '', method: 'asymptotic' },
});

describe('plan and usage', () => {
  test('a new group is on the Free plan; usage is exact by kind and every member may read it', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const empty = await plan(crew.viewer, groupId);
    expect(empty).toMatchObject({ plan: { id: 'free', quotaBytes: 50 * MB }, status: 'none', quotaBytes: FREE_PLAN.quotaBytes, readOnly: false, notice: null, hasBillingAccount: false });
    expect(empty.usage).toEqual({ totalBytes: 0, uploadsBytes: 0, scanInputsBytes: 0, rendersBytes: 0, renderCount: 0 });
    expect(empty.plans.map((p) => [p.id, p.prices])).toEqual([['free', null], ['institutional', INSTITUTIONAL_PLAN.prices]]);

    const v = await makeResult(crew.analyst, groupId);
    const scan = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send(scanBody('Usage scan'));
    expect(scan.status).toBe(201);
    const after = await plan(crew.viewer, groupId);
    const versionBytes = (await t.ctx.db.execute<{ b: string }>(`select stored_bytes as b from result_versions where result_id = '${v.resultId}'`)).rows[0]!.b;
    const scanBytes = (await t.ctx.db.select({ b: scans.storedBytes }).from(scans).where(eq(scans.groupId, groupId)))[0]!.b;
    expect(after.usage.uploadsBytes).toBe(Number(versionBytes));
    expect(after.usage.scanInputsBytes).toBe(scanBytes);
    expect(scanBytes).toBeGreaterThan(0);
    expect(after.usage.totalBytes).toBe(after.usage.uploadsBytes + after.usage.scanInputsBytes);
    expect(after.usage.totalBytes).toBe(await registryProbe.storageBytes(t, groupId));
  });
});

describe('checkout through the fake, webhooks, quota', () => {
  test('an owner pays on the hosted page: the plan turns active, the quota is 20 GB, the invoice is listed and the receipt mailed to owners only', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const start = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'year' });
    expect(start.status).toBe(200);
    expect(start.body.url).toMatch(new RegExp(`^${t.fake.url}/checkout/cs_test_`));

    // The hosted page names the price; a declining card leaves the group on Free.
    const page = await fetch(start.body.url);
    expect(await page.text()).toContain('€490.00');
    const declined = await payOnCheckoutPage(start.body.url, '4000 0000 0000 0002');
    expect(declined.status).toBe(402);
    expect(declined.html).toContain('Your card was declined.');
    expect((await plan(crew.owner, groupId)).plan.id).toBe('free');

    const paid = await payOnCheckoutPage(start.body.url, '4242 4242 4242 4242');
    expect(paid.status).toBe(303);
    expect(paid.location).toMatch(new RegExp(`/plan\\?group=${groupId}&checkout=success&session=cs_test_`));

    const now = await plan(crew.viewer, groupId);
    expect(now).toMatchObject({ plan: { id: 'institutional' }, status: 'active', interval: 'year', quotaBytes: 20 * GB, readOnly: false, hasBillingAccount: true });
    expect(new Date(now.currentPeriodEnd!).getTime()).toBeGreaterThan(Date.now() + 360 * 86400_000);

    const invoices = await crew.owner.agent.get(`/api/groups/${groupId}/invoices`);
    expect(invoices.status).toBe(200);
    expect(invoices.body.invoices).toEqual([expect.objectContaining({ amountCents: 49_000, currency: 'eur', status: 'paid', paidAt: expect.any(String) })]);

    const receipts = await mailsOf(crew.owner, 'billing_receipt');
    expect(receipts).toHaveLength(1);
    expect(receipts[0]!.subject).toContain('€490.00');
    expect(receipts[0]!.text).toMatch(/paid on \d{1,2} (Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec) \d{4}/);
    for (const role of ['curator', 'analyst', 'editor', 'viewer'] as const) expect(await mailsOf(crew[role], 'billing_receipt')).toHaveLength(0);

    // What the Free plan would refuse now fits.
    await setStorageBytes(t, groupId, 50 * MB);
    expect((await upload(crew.analyst, groupId)).status).toBe(201);

    // A second subscription is refused; the portal manages the one there is.
    const again = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' });
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('already_subscribed');
  });

  test('a cancelled checkout changes nothing; bad bodies are named', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const bad = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'week' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('interval');
    const start = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' });
    const html = await (await fetch(start.body.url)).text();
    expect(html).toContain(`/plan?group=${groupId}&amp;checkout=cancelled`);
    expect((await plan(crew.owner, groupId)).status).toBe('none');
    const portalWithoutPaying = await crew.owner.agent.post(`/api/groups/${groupId}/billing/portal`).send({});
    expect(portalWithoutPaying.status).toBe(200); // the first checkout made the customer
  });

  test('only owners manage billing; every member reads the plan', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    for (const role of ['curator', 'analyst', 'editor', 'viewer'] as const) {
      const who = crew[role];
      expect((await who.agent.get(`/api/groups/${groupId}/plan`)).status).toBe(200);
      for (const call of [
        who.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' }),
        who.agent.post(`/api/groups/${groupId}/billing/portal`).send({}),
        who.agent.get(`/api/groups/${groupId}/invoices`),
      ]) {
        const res = await call;
        expect(res.status).toBe(403);
        expect(res.body.error.message).toMatch(/needs owner/);
      }
    }
    expect(await billingAccountOf(t, groupId)).toBeUndefined();
  });
});

describe('payment failure and the end of a plan', () => {
  test('a failed renewal makes the group read-only above the free quota: nothing is lost, reads and deletions work, a new card restores it', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const subId = await subscribe(crew, groupId, { card: '4000 0000 0000 0341' });
    const kept = await makeResult(crew.analyst, groupId, { meta: { title: 'Kept through the lapse' } });
    const spare = await makeResult(crew.analyst, groupId, { meta: { title: 'Deletable draft' } });
    const realBytes = await registryProbe.storageBytes(t, groupId);
    await setStorageBytes(t, groupId, 60 * MB); // bytes stored while the plan was paid

    const events = await t.fake.renew(subId);
    expect(events.map((e) => e.type)).toEqual(['invoice.payment_failed', 'customer.subscription.updated']);

    const lapsed = await plan(crew.viewer, groupId);
    expect(lapsed).toMatchObject({ plan: { id: 'free' }, status: 'past_due', quotaBytes: 50 * MB, readOnly: true });
    expect(lapsed.notice).toMatch(/payment .* failed/);
    expect(lapsed.notice).toMatch(/nothing was deleted/);

    // Every storage-adding write is refused with why and how to fix it.
    const refused = await upload(crew.analyst, groupId);
    expect(refused.status).toBe(402);
    expect(refused.body.error.code).toBe('read_only');
    expect(refused.body.error.message).toMatch(/payment for this group's Institutional plan failed/);
    expect(refused.body.error.message).toMatch(/update the card under Manage billing/);
    const scan = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send(scanBody('Refused scan'));
    expect(scan.status).toBe(402);
    const version = await crew.analyst.agent.post(`/api/groups/${groupId}/results/${kept.resultId}/versions`).send({ meta: sampleMeta(), curve: sampleCurve().curve, changeNote: 'more' });
    expect(version.status).toBe(402);

    // Nothing was lost; reading, downloading and deleting work.
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/results/${kept.resultId}/versions/1`)).status).toBe(200);
    expect((await crew.viewer.agent.get(`/api/groups/${groupId}/results/${kept.resultId}/versions/1/export.csv`)).status).toBe(200);
    expect(await registryProbe.resultCount(t, groupId)).toBe(2);
    expect((await crew.analyst.agent.delete(`/api/groups/${groupId}/results/${spare.resultId}`)).status).toBe(204);
    expect(await registryProbe.storageBytes(t, groupId)).toBeLessThan(60 * MB);
    expect(realBytes).toBeGreaterThan(0);

    // The owners were told, with the amount.
    const notices = await mailsOf(crew.owner, 'billing_payment_failed');
    expect(notices).toHaveLength(1);
    expect(notices[0]!.text).toContain('€49.00');
    expect(notices[0]!.text).toContain('read-only');

    // A working card in the portal pays the open invoice; the plan is back.
    const portal = await portalUrl(crew.owner, groupId);
    expect((await portalAction(portal, 'card', { card: '4242424242424242' })).status).toBe(303);
    const back = await plan(crew.owner, groupId);
    expect(back).toMatchObject({ plan: { id: 'institutional' }, status: 'active', readOnly: false });
    expect((await upload(crew.analyst, groupId)).status).toBe(201);
    const invoices = (await crew.owner.agent.get(`/api/groups/${groupId}/invoices`)).body.invoices as { status: string }[];
    expect(invoices.map((i) => i.status)).toEqual(['paid', 'paid']);
  });

  test('cancelling in the portal ends the plan: read-only above the free quota, normal below it', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const subId = await subscribe(crew, groupId);
    const portal = await portalUrl(crew.owner, groupId);
    expect((await portalAction(portal, 'cancel', { subscription: subId })).status).toBe(303);

    const ended = await plan(crew.owner, groupId);
    expect(ended).toMatchObject({ plan: { id: 'free' }, status: 'canceled', readOnly: false });
    expect(ended.notice).toMatch(/plan ended/);
    expect((await upload(crew.analyst, groupId)).status).toBe(201);

    await setStorageBytes(t, groupId, 51 * MB);
    const refused = await upload(crew.analyst, groupId);
    expect(refused.status).toBe(402);
    expect(refused.body.error.message).toMatch(/plan ended .*subscribe again/);

    // Subscribing again is the fix.
    await subscribe(crew, groupId);
    expect((await plan(crew.owner, groupId)).status).toBe('active');
    expect((await upload(crew.analyst, groupId)).status).toBe(201);
  });

  test('switching to yearly in the portal charges the yearly price', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const subId = await subscribe(crew, groupId, { interval: 'month' });
    const yearly = t.fake.engine.alternativePrices(subId).find((p) => p.interval === 'year');
    expect(yearly?.unitAmount).toBe(49_000);
    await portalAction(await portalUrl(crew.owner, groupId), 'switch', { subscription: subId, price: yearly!.id });
    expect((await plan(crew.owner, groupId)).interval).toBe('year');
    const invoices = (await crew.owner.agent.get(`/api/groups/${groupId}/invoices`)).body.invoices as { amountCents: number }[];
    expect(invoices.map((i) => i.amountCents).sort()).toEqual([4_900, 49_000]);
  });
});

describe('webhook signatures, replays and order', () => {
  const harmless = () => signedEvent('customer.created', { id: 'cus_signaturecheck', object: 'customer' });

  test('unsigned, tampered, wrongly signed, stale and non-JSON events are refused with 400 and change nothing', async () => {
    const before = await countRows(t, 'provider_events');
    const good = harmless();
    const cases: [string, Awaited<ReturnType<typeof postEvent>>][] = [
      ['unsigned', await postEvent({ payload: good.payload })],
      ['tampered', await postEvent({ payload: good.payload.replace('cus_signaturecheck', 'cus_somebodyelse'), signature: good.signature })],
      ['wrong secret', await postEvent(signedEvent('customer.created', { id: 'cus_x', object: 'customer' }, { secret: 'whsec_not_ours' }))],
      ['stale', await postEvent(signedEvent('customer.created', { id: 'cus_x', object: 'customer' }, { timestamp: Math.floor(Date.now() / 1000) - 301 }))],
      ['garbage header', await postEvent({ payload: good.payload, signature: 'nonsense' })],
      ['not JSON', await postEvent(good, 'text/plain')],
    ];
    for (const [name, res] of cases) {
      expect({ name, status: res.status, code: res.body.error?.code }).toEqual({ name, status: 400, code: name === 'not JSON' ? 'invalid_payload' : 'invalid_signature' });
    }
    expect(await countRows(t, 'provider_events')).toBe(before);
    const ok = await postEvent(good);
    expect(ok.status).toBe(200);
    expect(await countRows(t, 'provider_events')).toBe(before + 1);
  });

  test('a replayed event is recognised by its id and has no second effect, also when replays race', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    await subscribe(crew, groupId);
    const paid = t.fake.webhooks.deliveries.find((d) => d.type === 'invoice.paid' && d.payload.includes(groupId))!;
    expect(paid.status).toBe(200);
    const invoicesBefore = await countRows(t, 'invoices', groupId);
    const receiptsBefore = (await mailsOf(crew.owner, 'billing_receipt')).length;

    // The same bytes again, freshly signed as the provider does when it retries.
    const replays = await Promise.all(Array.from({ length: 4 }, () => postEvent({ payload: paid.payload, signature: t.fake.webhooks.sign(paid.payload) })));
    for (const r of replays) expect(r.body).toMatchObject({ received: true, duplicate: true });
    expect(await countRows(t, 'invoices', groupId)).toBe(invoicesBefore);
    expect((await mailsOf(crew.owner, 'billing_receipt')).length).toBe(receiptsBefore);
    expect((await t.ctx.db.select().from(providerEvents).where(eq(providerEvents.id, paid.eventId))).length).toBe(1);
  });

  test('events delivered in reverse order still leave the plan active with its invoice and one receipt', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const start = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' });
    t.fake.webhooks.pause();
    expect((await payOnCheckoutPage(start.body.url)).status).toBe(303);
    expect((await plan(crew.owner, groupId)).status).toBe('none'); // nothing arrived yet
    await t.fake.webhooks.flush('reversed');
    expect(await plan(crew.owner, groupId)).toMatchObject({ plan: { id: 'institutional' }, status: 'active' });
    expect(await countRows(t, 'invoices', groupId)).toBe(1);
    expect(await mailsOf(crew.owner, 'billing_receipt')).toHaveLength(1);
  });

  test.each(['as they happened', 'reversed'] as const)(
    'an update and the cancellation that follows it in the same second leave the plan canceled, arriving %s',
    async (order) => {
      const { groupId, crew } = await makeGroupWithRoles(t);
      const subId = await subscribe(crew, groupId);
      const yearly = t.fake.engine.alternativePrices(subId)[0]!;
      // The owner switches to yearly billing and cancels right after: two subscription events
      // that the provider stamps with the same second (`created` has whole seconds only).
      const second = t.fake.engine.now();
      const events = [...t.fake.engine.switchPrice(subId, yearly.id), ...t.fake.engine.cancel(subId)]
        .filter((e) => e.type.startsWith('customer.subscription.'))
        .map((e) => ({ ...e, created: second }));
      expect(events.map((e) => e.type)).toEqual(['customer.subscription.updated', 'customer.subscription.deleted']);
      for (const e of order === 'reversed' ? [...events].reverse() : events) {
        const payload = eventPayload(e);
        const res = await postEvent({ payload, signature: t.fake.webhooks.sign(payload) });
        expect(res.status).toBe(200);
      }
      expect(await plan(crew.owner, groupId)).toMatchObject({ plan: { id: 'free' }, status: 'canceled' });
      expect((await billingAccountOf(t, groupId))?.subscriptionId).toBe(subId);
    },
  );

  test('a subscription event the provider cannot be asked about is not recorded, so the provider sends it again', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const subId = await subscribe(crew, groupId);
    const [update] = t.fake.engine.switchPrice(subId, t.fake.engine.alternativePrices(subId)[0]!.id).filter((e) => e.type === 'customer.subscription.updated');
    const payload = eventPayload(update!);
    const stripe = t.ctx.stripe;
    t.ctx.stripe = createStripeClient({ ...t.ctx.env.stripe, port: 1 });
    try {
      const res = await postEvent({ payload, signature: t.fake.webhooks.sign(payload) });
      expect(res.status).toBe(502);
      expect(await t.ctx.db.select().from(providerEvents).where(eq(providerEvents.id, update!.id))).toHaveLength(0);
    } finally {
      t.ctx.stripe = stripe;
    }
    // The retry, with the provider reachable again, applies the yearly interval.
    const again = await postEvent({ payload, signature: t.fake.webhooks.sign(payload) });
    expect(again.body).toMatchObject({ duplicate: false, applied: true });
    expect((await plan(crew.owner, groupId)).interval).toBe('year');
  });

  test('a state change older than the last applied one is ignored, but its invoice is still kept', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const subId = await subscribe(crew, groupId, { card: '4000 0000 0000 0341' });
    const sub = t.fake.engine.subscription(subId);
    const activeSnapshot = subscriptionJson(sub, t.fake.engine.state);
    const checkoutTime = sub.created;
    await t.fake.renew(subId); // fails: past due, a month later on the fake's clock
    expect((await plan(crew.owner, groupId)).status).toBe('past_due');

    // An "active" update from before the failure arrives late, under a new event id.
    const late = await postEvent(signedEvent('customer.subscription.updated', activeSnapshot, { created: checkoutTime }));
    expect(late.status).toBe(200);
    expect(late.body).toMatchObject({ duplicate: false, applied: false });
    expect((await plan(crew.owner, groupId)).status).toBe('past_due');

    // A late invoice event is still recorded.
    const oldInvoice = invoiceJson({ ...t.fake.engine.invoicesOf(sub.customer).at(-1)!, id: 'in_latearrivalinvoice0001' });
    const lateInvoice = await postEvent(signedEvent('invoice.paid', oldInvoice, { created: checkoutTime }));
    expect(lateInvoice.body).toMatchObject({ duplicate: false, applied: true });
    const ids = ((await crew.owner.agent.get(`/api/groups/${groupId}/invoices`)).body.invoices as { id: string }[]).map((i) => i.id);
    expect(ids).toContain('in_latearrivalinvoice0001');
  });
});

describe('quota edge', () => {
  test('parallel uploads at the quota edge never take the group over it', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    // The size of one upload (all six bodies are the same, so each stores the same bytes).
    const first = await upload(crew.analyst, groupId, 'Edge');
    expect(first.status).toBe(201);
    const size = await registryProbe.storageBytes(t, groupId);
    const start = FREE_PLAN.quotaBytes - Math.floor(2.5 * size);
    await setStorageBytes(t, groupId, start);

    const results = await Promise.all(Array.from({ length: 6 }, () => upload(crew.analyst, groupId, 'Edge')));
    const codes = results.map((r) => r.status).sort();
    expect(codes).toEqual([201, 201, 413, 413, 413, 413]);
    const stored = await registryProbe.storageBytes(t, groupId);
    expect(stored).toBe(start + 2 * size);
    expect(stored).toBeLessThanOrEqual(FREE_PLAN.quotaBytes);
    const refused = results.find((r) => r.status === 413)!;
    expect(refused.body.error.code).toBe('quota_exceeded');
    expect(refused.body.error.message).toMatch(/^This group uses 49\.\d+ MB of 50 MB \(Free plan\); this upload needs \d+(\.\d)? KB more\. An owner can upgrade to the Institutional plan \(Plan screen\) or delete drafts\.$/);
  });

  test('parallel new versions of one result queue on the quota as well', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const v = await makeResult(crew.analyst, groupId);
    const body = { meta: sampleMeta(), curve: sampleCurve().curve, changeNote: 'Parallel' };
    const one = await crew.analyst.agent.post(`/api/groups/${groupId}/results/${v.resultId}/versions`).send(body);
    expect(one.status).toBe(201);
    const perVersion = (await t.ctx.db.execute<{ b: string }>(`select stored_bytes as b from result_versions where result_id = '${v.resultId}' and version = 2`)).rows[0]!.b;
    const start = FREE_PLAN.quotaBytes - Math.floor(1.5 * Number(perVersion));
    await setStorageBytes(t, groupId, start);
    const results = await Promise.all(Array.from({ length: 4 }, () => crew.analyst.agent.post(`/api/groups/${groupId}/results/${v.resultId}/versions`).send(body)));
    expect(results.map((r) => r.status).sort()).toEqual([201, 413, 413, 413]);
    expect(await registryProbe.storageBytes(t, groupId)).toBeLessThanOrEqual(FREE_PLAN.quotaBytes);
  });

  test('a scan over the quota is refused before anything is stored; deleting is never refused', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const v = await makeResult(crew.analyst, groupId);
    await setStorageBytes(t, groupId, FREE_PLAN.quotaBytes - 1000);
    const scan = await crew.analyst.agent.post(`/api/groups/${groupId}/scans`).send(scanBody('Too big for the rest'));
    expect(scan.status).toBe(413);
    expect(scan.body.error.message).toMatch(/this scan needs .* more/);
    expect(await t.ctx.db.select().from(scans).where(eq(scans.groupId, groupId))).toHaveLength(0);
    expect(await registryProbe.storageBytes(t, groupId)).toBe(FREE_PLAN.quotaBytes - 1000);
    await setStorageBytes(t, groupId, FREE_PLAN.quotaBytes + 5000);
    expect((await crew.analyst.agent.delete(`/api/groups/${groupId}/results/${v.resultId}`)).status).toBe(204);
  });
});

describe('a provider that forgot the customer', () => {
  test('checkout gives the group a new customer instead of failing', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const first = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' });
    expect(first.status).toBe(200);
    const old = (await billingAccountOf(t, groupId))!.customerId!;
    delete t.fake.engine.state.customers[old];
    const again = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' });
    expect(again.status).toBe(200);
    const now = (await billingAccountOf(t, groupId))!.customerId!;
    expect(now).not.toBe(old);
    expect(t.fake.engine.state.customers[now]?.metadata.groupId).toBe(groupId);
    // And the portal says what is wrong when the provider answers with an error.
    delete t.fake.engine.state.customers[now];
    const portal = await crew.owner.agent.post(`/api/groups/${groupId}/billing/portal`).send({});
    expect(portal.status).toBe(502);
    expect(portal.body.error.message).toMatch(/^The payment provider refused the billing portal: No such customer/);
  });

  test('a provider that cannot be reached is named, and nothing is charged', async () => {
    const { groupId, crew } = await makeGroupWithRoles(t);
    const stripe = t.ctx.stripe;
    t.ctx.stripe = createStripeClient({ ...t.ctx.env.stripe, port: 1 });
    try {
      const res = await crew.owner.agent.post(`/api/groups/${groupId}/billing/checkout`).send({ interval: 'month' });
      expect(res.status).toBe(502);
      expect(res.body.error.code).toBe('payment_provider_unreachable');
    } finally {
      t.ctx.stripe = stripe;
    }
  });
});

/** A new group whose crew holds every role; its owner. */
const ownedGroup = async () => {
  const { groupId, crew } = await makeGroupWithRoles(t);
  return { groupId, owner: crew.owner, crew };
};

describe('invoices as PDF', () => {
  test('an owner downloads an invoice of the group; other groups, unknown and malformed ids are refused', async () => {
    const { owner, groupId, crew } = await ownedGroup();
    const invoiceId = `in_pdf${Math.random().toString(36).slice(2, 10)}`;
    await t.ctx.db.insert(invoices).values({ id: invoiceId, groupId, amountCents: 49000, currency: 'eur', status: 'paid', periodStart: new Date('2031-03-01T00:00:00Z'), periodEnd: new Date('2032-03-01T00:00:00Z'), paidAt: new Date('2031-03-01T10:00:00Z') });
    const res = await owner.agent.get(`/api/groups/${groupId}/invoices/${invoiceId}.pdf`).buffer(true).parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toMatch(new RegExp(`^attachment; filename="?bandwright-invoice-${invoiceId.replace(/_/g, '-')}\\.pdf"?$`));
    const pdf = res.body as Buffer;
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    // The font is embedded (any group name prints), and the same invoice gives the same bytes.
    expect(pdf.toString('latin1')).toMatch(/\/FontFile2/);
    const again = await owner.agent.get(`/api/groups/${groupId}/invoices/${invoiceId}.pdf`).buffer(true).parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    expect(Buffer.compare(again.body as Buffer, pdf)).toBe(0);
    const other = await ownedGroup();
    expect((await other.owner.agent.get(`/api/groups/${other.groupId}/invoices/${invoiceId}.pdf`)).status).toBe(404);
    // A curator of the group is not an owner: billing is the owners'.
    expect((await crew.curator.agent.get(`/api/groups/${groupId}/invoices/${invoiceId}.pdf`)).status).toBe(403);
    expect((await owner.agent.get(`/api/groups/${groupId}/invoices/in_nothing.pdf`)).status).toBe(404);
    const bad = await owner.agent.get(`/api/groups/${groupId}/invoices/${encodeURIComponent('in_x"; rm')}.pdf`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].field).toBe('params.invoiceId');
  });
});
