import type { Plan, Usage } from '../../shared/plans';
import { formatBytes } from '../../shared/bytes';
import * as q from '../../db/queries/storage';
import type { Executor } from '../../db/client';
import { AppError, notFound } from '../lib/errors';
import { isReadOnly, lapseNotice, planOfGroup } from './plans';

/**
 * Storage accounting, the one module that adds and frees a group's stored bytes (ESLint lets no
 * other file import db/queries/storage.ts). The group's counter (`groups.storage_bytes`) holds
 * the bytes of two kinds, each row carrying its own `stored_bytes`:
 * - **uploads**: result versions (uploaded file plus normalized JSON, and a two-parameter
 *   version's contour lines; `storedBytesOf` in result-upload.ts): createResult, addVersion,
 *   updateDraft (`resize`), deleteDraft and deleteResult (`release`);
 * - **scan inputs**: a scan's file and points, reserved at startScan together with room for the
 *   scan's draft (`scanDraftAllowance`), which is then saved as an upload with `admitted`.
 * `usage` sums both kinds from their rows: the counter must equal that sum.
 *
 * Cached figure renders are a third kind kept **outside** the counter and the quota (anonymous
 * visitors may ask for public figures, and what they cause must not decide what members can
 * upload): `reserveRenderCache` / `trimRenderCache` bound them by the plan's `renderCache`.
 *
 * Every function runs inside the caller's transaction, so the bytes are counted with the rows
 * that hold them or not at all. Lock order: result row, then group row.
 */

/** How a reservation names its write in a refusal: "… this upload needs 12 KB more." */
export type StorageWhat = 'this upload' | 'this change' | 'this scan';

export type ReserveOptions = {
  /** Bytes the write must also find room for now without storing them yet (a scan's draft). */
  headroom?: number;
  /**
   * The room was reserved earlier (a scan's draft, checked when the scan started: refusing it now
   * would lose the computation): the bytes are counted without a check.
   */
  admitted?: boolean;
};

function assertBytes(bytes: number) {
  if (!Number.isSafeInteger(bytes) || bytes < 0) throw new Error(`storage: byte counts are whole and not negative (got ${bytes})`);
}

/**
 * Checks that the group may store `addBytes` more and keeps it so until the transaction ends: the
 * group's row is locked first, so concurrent writers queue and each sees the bytes the one before
 * it added. Throws 402 `read_only` when a lapsed plan left the group above the free quota, 413
 * `quota_exceeded` when the bytes do not fit the plan in force. Shrinking or zero writes pass.
 */
async function lockAndCheck(tx: Executor, groupId: string, addBytes: number, what: StorageWhat): Promise<void> {
  const locked = await q.lockGroupStorage(tx, groupId);
  if (!locked) throw notFound('Group');
  if (addBytes <= 0) return;
  const p = await planOfGroup(tx, groupId);
  const used = locked.storageBytes;
  if (p.lapse && isReadOnly(p, used)) {
    throw new AppError(402, 'read_only', `This group is read-only. ${lapseNotice(p.lapse, used)}`);
  }
  const quota = p.plan.quotaBytes;
  if (used + addBytes > quota) {
    const fix =
      p.plan.id === 'free'
        ? 'An owner can upgrade to the Institutional plan (Plan screen) or delete drafts.'
        : 'Delete drafts or cached renders you no longer need.';
    throw new AppError(
      413,
      'quota_exceeded',
      `This group uses ${formatBytes(used)} of ${formatBytes(quota)} (${p.plan.name} plan); ${what} needs ${formatBytes(addBytes)} more. ${fix}`,
    );
  }
}

/**
 * Reserves `bytes` of the group's storage for a write in this transaction: locks the group's row
 * (the lock later checks of the same transaction rely on, e.g. the scan queue's), checks them
 * (plus `headroom`) against the plan in force, and counts them. Call it before the inserts that
 * store the bytes. `admitted` counts without locking or checking (see `ReserveOptions`).
 */
export async function reserve(tx: Executor, groupId: string, bytes: number, what: StorageWhat = 'this upload', opts: ReserveOptions = {}): Promise<void> {
  assertBytes(bytes);
  if (!opts.admitted) await lockAndCheck(tx, groupId, bytes + (opts.headroom ?? 0), what);
  await q.addStorage(tx, groupId, bytes);
}

/**
 * A stored thing changes size (a draft edit): locks and checks the growth like `reserve`
 * (shrinking always passes), then counts the difference.
 */
export async function resize(tx: Executor, groupId: string, fromBytes: number, toBytes: number, what: StorageWhat): Promise<void> {
  assertBytes(fromBytes);
  assertBytes(toBytes);
  await lockAndCheck(tx, groupId, toBytes - fromBytes, what);
  await q.addStorage(tx, groupId, toBytes - fromBytes);
}

/** Frees `bytes` the transaction deletes (never refused; the counter does not go below 0). */
export async function release(tx: Executor, groupId: string, bytes: number): Promise<void> {
  assertBytes(bytes);
  await q.addStorage(tx, groupId, -bytes);
}

/**
 * Bytes a scan's draft result may take, reserved as `headroom` when the scan starts (the draft
 * itself is then saved `admitted`, so a finished computation is never lost): its provenance and
 * notes, and per grid point x, observed and five expected limits as JSON numbers.
 */
export function scanDraftAllowance(points: number): number {
  return 8 * 1024 + 192 * points;
}

/** The group's stored bytes by kind, summed from the rows (the plan screen, billing mails). */
export async function usage(db: Executor, groupId: string): Promise<Usage | undefined> {
  return q.usageByKind(db, groupId);
}

/** The group's storage counter (undefined: no such group). */
export async function storedBytes(db: Executor, groupId: string): Promise<number | undefined> {
  return q.getStorage(db, groupId);
}

// ---------------------------------------------------------------------------------------------
// The render cache: outside the counter, bounded by the plan's `renderCache`.

export type RenderCacheRoom = Plan['renderCache'];

/**
 * Makes room to cache a render of `bytes` in this transaction: null when it is larger than the
 * whole cache the plan allows (serve it uncached); otherwise takes the group's render-cache lock
 * (one cache write per group at a time; never the group row, so renders do not queue behind
 * uploads) and returns the limits to trim by after the insert. Nothing is counted or checked
 * against the quota.
 */
export async function reserveRenderCache(tx: Executor, groupId: string, bytes: number): Promise<RenderCacheRoom | null> {
  const limits = (await planOfGroup(tx, groupId)).plan.renderCache;
  if (bytes > limits.maxBytes) return null;
  await q.lockRenderCache(tx, groupId);
  return limits;
}

/**
 * After a render was cached: drops the least recently used renders beyond the plan's count or
 * bytes, and those unused for its `maxAgeDays`. Returns the bytes freed.
 */
export async function trimRenderCache(tx: Executor, groupId: string, room: RenderCacheRoom): Promise<number> {
  return q.evictRenders(tx, groupId, room);
}
