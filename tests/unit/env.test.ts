import { DEV_AUTH_SECRET, DEV_STRIPE_SECRET_KEY, DEV_STRIPE_WEBHOOK_SECRET, loadEnv, trustProxySetting } from '@/server/env';

/** A secret as `openssl rand -base64 32` makes them (invented for the tests). */
const SECRET = 'q3T9vXc1LmP0aZ7yR2sK8dW4fH6jN5bE+uGtYoIiQ0=';
const PROD = { DATABASE_URL: 'postgres://x/y', NODE_ENV: 'production', SMTP_URL: 'smtp://mail.invalid' };

test('development defaults work with only a database URL', () => {
  const env = loadEnv({ DATABASE_URL: 'postgres://x/y' });
  expect(env.PORT).toBe(8080);
  expect(env.PUBLIC_URL).toBe('http://127.0.0.1:8080');
  expect(env.MAIL_MODE).toBe('outbox');
  expect(env.devTools).toBe(true);
});

test('production refuses to start without a secret and an SMTP server, naming both', () => {
  expect(() => loadEnv({ DATABASE_URL: 'postgres://x/y', NODE_ENV: 'production' })).toThrow(/AUTH_SECRET[\s\S]*SMTP_URL|SMTP_URL[\s\S]*AUTH_SECRET/);
  const env = loadEnv({ DATABASE_URL: 'postgres://x/y', NODE_ENV: 'production', AUTH_SECRET: SECRET, SMTP_URL: 'smtp://mail.invalid' });
  expect(env.MAIL_MODE).toBe('smtp');
  expect(env.devTools).toBe(false);
});

test('a bad port is named', () => {
  expect(() => loadEnv({ DATABASE_URL: 'postgres://x/y', PORT: 'eighty' })).toThrow(/PORT/);
});

describe('TRUST_PROXY', () => {
  test('unset trusts no proxy (X-Forwarded-For is ignored)', () => {
    expect(loadEnv({ DATABASE_URL: 'postgres://x/y' }).TRUST_PROXY).toBe(false);
    expect(trustProxySetting('')).toBe(false);
    expect(trustProxySetting('false')).toBe(false);
  });

  test('a number of proxies, or their addresses, subnets and the loopback/private keywords', () => {
    expect(loadEnv({ DATABASE_URL: 'postgres://x/y', TRUST_PROXY: '1' }).TRUST_PROXY).toBe(1);
    expect(trustProxySetting('loopback')).toBe('loopback');
    expect(trustProxySetting(' 10.0.0.2, 10.1.0.0/16 ,::1,fd00::/8,uniquelocal')).toBe('10.0.0.2,10.1.0.0/16,::1,fd00::/8,uniquelocal');
  });

  test('"true" (any sender may set its address) and things that are not addresses are refused, naming the variable', () => {
    expect(() => loadEnv({ DATABASE_URL: 'postgres://x/y', TRUST_PROXY: 'true' })).toThrow(/TRUST_PROXY[\s\S]*any client/);
    expect(() => loadEnv({ DATABASE_URL: 'postgres://x/y', TRUST_PROXY: 'proxy.internal' })).toThrow(/TRUST_PROXY[\s\S]*proxy\.internal/);
    expect(trustProxySetting('10.0.0.0/33')).toEqual({ error: expect.stringContaining('10.0.0.0/33') });
    expect(trustProxySetting('11')).toEqual({ error: expect.stringContaining('at most 10') });
  });
});

describe('production refuses the development secrets', () => {
  /** The message of loadEnv's refusal (the lines name the variables). */
  const refusal = (vars: Record<string, string>) => {
    try {
      loadEnv({ ...PROD, ...vars });
    } catch (e) {
      return (e as Error).message;
    }
    throw new Error('loadEnv accepted the environment');
  };

  test('no AUTH_SECRET, the one in the source, a short or placeholder one: refused, naming AUTH_SECRET', () => {
    expect(refusal({})).toMatch(/^Invalid environment:\n {2}AUTH_SECRET: AUTH_SECRET \(32\+ random characters/);
    expect(refusal({ AUTH_SECRET: DEV_AUTH_SECRET })).toMatch(/AUTH_SECRET: AUTH_SECRET is the development default/);
    expect(refusal({ AUTH_SECRET: 'short-secret' })).toMatch(/AUTH_SECRET/);
    expect(refusal({ AUTH_SECRET: 'x'.repeat(40) })).toMatch(/AUTH_SECRET: AUTH_SECRET looks like a placeholder/);
    expect(refusal({ AUTH_SECRET: 'changemechangemechangemechangeme' })).toMatch(/AUTH_SECRET looks like a placeholder/);
  });

  test("the local fake's key and signing secret are refused, naming each variable", () => {
    const msg = refusal({ AUTH_SECRET: SECRET, STRIPE_SECRET_KEY: DEV_STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET: DEV_STRIPE_WEBHOOK_SECRET });
    expect(msg).toMatch(/STRIPE_SECRET_KEY: STRIPE_SECRET_KEY is the local fake's key/);
    expect(msg).toMatch(/STRIPE_WEBHOOK_SECRET: STRIPE_WEBHOOK_SECRET is the local fake's signing secret/);
    expect(msg).not.toMatch(/AUTH_SECRET/);
  });

  test('a provider key needs its webhook signing secret and the other way round', () => {
    expect(refusal({ AUTH_SECRET: SECRET, STRIPE_SECRET_KEY: 'sk_live_9fKq2ZpLx7VbN3cR' })).toMatch(/STRIPE_WEBHOOK_SECRET: STRIPE_WEBHOOK_SECRET is required with STRIPE_SECRET_KEY/);
    expect(refusal({ AUTH_SECRET: SECRET, STRIPE_WEBHOOK_SECRET: 'whsec_Rt5wQ8mZk2LpX9vC4bN7' })).toMatch(/STRIPE_SECRET_KEY: STRIPE_SECRET_KEY is required with STRIPE_WEBHOOK_SECRET/);
    expect(refusal({ AUTH_SECRET: SECRET, STRIPE_SECRET_KEY: 'sk_live_9fKq2ZpLx7VbN3cR', STRIPE_WEBHOOK_SECRET: 'whsec_xxxxxxxxxxxxxxxx' })).toMatch(/STRIPE_WEBHOOK_SECRET looks like a placeholder/);
  });

  test('real secrets start; without any payment keys billing is simply off', () => {
    const billing = loadEnv({ ...PROD, AUTH_SECRET: SECRET, STRIPE_SECRET_KEY: 'sk_live_9fKq2ZpLx7VbN3cR', STRIPE_WEBHOOK_SECRET: 'whsec_Rt5wQ8mZk2LpX9vC4bN7' });
    expect(billing.AUTH_SECRET).toBe(SECRET);
    expect(billing.stripe).toMatchObject({ secretKey: 'sk_live_9fKq2ZpLx7VbN3cR', webhookSecret: 'whsec_Rt5wQ8mZk2LpX9vC4bN7', fake: false });
    const none = loadEnv({ ...PROD, AUTH_SECRET: SECRET });
    expect(none.stripe).toMatchObject({ secretKey: null, webhookSecret: null, fake: false });
  });

  test('outside production the development defaults keep `npm start` working without configuration', () => {
    const env = loadEnv({ DATABASE_URL: 'postgres://x/y' });
    expect(env.AUTH_SECRET).toBe(DEV_AUTH_SECRET);
    expect(env.stripe).toMatchObject({ secretKey: DEV_STRIPE_SECRET_KEY, webhookSecret: DEV_STRIPE_WEBHOOK_SECRET, fake: true });
  });
});
