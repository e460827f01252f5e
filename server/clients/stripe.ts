import Stripe from 'stripe';
import type { StripeSettings } from '../env';

/** The SDK client for the configured provider (or the local fake); null when no key is configured. */
export function createStripeClient(s: StripeSettings): Stripe | null {
  if (!s.secretKey) return null;
  return new Stripe(s.secretKey, {
    ...(s.host ? { host: s.host } : {}),
    ...(s.port ? { port: s.port } : {}),
    ...(s.protocol ? { protocol: s.protocol } : {}),
    // The fake answers at once or not at all; the real provider gets the SDK's safe retries.
    maxNetworkRetries: s.fake || s.host === '127.0.0.1' ? 0 : 2,
    timeout: 20_000,
    telemetry: false,
  });
}
