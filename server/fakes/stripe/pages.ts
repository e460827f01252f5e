import { escapeHtml as esc } from '../../lib/html';
import { formatMoney } from '../../../shared/plans';
import { spacedCardNumber, TEST_CARDS } from './cards';
import type { FakeStripeEngine } from './engine';
import type { FakeCheckoutSession, FakeCustomer, FakePortalSession } from './state';

/**
 * The fake's hosted pages: checkout (pay with a test card or cancel) and the billing portal
 * (switch monthly/yearly, cancel, new card, and a test control that runs the next renewal).
 * Plain HTML forms; every value that came from a caller is escaped.
 */

/** Links only to http(s) addresses; anything else becomes inert. */
const safeUrl = (u: string | null | undefined) => (u && /^https?:\/\//i.test(u) ? esc(u) : '#');

const date = (ts: number) => new Date(ts * 1000).toISOString().slice(0, 10);

const STYLE = `
  body { font-family: system-ui, sans-serif; background: #eef0f3; color: #1d2127; margin: 0; }
  main { max-width: 560px; margin: 32px auto; padding: 0 16px; }
  .note { background: #fff6d8; border: 1px solid #c9a227; border-radius: 8px; padding: 8px 12px; font-size: 14px; }
  .box { background: #fff; border: 1px solid #d0d4da; border-radius: 10px; padding: 20px; margin: 16px 0; }
  h1 { font-size: 22px; } h2 { font-size: 17px; margin: 0 0 12px; }
  label { display: block; font-weight: 600; margin: 12px 0 4px; }
  input[type=text] { width: 100%; box-sizing: border-box; font-size: 18px; padding: 10px; border: 1px solid #9aa1ab; border-radius: 6px; letter-spacing: 1px; }
  button { font-size: 16px; padding: 10px 18px; border-radius: 6px; border: 1px solid #2b3b8f; background: #2b3b8f; color: #fff; cursor: pointer; margin-top: 12px; }
  button.secondary { background: #fff; color: #2b3b8f; }
  button.danger { background: #a4262c; border-color: #a4262c; }
  .error { color: #a4262c; font-weight: 600; }
  .ok { color: #216e39; font-weight: 600; }
  table { border-collapse: collapse; width: 100%; font-size: 14px; } td, th { text-align: left; padding: 4px 6px; border-top: 1px solid #e3e6ea; }
  code { font-size: 14px; }
`;

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(title)}</title><style>${STYLE}</style></head>
<body><main>
<p class="note" role="note">Local payment fake for development and tests: no real card is charged and nothing leaves this machine.</p>
${body}
</main></body></html>`;
}

function cardTable(): string {
  const rows = TEST_CARDS.map((c) => `<tr><td><code>${esc(spacedCardNumber(c.number))}</code></td><td>${esc(c.description)}</td></tr>`).join('');
  return `<details><summary>Test card numbers</summary><table aria-label="Test card numbers"><tr><th>Number</th><th>What happens</th></tr>${rows}</table></details>`;
}

function cardField(id: string, label = 'Card number'): string {
  return `<label for="${id}">${esc(label)}</label><input type="text" id="${id}" name="card" inputmode="numeric" autocomplete="off" placeholder="4242 4242 4242 4242" required>`;
}

export function checkoutPage(engine: FakeStripeEngine, s: FakeCheckoutSession, error?: string): string {
  const price = engine.state.prices[s.price];
  const customer: FakeCustomer | undefined = s.customer ? engine.state.customers[s.customer] : undefined;
  const amount = price ? formatMoney(price.unitAmount * s.quantity, price.currency) : '?';
  const per = price ? ` per ${price.interval}` : '';
  if (s.status !== 'open') {
    const where = s.status === 'complete' ? safeUrl(s.successUrl.replace('{CHECKOUT_SESSION_ID}', s.id)) : safeUrl(s.cancelUrl);
    return page('Checkout', `<h1>This checkout is ${s.status === 'complete' ? 'paid' : 'expired'}</h1><p><a href="${where}">Return to the app</a></p>`);
  }
  return page(
    `Pay ${amount}`,
    `<h1>${esc(price?.productName ?? 'Subscription')}</h1>
<div class="box">
  <p><strong>${esc(amount)}${esc(per)}</strong>${customer?.name ? ` for ${esc(customer.name)}` : ''}${customer?.email ? ` (${esc(customer.email)})` : ''}</p>
  ${error ? `<p class="error" role="alert">${esc(error)}</p>` : ''}
  <form method="post" action="/checkout/${esc(s.id)}">
    ${cardField('card')}
    <button type="submit">Pay ${esc(amount)}</button>
  </form>
  ${s.cancelUrl ? `<p><a href="${safeUrl(s.cancelUrl)}">Cancel and return</a></p>` : ''}
