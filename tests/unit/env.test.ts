import { loadEnv } from '@/server/env';

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
