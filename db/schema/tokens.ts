import { index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { user } from './auth';

/**
 * Personal API tokens for scripts (`Authorization: Bearer bw_…`). Only the SHA-256 of a token is
 * stored, plus a short prefix so its owner can tell tokens apart; a token acts as its user with
 * the user's current roles. Revoking deletes the row.
 */
export const apiTokens = pgTable(
  'api_tokens',
  {
    id: uuid().primaryKey().defaultRandom(),
    userId: text()
      .notNull()
      .references(() => user.id, { onDelete: 'cascade' }),
    name: text().notNull(),
    prefix: text().notNull(),
    tokenHash: text().notNull().unique(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    lastUsedAt: timestamp({ withTimezone: true }),
  },
  (t) => [index().on(t.userId)],
);
