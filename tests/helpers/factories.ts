import { and, count, eq } from 'drizzle-orm';
import { addMember, getGroupName, getRole } from '@/db/queries/groups';
import { listMailTo } from '@/db/queries/mail';
import { getStorage } from '@/db/queries/storage';
import { invitations, results, resultVersions } from '@/db/schema';
import { GROUP_ROLES, type GroupRole } from '@/shared/access';
import type { Plane } from '@/shared/schemas/plane';
import type { Curve, ResultVersion, Theory, VersionMetaInput } from '@/shared/schemas/results';
import { signUp, uniqueEmail, type Agent, type TestApp } from './app';

/**
 * Fixture factories for the API tests. People sign up through the real auth endpoints; groups are
 * created through the API by their owner; extra members are added with the data layer's own
 * `addMember` (the invitation flow has its own tests, and every other test should not depend on it).
 */

export type Person = { agent: Agent; user: { id: string; email: string; name: string }; email: string };

/** One signed-up person per group role. */
export type Crew = Record<GroupRole, Person>;

let groupSeq = 0;
/** A group name nobody in this process has used yet. */
export function uniqueGroupName(prefix = 'Fictional Collider Search'): string {
  groupSeq += 1;
  return `${prefix} ${groupSeq}-${Math.random().toString(36).slice(2, 6)}`;
}

export async function makePerson(t: TestApp, name = 'Test Physicist'): Promise<Person> {
  return signUp(t.app, name);
}

/** Signs up one person per role (owner, curator, analyst, editor, viewer). */
export async function makeCrew(t: TestApp): Promise<Crew> {
  const people = await Promise.all(GROUP_ROLES.map((r) => makePerson(t, `${r[0]!.toUpperCase()}${r.slice(1)} Person`)));
  return Object.fromEntries(GROUP_ROLES.map((r, i) => [r, people[i]!])) as Crew;
}

