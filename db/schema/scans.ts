import { sql } from 'drizzle-orm';
import { type AnyPgColumn, bigint, customType, doublePrecision, index, integer, jsonb, pgEnum, pgTable, primaryKey, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import type { CombinationPlan } from '../../shared/schemas/combine';
import type { ScanMeta, ScanOptions } from '../../shared/schemas/scans';
import { user } from './auth';
import { groups } from './groups';
import { results } from './results';

export const scanState = pgEnum('scan_state', ['queued', 'running', 'done', 'failed', 'cancelled']);
export const scanPointState = pgEnum('scan_point_state', ['queued', 'done', 'failed', 'cancelled']);
export const scanTaskState = pgEnum('scan_task_state', ['queued', 'running', 'done', 'failed', 'cancelled']);

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

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
    meta: jsonb().$type<ScanMeta>().notNull(),
    /** Add the limits as a new version of this result (else a new result is created). */
    targetResultId: uuid().references(() => results.id, { onDelete: 'set null' }),
    totalPoints: integer().notNull(),
    donePoints: integer().notNull().default(0),
    failedPoints: integer().notNull().default(0),
    sourceName: text(),
    /** The name of the theory curve the draft gets from the points' nominal σ×B (null: the default name). */
    theoryLabel: text(),
    /** Bytes of stored inputs, counted toward the group's storage use. */
    storedBytes: bigint({ mode: 'number' }).notNull(),
    resultId: uuid().references(() => results.id, { onDelete: 'set null' }),
    /**
     * A rerun of one point of an ended scan with more pseudo-experiments: the scan it copies its
     * other points from (done, their outcomes reused), and the point it computes again.
     */
    rerunOf: uuid().references((): AnyPgColumn => scans.id, { onDelete: 'set null' }),
    rerunPoint: integer(),
    /** Set by the one process that turns the scan into a draft (claimed before, so never twice). */
    draftClaimedAt: timestamp({ withTimezone: true }),
    resultVersion: integer(),
    error: text(),
    /**
     * Set when the scan is a joint combination of other results (server/services/combine.ts): the
     * input versions and their scans, the nuisance parameters unlinked and shared, the grid.
     */
    combination: jsonb().$type<CombinationPlan>(),
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
    /** The second parameter of a scan over two parameters (null in one-parameter scans). */
    y: doublePrecision(),
    sigmaNominal: doublePrecision(),
    /** The band of the nominal σ×B, when the inputs give one (both or neither). */
    sigmaNominalLow: doublePrecision(),
    sigmaNominalHigh: doublePrecision(),
    model: jsonb().$type<Record<string, unknown>>().notNull(),
    state: scanPointState().notNull().default('queued'),
    /** LimitResult (with the CLs curve) plus the fitted nuisance parameters. */
    result: jsonb().$type<Record<string, unknown>>(),
    error: jsonb().$type<{ field: string; reason: string }>(),
    attempts: integer().notNull().default(0),
    /** Tasks the point is computed in: 1, or its chunks of pseudo-experiments. */
    chunks: integer().notNull().default(1),
    /** Pseudo-experiments per hypothesis of this point when not the scan's `options.toys` (a point rerun with more). */
    toys: integer(),
    computeMs: doublePrecision(),
    finishedAt: timestamp({ withTimezone: true }),
  },
  (t) => [primaryKey({ columns: [t.scanId, t.index] })],
);

/**
 * The job queue: one task per asymptotic grid point, or per chunk of a point's pseudo-experiments.
 * Workers claim tasks fairly between groups (db/queries/scan-tasks.ts); a task whose worker stops
 * renewing its lease is claimed again. A chunk keeps its test-statistic samples here until the
 * point's chunks are merged.
 */
export const scanTasks = pgTable(
  'scan_tasks',
  {
    id: bigint({ mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
    scanId: uuid()
      .notNull()
      .references(() => scans.id, { onDelete: 'cascade' }),
    groupId: uuid()
      .notNull()
      .references(() => groups.id, { onDelete: 'cascade' }),
    pointIndex: integer().notNull(),
    chunk: integer().notNull().default(0),
    /** Pseudo-experiments per hypothesis in this task (1 for an asymptotic point): the plan's queue limit counts these. */
    cost: integer().notNull(),
    state: scanTaskState().notNull().default('queued'),
    attempts: integer().notNull().default(0),
    /** Not claimed before this time (a retry after a failure waits here). */
    runAfter: timestamp({ withTimezone: true }).notNull().defaultNow(),
    /** While running: claimable again after this time (its worker is taken for dead). */
    leaseUntil: timestamp({ withTimezone: true }),
    claimedAt: timestamp({ withTimezone: true }),
    heartbeatAt: timestamp({ withTimezone: true }),
    /** Values of μ sampled so far by the running chunk (progress). */
    steps: integer().notNull().default(0),
    samples: bytea(),
    /** Fits and pseudo-experiments of a finished chunk. */
    stats: jsonb().$type<{ fits: number; failed: number; generated: number; ms: number }>(),
    lastError: text(),
    finishedAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex().on(t.scanId, t.pointIndex, t.chunk),
    index('scan_tasks_open_idx').on(t.groupId, t.state).where(sql`${t.state} in ('queued', 'running')`),
    // The claim's fair share: each open group's run time over its recent claims.
    index().on(t.groupId, t.claimedAt),
  ],
);

/** When each group last had a task claimed: the claim serves the group served least recently. */
export const scanGroupTurns = pgTable('scan_group_turns', {
  groupId: uuid()
    .primaryKey()
    .references(() => groups.id, { onDelete: 'cascade' }),
  lastClaimedAt: timestamp({ withTimezone: true }).notNull(),
});
