import { and, eq, inArray } from 'drizzle-orm';
import { deleteVersion, getVersion, setResultPublic, supersedePublished, takeNextVersion, touchResult, updateVersion } from '@/db/queries/results';
import { results, resultVersions } from '@/db/schema';
import { versionVisibleSql, versionVisibleTo, type Viewer } from '@/db/queries/visibility';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroup, makePerson, makeResult, makeVersion, type Person } from '../helpers/factories';

/**
 * The one visibility rule in both of its forms: the SQL condition every query applies and the
 * TypeScript twin the services apply to loaded rows. Every combination of owner group, public
 * flag and version state is stored, and for every reader both forms must give the answer of the
 * table below (the product's rule: members see their groups' results in every state; others see
 * public results except drafts; a group's own registry shows only that group).
 */

const STATES = ['draft', 'published', 'superseded', 'retracted'] as const;
type State = (typeof STATES)[number];
type Case = { owner: 'A' | 'B'; isPublic: boolean; state: State; resultId: string; version: number; id: string };

let t: TestApp;
let memberOfA: Person;
let nobody: Person;
let groupA: string;
let groupB: string;
const cases: Case[] = [];

beforeAll(async () => {
  t = await startTestApp();
  memberOfA = await makePerson(t, 'Member of the Alder group');
  nobody = await makePerson(t, 'Member of no group');
  const memberOfB = await makePerson(t, 'Member of the Birch group');
  groupA = await makeGroup(t, memberOfA);
  groupB = await makeGroup(t, memberOfB);
  for (const [owner, person, groupId] of [['A', memberOfA, groupA], ['B', memberOfB, groupB]] as const) {
    for (const isPublic of [true, false]) {
      // One result per (group, public flag) with a version in every state.
      const first = await makeResult(person, groupId, { meta: { title: `Fictional search ${owner} ${isPublic ? 'open' : 'closed'}` } });
      for (let v = 2; v <= STATES.length; v++) await makeVersion(person, groupId, first.resultId);
      await setResultPublic(t.ctx.db, groupId, first.resultId, isPublic);
      for (const [i, state] of STATES.entries()) {
        await updateVersion(t.ctx.db, groupId, first.resultId, i + 1, { state });
        cases.push({ owner, isPublic, state, resultId: first.resultId, version: i + 1, id: '' });
      }
    }
  }
  const rows = await t.ctx.db
    .select({ id: resultVersions.id, resultId: resultVersions.resultId, version: resultVersions.version, state: resultVersions.state })
    .from(resultVersions)
    .where(inArray(resultVersions.resultId, [...new Set(cases.map((c) => c.resultId))]));
  for (const c of cases) {
    const row = rows.find((r) => r.resultId === c.resultId && r.version === c.version)!;
    expect(row.state).toBe(c.state);
    c.id = row.id;
  }
  expect(cases).toHaveLength(16);
});
afterAll(async () => {
  await t?.close();
});

const open = (c: Case) => c.isPublic && c.state !== 'draft';
/** The reader, its group memberships (for the TypeScript form), and the expected answer per case. */
const READERS: { name: string; viewer: () => Viewer; userGroups: () => string[]; expected: (c: Case) => boolean }[] = [
  { name: "group A's registry", viewer: () => ({ kind: 'group', groupId: groupA }), userGroups: () => [], expected: (c) => c.owner === 'A' },
  { name: 'what group A may pin and draw', viewer: () => ({ kind: 'pinning', groupId: groupA }), userGroups: () => [], expected: (c) => c.owner === 'A' || open(c) },
  { name: 'a member of group A', viewer: () => ({ kind: 'user', userId: memberOfA.user.id }), userGroups: () => [groupA], expected: (c) => c.owner === 'A' || open(c) },
  { name: 'a signed-in user of no group', viewer: () => ({ kind: 'user', userId: nobody.user.id }), userGroups: () => [], expected: open },
  { name: 'nobody signed in', viewer: () => ({ kind: 'user', userId: null }), userGroups: () => [], expected: open },
  { name: 'the public', viewer: () => ({ kind: 'public' }), userGroups: () => [], expected: open },
];

describe.each(READERS)('$name', ({ viewer, userGroups, expected }) => {
  test('the SQL condition and the TypeScript rule agree with the table on every case', async () => {
    const seen = await t.ctx.db
      .select({ id: resultVersions.id })
      .from(resultVersions)
      .innerJoin(results, eq(results.id, resultVersions.resultId))
      .where(and(inArray(resultVersions.id, cases.map((c) => c.id)), versionVisibleSql(viewer())));
    const bySql = new Set(seen.map((r) => r.id));
    const groups = new Set(userGroups());
    const table = cases.map((c) => ({
      case: `${c.owner} ${c.isPublic ? 'public' : 'private'} ${c.state}`,
      expected: expected(c),
      sql: bySql.has(c.id),
      ts: versionVisibleTo(viewer(), { groupId: c.owner === 'A' ? groupA : groupB, isPublic: c.isPublic, state: c.state }, groups),
    }));
    expect(table.map((r) => ({ case: r.case, sql: r.sql, ts: r.ts }))).toEqual(table.map((r) => ({ case: r.case, sql: r.expected, ts: r.expected })));
  });
});

test('the TypeScript rule refuses a missing version or result for every reader', () => {
  for (const r of READERS) {
    expect(versionVisibleTo(r.viewer(), undefined)).toBe(false);
    expect(versionVisibleTo(r.viewer(), { groupId: null, isPublic: null, state: null })).toBe(false);
  }
});

test("the data layer's version writes are scoped by the group: another group's id changes nothing", async () => {
  const c = cases.find((x) => x.owner === 'A' && x.state === 'published')!;
  const before = await getVersion(t.ctx.db, groupA, c.resultId, c.version);
  await updateVersion(t.ctx.db, groupB, c.resultId, c.version, { state: 'retracted', title: 'Taken over' });
  await supersedePublished(t.ctx.db, groupB, c.resultId);
  await deleteVersion(t.ctx.db, groupB, c.resultId, c.version);
  await touchResult(t.ctx.db, groupB, c.resultId);
  await expect(takeNextVersion(t.ctx.db, groupB, c.resultId)).rejects.toThrow('vanished');
  const after = await getVersion(t.ctx.db, groupA, c.resultId, c.version);
  expect(after).toEqual(before);
  expect(await getVersion(t.ctx.db, groupB, c.resultId, c.version)).toBeUndefined();
});
