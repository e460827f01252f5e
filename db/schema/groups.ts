import { sql } from 'drizzle-orm';
import { bigint, index, pgEnum, pgTable, primaryKey, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { GROUP_ROLES } from '../../shared/access';
import { user } from './auth';

export const groupRole = pgEnum('group_role', GROUP_ROLES);
export const invitationState = pgEnum('invitation_state', ['pending', 'accepted', 'revoked']);

export const groups = pgTable('groups', {
  id: uuid().primaryKey().defaultRandom(),
  name: text().notNull(),
  slug: text().notNull().unique(),
  description: text().notNull().default(''),
  createdBy: text().references(() => user.id, { onDelete: 'set null' }),
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  /** Bytes of every stored result version (uploaded files and normalized data); plans enforce a quota on it. */
  storageBytes: bigint({ mode: 'number' }).notNull().default(0),
});

export const memberships = pgTable(
  'memberships',
  {
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    userId: text()
      .notNull()
      .references(() => user.id, { onDelete: 'cascade' }),
    role: groupRole().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.groupId, t.userId] }), index().on(t.userId)],
);

export const invitations = pgTable(
  'invitations',
  {
    id: uuid().primaryKey().defaultRandom(),
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    email: text().notNull(),
    role: groupRole().notNull(),
    /** SHA-256 of the token mailed to the invitee; the token itself is never stored. */
    tokenHash: text().notNull().unique(),
    state: invitationState().notNull().default('pending'),
    invitedBy: text().references(() => user.id, { onDelete: 'set null' }),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    acceptedAt: timestamp({ withTimezone: true }),
  },
  (t) => [
    index().on(t.groupId),
    // At most one open invitation per address and group.
    uniqueIndex('invitations_open_per_email').on(t.groupId, sql`lower(${t.email})`).where(sql`${t.state} = 'pending'`),
  ],
);
