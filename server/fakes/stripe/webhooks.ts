import Stripe from 'stripe';
import type { FakeEvent } from './engine';

/**
 * Signs events exactly as the provider does (`Stripe-Signature: t=<unix>,v1=<HMAC-SHA256 of
 * "t.payload">`, made here by the SDK's own test helper) and POSTs them to the webhook URL, one
 * after another in the order they happened. Every attempt is kept in `deliveries`, so tests can
 * replay a delivery byte for byte. Delivery can be paused to send held events later, in any order.
 */

export type Delivery = {
  eventId: string;
  type: string;
  payload: string;
  signature: string;
  url: string;
  /** HTTP status of the last attempt, or null when the server could not be reached. */
  status: number | null;
  error: string | null;
  attempts: number;
};

const ATTEMPTS = 3;

export function eventPayload(e: FakeEvent): string {
  return JSON.stringify(
    {
      id: e.id,
      object: 'event',
      api_version: Stripe.API_VERSION,
      created: e.created,
      data: { object: e.object },
      livemode: false,
      pending_webhooks: 1,
      request: { id: null, idempotency_key: null },
      type: e.type,
    },
    null,
    2,
  );
}

export class WebhookSender {
  readonly deliveries: Delivery[] = [];
  private held: FakeEvent[] = [];
  private paused = false;

  constructor(
    private readonly secret: string,
    public url: string | null,
    private readonly log: (line: string) => void,
  ) {}

  /** A `Stripe-Signature` header for `payload` (now, or at `timestamp` unix seconds). */
  sign(payload: string, timestamp?: number): string {
    return Stripe.webhooks.generateTestHeaderString({ payload, secret: this.secret, ...(timestamp !== undefined ? { timestamp } : {}) });
  }

  /** Holds events instead of sending them, until `flush`. */
  pause(): void {
    this.paused = true;
  }

  /** Sends the held events (in the order they happened, or reversed) and resumes sending. */
  async flush(order: 'as-happened' | 'reversed' = 'as-happened'): Promise<void> {
    const events = order === 'reversed' ? [...this.held].reverse() : [...this.held];
    this.held = [];
    this.paused = false;
    for (const e of events) await this.deliver(e);
  }

  async send(events: FakeEvent[]): Promise<void> {
    if (this.paused) {
      this.held.push(...events);
      return;
    }
    for (const e of events) await this.deliver(e);
  }

  private async deliver(e: FakeEvent): Promise<void> {
    const payload = eventPayload(e);
    if (!this.url) {
      this.log(`${e.type} ${e.id} not sent: no webhook URL is set`);
      return;
    }
    const d: Delivery = { eventId: e.id, type: e.type, payload, signature: '', url: this.url, status: null, error: null, attempts: 0 };
    this.deliveries.push(d);
    // Like the provider, retry what failed on the server's side (unreachable or 5xx); a 4xx is final.
    for (let attempt = 1; attempt <= ATTEMPTS; attempt++) {
      d.attempts = attempt;
      d.signature = this.sign(payload);
      try {
        const res = await fetch(this.url, {
          method: 'POST',
          headers: { 'Content-Type': 'application/json; charset=utf-8', 'Stripe-Signature': d.signature, 'User-Agent': 'Stripe/1.0 (+https://stripe.com/docs/webhooks) bandwright-fake' },
          body: payload,
          signal: AbortSignal.timeout(10_000),
        });
        d.status = res.status;
        d.error = res.ok ? null : (await res.text()).slice(0, 500);
        if (res.status < 500) break;
      } catch (err) {
        d.status = null;
        d.error = (err as Error).message;
      }
      if (attempt < ATTEMPTS) await new Promise((r) => setTimeout(r, 250 * attempt));
    }
    this.log(`${e.type} ${e.id} → ${d.status ?? 'unreachable'}${d.error ? ` (${d.error.slice(0, 120)})` : ''}`);
  }
}
