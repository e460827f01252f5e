import { createHash } from 'node:crypto';
import * as q from '../../db/queries/upload-idempotency';
import type { ErrorDetail } from '../../shared/errors';
import { IDEMPOTENCY_KEY_HEADER, type ResultVersion } from '../../shared/schemas/results';
import type { Ctx } from '../context';
import { AppError } from '../lib/errors';
import type { FileUpload } from './result-upload';
import { getVersion, type WriteHooks } from './results';

/**
 * `Idempotency-Key` on result uploads: a pipeline that lost the answer to an upload sends it again
 * with the same key and gets the first answer (same version, same status) instead of a second
 * version. The rules:
 * - a key belongs to a group for 24 h (`IDEMPOTENCY_TTL_SECONDS`), then it may be used afresh;
 * - the request is identified by a SHA-256 of its sender, route and contents (the multipart
 *   fields, file name and file bytes — boundaries differ between retries — or the JSON body's
 *   bytes); the same key with another request is refused with 422 naming the header;
 * - only a stored upload binds its key: a refused one (400, 413, 402) leaves the key free, so
 *   the fixed file can be sent with it;
 * - the key is taken in the transaction that writes the version, before any other lock, so
 *   concurrent retries queue on it and all but the first answer with the first one's version.
 * The replayed answer is the version as it is now (its state may have moved on) with the first
 * answer's warnings, and `Idempotent-Replayed: true`.
 */

export const IDEMPOTENCY_TTL_SECONDS = 24 * 60 * 60;

export type UploadTarget = { kind: 'result' } | { kind: 'version'; resultId: string };
export type UploadAnswer = { status: number; version: ResultVersion; warnings: ErrorDetail[]; replayed: boolean };

/** What a request sent, for its fingerprint: a multipart upload, or a JSON body's bytes. */
export type RequestContents = { multipart: FileUpload } | { json: Buffer };

/** SHA-256 of who sent what to where: equal for a byte-identical retry, different for anything else. */
export function requestFingerprint(userId: string, target: UploadTarget, contents: RequestContents): string {
  const h = createHash('sha256');
  const part = (label: string, value: string | Buffer) => {
    const bytes = typeof value === 'string' ? Buffer.from(value) : value;
    h.update(`${label}:${bytes.length}:`);
    h.update(bytes);
  };
  part('user', userId);
  part('target', target.kind === 'result' ? 'result' : `version:${target.resultId}`);
  if ('json' in contents) {
    part('json', contents.json);
  } else {
    const { fields, file } = contents.multipart;
    for (const name of Object.keys(fields).sort()) part(`field ${name}`, JSON.stringify(fields[name]));
    if (file) {
      part('file name', file.name);
      part('file', file.data);
    }
  }
  return h.digest('hex');
}

class KeyTaken extends Error {}

const reused = (key: string) =>
  new AppError(
    422,
    'idempotency_key_reused',
    `The ${IDEMPOTENCY_KEY_HEADER} "${key}" was already used for a different upload to this group in the last 24 hours; send a new key with a new upload`,
    [{ field: IDEMPOTENCY_KEY_HEADER, message: 'was already used for a different upload (other file, fields, route or sender); send a new key' }],
  );

async function replay(ctx: Ctx, groupId: string, key: string, requestHash: string, row: q.IdempotencyRow): Promise<UploadAnswer> {
  if (row.requestHash !== requestHash) throw reused(key);
  // Committed rows are always settled (claim and settle share a transaction).
  const version = await getVersion(ctx, groupId, row.resultId!, row.version!);
  return { status: row.status, version, warnings: row.warnings, replayed: true };
}

/**
 * Parses and stores one upload under `key`. Without a key it simply does; with one, a settled
 * key is answered without parsing again, and otherwise `store` runs with hooks that claim the key
 * first in its transaction and bind it to the written version last.
 */
export async function uploadOnce<P extends { warnings?: ErrorDetail[] }>(
  ctx: Ctx,
  groupId: string,
  userId: string,
  key: string | undefined,
  requestHash: () => string,
  parse: () => Promise<P>,
  store: (input: P, hooks?: WriteHooks) => Promise<ResultVersion>,
): Promise<UploadAnswer> {
  if (!key) {
    const input = await parse();
    return { status: 201, version: await store(input), warnings: input.warnings ?? [], replayed: false };
  }
  const hash = requestHash();
  await q.deleteExpiredIdempotencyKeys(ctx.db, groupId);
  const settled = await q.getIdempotencyKey(ctx.db, groupId, key);
  if (settled) return replay(ctx, groupId, key, hash, settled);

  const input = await parse();
  const warnings = input.warnings ?? [];
  try {
    const version = await store(input, {
      before: async (tx) => {
        if (!(await q.claimIdempotencyKey(tx, { groupId, key, userId, requestHash: hash, ttlSeconds: IDEMPOTENCY_TTL_SECONDS }))) throw new KeyTaken();
      },
      after: (tx, written) => q.settleIdempotencyKey(tx, groupId, key, { ...written, status: 201, warnings }),
    });
    return { status: 201, version, warnings, replayed: false };
  } catch (e) {
    if (!(e instanceof KeyTaken)) throw e;
    // A concurrent twin committed first (its transaction held the key while this one waited).
    const row = await q.getIdempotencyKey(ctx.db, groupId, key);
    if (!row) throw new AppError(409, 'conflict', `Another upload with this ${IDEMPOTENCY_KEY_HEADER} was being stored; send the request again`);
    return replay(ctx, groupId, key, hash, row);
  }
}
