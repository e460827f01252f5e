import { randomBytes } from 'node:crypto';
import { Client } from 'pg';

/**
 * A fresh database per test file, cloned from the migrated template that `npm test` prepared
 * (TEST_PG_URL points at the throwaway cluster's "postgres" database).
 */
export async function createTestDatabase(): Promise<{ url: string; drop: () => Promise<void> }> {
  const admin = process.env.TEST_PG_URL;
  const template = process.env.TEST_TEMPLATE_DB;
  if (!admin || !template) throw new Error('TEST_PG_URL / TEST_TEMPLATE_DB are not set: run the tests with `npm test`');
  const name = `t_${randomBytes(6).toString('hex')}`;
  const c = new Client({ connectionString: admin });
  await c.connect();
  try {
    await c.query(`create database ${name} template ${template}`);
  } finally {
    await c.end();
  }
  const url = admin.replace(/\/[^/]*$/, `/${name}`);
  return {
    url,
    drop: async () => {
      const d = new Client({ connectionString: admin });
      await d.connect();
      try {
        await d.query(`drop database if exists ${name} with (force)`);
      } finally {
        await d.end();
      }
    },
  };
}
