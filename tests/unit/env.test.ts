import { loadEnv, trustProxySetting } from '@/server/env';

test('development defaults work with only a database URL', () => {
  const env = loadEnv({ DATABASE_URL: 'postgres://x/y' });
  expect(env.PORT).toBe(8080);
  expect(env.PUBLIC_URL).toBe('http://127.0.0.1:8080');
  expect(env.MAIL_MODE).toBe('outbox');
  expect(env.devTools).toBe(true);
});

test('production refuses to start without a secret and an SMTP server, naming both', () => {
  expect(() => loadEnv({ DATABASE_URL: 'postgres://x/y', NODE_ENV: 'production' })).toThrow(/AUTH_SECRET[\s\S]*SMTP_URL|SMTP_URL[\s\S]*AUTH_SECRET/);
  const env = loadEnv({ DATABASE_URL: 'postgres://x/y', NODE_ENV: 'production', AUTH_SECRET: 's'.repeat(40), SMTP_URL: 'smtp://mail.invalid' });
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
