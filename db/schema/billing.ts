import { bigint, index, pgEnum, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { groups } from './groups';

export const planId = pgEnum('plan_id', ['free', 'institutional']);
export const subscriptionStatus = pgEnum('subscription_status', ['none', 'incomplete', 'active', 'past_due', 'canceled', 'unpaid']);
export const billingInterval = pgEnum('billing_interval', ['month', 'year']);

/** A group's plan and its link to the payment provider (one row per group that ever paid). */
export const billingAccounts = pgTable('billing_accounts', {
  groupId: uuid()
    .primaryKey()
    .references(() => groups.id, { onDelete: 'cascade' }),
  plan: planId().notNull().default('free'),
  status: subscriptionStatus().notNull().default('none'),
  interval: billingInterval(),
  customerId: text().unique(),
  subscriptionId: text().unique(),
  currentPeriodEnd: timestamp({ withTimezone: true }),
  /** Time of the provider event that last changed this row (older events are ignored). */
  lastEventAt: timestamp({ withTimezone: true }),
  updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

export const invoices = pgTable(
  'invoices',
  {
    id: text().primaryKey(),
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    amountCents: bigint({ mode: 'number' }).notNull(),
    currency: text().notNull(),
    status: text().notNull(),
    periodStart: timestamp({ withTimezone: true }),
    periodEnd: timestamp({ withTimezone: true }),
    paidAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.groupId, t.createdAt)],
);

/** Provider webhook events already handled (replays are recognised by id and do nothing). */
export const providerEvents = pgTable('provider_events', {
  id: text().primaryKey(),
  type: text().notNull(),
  createdAt: timestamp({ withTimezone: true }).notNull(),
  processedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});
