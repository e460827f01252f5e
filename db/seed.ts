import { eq } from 'drizzle-orm';
import type { GroupRole } from '../shared/access';
import type { Ctx } from '../server/context';
import { addMember, insertGroup, slugTaken } from './queries/groups';
import { user } from './schema';

/**
 * Demo data, all invented: the Halcyon Ring (a fictional 18 TeV collider) and the Lanternfish
 * experiment on it, with an analysis team, a combination board and an outreach office.
 * Idempotent: a second run finds the demo users and changes nothing.
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
  const first = DEMO_USERS[0];
  const existing = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, first.email));
  if (existing.length > 0) return { created: false };

  const ids = {} as Record<DemoKey, string>;
  for (const u of DEMO_USERS) {
    const r = await ctx.auth.api.signUpEmail({ body: { name: u.name, email: u.email, password: DEMO_PASSWORD } });
    ids[u.key] = r.user.id;
  }
  await ctx.db.transaction(async (tx) => {
    for (const g of DEMO_GROUPS) {
      const slug = g.name.toLowerCase().replace(/[^a-z0-9]+/g, '-');
      if (await slugTaken(tx, slug)) continue;
      const row = await insertGroup(tx, { name: g.name, slug, description: g.description, createdBy: ids[g.members[0]![0]] });
      if (!row) continue;
      for (const [key, role] of g.members) await addMember(tx, row.id, ids[key], role);
    }
  });
  return { created: true };
}