</div>
${cardTable()}`,
  );
}

export function portalPage(engine: FakeStripeEngine, p: FakePortalSession, message?: { ok: boolean; text: string }): string {
  const customer = engine.customer(p.customer);
  const subs = engine.subscriptionsOf(customer.id);
  const invoices = engine.invoicesOf(customer.id);
  const action = (what: string) => `/portal/${esc(p.id)}/${what}`;
  const subBlocks = subs.map((sub) => {
    const price = engine.state.prices[sub.price];
    const priceText = price ? `${formatMoney(price.unitAmount * sub.quantity, price.currency)} per ${price.interval}` : '';
    const alternatives = sub.status === 'active' ? engine.alternativePrices(sub.id) : [];
    const switches = alternatives
      .map(
        (alt) => `<form method="post" action="${action('switch')}"><input type="hidden" name="subscription" value="${esc(sub.id)}"><input type="hidden" name="price" value="${esc(alt.id)}">
<button type="submit" class="secondary">Switch to ${alt.interval === 'year' ? 'yearly' : 'monthly'} (${esc(formatMoney(alt.unitAmount * sub.quantity, alt.currency))} per ${esc(alt.interval)})</button></form>`,
      )
      .join('');
    const live = sub.status === 'active' || sub.status === 'past_due';
    return `<div class="box" aria-label="Subscription ${esc(sub.id)}">
  <h2>${esc(price?.productName ?? 'Subscription')}</h2>
  <p>Status: <strong>${esc(sub.status.replace('_', ' '))}</strong> · ${esc(priceText)}</p>
  <p>${sub.status === 'canceled' ? `Ended ${date(sub.endedAt ?? sub.canceledAt ?? engine.now())}` : `Current period ${date(sub.periodStart)} – ${date(sub.periodEnd)}`}</p>
  ${switches}
  ${live ? `<form method="post" action="${action('cancel')}"><input type="hidden" name="subscription" value="${esc(sub.id)}"><button type="submit" class="danger">Cancel plan</button></form>` : ''}
  ${live ? `<form method="post" action="${action('renew')}"><input type="hidden" name="subscription" value="${esc(sub.id)}"><button type="submit" class="secondary">Test control: simulate the next ${sub.status === 'past_due' ? 'payment retry' : 'renewal'}</button></form>` : ''}
</div>`;
  });
  const invoiceRows = invoices
    .map((i) => `<tr><td>${esc(i.number)}</td><td>${date(i.created)}</td><td>${esc(formatMoney(i.amount, i.currency))}</td><td>${esc(i.status)}</td></tr>`)
    .join('');
  return page(
    'Billing',
    `<h1>Billing for ${esc(customer.name ?? customer.id)}</h1>
${message ? `<p class="${message.ok ? 'ok' : 'error'}" role="${message.ok ? 'status' : 'alert'}">${esc(message.text)}</p>` : ''}
${subBlocks.join('') || '<div class="box"><p>No subscriptions.</p></div>'}
<div class="box"><h2>Card</h2>
  <p>${customer.card ? `Card ending in ${esc(customer.card.slice(-4))}` : 'No card on file'}</p>
  <form method="post" action="${action('card')}">${cardField('new-card', 'New card number')}<button type="submit" class="secondary">Save card</button></form>
</div>
<div class="box"><h2>Invoices</h2>${invoiceRows ? `<table aria-label="Invoices"><tr><th>Number</th><th>Date</th><th>Amount</th><th>Status</th></tr>${invoiceRows}</table>` : '<p>None yet.</p>'}</div>
${p.returnUrl ? `<p><a href="${safeUrl(p.returnUrl)}">Return to the app</a></p>` : ''}
${cardTable()}`,
  );
}

export function indexPage(engine: FakeStripeEngine, webhookUrl: string | null): string {
  return page(
    'Payment fake',
    `<h1>Payment provider fake</h1>
<div class="box"><p>API: <code>/v1/…</code> (the official SDK points here). Webhooks go to <code>${esc(webhookUrl ?? 'nowhere (not set)')}</code>.</p>
<p>${Object.keys(engine.state.customers).length} customers, ${Object.keys(engine.state.subscriptions).length} subscriptions, ${Object.keys(engine.state.invoices).length} invoices.</p></div>
${cardTable()}`,
  );
}
