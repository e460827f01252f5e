import express, { type Express, type NextFunction, type Request, type Response } from 'express';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { stripeApiRouter } from './api';
import { FakeApiError, FakeStripeEngine, type FakeEvent } from './engine';
import { checkoutPage, indexPage, portalPage } from './pages';
import { loadState, saveState } from './state';
import { WebhookSender } from './webhooks';

/**
 * A local fake of the payment provider's API for development and tests: the official SDK talks to
 * it over HTTP on loopback (`host`, `port`, `protocol` options), testers pay on its hosted
 * checkout page with test card numbers (cards.ts), and it sends signed webhook events to the
 * server. It implements what Bandwright calls and nothing else. Never started in production.
 */

export type StripeFakeOptions = {
  /** The secret key the SDK must send (Authorization: Bearer …). */
  secretKey: string;
  /** Signs webhook events (the server's STRIPE_WEBHOOK_SECRET). */
  webhookSecret: string;
  /** Where events are POSTed; may be set later with `setWebhookUrl`. */
  webhookUrl?: string | null;
  /** Keeps customers, subscriptions and invoices across restarts (JSON file). */
  stateFile?: string;
  /** Log lines go here (default: console with a prefix); tests pass a no-op. */
  log?: (line: string) => void;
};

export type StripeFake = {
  app: Express;
  engine: FakeStripeEngine;
  webhooks: WebhookSender;
  /** http://127.0.0.1:<port> once listening. */
  readonly url: string;
  readonly port: number;
  setWebhookUrl(url: string | null): void;
  /** Runs the next renewal (or payment retry) of a subscription and delivers its events. */
  renew(subscriptionId: string): Promise<FakeEvent[]>;
  close(): Promise<void>;
};

function form(req: Request): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of Object.entries((req.body ?? {}) as Record<string, unknown>)) if (typeof v === 'string') out[k] = v;
  return out;
}

