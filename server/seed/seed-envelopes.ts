import { and, desc, eq } from 'drizzle-orm';
import type { Ctx } from '../context';
import * as combine from '../services/combine';
import { groupSlug } from '../services/groups';
import { getRole } from '../../db/queries/groups';
import { groups, results, resultVersions, user } from '../../db/schema';

/**
 * The demo's derived results: the combination board's best-expected envelope of the public dijet
 * V′ search (another group's) and its own combination, built through the combination service so
 * its inputs are recorded as the app would record them. Marked by its title; skipped when it
 * exists or when its group, author or inputs are missing.
 */
export const DEMO_ENVELOPES = [
  {
    group: 'Lanternfish Combination Board',
    author: 'anouk@lanternfish.example',
    title: 'V′ best expected: dijet search and dijet + dilepton combination',
    inputs: ['vprime-dijet-18tev-lf7q2', 'combined-vprime-18tev-lfc01'],
  },
] as const;

export async function seedDemoEnvelopes(ctx: Ctx): Promise<number> {
  let added = 0;
  for (const demo of DEMO_ENVELOPES) {
    const [group] = await ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.slug, groupSlug(demo.group)));
    if (!group) continue;
    const [author] = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, demo.author));
    const role = author && (await getRole(ctx.db, group.id, author.id));
    if (!author || !role) continue;
    const exists = await ctx.db
      .select({ id: results.id })
      .from(results)
      .innerJoin(resultVersions, eq(resultVersions.resultId, results.id))
      .where(and(eq(results.groupId, group.id), eq(resultVersions.title, demo.title)));
    if (exists.length) continue;
    const inputs: { resultId: string; version: number }[] = [];
    for (const slug of demo.inputs) {
      // The newest published version of each input.
      const [v] = await ctx.db
        .select({ resultId: results.id, version: resultVersions.version })
        .from(results)
        .innerJoin(resultVersions, eq(resultVersions.resultId, results.id))
        .where(and(eq(results.slug, slug), eq(resultVersions.state, 'published')))
        .orderBy(desc(resultVersions.version))
        .limit(1);
      if (v) inputs.push(v);
    }
    if (inputs.length !== demo.inputs.length) continue;
    await combine.createEnvelope(ctx, group.id, { id: author.id, role }, { inputs, title: demo.title });
    added += 1;
  }
  return added;
}
