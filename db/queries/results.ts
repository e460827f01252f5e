import { and, asc, count, desc, eq, getTableColumns, gt, ilike, inArray, isNotNull, isNull, like, max, or, sql, type SQL } from 'drizzle-orm';
import type { EnvelopeSources } from '../../shared/schemas/combine';
import type { ResultListQuery } from '../../shared/schemas/results';
import { normaliseSearchText } from '../../shared/search';
import type { Executor } from '../client';
import { versionVisibleSql, type Viewer } from './visibility';
import { figureLayers, figures, groups, resultInputs, results, resultVersions, user } from '../schema';

/**
 * Data access of the results registry. Every function is scoped: by the group (routes that have
 * checked membership), or by a `Viewer` whose visibility rule (db/queries/visibility.ts) is
 * applied here in SQL, so no caller can forget it.
 */

export type { Viewer } from './visibility';

/** `%text%` for ILIKE with the pattern characters of the text escaped. */
export function containsPattern(text: string): string {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

// ---------------------------------------------------------------------------------------------
// Results

export async function insertResult(db: Executor, r: { groupId: string; slug: string; isPublic?: boolean; createdBy: string | null }) {
  // Undefined when the slug is taken (also by a concurrent insert).
  const [row] = await db
    .insert(results)
    .values({ ...r, lastVersion: 1 })
    .onConflictDoNothing({ target: results.slug })
    .returning();
  return row;
}

export async function slugExists(db: Executor, slug: string): Promise<boolean> {
  const rows = await db.select({ id: results.id }).from(results).where(eq(results.slug, slug)).limit(1);
  return rows.length > 0;
}

/**
 * Locks the result row for the rest of the transaction (version numbers, publishing and deleting
 * are decided under this lock, so concurrent requests queue instead of colliding).
 */
export async function lockResult(db: Executor, groupId: string, resultId: string) {
  const rows = await db
    .select()
    .from(results)
    .where(and(eq(results.id, resultId), eq(results.groupId, groupId)))
    .for('update');
  return rows[0];
}

/** The result `resultId` if it belongs to `groupId`: the scope of every write to its versions. */
const resultOfGroup = (db: Executor, groupId: string, resultId: string) =>
  db.select({ id: results.id }).from(results).where(and(eq(results.id, resultId), eq(results.groupId, groupId)));

/** Gives out the next version number of a locked result. */
export async function takeNextVersion(db: Executor, groupId: string, resultId: string): Promise<number> {
  const [row] = await db
    .update(results)
    .set({ lastVersion: sql`${results.lastVersion} + 1`, updatedAt: sql`now()` })
    .where(and(eq(results.id, resultId), eq(results.groupId, groupId)))
    .returning({ n: results.lastVersion });
  if (!row) throw new Error(`result ${resultId} vanished while locked`);
  return row.n;
}

export async function touchResult(db: Executor, groupId: string, resultId: string) {
  await db.update(results).set({ updatedAt: sql`now()` }).where(and(eq(results.id, resultId), eq(results.groupId, groupId)));
}

export async function setResultPublic(db: Executor, groupId: string, resultId: string, isPublic: boolean) {
  await db
    .update(results)
    .set({ isPublic, updatedAt: sql`now()` })
    .where(and(eq(results.id, resultId), eq(results.groupId, groupId)));
}

export async function deleteResult(db: Executor, groupId: string, resultId: string) {
  await db.delete(results).where(and(eq(results.id, resultId), eq(results.groupId, groupId)));
}

/** The result with its group's name, or undefined when it is not in the group. */
export async function getResultInGroup(db: Executor, groupId: string, resultId: string) {
  const rows = await db
    .select({ id: results.id, slug: results.slug, groupId: results.groupId, groupName: groups.name, isPublic: results.isPublic })
    .from(results)
    .innerJoin(groups, eq(groups.id, results.groupId))
    .where(and(eq(results.id, resultId), eq(results.groupId, groupId)));
  return rows[0];
}

// ---------------------------------------------------------------------------------------------
// Versions

export type NewVersion = Omit<typeof resultVersions.$inferInsert, 'id' | 'createdAt' | 'updatedAt' | 'state' | 'publishedAt' | 'retractedAt' | 'retractionReason'>;

export async function insertVersion(db: Executor, v: NewVersion) {
  const [row] = await db.insert(resultVersions).values(v).returning({ id: resultVersions.id });
  return row!;
}

/** The history of a result in its group, newest first, with the creators' names. */
export async function listVersions(db: Executor, groupId: string, resultId: string) {
  return db
    .select({
      version: resultVersions.version,
      state: resultVersions.state,
      changeNote: resultVersions.changeNote,
      createdBy: user.name,
      createdAt: resultVersions.createdAt,
      publishedAt: resultVersions.publishedAt,
      retractionReason: resultVersions.retractionReason,
    })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .leftJoin(user, eq(user.id, resultVersions.createdBy))
    .where(and(eq(results.id, resultId), eq(results.groupId, groupId)))
    .orderBy(desc(resultVersions.version));
}

/** Version states and stored bytes of a result in its group (for delete rules and storage). */
export async function versionStates(db: Executor, groupId: string, resultId: string) {
  return db
    .select({ version: resultVersions.version, state: resultVersions.state, storedBytes: resultVersions.storedBytes })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(and(eq(results.id, resultId), eq(results.groupId, groupId)));
}

const { sourceData: _sourceData, ...versionColumns } = getTableColumns(resultVersions);
const fullVersion = {
  ...versionColumns,
  sourceBytes: sql<number | null>`octet_length(${resultVersions.sourceData})`.mapWith((v: string | number | null) => (v === null ? null : Number(v))),
  slug: results.slug,
  groupId: results.groupId,
  groupName: groups.name,
  isPublic: results.isPublic,
  createdByName: user.name,
};

function selectFullVersion(db: Executor) {
  return db
    .select(fullVersion)
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .innerJoin(groups, eq(groups.id, results.groupId))
    .leftJoin(user, eq(user.id, resultVersions.createdBy));
}
export type VersionRow = Awaited<ReturnType<typeof getVersion>> & object;

/** One version of a result in a group, with everything a reader sees (not the uploaded bytes). */
export async function getVersion(db: Executor, groupId: string, resultId: string, version: number) {
  const rows = await selectFullVersion(db).where(
    and(eq(results.id, resultId), eq(results.groupId, groupId), eq(resultVersions.version, version)),
  );
  return rows[0];
}

/**
 * The newest published version of the result `slug` that `viewer` may see (its current one), or
 * undefined; `anyVisible` says whether the viewer may see some version of it at all (a result
 * with drafts only, or only retracted versions, has no published one).
 */
export async function getLatestPublishedByLink(db: Executor, viewer: Viewer, slug: string) {
  const rows = await db
    .select({ version: resultVersions.version, state: resultVersions.state })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(and(eq(results.slug, slug), versionVisibleSql(viewer)))
    .orderBy(desc(resultVersions.version));
  return { published: rows.find((r) => r.state === 'published')?.version, anyVisible: rows.length > 0 };
}

/** The newest published version after `version` of the result `slug` that `viewer` may see, if any. */
export async function newerPublishedVersion(db: Executor, viewer: Viewer, slug: string, version: number): Promise<number | undefined> {
  const [row] = await db
    .select({ version: max(resultVersions.version) })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(and(eq(results.slug, slug), gt(resultVersions.version, version), eq(resultVersions.state, 'published'), versionVisibleSql(viewer)));
  return row?.version ?? undefined;
}

/** Versions whose search text was never written (rows older than the column), a batch at a time. */
export async function versionsWithoutSearchText(db: Executor, limit: number) {
  return db
    .select({ id: resultVersions.id, title: resultVersions.title, model: resultVersions.model, reference: resultVersions.reference })
    .from(resultVersions)
    .where(isNull(resultVersions.searchText))
    .limit(limit);
}

/** Writes a version's search text (derived from its own columns; not a change of the version). */
export async function setSearchText(db: Executor, versionId: string, searchText: string) {
  await db.update(resultVersions).set({ searchText }).where(eq(resultVersions.id, versionId));
}

/** A version by its permanent link (`slug`, `version`), if `viewer` may see it. */
export async function getVersionByLink(db: Executor, viewer: Viewer, slug: string, version: number) {
  const rows = await selectFullVersion(db).where(and(eq(results.slug, slug), eq(resultVersions.version, version), versionVisibleSql(viewer)));
  return rows[0];
}

export async function updateVersion(
  db: Executor,
  groupId: string,
  resultId: string,
  version: number,
  patch: Partial<Pick<typeof resultVersions.$inferInsert, 'state' | 'publishedAt' | 'retractedAt' | 'retractionReason' | 'storedBytes' | 'curve' | 'theory' | 'plane' | 'planeContours' | 'changeNote' | 'title' | 'model' | 'parameterName' | 'parameterUnit' | 'quantity' | 'quantityUnit' | 'sqrtS' | 'luminosity' | 'cl' | 'method' | 'reference' | 'notes' | 'searchText'>>,
) {
  await db
    .update(resultVersions)
    .set({ ...patch, updatedAt: sql`now()` })
    .where(and(inArray(resultVersions.resultId, resultOfGroup(db, groupId, resultId)), eq(resultVersions.version, version)));
}

/** Marks the result's published version(s) superseded (before another is published). */
export async function supersedePublished(db: Executor, groupId: string, resultId: string) {
  await db
    .update(resultVersions)
    .set({ state: 'superseded', updatedAt: sql`now()` })
    .where(and(inArray(resultVersions.resultId, resultOfGroup(db, groupId, resultId)), eq(resultVersions.state, 'published')));
}

export async function deleteVersion(db: Executor, groupId: string, resultId: string, version: number) {
  await db.delete(resultVersions).where(and(inArray(resultVersions.resultId, resultOfGroup(db, groupId, resultId)), eq(resultVersions.version, version)));
}

// ---------------------------------------------------------------------------------------------
// Lists

type ListFilters = Omit<ResultListQuery, 'page' | 'pageSize' | 'sort'> & Pick<Required<ResultListQuery>, 'page' | 'pageSize' | 'sort'>;

/**
 * One row per result visible to `viewer`, showing its latest version that `viewer` may see (a
 * member sees the newest version in any state; others the newest that is not a draft). Filters
 * and search apply to that version. Paged.
 */
export async function listResults(db: Executor, viewer: Viewer, f: ListFilters) {
  const latest = db
    .select({ resultId: resultVersions.resultId, version: max(resultVersions.version).as('latest_version') })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(versionVisibleSql(viewer))
    .groupBy(resultVersions.resultId)
    .as('latest');

  const conditions: (SQL | undefined)[] = [];
  if (f.q) {
    // The normalised text (shared/search.ts, on both sides) finds Z′ for Z' or Zprime, tt̄ for
    // ttbar, μ for mu; the plain match stays for rows whose search text is not written yet.
    const p = containsPattern(f.q);
    const normalised = normaliseSearchText(f.q);
    conditions.push(
      or(
        normalised ? like(resultVersions.searchText, containsPattern(normalised)) : undefined,
        ilike(resultVersions.title, p),
        ilike(resultVersions.model, p),
        ilike(resultVersions.reference, p),
      ),
    );
  }
  if (f.groupId) conditions.push(eq(results.groupId, f.groupId));
  if (f.parameter) conditions.push(sql`lower(${resultVersions.parameterName}) = lower(${f.parameter})`);
  if (f.sqrtS !== undefined) conditions.push(eq(resultVersions.sqrtS, f.sqrtS));
  if (f.method) conditions.push(eq(resultVersions.method, f.method));
  if (f.state) conditions.push(eq(resultVersions.state, f.state));
  // Over one parameter or two (a figure's layer picker asks for the sort its kind draws).
  if (f.parameters === 1) conditions.push(isNull(resultVersions.plane));
  if (f.parameters === 2) conditions.push(isNotNull(resultVersions.plane));
  const where = and(...conditions);
  // Newest first; by title A–Z; by energy, highest first. The id makes pages stable.
  const order =
    f.sort === 'title'
      ? [asc(sql`lower(${resultVersions.title})`), asc(results.id)]
      : f.sort === 'sqrtS'
        ? [desc(resultVersions.sqrtS), asc(sql`lower(${resultVersions.title})`), asc(results.id)]
        : [desc(resultVersions.updatedAt), asc(results.id)];

  const items = await db
    .select({
      id: results.id,
      slug: results.slug,
      groupId: results.groupId,
      groupName: groups.name,
      isPublic: results.isPublic,
      version: resultVersions.version,
      state: resultVersions.state,
      title: resultVersions.title,
      model: resultVersions.model,
      parameterName: resultVersions.parameterName,
      parameterUnit: resultVersions.parameterUnit,
      quantity: resultVersions.quantity,
      quantityUnit: resultVersions.quantityUnit,
      sqrtS: resultVersions.sqrtS,
      luminosity: resultVersions.luminosity,
      method: resultVersions.method,
      reference: resultVersions.reference,
      updatedAt: resultVersions.updatedAt,
      // One parameter or two, from the null test alone: the plane itself is not read here.
      parameters: sql<1 | 2>`case when ${resultVersions.plane} is null then 1 else 2 end`.mapWith((v) => (Number(v) === 2 ? 2 : 1)),
      versionId: resultVersions.id,
      // The size of the whole filtered list, counted with the page (one query instead of two).
      total: sql<number>`count(*) over ()`.mapWith(Number),
    })
    .from(latest)
    .innerJoin(results, eq(results.id, latest.resultId))
    .innerJoin(resultVersions, and(eq(resultVersions.resultId, latest.resultId), eq(resultVersions.version, latest.version)))
    .innerJoin(groups, eq(groups.id, results.groupId))
    .where(where)
    .orderBy(...order)
    .limit(f.pageSize)
    .offset((f.page - 1) * f.pageSize);
  if (items.length > 0 || f.page === 1) {
    const second = await secondParameters(
      db,
      items.filter((i) => i.parameters === 2).map((i) => i.versionId),
    );
    return {
      items: items.map(({ total: _, versionId, ...item }) => ({ ...item, secondParameter: second.get(versionId) ?? null })),
      total: items[0]?.total ?? 0,
    };
  }
  // A page past the end has no row to carry the count.
  const [total] = await db
    .select({ n: count() })
    .from(latest)
    .innerJoin(results, eq(results.id, latest.resultId))
    .innerJoin(resultVersions, and(eq(resultVersions.resultId, latest.resultId), eq(resultVersions.version, latest.version)))
    .where(where);
  return { items: [], total: total?.n ?? 0 };
}

/**
 * The second parameter's name and unit of these two-parameter versions, read from their planes
 * in SQL (two keys each; only the page's plane rows, after the list has been cut to a page, so a
 * list never takes apart every plane it filters).
 */
async function secondParameters(db: Executor, versionIds: string[]): Promise<Map<string, { name: string; unit: string }>> {
  if (versionIds.length === 0) return new Map();
  const rows = await db
    .select({
      id: resultVersions.id,
      name: sql<string>`coalesce(${resultVersions.plane}->>'yName', '')`,
      unit: sql<string>`coalesce(${resultVersions.plane}->>'yUnit', '')`,
    })
    .from(resultVersions)
    .where(inArray(resultVersions.id, versionIds));
  return new Map(rows.map((r) => [r.id, { name: r.name, unit: r.unit }]));
}

// ---------------------------------------------------------------------------------------------
// Figures

/**
 * Figures that pin the result (or one of its versions), in any of their versions: a result in use
 * must not be deleted. Figures of other groups (which may pin a public result) are named only as
 * such, so their titles do not leak.
 */
export async function listFiguresUsing(db: Executor, target: { groupId: string; resultId: string; version?: number }): Promise<{ id: string; name: string }[]> {
  const rows = await db
    .selectDistinct({ id: figures.id, title: figures.title, groupId: figures.groupId })
    .from(figureLayers)
    .innerJoin(figures, eq(figures.id, figureLayers.figureId))
    .where(and(eq(figureLayers.resultId, target.resultId), target.version === undefined ? undefined : eq(figureLayers.resultVersion, target.version)))
    .orderBy(asc(figures.title), asc(figures.id));
  return rows.map((r) => ({ id: r.id, name: r.groupId === target.groupId ? r.title : "another group's figure" }));
}

// ---------------------------------------------------------------------------------------------
// Inputs of derived results

/** Records the inputs of a derived version of the group's result (in the writing transaction). */
export async function insertVersionInputs(db: Executor, groupId: string, resultId: string, version: number, inputs: { resultId: string; version: number; title: string }[]) {
  const [own] = await resultOfGroup(db, groupId, resultId);
  if (!own || !inputs.length) return;
  await db.insert(resultInputs).values(inputs.map((i, position) => ({ resultId, version, position, inputResultId: i.resultId, inputVersion: i.version, inputTitle: i.title })));
}

/** Stores which input an envelope version takes where (in the writing transaction). */
export async function setVersionEnvelope(db: Executor, groupId: string, resultId: string, version: number, envelope: EnvelopeSources) {
  await db
    .update(resultVersions)
    .set({ envelope })
    .where(and(inArray(resultVersions.resultId, resultOfGroup(db, groupId, resultId)), eq(resultVersions.version, version)));
}

/**
 * The inputs of a version of the group's result, in order, each with its permanent-link slug and
 * the newest published version the group may use now (the `pinning` reader), to say when a newer
 * one exists. An input the group may no longer see (or that was deleted) keeps only its title.
 */
export async function listVersionInputs(db: Executor, groupId: string, resultId: string, version: number) {
  const rows = await db
    .select({ position: resultInputs.position, resultId: resultInputs.inputResultId, version: resultInputs.inputVersion, title: resultInputs.inputTitle })
    .from(resultInputs)
    .where(and(inArray(resultInputs.resultId, resultOfGroup(db, groupId, resultId)), eq(resultInputs.version, version)))
    .orderBy(asc(resultInputs.position));
  const ids = [...new Set(rows.flatMap((r) => (r.resultId ? [r.resultId] : [])))];
  if (!ids.length) return rows.map((r) => ({ ...r, slug: null as string | null, latestPublished: null as number | null }));
  const visible = await db
    .select({ id: results.id, slug: results.slug, latest: sql<number | null>`max(${resultVersions.version}) filter (where ${resultVersions.state} = 'published')`.mapWith((v) => (v === null ? null : Number(v))) })
    .from(resultVersions)
    .innerJoin(results, eq(results.id, resultVersions.resultId))
    .where(and(inArray(results.id, ids), versionVisibleSql({ kind: 'pinning', groupId })))
    .groupBy(results.id, results.slug);
  const byId = new Map(visible.map((v) => [v.id, v]));
  return rows.map((r) => {
    const v = r.resultId ? byId.get(r.resultId) : undefined;
    return { ...r, resultId: v ? r.resultId : null, slug: v?.slug ?? null, latestPublished: v?.latest ?? null };
  });
}

// ---------------------------------------------------------------------------------------------
// Who to tell about a version

/** The account that created a version of the group's result (null when it was deleted). */
export async function versionAuthor(db: Executor, groupId: string, resultId: string, version: number) {
  const [row] = await db
    .select({ id: user.id, name: user.name, email: user.email })
    .from(resultVersions)
    .innerJoin(user, eq(user.id, resultVersions.createdBy))
    .where(and(inArray(resultVersions.resultId, resultOfGroup(db, groupId, resultId)), eq(resultVersions.version, version)));
  return row ?? null;
}
