import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import path from 'node:path';
import { Pool, type PoolClient } from 'pg';
import * as schema from './schema';

export type Db = NodePgDatabase<typeof schema> & { $client: Pool };

export const MIGRATIONS_FOLDER = path.resolve(__dirname, 'migrations');

export function createDb(url: string, max = 10): Db {
  const pool = new Pool({ connectionString: url, max });
  // An idle client that loses its connection must not crash the process.
  pool.on('error', (err) => console.error('[db] idle client error:', err.message));
  return drizzle(pool, { schema, casing: 'snake_case' }) as Db;
}

export async function runMigrations(db: Db): Promise<void> {
  await migrate(db, { migrationsFolder: MIGRATIONS_FOLDER });
}

/** A database or an open transaction: data-layer functions accept either. */
export type Executor = Db | Parameters<Parameters<Db['transaction']>[0]>[0];

/** Drizzle on one checked-out client, for work that must share that client's transaction. */
export function dbOnClient(client: PoolClient): Executor {
  return drizzle(client, { schema, casing: 'snake_case' }) as unknown as Executor;
}
