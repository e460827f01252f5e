import { eq } from 'drizzle-orm';
import type { GroupRole } from '../../shared/access';
import { curveToCsv } from '../../shared/curves/csv';
import type { Ctx } from '../context';
import { groupSlug } from '../services/groups';
import * as resultsService from '../services/results';
import { DEMO_RESULTS } from './demo-results';
import { seedDemoEnvelopes } from './seed-envelopes';
import { seedDemoFigures } from './seed-figures';
import { seedDemoPlanes } from './seed-planes';
import { seedDemoCombinations, seedDemoScans } from './seed-scans';
import { addMember, getRole, insertGroup, slugTaken } from '../../db/queries/groups';
import { slugExists } from '../../db/queries/results';
import { groups, user } from '../../db/schema';

/**
 * Demo data, all invented: the Halcyon Ring (a fictional 18 TeV collider) and the Lanternfish
 * experiment on it, with an analysis team, a combination board and an outreach office.
 * Idempotent: a second run finds the demo users and results and changes nothing. The results have
 * their own marker (their fixed link names), so a database seeded before the registry existed
 * gets them added once; so do the derived results (server/seed/seed-envelopes.ts), the scan-computed
 * results and their joint combination (server/seed/seed-scans.ts) and the demo figures
 * (server/seed/seed-figures.ts), all marked by their titles.
 */
export const DEMO_PASSWORD = 'halcyon-demo-2026';

export const DEMO_USERS = [
  { key: 'owner', name: 'Orla Quennick', email: 'orla@lanternfish.example' },
  { key: 'curator', name: 'Cyrus Abendroth-Lye', email: 'cyrus@lanternfish.example' },
  { key: 'analyst', name: 'Anouk Ferrowe', email: 'anouk@lanternfish.example' },
  { key: 'editor', name: 'Edda Tramontane', email: 'edda@lanternfish.example' },
  { key: 'viewer', name: 'Vik Sallowmere', email: 'vik@lanternfish.example' },
] as const;
type DemoKey = (typeof DEMO_USERS)[number]['key'];

export const DEMO_GROUPS: { name: string; description: string; members: [DemoKey, GroupRole][] }[] = [
  {
    name: 'Lanternfish Dijet Resonances',
    description: 'Searches for heavy resonances decaying to two jets in Halcyon Ring collisions at 18 TeV.',
    members: [['owner', 'owner'], ['curator', 'curator'], ['analyst', 'analyst'], ['editor', 'editor'], ['viewer', 'viewer']],
  },
  {
    name: 'Lanternfish Combination Board',
    description: 'Combines and summarises the limits of the Lanternfish searches.',
    members: [['curator', 'owner'], ['analyst', 'analyst'], ['owner', 'viewer']],
  },
  {
    name: 'Lanternfish Outreach Office',
    description: 'Plain-language figures of Lanternfish results for the public.',
    members: [['editor', 'owner'], ['viewer', 'editor']],
  },
];

export async function seedDemo(ctx: Ctx): Promise<{ created: boolean }> {
  const people = await seedDemoPeople(ctx);
  const results = await seedDemoResults(ctx);
  const envelopes = await seedDemoEnvelopes(ctx);
  const scanned = await seedDemoScans(ctx);
  const combinations = await seedDemoCombinations(ctx);
  const planes = await seedDemoPlanes(ctx);
  const figures = await seedDemoFigures(ctx);
  return { created: people || results > 0 || envelopes > 0 || scanned > 0 || combinations > 0 || planes > 0 || figures > 0 };
}

async function seedDemoPeople(ctx: Ctx): Promise<boolean> {
  const first = DEMO_USERS[0];
  const existing = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, first.email));
  if (existing.length > 0) return false;

  // Made with better-auth's own adapter as its sign-up would (user + credential account with its
  // password hash), but with the address already verified and without a verification mail: the
  // demo addresses are invented, and demo people may accept invitations at once.
  const auth = await ctx.auth.$context;
  const ids = {} as Record<DemoKey, string>;
  for (const u of DEMO_USERS) {
    const created = await auth.internalAdapter.createUser({ name: u.name, email: u.email, emailVerified: true }, { method: 'email-password' });
    await auth.internalAdapter.linkAccount({ userId: created.id, providerId: 'credential', accountId: created.id, password: await auth.password.hash(DEMO_PASSWORD) });
    ids[u.key] = created.id;
  }
  await ctx.db.transaction(async (tx) => {
    for (const g of DEMO_GROUPS) {
      const slug = groupSlug(g.name);
      if (await slugTaken(tx, slug)) continue;
      const row = await insertGroup(tx, { name: g.name, slug, description: g.description, createdBy: ids[g.members[0]![0]] });
      if (!row) continue;
      for (const [key, role] of g.members) await addMember(tx, row.id, ids[key], role);
    }
  });
  return true;
}

/**
 * Adds the invented results (see server/seed/demo-results.ts) through the registry's own services, so
 * versions, states and storage use are what the app would have made. Skips each result whose link
 * name exists, and any whose group or people are missing. Returns how many were added.
 */
export async function seedDemoResults(ctx: Ctx): Promise<number> {
  let added = 0;
  for (const demo of DEMO_RESULTS) {
    if (await slugExists(ctx.db, demo.slug)) continue;
    const [group] = await ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.slug, groupSlug(demo.group)));
    if (!group) continue;
    const actorOf = async (email: string) => {
      const [u] = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, email));
      const role = u && (await getRole(ctx.db, group.id, u.id));
      return u && role ? { id: u.id, role } : undefined;
    };
    const uploader = await actorOf(demo.uploader);
    const publisher = await actorOf(demo.publisher);
    if (!uploader || !publisher) continue;

    let resultId: string | undefined;
    for (const [i, v] of demo.versions.entries()) {
      // Stored as if uploaded as a CSV file, so the provenance shows a source file.
      const x = v.meta.parameterUnit ? `${v.meta.parameterName} [${v.meta.parameterUnit}]` : v.meta.parameterName;
      const source = { name: `${demo.slug}-v${i + 1}.csv`, data: Buffer.from(curveToCsv(v.curve, v.theory, { x })) };
      const input = { meta: v.meta, curve: v.curve, theory: v.theory, source };
      const stored = resultId
        ? await resultsService.addVersion(ctx, group.id, uploader, resultId, { ...input, changeNote: v.changeNote ?? '' })
        : await resultsService.createResult(ctx, group.id, uploader, input, { slug: demo.slug });
      resultId = stored.resultId;
      if (v.then === 'draft') continue;
      await resultsService.publish(ctx, group.id, publisher, resultId, stored.version, i === 0 ? { public: demo.isPublic } : {});
      if (typeof v.then === 'object') await resultsService.retract(ctx, group.id, publisher, resultId, stored.version, v.then.retract);
    }
    added += 1;
  }
  return added;
}
