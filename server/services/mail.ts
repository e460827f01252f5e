import type { Db } from '../../db/client';
import { listMailTo } from '../../db/queries/mail';

/** The development inbox of one address (the local mail fake's contents). */
export async function inboxOf(db: Db, address: string) {
  const rows = await listMailTo(db, address);
  return rows.map((m) => ({ ...m, createdAt: m.createdAt.toISOString() }));
}
