import { and, desc, eq } from 'drizzle-orm';
import { createCombinationSchema } from '../../shared/schemas/combine';
import type { CountingModelInput } from '../../shared/schemas/counting-model';
import type { ScanInputPoint } from '../../shared/schemas/scans';
import type { VersionMetaInput } from '../../shared/schemas/results';
import type { Ctx } from '../context';
import { ScanQueue } from '../jobs/queue';
import { runScanHere } from '../jobs/scan-worker';
import * as combine from '../services/combine';
import { groupSlug } from '../services/groups';
import * as resultsService from '../services/results';
import * as scansService from '../services/scans';
import type { Actor } from '../services/results';
import { RUN_2031 } from './demo-results';
import { getRole } from '../../db/queries/groups';
import { groups, results, resultVersions, user } from '../../db/schema';

/**
 * The demo's scan-computed results and their joint combination, all invented: the analysis team's
 * two channels of a search for a heavy axial boson A′ at the Halcyon Ring (two b-tagged jets, two
 * light jets), each a small asymptotic scan of event counts, and the combination board's joint
 * combination of the two. The seed cannot wait for a worker, so each scan is started through the
 * scans service as the API starts one and then run to its end here, task by task, by the worker's
 * own code (`runScanHere`): its points, its draft and, for the combination, its recorded inputs
 * and correlation choice are what the product makes. Marked by their titles in their groups.
 */

const round = (v: number) => Number(v.toPrecision(3));

/** The A′ benchmark's production cross-section (fb) at m(A′) in TeV, with a ±12 % band. */
const sigmaAPrime = (m: number) => round(560 * Math.exp(-m / 0.58));

type Channel = 'bb' | 'jj';

/**
 * One grid point's counting model: three bins of the dijet mass around m(A′) (low side, peak, high
 * side), a multijet background falling with mass (and top pairs in the b-tagged channel), observed
 * counts within about one standard deviation of the background (a fixed wiggle: no random numbers,
 * so every seed computes the same limits). Luminosity and the jet energy scale are common to both
 * channels; each channel's multijet background comes from its own fit.
 */
function channelModel(ch: Channel, m: number, k: number): CountingModelInput {
  const bb = ch === 'bb';
  // Branching fraction × acceptance × efficiency of the channel, split over the three bins.
  const signal = [0.3, 0.45, 0.25].map((f) => round(sigmaAPrime(m) * RUN_2031.luminosity * (bb ? 0.2 * 0.35 : 0.6 * 0.4) * f));
  const fall = Math.exp(-(m - 1.5) / (bb ? 0.75 : 0.6));
  const multijet = (bb ? [600, 520, 330] : [9000, 7200, 4100]).map((b) => round(b * fall));
  const top = bb ? [60, 45, 25].map((b) => round(b * fall)) : null;
  const total = multijet.map((b, i) => b + (top ? top[i]! : 0));
  const observed = total.map((b, i) => Math.max(0, Math.round(b + 0.9 * Math.sqrt(b) * Math.sin(1.7 * k + 2.1 * i + (bb ? 0.3 : 1.9)))));
  return {
    observed,
    signal,
    backgrounds: [{ name: 'multijet', yields: multijet }, ...(top ? [{ name: 'top pair', yields: top }] : [])],
    systematics: [
      { name: 'luminosity', effects: { signal: 0.02, ...(top ? { 'top pair': 0.02 } : {}) } },
      { name: 'jet energy scale', effects: { signal: [0.05, 0.01, 0.05] } },
      ...(bb ? [{ name: 'b-tagging', effects: { signal: 0.08, 'top pair': 0.08 } }] : []),
      { name: 'multijet background', effects: { multijet: bb ? 0.06 : 0.03 } },
    ],
  };
}

/** The channel's scan points on m(A′) = `masses` (TeV), with the benchmark's σ×B and its band. */
function channelPoints(ch: Channel, masses: number[]): ScanInputPoint[] {
  return masses.map((m, k) => {
    const sigma = sigmaAPrime(m);
    return { x: m, sigmaNominal: sigma, sigmaNominalLow: round(sigma * 0.88), sigmaNominalHigh: round(sigma * 1.12), model: channelModel(ch, m, k) };
  });
}

const A_PRIME = {
  model: 'Leptophobic axial boson A′, quark coupling g_q = 0.2',
  parameterName: 'm(A′)',
  parameterUnit: 'TeV',
  quantity: 'xsec',
  quantityUnit: 'fb',
  ...RUN_2031,
  method: 'asymptotic',
} as const satisfies Partial<VersionMetaInput>;

export type DemoScan = {
  group: string;
  /** Starts the scan (its draft's author). */
  analyst: string;
  publisher: string;
  isPublic: boolean;
  /** The draft's title: the seed's marker that the result is already there. */
  meta: VersionMetaInput & { title: string };
  theoryLabel: string;
  points: ScanInputPoint[];
};