export function createStripeFake(opts: StripeFakeOptions): { app: Express; engine: FakeStripeEngine; webhooks: WebhookSender; setBaseUrl: (u: string) => void } {
  const log = opts.log ?? ((line: string) => console.log(`[stripe-fake] ${line}`));
  const state = loadState(opts.stateFile);
  let baseUrl = '';
  const engine = new FakeStripeEngine(state, () => saveState(opts.stateFile, state), () => baseUrl);
  const webhooks = new WebhookSender(opts.webhookSecret, opts.webhookUrl ?? null, log);
  const emit = (events: FakeEvent[]) => webhooks.send(events);

  const app = express();
  app.disable('x-powered-by');
  app.set('query parser', 'extended');
  app.use((_req, res, next) => {
    res.setHeader('X-Content-Type-Options', 'nosniff');
    res.setHeader('Referrer-Policy', 'no-referrer');
    next();
  });

  app.use(stripeApiRouter({ engine, secretKey: opts.secretKey, baseUrl: () => baseUrl, emit }));

  // --- Hosted pages (what a browser opens; no API key).
  const pages = express.Router();
  pages.use(express.urlencoded({ extended: false, limit: '16kb' }));
  const html = (res: Response, status: number, body: string) => {
    res.status(status).setHeader('Content-Security-Policy', "default-src 'none'; style-src 'unsafe-inline'; form-action 'self' http: https:");
    res.type('html').send(body);
  };
  const pathId = (req: Request) => String(req.params.id);

  pages.get('/', (_req, res) => html(res, 200, indexPage(engine, webhooks.url)));

  pages.get('/checkout/:id', (req, res) => html(res, 200, checkoutPage(engine, engine.checkoutSession(pathId(req)))));
  pages.post('/checkout/:id', async (req, res) => {
    const outcome = engine.payCheckout(pathId(req), form(req).card ?? '');
    if (!outcome.ok) return html(res, 402, checkoutPage(engine, engine.checkoutSession(pathId(req)), outcome.message));
    // The events reach the server before the browser returns to it, so the plan is usually
    // active on arrival (the app still polls: the provider promises no such order).
    await emit(outcome.events);
    res.redirect(303, outcome.session.successUrl.replace('{CHECKOUT_SESSION_ID}', outcome.session.id));
  });

  const portalBack = (res: Response, id: string, ok: boolean, text: string) =>
    res.redirect(303, `/portal/${encodeURIComponent(id)}?${ok ? 'done' : 'problem'}=${encodeURIComponent(text)}`);
  /** The subscription named in a portal form, if it belongs to the portal session's customer. */
  const ownSubscription = (req: Request) => {
    const session = engine.portalSession(pathId(req));
    const sub = engine.subscription(form(req).subscription ?? '');
    if (sub.customer !== session.customer) throw new FakeApiError(404, 'invalid_request_error', 'No such subscription for this customer');
    return sub;
  };

  pages.get('/portal/:id', (req, res) => {
    const q = req.query as Record<string, unknown>;
    const message = typeof q.done === 'string' ? { ok: true, text: q.done } : typeof q.problem === 'string' ? { ok: false, text: q.problem } : undefined;
    html(res, 200, portalPage(engine, engine.portalSession(pathId(req)), message));
  });
  pages.post('/portal/:id/cancel', async (req, res) => {
    await emit(engine.cancel(ownSubscription(req).id));
    portalBack(res, pathId(req), true, 'The plan was cancelled.');
  });
  pages.post('/portal/:id/switch', async (req, res) => {
    const sub = ownSubscription(req);
    const price = engine.price(form(req).price ?? '');
    await emit(engine.switchPrice(sub.id, price.id));
    const now = engine.subscription(sub.id);
    portalBack(res, pathId(req), now.status === 'active', now.status === 'active' ? `Switched to ${price.interval === 'year' ? 'yearly' : 'monthly'} billing.` : 'The switch was made but its payment failed.');
  });
  pages.post('/portal/:id/card', async (req, res) => {
    const session = engine.portalSession(pathId(req));
    const outcome = engine.updateCard(session.customer, form(req).card ?? '');
    if (!outcome.ok) return portalBack(res, pathId(req), false, outcome.message);
    await emit(outcome.events);
    const failed = outcome.events.some((e) => e.type === 'invoice.payment_failed');
    portalBack(res, pathId(req), !failed, failed ? 'The card was saved, but charging the open invoice failed.' : 'The card was saved.');
  });
  pages.post('/portal/:id/renew', async (req, res) => {
    const events = engine.renew(ownSubscription(req).id);
    await emit(events);
    const failed = events.some((e) => e.type === 'invoice.payment_failed');
    portalBack(res, pathId(req), !failed, failed ? 'Renewal simulated: the payment failed.' : 'Renewal simulated: the invoice was paid.');
  });
  app.use(pages);

  app.use((err: unknown, _req: Request, res: Response, next: NextFunction) => {
    if (err instanceof FakeApiError) return html(res, err.status, `<!doctype html><title>Not found</title><p>${err.status === 404 ? 'Not found' : 'Refused'}: ${err.message.replace(/[&<>"']/g, '')}</p>`);
    next(err);
  });
  return { app, engine, webhooks, setBaseUrl: (u) => (baseUrl = u) };
}

/** Starts the fake on loopback (port 0: any free port). */
export async function startStripeFake(opts: StripeFakeOptions & { port?: number; host?: string }): Promise<StripeFake> {
  const fake = createStripeFake(opts);
  const host = opts.host ?? '127.0.0.1';
  const server = await new Promise<Server>((resolve, reject) => {
    // Express 5 hands a listen error to this callback (e.g. the port is taken).
    const s = fake.app.listen(opts.port ?? 0, host, (err?: Error) => (err ? reject(err) : resolve(s)));
  });
  const port = (server.address() as AddressInfo).port;
  const url = `http://${host}:${port}`;
  fake.setBaseUrl(url);
  return {
    app: fake.app,
    engine: fake.engine,
    webhooks: fake.webhooks,
    url,
    port,
    setWebhookUrl: (u) => {
      fake.webhooks.url = u;
    },
    renew: async (subscriptionId) => {
      const events = fake.engine.renew(subscriptionId);
      await fake.webhooks.send(events);
      return events;
    },
    close: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}
