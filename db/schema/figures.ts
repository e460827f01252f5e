import { bigint, boolean, customType, index, integer, jsonb, pgTable, primaryKey, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import type { FigureSpec, HouseStyle } from '../../shared/schemas/figures';
import { user } from './auth';
import { groups } from './groups';
import { results } from './results';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

/**
 * A figure: a stored, versioned spec owned by a group. Every save makes a new version; a version
 * pins result versions through its layers, so a figure never changes unless someone changes it.
 */
export const figures = pgTable(
  'figures',
  {
    id: uuid().primaryKey().defaultRandom(),
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    title: text().notNull(),
    isPublic: boolean().notNull().default(false),
    lastVersion: integer().notNull().default(0),
    /** The figure this one was duplicated from (or simplified from, for outreach versions). */
    derivedFrom: uuid(),
    createdBy: text().references(() => user.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.groupId, t.updatedAt)],
);

export const figureVersions = pgTable(
  'figure_versions',
  {
    figureId: uuid()
      .notNull()
      .references(() => figures.id, { onDelete: 'cascade' }),
    version: integer().notNull(),
    spec: jsonb().$type<FigureSpec>().notNull(),
    note: text().notNull().default(''),
    createdBy: text().references(() => user.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.figureId, t.version] })],
);

/** The result versions a figure version draws (normalised from the spec, for "which figures use this result"). */
export const figureLayers = pgTable(
  'figure_layers',
  {
    figureId: uuid()
      .notNull()
      .references(() => figures.id, { onDelete: 'cascade' }),
    figureVersion: integer().notNull(),
    position: integer().notNull(),
    resultId: uuid()
      .notNull()
      .references(() => results.id, { onDelete: 'no action' }),
    resultVersion: integer().notNull(),
  },
  (t) => [primaryKey({ columns: [t.figureId, t.figureVersion, t.position] }), index().on(t.resultId)],
);

/**
 * Cached renders, keyed by everything that decides their bytes: figure version, format, size,
 * the data versions drawn and the audience (`variant`: what a given viewer may see). They count
 * toward the group's storage.
 */
export const figureRenders = pgTable(
  'figure_renders',
  {
    id: uuid().primaryKey().defaultRandom(),
    figureId: uuid()
      .notNull()
      .references(() => figures.id, { onDelete: 'cascade' }),
    figureVersion: integer().notNull(),
    format: text().notNull(),
    sizeKey: text().notNull(),
    dataKey: text().notNull(),
    variant: text().notNull(),
    contentType: text().notNull(),
    body: bytea().notNull(),
    byteLength: bigint({ mode: 'number' }).notNull(),
    /** The scene's notes (e.g. layers left out for this audience), sent with a cached render too. */
    notes: jsonb().$type<string[]>().notNull().default([]),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    lastUsedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex().on(t.figureId, t.figureVersion, t.format, t.sizeKey, t.dataKey, t.variant), index().on(t.lastUsedAt)],
);

/** A group's house style on top of the themes. */
export const groupStyles = pgTable('group_styles', {
  groupId: uuid()
    .primaryKey()
    .references(() => groups.id, { onDelete: 'cascade' }),
  style: jsonb().$type<HouseStyle>().notNull(),
  updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
});

/** The hue a result gets in all of its group's figures (first come, first served; can be changed). */
export const resultHues = pgTable(
  'result_hues',
  {
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    resultId: uuid()
      .notNull()
      .references(() => results.id, { onDelete: 'cascade' }),
    hue: integer().notNull(),
  },
  (t) => [primaryKey({ columns: [t.groupId, t.resultId] })],
);
