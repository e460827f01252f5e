import { and, eq, exists, ne, or, sql, type SQL } from 'drizzle-orm';
import { memberships, results, resultVersions } from '../schema';

/**
 * Who may see which result version: the one definition of visibility. Every read of result
 * versions (lists, permanent links, figure layers, the pins a group may use, renders) applies it,
 * in SQL through `versionVisibleSql` or in TypeScript through `versionVisibleTo`. Both forms are
 * built from `RULES` below, and tests/api/visibility.test.ts checks that they agree on every case.
 *
 * A version is visible to a reader when
 * - its result belongs to a group whose results the reader sees in every state (`own`), or
 * - the reader also sees open versions (`open`) and it is open: its result is public and the
 *   version is not a draft (published, superseded and retracted versions stay readable so that
 *   links and figures keep working; a retraction is shown as such).
 */

/**
 * Whose eyes a read is for:
 * - `group`: a group's own registry (members; the route checked the role): every result of that
 *   group in any state, and nothing of other groups;
 * - `pinning`: what a group may build on (figure layers drawn for its members, pins, derived
 *   results): its own results in any state and other groups' open versions;
 * - `user`: a signed-in user (or nobody, `userId: null`): the results of every group they belong
 *   to in any state, and other groups' open versions;
 * - `public`: open versions only, whoever asks.
 */
export type Viewer =
  | { kind: 'group'; groupId: string }
  | { kind: 'pinning'; groupId: string }
  | { kind: 'user'; userId: string | null }
  | { kind: 'public' };

/** The rule per reader: whose results are seen in every state, and whether open versions are too. */
export const RULES = {
  group: { own: 'the group', open: false },
  pinning: { own: 'the group', open: true },
  user: { own: "the user's groups", open: true },
  public: { own: 'none', open: true },
} as const satisfies Record<Viewer['kind'], { own: 'the group' | "the user's groups" | 'none'; open: boolean }>;

/** What decides a version's visibility (null: the version or its result does not exist). */
export type VersionFacts = { groupId: string | null; isPublic: boolean | null; state: string | null };

// --- SQL (with `results` and `resultVersions` in scope) --------------------------------------

const openSql = (): SQL => and(eq(results.isPublic, true), ne(resultVersions.state, 'draft'))!;

/** The caller is a member of the result's group. */
function memberOfResultGroup(userId: string): SQL {
  return exists(sql`(select 1 from ${memberships} where ${memberships.groupId} = ${results.groupId} and ${memberships.userId} = ${userId})`);
}

function ownSql(viewer: Viewer): SQL | undefined {
  const own = RULES[viewer.kind].own;
  if (own === 'the group') return eq(results.groupId, (viewer as { groupId: string }).groupId);
  if (own === "the user's groups") {
    const userId = (viewer as { userId: string | null }).userId;
    return userId ? memberOfResultGroup(userId) : undefined;
  }
  return undefined;
}

/** The versions `viewer` may see, as an SQL condition over `results` and `resultVersions`. */
export function versionVisibleSql(viewer: Viewer): SQL {
  const own = ownSql(viewer);
  const open = RULES[viewer.kind].open ? openSql() : undefined;
  if (own && open) return or(own, open)!;
  return own ?? open ?? sql`false`;
}

// --- TypeScript (rows already loaded) --------------------------------------------------------

/** An open version: its result is public and the version is not a draft. */
export function isOpen(row: VersionFacts): boolean {
  return row.isPublic === true && row.state !== null && row.state !== 'draft';
}

/**
 * The same rule on a loaded row. For a `user` viewer, `userGroups` lists the groups the user
 * belongs to (the SQL form looks them up itself).
 */
export function versionVisibleTo<R extends VersionFacts>(viewer: Viewer, row: R | undefined, userGroups: ReadonlySet<string> = new Set()): row is R {
  if (!row || row.groupId === null || row.state === null) return false;
  const own = RULES[viewer.kind].own;
  if (own === 'the group' && row.groupId === (viewer as { groupId: string }).groupId) return true;
  if (own === "the user's groups" && (viewer as { userId: string | null }).userId !== null && userGroups.has(row.groupId)) return true;
  return RULES[viewer.kind].open && isOpen(row);
}

// --- Figures ----------------------------------------------------------------------------------

/**
 * Who a figure is drawn for: `group` = members of the figure's group (the `pinning` reader of that
 * group); `public` = anyone (the `public` reader). Renders are cached per audience, never per person.
 */
export type Audience = 'group' | 'public';

/** The reader whose visibility applies to a figure's layers for an audience. */
export function audienceViewer(audience: Audience, figureGroupId: string): Viewer {
  return audience === 'group' ? { kind: 'pinning', groupId: figureGroupId } : { kind: 'public' };
}

/**
 * The audience a caller reads a figure as: members of its group (any role) as the group; anyone
 * else only a public figure, as the public; null when the caller may not see the figure at all.
 */
export function figureAudience(callerRole: string | null, figure: { isPublic: boolean }): Audience | null {
  if (callerRole) return 'group';
  return figure.isPublic ? 'public' : null;
}

/**
 * The caller's role in a group, for hand-written statements: a left join on memberships of the
 * group column `groupColumn` with the user id parameter `userParam` (e.g. `$3`), exposing `alias.role`.
 * The same membership `memberOfResultGroup` and db/queries/groups.ts `getRole` read.
 */
export function memberRoleJoinSql(alias: string, groupColumn: string, userParam: string): string {
  return `left join memberships ${alias} on ${alias}.group_id = ${groupColumn} and ${alias}.user_id = ${userParam}`;
}