/** Creates a group through the API as `owner`; returns its id. */
export async function makeGroup(t: TestApp, owner: Person, name = uniqueGroupName()): Promise<string> {
  const res = await owner.agent.post('/api/groups').send({ name });
  if (res.status !== 201) throw new Error(`group creation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id as string;
}

/** Makes `person` a member of the group with `role` (directly, without an invitation). */
export async function addToGroup(t: TestApp, groupId: string, person: Person, role: GroupRole): Promise<void> {
  await addMember(t.ctx.db, groupId, person.user.id, role);
}

/**
 * A group in which every member of `crew` holds the role they are named after (the crew's owner
 * creates it); signs up a new crew when none is given. `extra` adds more members with given roles.
 */
export async function makeGroupWithRoles(
  t: TestApp,
  opts: { crew?: Crew; name?: string; extra?: Array<[Person, GroupRole]> } = {},
): Promise<{ groupId: string; crew: Crew }> {
  const crew = opts.crew ?? (await makeCrew(t));
  const groupId = await makeGroup(t, crew.owner, opts.name);
  for (const role of GROUP_ROLES) if (role !== 'owner') await addToGroup(t, groupId, crew[role], role);
  for (const [person, role] of opts.extra ?? []) await addToGroup(t, groupId, person, role);
  return { groupId, crew };
}

/** The invitation token in the newest invitation mail to `email` (read from the dev_mail outbox). */
export async function invitationTokenFor(t: TestApp, email: string): Promise<string> {
  const mail = (await listMailTo(t.ctx.db, email)).find((m) => m.kind === 'invitation');
  const token = mail?.text.match(/\/invite\/([A-Za-z0-9_-]+)/)?.[1];
  if (!token) throw new Error(`no invitation mail with a link for ${email}`);
  return token;
}

/** Invites `email` through the API as `inviter`; returns the invitation id and the mailed token. */
export async function makeInvitation(
  t: TestApp,
  inviter: Person,
  groupId: string,
  email = uniqueEmail('invitee'),
  role: GroupRole = 'viewer',
): Promise<{ id: string; token: string; email: string }> {
  const res = await inviter.agent.post(`/api/groups/${groupId}/invitations`).send({ email, role });
  if (res.status !== 201) throw new Error(`invitation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return { id: res.body.id as string, token: await invitationTokenFor(t, email), email };
}

/** Database probes for tests that check a refused call changed nothing. */
export const probe = {
  role: (t: TestApp, groupId: string, userId: string) => getRole(t.ctx.db, groupId, userId),
  groupExists: async (t: TestApp, groupId: string) => (await getGroupName(t.ctx.db, groupId)) !== undefined,
  invitationState: async (t: TestApp, invitationId: string) => {
    const rows = await t.ctx.db.select({ state: invitations.state }).from(invitations).where(eq(invitations.id, invitationId));
    return rows[0]?.state;
  },
  openInvitationFor: async (t: TestApp, groupId: string, email: string) => {
    const rows = await t.ctx.db
      .select({ id: invitations.id })
      .from(invitations)
      .where(and(eq(invitations.groupId, groupId), eq(invitations.email, email), eq(invitations.state, 'pending')));
    return rows.length > 0;
  },
};

// ---------------------------------------------------------------------------------------------
// Results

/** Provenance of an invented σ×B search at the fictional 18 TeV collider; `over` replaces fields. */
export function sampleMeta(over: Partial<VersionMetaInput> = {}): VersionMetaInput {
  return {
    title: 'Search for a fictional vector boson Z* decaying to two jets',
    model: 'Sequential Z* benchmark',
    parameterName: 'm(Z*)',
    parameterUnit: 'GeV',
    quantity: 'xsec',
    quantityUnit: 'fb',
    sqrtS: 18,
    luminosity: 140,
    cl: 0.95,
    method: 'asymptotic',
    reference: 'LF-NOTE-2031-007',
    notes: '',
    ...over,
  };
}

/**
 * An invented limit curve with full bands and a theory curve on the same grid: limits fall with
 * mass more slowly than the theory, so the theory crosses them inside the range.
 */
export function sampleCurve(n = 8): { curve: Curve; theory: Theory } {
  const x = Array.from({ length: n }, (_, i) => 1000 + 500 * i);
  const r = (v: number) => Number(v.toPrecision(6));
  const exp = x.map((m) => r(40 * Math.exp(-m / 1500)));
  const curve: Curve = {
    x,
    observed: exp.map((e, i) => r(e * (1 + 0.15 * Math.sin(i)))),
    expected: { '-2': exp.map((e) => r(e * 0.55)), '-1': exp.map((e) => r(e * 0.75)), '0': exp, '1': exp.map((e) => r(e * 1.4)), '2': exp.map((e) => r(e * 1.9)) },
  };
  const central = x.map((m) => r(900 * Math.exp(-m / 600)));
  return { curve, theory: { x: [...x], central, lower: central.map((c) => r(c * 0.8)), upper: central.map((c) => r(c * 1.2)) } };
}

/**
 * An invented plane of σ×B limits over two masses (m_X × m_chi, `nx` × `ny` grid values) with full
 * bands and a theory per point falling faster than the limits, so the excluded region ends inside.
 */
export function samplePlane(nx = 5, ny = 4): Plane {
  const r = (v: number) => Number(v.toPrecision(6));
  const x: number[] = [];
  const y: number[] = [];
  for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) {
    x.push(1000 + 500 * i);
    y.push(100 + 200 * j);
  }
  const exp = x.map((m, k) => r(5 * Math.exp(-m / 3000) * (1 + y[k]! / 2000)));
  const central = x.map((m) => r(400 * Math.exp(-m / 450)));
  return {
    yName: 'm_chi',
    yUnit: 'GeV',
    x,
    y,
    observed: exp.map((e, k) => r(e * (1 + 0.1 * Math.sin(k)))),
    expected: { '-2': exp.map((e) => r(e * 0.55)), '-1': exp.map((e) => r(e * 0.75)), '0': exp, '1': exp.map((e) => r(e * 1.4)), '2': exp.map((e) => r(e * 1.9)) },
    theory: { central, lower: central.map((c) => r(c * 0.8)), upper: central.map((c) => r(c * 1.2)) },
  };
}

/** A plane as CSV text (two parameter columns first), with the given headers. */
export function samplePlaneCsv(plane: Plane = samplePlane(), headers = ['m_X [GeV]', 'm_chi [GeV]', 'obs', 'exp', 'exp_m2', 'exp_m1', 'exp_p1', 'exp_p2', 'theory', 'theory_low', 'theory_up']): string {
  const e = plane.expected!;
  const t = plane.theory!;
  const cols = [plane.x, plane.y, plane.observed!, e['0']!, e['-2']!, e['-1']!, e['1']!, e['2']!, t.central, t.lower!, t.upper!];
  return `${[headers.join(','), ...plane.x.map((_, i) => cols.map((c) => String(c[i])).join(','))].join('\n')}\n`;
}

