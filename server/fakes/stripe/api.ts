import express, { Router, type NextFunction, type Request, type Response } from 'express';
import { FakeApiError, type FakeEvent, type FakeStripeEngine } from './engine';
import { checkoutSessionJson, customerJson, invoiceJson, list, portalSessionJson, priceJson, productJson, subscriptionJson } from './objects';
import type { Metadata } from './state';

/**
 * The provider's REST API as far as Bandwright calls it: form-encoded requests (nested keys like
 * `line_items[0][price]`), a secret key as bearer token, JSON answers and errors in the provider's
 * shape. Unknown parameters are refused as the provider refuses them, so a call the fake does not
 * understand fails loudly instead of being half-done.
 */

type Params = Record<string, unknown>;

function checkKnown(params: Params, allowed: string[]) {
  for (const key of Object.keys(params)) {
    if (key !== 'expand' && !allowed.includes(key)) throw new FakeApiError(400, 'invalid_request_error', `Received unknown parameter: ${key}`, 'parameter_unknown', key);
  }
}

function str(params: Params, key: string, opts: { required: true }): string;
function str(params: Params, key: string, opts?: { required?: boolean }): string | undefined;
function str(params: Params, key: string, opts: { required?: boolean } = {}): string | undefined {
  const v = params[key];
  if (v === undefined || v === '') {
    if (opts.required) throw new FakeApiError(400, 'invalid_request_error', `Missing required param: ${key}.`, 'parameter_missing', key);
    return undefined;
  }
  if (typeof v !== 'string') throw new FakeApiError(400, 'invalid_request_error', `Invalid string: ${key}`, 'parameter_invalid_string', key);
  return v;
}

function int(params: Params, key: string, fallback?: number): number {
  const v = params[key];
  if (v === undefined && fallback !== undefined) return fallback;
  if (typeof v !== 'string' || !/^\d+$/.test(v)) throw new FakeApiError(400, 'invalid_request_error', `Invalid integer: ${String(v)}`, 'parameter_invalid_integer', key);
  return Number(v);
}

function obj(params: Params, key: string): Params {
  const v = params[key];
  if (v === undefined || v === '') return {};
  if (typeof v !== 'object' || v === null || Array.isArray(v)) throw new FakeApiError(400, 'invalid_request_error', `Invalid object: ${key}`, 'parameter_invalid_object', key);
  return v as Params;
}

function metadata(params: Params, key = 'metadata'): Metadata {
  const m = obj(params, key);
  const out: Metadata = {};
  for (const [k, v] of Object.entries(m)) out[k] = String(v);
  return out;
}

function interval(v: string | undefined, param: string): 'month' | 'year' {
  if (v === 'month' || v === 'year') return v;
  throw new FakeApiError(400, 'invalid_request_error', `Invalid recurring[interval]: must be one of day, week, month, or year (the fake supports month and year)`, 'parameter_invalid', param);
}

/** Query lists such as `lookup_keys[0]=a` arrive as arrays (or objects keyed by index). */
function stringList(v: unknown): string[] {
  if (v === undefined) return [];
  if (Array.isArray(v)) return v.map(String);
  if (typeof v === 'object' && v !== null) return Object.values(v).map(String);
  return [String(v)];
}

