import { desc, eq, sql } from 'drizzle-orm';
import type { Db } from '../client';
import { devMail } from '../schema';

export type NewMail = typeof devMail.$inferInsert;

export async function insertMail(db: Db, mail: NewMail) {
  const [row] = await db.insert(devMail).values(mail).returning();
  return row!;
}

/** Mail addressed to one recipient, newest first. */
export async function listMailTo(db: Db, to: string, limit = 100) {
  return db
    .select()
    .from(devMail)
    .where(eq(sql`lower(${devMail.to})`, to.toLowerCase()))
    .orderBy(desc(devMail.createdAt))
    .limit(limit);
}
