import { sql } from 'drizzle-orm';
import { bigint, boolean, check, customType, doublePrecision, index, integer, jsonb, pgEnum, pgTable, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { QUANTITIES, RESULT_METHODS, RESULT_STATES, type Curve, type Theory } from '../../shared/schemas/results';
import type { EnvelopeSources } from '../../shared/schemas/combine';
import type { Plane, PlaneContours } from '../../shared/schemas/plane';
import { user } from './auth';
import { groups } from './groups';

export const resultState = pgEnum('result_state', RESULT_STATES);
export const resultMethod = pgEnum('result_method', RESULT_METHODS);
export const resultQuantity = pgEnum('result_quantity', QUANTITIES);

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

/**
 * A limit result: the permanent identity (slug) of a series of versions, owned by one group.
 * `lastVersion` is the highest version number ever given out; numbers are never reused, so a
 * permanent link never points at other numbers than it did.
 */
export const results = pgTable(
  'results',
  {
    id: uuid().primaryKey().defaultRandom(),
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    slug: text().notNull().unique(),
    isPublic: boolean().notNull().default(false),
    lastVersion: integer().notNull().default(0),
    createdBy: text().references(() => user.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.groupId, t.updatedAt), index('results_public').on(t.id).where(sql`${t.isPublic}`)],
);

/**
 * One version of a result. The provenance fields that lists filter and search on are columns;
 * the curves are JSON. Once a version leaves the draft state its numbers and provenance never
 * change (the services refuse it); only the state moves on (superseded, retracted).
 */
export const resultVersions = pgTable(
  'result_versions',
  {
    id: uuid().primaryKey().defaultRandom(),
    resultId: uuid()
      .notNull()
      .references(() => results.id, { onDelete: 'cascade' }),
    version: integer().notNull(),
    state: resultState().notNull().default('draft'),
    title: text().notNull(),
    model: text().notNull().default(''),
    parameterName: text().notNull(),
    parameterUnit: text().notNull().default(''),
    quantity: resultQuantity().notNull(),
    quantityUnit: text().notNull().default(''),
    sqrtS: doublePrecision().notNull(),
    luminosity: doublePrecision().notNull(),
    cl: doublePrecision().notNull(),
    method: resultMethod().notNull(),
    reference: text().notNull().default(''),
    notes: text().notNull().default(''),
    /**
     * Title, model and reference through shared/search.ts `versionSearchText` (primes, bars, Greek
     * names and TeX made one spelling), written by the registry with every write of those fields;
     * null until then (rows older than the column are filled at server start).
     */
    searchText: text(),
    /** A one-parameter version's limit curve (null for a version over two parameters, which has `plane`). */
    curve: jsonb().$type<Curve>(),
    theory: jsonb().$type<Theory>(),
    /**
     * A two-parameter version's points (shared/schemas/plane.ts; null for one-parameter versions) and
     * the contour lines derived from them when it was written (shared/plane/contours.ts), kept so
     * that reads and downloads never recompute them.
     */
    plane: jsonb().$type<Plane>(),
    planeContours: jsonb().$type<PlaneContours>(),
    /** For a best-expected envelope: the inputs' titles and which input it takes where (null for other versions). */
    envelope: jsonb().$type<EnvelopeSources>(),
    changeNote: text().notNull().default(''),
    /** The uploaded file as received (kept for audit), with its name; null for JSON bodies. */
    sourceName: text(),
    sourceData: bytea(),
    /** Bytes this version counts toward its group's storage use (upload + normalized JSON). */
    storedBytes: bigint({ mode: 'number' }).notNull(),
    createdBy: text().references(() => user.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    publishedAt: timestamp({ withTimezone: true }),
    retractedAt: timestamp({ withTimezone: true }),
    retractionReason: text(),
  },
  (t) => [
    uniqueIndex().on(t.resultId, t.version),
    index().on(t.state),
    index().on(t.parameterName),
    index().on(t.sqrtS),
    index().on(t.method),
    // A version holds exactly one of a curve (one parameter) and a plane (two).
    check('result_versions_curve_or_plane', sql`(${t.curve} is null) <> (${t.plane} is null)`),
  ],
);

/**
 * The inputs of a derived result version (a best-expected envelope): which result versions it
 * was built from, in order, with their titles as they were. The input's result may be deleted
 * later (its id is then null); the title stays for the record.
 */
export const resultInputs = pgTable(
  'result_inputs',
  {
    resultId: uuid()
      .notNull()
      .references(() => results.id, { onDelete: 'cascade' }),
    version: integer().notNull(),
    position: integer().notNull(),
    inputResultId: uuid().references(() => results.id, { onDelete: 'set null' }),
    inputVersion: integer().notNull(),
    inputTitle: text().notNull(),
  },
  (t) => [uniqueIndex().on(t.resultId, t.version, t.position), index().on(t.inputResultId)],
);