export function stripeApiRouter(opts: { engine: FakeStripeEngine; secretKey: string; baseUrl: () => string; emit: (events: FakeEvent[]) => Promise<void> }) {
  const { engine } = opts;
  const r = Router();
  r.use('/v1', express.urlencoded({ extended: true, limit: '256kb' }));

  r.use('/v1', (req, _res, next) => {
    const key = /^Bearer\s+(\S+)$/i.exec(req.headers.authorization ?? '')?.[1];
    if (!key) return next(new FakeApiError(401, 'invalid_request_error', 'You did not provide an API key. Provide your API key in the Authorization header, using Bearer auth.'));
    if (key !== opts.secretKey) return next(new FakeApiError(401, 'invalid_request_error', `Invalid API Key provided: ${key.slice(0, 8)}${'*'.repeat(Math.max(0, key.length - 12))}${key.slice(-4)}`, 'api_key_invalid'));
    next();
  });

  // Retried POSTs with the same Idempotency-Key get the first answer again.
  const replies = new Map<string, { status: number; body: unknown }>();
  r.use('/v1', (req, res, next) => {
    const key = req.method === 'POST' ? req.get('Idempotency-Key') : undefined;
    if (!key) return next();
    const seen = replies.get(key);
    if (seen) {
      res.setHeader('Idempotent-Replayed', 'true');
      return res.status(seen.status).json(seen.body);
    }
    const json = res.json.bind(res);
    res.json = (body: unknown) => {
      replies.set(key, { status: res.statusCode, body });
      return json(body);
    };
    next();
  });

  const body = (req: Request): Params => (req.body ?? {}) as Params;
  const id = (req: Request) => String(req.params.id);

  // --- Customers
  r.post('/v1/customers', (req, res) => {
    const p = body(req);
    checkKnown(p, ['name', 'email', 'metadata', 'description']);
    res.json(customerJson(engine.createCustomer({ name: str(p, 'name'), email: str(p, 'email'), metadata: metadata(p) })));
  });
  r.get('/v1/customers/:id', (req, res) => {
    res.json(customerJson(engine.customer(id(req))));
  });

  // --- Products and prices
  r.post('/v1/products', (req, res) => {
    const p = body(req);
    checkKnown(p, ['id', 'name', 'description', 'metadata']);
    res.json(productJson(engine.createProduct({ id: str(p, 'id'), name: str(p, 'name', { required: true }) })));
  });
  r.get('/v1/products/:id', (req, res) => {
    res.json(productJson(engine.product(id(req))));
  });
  r.post('/v1/prices', (req, res) => {
    const p = body(req);
    checkKnown(p, ['product', 'currency', 'unit_amount', 'recurring', 'lookup_key', 'transfer_lookup_key', 'nickname', 'metadata']);
    const recurring = obj(p, 'recurring');
    const price = engine.createPrice({
      product: str(p, 'product', { required: true }),
      currency: str(p, 'currency', { required: true }),
      unitAmount: int(p, 'unit_amount'),
      interval: interval(str(recurring, 'interval', { required: true }), 'recurring[interval]'),
      lookupKey: str(p, 'lookup_key'),
      transferLookupKey: str(p, 'transfer_lookup_key') === 'true',
    });
    res.json(priceJson(price));
  });
  r.get('/v1/prices', (req, res) => {
    const query = req.query as Params;
    const keys = stringList(query.lookup_keys);
    const product = str(query, 'product');
    const active = str(query, 'active');
    const limit = Math.min(int(query, 'limit', 10), 100);
    const found = Object.values(engine.state.prices).filter(
      (p) => (!keys.length || (p.lookupKey !== null && keys.includes(p.lookupKey))) && (!product || p.product === product) && (active === undefined || String(p.active) === active),
    );
    res.json(list(found.slice(0, limit).map(priceJson), '/v1/prices', found.length > limit));
  });
  r.get('/v1/prices/:id', (req, res) => {
    res.json(priceJson(engine.price(id(req))));
  });

  // --- Checkout
  r.post('/v1/checkout/sessions', (req, res) => {
    const p = body(req);
    checkKnown(p, ['mode', 'customer', 'client_reference_id', 'line_items', 'success_url', 'cancel_url', 'metadata', 'subscription_data']);
    const mode = str(p, 'mode', { required: true });
    if (mode !== 'subscription') throw new FakeApiError(400, 'invalid_request_error', `The fake supports only mode=subscription (got ${mode}).`, 'parameter_invalid', 'mode');
    const items = (Array.isArray(p.line_items) ? p.line_items : Object.values(obj(p, 'line_items'))) as Params[];
    if (items.length !== 1) throw new FakeApiError(400, 'invalid_request_error', 'The fake supports exactly one line item.', 'parameter_invalid', 'line_items');
    const item = items[0]!;
    checkKnown(item, ['price', 'quantity']);
    const session = engine.createCheckoutSession({
      customer: str(p, 'customer'),
      clientReferenceId: str(p, 'client_reference_id'),
      metadata: metadata(p),
      subscriptionMetadata: metadata(obj(p, 'subscription_data')),
      price: str(item, 'price', { required: true }),
      quantity: int(item, 'quantity', 1),
      successUrl: str(p, 'success_url', { required: true }),
      cancelUrl: str(p, 'cancel_url'),
    });
    res.json(checkoutSessionJson(session, engine.state, opts.baseUrl()));
  });
  r.get('/v1/checkout/sessions/:id', (req, res) => {
    res.json(checkoutSessionJson(engine.checkoutSession(id(req)), engine.state, opts.baseUrl()));
  });

  // --- Billing portal
  r.post('/v1/billing_portal/sessions', (req, res) => {
    const p = body(req);
    checkKnown(p, ['customer', 'return_url']);
    res.json(portalSessionJson(engine.createPortalSession({ customer: str(p, 'customer', { required: true }), returnUrl: str(p, 'return_url') }), opts.baseUrl()));
  });

  // --- Subscriptions
  r.get('/v1/subscriptions/:id', (req, res) => {
    res.json(subscriptionJson(engine.subscription(id(req)), engine.state));
  });
  r.post('/v1/subscriptions/:id', (req, res) => {
    const p = body(req);
    checkKnown(p, ['metadata']);
    const sub = engine.subscription(id(req));
    sub.metadata = { ...sub.metadata, ...metadata(p) };
    res.json(subscriptionJson(sub, engine.state));
  });
  r.delete('/v1/subscriptions/:id', async (req, res) => {
    const events = engine.cancel(id(req));
    await opts.emit(events);
    res.json(subscriptionJson(engine.subscription(id(req)), engine.state));
  });

  // --- Invoices
  r.get('/v1/invoices', (req, res) => {
    const query = req.query as Params;
    const customer = str(query, 'customer');
    const subscription = str(query, 'subscription');
    const limit = Math.min(int(query, 'limit', 10), 100);
    const found = Object.values(engine.state.invoices)
      .filter((i) => (!customer || i.customer === customer) && (!subscription || i.subscription === subscription))
      .sort((a, b) => b.created - a.created || b.id.localeCompare(a.id));
    res.json(list(found.slice(0, limit).map(invoiceJson), '/v1/invoices', found.length > limit));
  });
  r.get('/v1/invoices/:id', (req, res) => {
    const inv = engine.state.invoices[id(req)];
    if (!inv) throw new FakeApiError(404, 'invalid_request_error', `No such invoice: '${id(req)}'`, 'resource_missing', 'id');
    res.json(invoiceJson(inv));
  });

  r.use('/v1', (req, _res, next) => next(new FakeApiError(404, 'invalid_request_error', `Unrecognized request URL (${req.method}: ${req.originalUrl}). The local fake implements only what Bandwright calls.`)));

  r.use((err: unknown, _req: Request, res: Response, next: NextFunction) => {
    if (!(err instanceof FakeApiError)) return next(err);
    res.status(err.status).json({ error: { type: err.type, message: err.message, ...(err.code ? { code: err.code } : {}), ...(err.param ? { param: err.param } : {}) } });
  });
  return r;
}
