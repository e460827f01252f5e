import { index, integer, jsonb, pgTable, primaryKey, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import type { ErrorDetail } from '../../shared/errors';
import { user } from './auth';
import { groups } from './groups';
import { results } from './results';

/**
 * `Idempotency-Key`s of result uploads (one per group and key): the request they answered, by a
 * hash of who sent what where, and the version it created. Written in the transaction that
 * creates the version, so a key is either unused or bound to exactly one version; a retry with
 * the same key and request is answered with that version again. Rows expire (`expiresAt`, 24 h)
 * and are swept by later keyed uploads of the group; deleting the result deletes its keys.
 */
export const uploadIdempotency = pgTable(
  'upload_idempotency',
  {
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    key: text().notNull(),
    userId: text()
      .notNull()
      .references(() => user.id, { onDelete: 'cascade' }),
    /** SHA-256 (hex) of the sender, the route and the request's contents. */
    requestHash: text().notNull(),
    /** Null only inside the claiming transaction (the result is inserted after the claim). */
    resultId: uuid().references(() => results.id, { onDelete: 'cascade' }),
    version: integer(),
    status: integer().notNull().default(201),
    /** The warnings of the first answer (they are not stored with the version). */
    warnings: jsonb().$type<ErrorDetail[]>().notNull().default([]),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.groupId, t.key] }), index().on(t.groupId, t.expiresAt)],
);