/** The analysis team's two channels, published for anyone (so the combination board may use them). */
export const DEMO_SCANS: DemoScan[] = [
  {
    group: 'Lanternfish Dijet Resonances',
    analyst: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: true,
    meta: {
      ...A_PRIME,
      title: 'Search for a heavy axial boson A′ → bb̄, two b-tagged jets',
      reference: 'LFN 31.12',
      notes: 'Event counts in three dijet-mass bins around each mass; two b-tagged jets.',
    },
    theoryLabel: 'A′ benchmark (NLO)',
    points: channelPoints('bb', [1.5, 2, 2.5, 3, 3.5, 4, 4.5]),
  },
  {
    group: 'Lanternfish Dijet Resonances',
    analyst: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: true,
    meta: {
      ...A_PRIME,
      title: 'Search for a heavy axial boson A′ → two light jets',
      reference: 'LFN 31.13',
      notes: 'Event counts in three dijet-mass bins around each mass; b-tagged events removed.',
    },
    theoryLabel: 'A′ benchmark (NLO)',
    points: channelPoints('jj', [2, 2.5, 3, 3.5, 4, 4.5, 5]),
  },
];

/**
 * The combination board's joint combination of the two channels: luminosity and jet energy scale
 * one parameter each (fully correlated), the multijet backgrounds unlinked (each channel's own
 * fit). Left a draft, as the board's envelope is.
 */
export const DEMO_COMBINATIONS = [
  {
    group: 'Lanternfish Combination Board',
    author: 'anouk@lanternfish.example',
    title: 'A′ → bb̄ and A′ → two light jets, joint combination',
    inputs: DEMO_SCANS.map((s) => ({ group: s.group, title: s.meta.title })),
    unlinked: ['multijet background'],
  },
] as const;

async function groupIdOf(ctx: Ctx, name: string): Promise<string | undefined> {
  const [g] = await ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.slug, groupSlug(name)));
  return g?.id;
}

async function actorOf(ctx: Ctx, groupId: string, email: string): Promise<Actor | undefined> {
  const [u] = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, email));
  const role = u && (await getRole(ctx.db, groupId, u.id));
  return u && role ? { id: u.id, role } : undefined;
}

/** The newest version of the group's result titled `title` (published only, if asked), or undefined. */
async function versionTitled(ctx: Ctx, groupId: string, title: string, published = false) {
  const [v] = await ctx.db
    .select({ resultId: results.id, version: resultVersions.version })
    .from(results)
    .innerJoin(resultVersions, eq(resultVersions.resultId, results.id))
    .where(and(eq(results.groupId, groupId), eq(resultVersions.title, title), published ? eq(resultVersions.state, 'published') : undefined))
    .orderBy(desc(resultVersions.version))
    .limit(1);
  return v;
}

/** The context with a job queue: the server's, or one on the seed's own database pool. */
const withQueue = (ctx: Ctx): Ctx & { jobs: ScanQueue } => ({ ...ctx, jobs: ctx.jobs ?? new ScanQueue(ctx.db, ctx.env) });

/**
 * Adds the demo scans' results: each scan started as the API starts one (`scanFromJson`,
 * `startScan`), run here to its draft, then published. Skips a result whose title its group
 * already holds, and any whose group or people are missing. Returns how many were added.
 */
export async function seedDemoScans(ctx: Ctx): Promise<number> {
  const here = withQueue(ctx);
  let added = 0;
  for (const demo of DEMO_SCANS) {
    const groupId = await groupIdOf(ctx, demo.group);
    if (!groupId || (await versionTitled(ctx, groupId, demo.meta.title))) continue;
    const analyst = await actorOf(ctx, groupId, demo.analyst);
    const publisher = await actorOf(ctx, groupId, demo.publisher);
    if (!analyst || !publisher) continue;
    const request = scansService.scanFromJson({ points: demo.points, options: {}, meta: demo.meta, theoryLabel: demo.theoryLabel });
    const started = await scansService.startScan(here, groupId, analyst.id, request);
    const scan = await runScanHere(here, here.jobs, started.id);
    if (!scan.resultId || !scan.resultVersion) throw new Error(`the demo scan "${demo.meta.title}" ended ${scan.state} without a result: ${scan.error ?? ''}`);
    await resultsService.publish(ctx, groupId, publisher, scan.resultId, scan.resultVersion, { public: demo.isPublic });
    added += 1;
  }
  return added;
}

/**
 * Adds the demo's joint combinations through the combination service (`createCombination` with
 * the body the API would parse), their scans run here to their drafts. Skips one whose title its
 * group already holds, and any whose group, author or inputs (the newest published version of
 * each) are missing. Returns how many were added.
 */
export async function seedDemoCombinations(ctx: Ctx): Promise<number> {
  const here = withQueue(ctx);
  let added = 0;
  for (const demo of DEMO_COMBINATIONS) {
    const groupId = await groupIdOf(ctx, demo.group);
    if (!groupId || (await versionTitled(ctx, groupId, demo.title))) continue;
    const author = await actorOf(ctx, groupId, demo.author);
    if (!author) continue;
    const inputs: { resultId: string; version: number }[] = [];
    for (const input of demo.inputs) {
      const inputGroup = await groupIdOf(ctx, input.group);
      const v = inputGroup && (await versionTitled(ctx, inputGroup, input.title, true));
      if (v) inputs.push(v);
    }
    if (inputs.length !== demo.inputs.length) continue;
    const body = createCombinationSchema.parse({ inputs, unlinked: [...demo.unlinked], title: demo.title });
    const answer = await combine.createCombination(here, groupId, author, body);
    if (answer.dryRun) continue;
    const scan = await runScanHere(here, here.jobs, answer.id);
    if (!scan.resultId) throw new Error(`the demo combination "${demo.title}" ended ${scan.state} without a result: ${scan.error ?? ''}`);
    added += 1;
  }
  return added;
}
