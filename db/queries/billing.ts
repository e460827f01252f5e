import { and, desc, eq, isNull, or, sql } from 'drizzle-orm';
import type { Executor } from '../client';
import { billingAccounts, groups, invoices, memberships, providerEvents, user } from '../schema';

/**
 * Data access of plans and billing: the group's billing account, invoices, and provider events
 * handled once. (The storage counter and usage by kind are in db/queries/storage.ts.)
 */

export type BillingAccount = typeof billingAccounts.$inferSelect;

export async function getBillingAccount(db: Executor, groupId: string): Promise<BillingAccount | undefined> {
  const rows = await db.select().from(billingAccounts).where(eq(billingAccounts.groupId, groupId));
  return rows[0];
}

/** The group a provider customer or subscription belongs to (for events without our metadata). */
export async function findGroupByProviderIds(db: Executor, ids: { customerId?: string | null; subscriptionId?: string | null }): Promise<string | undefined> {
  const conditions = [
    ids.subscriptionId ? eq(billingAccounts.subscriptionId, ids.subscriptionId) : undefined,
    ids.customerId ? eq(billingAccounts.customerId, ids.customerId) : undefined,
  ].filter((c) => c !== undefined);
  if (!conditions.length) return undefined;
  const rows = await db.select({ groupId: billingAccounts.groupId }).from(billingAccounts).where(or(...conditions)).limit(1);
  return rows[0]?.groupId;
}

export async function groupExists(db: Executor, groupId: string): Promise<boolean> {
  const rows = await db.select({ id: groups.id }).from(groups).where(eq(groups.id, groupId));
  return rows.length > 0;
}

/** The account row of a group, created (free, no status) when missing. */
export async function ensureBillingAccount(db: Executor, groupId: string): Promise<BillingAccount> {
  await db.insert(billingAccounts).values({ groupId }).onConflictDoNothing({ target: billingAccounts.groupId });
  return (await getBillingAccount(db, groupId))!;
}

/**
 * Links the group to a provider customer unless it already has one (a concurrent checkout may
 * have won); returns the customer id in force.
 */
export async function setCustomerIfMissing(db: Executor, groupId: string, customerId: string): Promise<string> {
  await ensureBillingAccount(db, groupId);
  await db
    .update(billingAccounts)
    .set({ customerId, updatedAt: sql`now()` })
    .where(and(eq(billingAccounts.groupId, groupId), isNull(billingAccounts.customerId)));
  return (await getBillingAccount(db, groupId))!.customerId!;
}

/** Forgets a customer the provider no longer knows (only if it is still the group's). */
export async function clearCustomer(db: Executor, groupId: string, customerId: string): Promise<void> {
  await db
    .update(billingAccounts)
    .set({ customerId: null, updatedAt: sql`now()` })
    .where(and(eq(billingAccounts.groupId, groupId), eq(billingAccounts.customerId, customerId)));
}

export type SubscriptionState = Pick<BillingAccount, 'plan' | 'status' | 'interval' | 'currentPeriodEnd'> & {
  customerId: string | null;
  subscriptionId: string;
};

/**
 * The group's account row (created when missing), locked until the transaction ends: webhook
 * events of one group are applied one at a time, each with the state read from the provider
 * after the lock was taken.
 */
export async function lockBillingAccount(db: Executor, groupId: string): Promise<BillingAccount> {
  await ensureBillingAccount(db, groupId);
  const rows = await db.select().from(billingAccounts).where(eq(billingAccounts.groupId, groupId)).for('update');
  return rows[0]!;
}

/**
 * Writes the subscription's state as the provider reported it (read after `lockBillingAccount`,
 * so the last one read is the last one written). Returns whether anything changed; `lastEventAt`
 * (shown as "since" of a lapse) moves only then.
 */
export async function applySubscriptionState(db: Executor, account: BillingAccount, s: SubscriptionState, eventAt: Date): Promise<boolean> {
  const changed =
    account.plan !== s.plan ||
    account.status !== s.status ||
    account.interval !== s.interval ||
    account.subscriptionId !== s.subscriptionId ||
    (account.currentPeriodEnd?.getTime() ?? null) !== (s.currentPeriodEnd?.getTime() ?? null) ||
    (!account.customerId && !!s.customerId);
  if (!changed) return false;
  await db
    .update(billingAccounts)
    .set({
      plan: s.plan,
      status: s.status,
      interval: s.interval,
      currentPeriodEnd: s.currentPeriodEnd,
      subscriptionId: s.subscriptionId,
      ...(s.customerId ? { customerId: sql`coalesce(${billingAccounts.customerId}, ${s.customerId})` } : {}),
      lastEventAt: account.lastEventAt && account.lastEventAt > eventAt ? account.lastEventAt : eventAt,
      updatedAt: sql`now()`,
    })
    .where(eq(billingAccounts.groupId, account.groupId));
  return true;
}

/** Records a provider event by id; false when it was handled before (a replay). */
export async function recordProviderEvent(db: Executor, e: { id: string; type: string; createdAt: Date }): Promise<boolean> {
  const rows = await db.insert(providerEvents).values(e).onConflictDoNothing({ target: providerEvents.id }).returning({ id: providerEvents.id });
  return rows.length > 0;
}

export type InvoiceRow = typeof invoices.$inferSelect;

/**
 * Stores an invoice or updates it. A paid invoice stays paid: a late "payment failed" event for
 * an invoice that was paid since cannot turn it back.
 */
export async function upsertInvoice(db: Executor, inv: Omit<typeof invoices.$inferInsert, 'createdAt'> & { createdAt: Date }) {
  await db
    .insert(invoices)
    .values(inv)
    .onConflictDoUpdate({
      target: invoices.id,
      set: {
        amountCents: sql`excluded.amount_cents`,
        currency: sql`excluded.currency`,
        status: sql`case when ${invoices.status} = 'paid' then 'paid' else excluded.status end`,
        periodStart: sql`excluded.period_start`,
        periodEnd: sql`excluded.period_end`,
        paidAt: sql`coalesce(${invoices.paidAt}, excluded.paid_at)`,
      },
    });
}

export async function listInvoices(db: Executor, groupId: string, limit = 100) {
  return db.select().from(invoices).where(eq(invoices.groupId, groupId)).orderBy(desc(invoices.createdAt), desc(invoices.id)).limit(limit);
}

/** One invoice of the group (undefined when the id is another group's or unknown). */
export async function getInvoice(db: Executor, groupId: string, invoiceId: string) {
  const rows = await db.select().from(invoices).where(and(eq(invoices.id, invoiceId), eq(invoices.groupId, groupId)));
  return rows[0];
}

/** Owners of the group with their addresses (billing mail goes to them). */
export async function listOwners(db: Executor, groupId: string) {
  return db
    .select({ name: user.name, email: user.email })
    .from(memberships)
    .innerJoin(user, eq(user.id, memberships.userId))
    .where(and(eq(memberships.groupId, groupId), eq(memberships.role, 'owner')));
}
