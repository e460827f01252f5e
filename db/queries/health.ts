import { sql } from 'drizzle-orm';
import type { Executor } from '../client';

/** One round trip to the database (the health check). */
export async function pingDatabase(db: Executor): Promise<void> {
  await db.execute(sql`select 1`);
}
