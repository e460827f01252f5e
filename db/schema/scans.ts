import { bigint, doublePrecision, index, integer, jsonb, pgEnum, pgTable, primaryKey, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import type { ScanOptions } from '../../shared/schemas/scans';
import type { VersionMeta } from '../../shared/schemas/results';
import { user } from './auth';
import { groups } from './groups';
import { results } from './results';

export const scanState = pgEnum('scan_state', ['queued', 'running', 'done', 'failed', 'cancelled']);
export const scanPointState = pgEnum('scan_point_state', ['queued', 'done', 'failed', 'cancelled']);

/**
 * A scan job: a grid of counting models computed point by point in the job queue. When every
 * point has finished (or the job is cancelled) the limits become a draft result version; the
 * inputs stay here beside it, so the draft can be re-run, audited and combined later.
 */
export const scans = pgTable(
  'scans',
  {
    id: uuid().primaryKey().defaultRandom(),
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    state: scanState().notNull().default('queued'),
    options: jsonb().$type<ScanOptions>().notNull(),
    meta: jsonb().$type<VersionMeta>().notNull(),
    /** Add the limits as a new version of this result (else a new result is created). */
    targetResultId: uuid().references(() => results.id, { onDelete: 'set null' }),
    totalPoints: integer().notNull(),
    donePoints: integer().notNull().default(0),
    failedPoints: integer().notNull().default(0),
    sourceName: text(),
    /** Bytes of stored inputs, counted toward the group's storage use. */
    storedBytes: bigint({ mode: 'number' }).notNull(),
    resultId: uuid().references(() => results.id, { onDelete: 'set null' }),
    /** Set by the one process that turns the scan into a draft (claimed before, so never twice). */
    draftClaimedAt: timestamp({ withTimezone: true }),
    resultVersion: integer(),
    error: text(),
    createdBy: text().references(() => user.id, { onDelete: 'set null' }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    startedAt: timestamp({ withTimezone: true }),
    finishedAt: timestamp({ withTimezone: true }),
  },
  (t) => [index().on(t.groupId, t.createdAt), index().on(t.resultId)],
);

/** One grid point of a scan: its input and, once computed, its limits and diagnostics. */
export const scanPoints = pgTable(
  'scan_points',
  {
    scanId: uuid()
      .notNull()
      .references(() => scans.id, { onDelete: 'cascade' }),
    index: integer().notNull(),
    x: doublePrecision().notNull(),
    sigmaNominal: doublePrecision(),
    model: jsonb().$type<Record<string, unknown>>().notNull(),
    state: scanPointState().notNull().default('queued'),
    /** LimitResult (with the CLs curve) plus the fitted nuisance parameters. */
    result: jsonb().$type<Record<string, unknown>>(),
    error: jsonb().$type<{ field: string; reason: string }>(),
    attempts: integer().notNull().default(0),
    computeMs: doublePrecision(),
    finishedAt: timestamp({ withTimezone: true }),
  },
  (t) => [primaryKey({ columns: [t.scanId, t.index] })],
);