/** Creates a two-parameter result (version 1, a draft) through the API as `person` from a JSON body. */
export async function makePlaneResult(person: Person, groupId: string, opts: { meta?: Partial<VersionMetaInput>; plane?: Plane } = {}): Promise<ResultVersion> {
  const res = await person.agent.post(`/api/groups/${groupId}/results`).send({ meta: sampleMeta({ parameterName: 'm_X', parameterUnit: 'GeV', ...opts.meta }), plane: opts.plane ?? samplePlane() });
  if (res.status !== 201) throw new Error(`plane result creation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as ResultVersion;
}

/** The curve (and theory on the same grid) as CSV text with the given delimiter and headers. */
export function sampleCsv(opts: { n?: number; delimiter?: ',' | ';' | '\t'; decimalComma?: boolean; headers?: string[] } = {}): string {
  const { curve, theory } = sampleCurve(opts.n);
  const d = opts.delimiter ?? ',';
  const headers = opts.headers ?? ['mass', 'observed', 'expected', 'exp_minus_2sigma', 'exp_minus_1sigma', 'exp_plus_1sigma', 'exp_plus_2sigma', 'theory', 'theory_low', 'theory_up'];
  const e = curve.expected!;
  const cols = [curve.x, curve.observed!, e['0']!, e['-2']!, e['-1']!, e['1']!, e['2']!, theory.central, theory.lower!, theory.upper!];
  const cell = (v: number) => (opts.decimalComma ? String(v).replace('.', ',') : String(v));
  const lines = [headers.join(d), ...curve.x.map((_, i) => cols.map((c) => cell(c[i]!)).join(d))];
  return `${lines.join('\n')}\n`;
}

/** Creates a result (version 1, a draft) through the API as `person` from a JSON body. */
export async function makeResult(
  person: Person,
  groupId: string,
  opts: { meta?: Partial<VersionMetaInput>; n?: number; theory?: boolean } = {},
): Promise<ResultVersion> {
  const { curve, theory } = sampleCurve(opts.n);
  const res = await person.agent
    .post(`/api/groups/${groupId}/results`)
    .send({ meta: sampleMeta(opts.meta), curve, ...(opts.theory === false ? {} : { theory }) });
  if (res.status !== 201) throw new Error(`result creation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as ResultVersion;
}

/** Adds a draft version through the API as `person`. */
export async function makeVersion(person: Person, groupId: string, resultId: string, changeNote = 'Recomputed with a finer grid', meta: Partial<VersionMetaInput> = {}): Promise<ResultVersion> {
  const { curve, theory } = sampleCurve();
  const res = await person.agent.post(`/api/groups/${groupId}/results/${resultId}/versions`).send({ meta: sampleMeta(meta), curve, theory, changeNote });
  if (res.status !== 201) throw new Error(`version creation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as ResultVersion;
}

/** Publishes a version through the API as `curator` (public or group-only). */
export async function publishVersion(curator: Person, groupId: string, resultId: string, version: number, isPublic?: boolean): Promise<ResultVersion> {
  const res = await curator.agent
    .post(`/api/groups/${groupId}/results/${resultId}/versions/${version}/publish`)
    .send(isPublic === undefined ? {} : { public: isPublic });
  if (res.status !== 200) throw new Error(`publishing failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as ResultVersion;
}

/** Database probes of the registry (what a refused call must have left unchanged). */
export const registryProbe = {
  storageBytes: async (t: TestApp, groupId: string) => (await getStorage(t.ctx.db, groupId)) ?? NaN,
  resultCount: async (t: TestApp, groupId: string) => {
    const [row] = await t.ctx.db.select({ n: count() }).from(results).where(eq(results.groupId, groupId));
    return row?.n ?? 0;
  },
  versionCount: async (t: TestApp, groupId: string) => {
    const [row] = await t.ctx.db
      .select({ n: count() })
      .from(resultVersions)
      .innerJoin(results, eq(results.id, resultVersions.resultId))
      .where(eq(results.groupId, groupId));
    return row?.n ?? 0;
  },
};
