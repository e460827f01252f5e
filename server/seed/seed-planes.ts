import { eq } from 'drizzle-orm';
import { planeToCsv } from '../../shared/curves/plane';
import type { Plane } from '../../shared/schemas/plane';
import type { VersionMeta } from '../../shared/schemas/results';
import type { Ctx } from '../context';
import * as resultsService from '../services/results';
import { groupSlug } from '../services/groups';
import { getRole } from '../../db/queries/groups';
import { slugExists } from '../../db/queries/results';
import { groups, user } from '../../db/schema';
import { RUN_2031 } from './demo-results';

/**
 * The demo's two-parameter search: the invented "heavy partner" Z̃ of the Lanternfish dijet team,
 * decaying to an invisible light partner χ, with limits over the plane of the two masses. The
 * kinematically forbidden triangle m(χ) ≥ m(Z̃) − 0.1 TeV has no points (holes in the grid). The
 * numbers follow a plausible shape only: the expected σ×B limit falls with m(Z̃) and weakens as
 * the two masses close up (softer decay products); the theory falls faster with m(Z̃). Deterministic.
 */

const round = (v: number) => Number(v.toPrecision(4));
const steps = (from: number, step: number, n: number) => Array.from({ length: n }, (_, i) => Number((from + i * step).toFixed(6)));

export function demoPlane(): Plane {
  const xs = steps(0.5, 0.125, 21);
  const ys = steps(0, 0.1125, 21);
  const x: number[] = [];
  const y: number[] = [];
  const med: number[] = [];
  for (const yv of ys) {
    for (const xv of xs) {
      if (yv > xv - 0.1) continue;
      x.push(xv);
      y.push(yv);
      med.push(6 * Math.exp(-xv / 0.9) * (1 + 3 * Math.exp(-(xv - yv) / 0.25)));
    }
  }
  const wiggle = (i: number) => Math.exp(0.18 * Math.sin(1.7 * x[i]! + 2.9 * y[i]!));
  const band = (f: number) => med.map((m) => round(m * f));
  const theory = x.map((xv) => 400 * Math.exp(-xv / 0.35));
  return {
    yName: 'm(χ)',
    yUnit: 'TeV',
    x,
    y,
    observed: med.map((m, i) => round(m * wiggle(i))),
    expected: { '-2': band(1 / 1.8), '-1': band(1 / 1.35), '0': band(1), '1': band(1.35), '2': band(1.8) },
    theory: { central: theory.map(round), lower: theory.map((t) => round(t * 0.85)), upper: theory.map((t) => round(t * 1.15)) },
  };
}

export const DEMO_PLANE = {
  slug: 'heavy-partner-plane-18tev-lfp01',
  group: 'Lanternfish Dijet Resonances',
  uploader: 'anouk@lanternfish.example',
  publisher: 'cyrus@lanternfish.example',
  meta: {
    title: 'Search for a heavy partner Z̃ → jets + invisible χ, over the two masses',
    model: 'Heavy partner Z̃ with an invisible light partner χ, B(Z̃ → qqχ) = 1',
    parameterName: 'm(Z̃)',
    parameterUnit: 'TeV',
    quantity: 'xsec',
    quantityUnit: 'fb',
    ...RUN_2031,
    method: 'asymptotic',
    reference: 'LFN 31.12',
    notes: 'Jets plus missing momentum; the triangle m(χ) ≥ m(Z̃) − 0.1 TeV is not kinematically open.',
  } satisfies VersionMeta,
} as const;

/** Adds the demo plane result (published, public) unless its link name exists. Returns how many were added. */
export async function seedDemoPlanes(ctx: Ctx): Promise<number> {
  const demo = DEMO_PLANE;
  if (await slugExists(ctx.db, demo.slug)) return 0;
  const [group] = await ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.slug, groupSlug(demo.group)));
  if (!group) return 0;
  const actorOf = async (email: string) => {
    const [u] = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, email));
    const role = u && (await getRole(ctx.db, group.id, u.id));
    return u && role ? { id: u.id, role } : undefined;
  };
  const uploader = await actorOf(demo.uploader);
  const publisher = await actorOf(demo.publisher);
  if (!uploader || !publisher) return 0;
  const plane = demoPlane();
  // Stored as if uploaded as a CSV file, so the provenance shows a source file.
  const source = { name: `${demo.slug}-v1.csv`, data: Buffer.from(planeToCsv(plane, { x: 'm(Z̃) [TeV]', y: 'm(χ) [TeV]' })) };
  const stored = await resultsService.createResult(ctx, group.id, uploader, { meta: demo.meta, curve: null, theory: null, plane, source }, { slug: demo.slug });
  await resultsService.publish(ctx, group.id, publisher, stored.resultId, stored.version, { public: true });
  return 1;
}
