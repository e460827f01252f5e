import { index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

/**
 * The local mail fake: in development and tests every message the server sends lands here
 * (and nowhere else). Read by the "Inbox (development)" screen and by tests.
 */
export const devMail = pgTable(
  'dev_mail',
  {
    id: uuid().primaryKey().defaultRandom(),
    to: text().notNull(),
    subject: text().notNull(),
    text: text().notNull(),
    html: text().notNull(),
    kind: text().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.to)],
);
