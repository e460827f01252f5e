import { and, eq } from 'drizzle-orm';
import { figureSpecSchema, type FigureSpecInput } from '../../shared/schemas/figures';
import type { Ctx } from '../context';
import * as figuresService from '../services/figures';
import { groupSlug } from '../services/groups';
import { getRole } from '../../db/queries/groups';
import { figures, groups, results, resultVersions, user } from '../../db/schema';

/**
 * Demo figures of the invented Lanternfish groups, made through the figure service (so versions,
 * layers and hues are what the composer would make): a public figure in each theme and a
 * group-only one. Each figure's marker is its title in its group: a second run adds nothing.
 */

type DemoFigure = {
  group: string;
  /** Who makes it (must hold a role that may write figures in the group). */
  author: string;
  isPublic: boolean;
  /**
   * The spec, with layers naming results by their link name (`slug`), or by the title of the
   * pinned version (`title`) for results whose link name is made when they are seeded (the scans').
   */
  spec: Omit<FigureSpecInput, 'layers'> & { layers: Array<Omit<FigureSpecInput['layers'][number], 'resultId'> & ({ slug: string } | { title: string })> };
};

const VPRIME = 'vprime-dijet-18tev-lf7q2';
const COMBINED = 'combined-vprime-18tev-lfc01';
const SCALAR = 'scalar-bb-18tev-lf3k8';
const PORTAL = 'portal-scalar-summary-lfc02';

export const DEMO_FIGURES: DemoFigure[] = [
  {
    // The combination board overlays the dijet search (pinned at its full-data version) on its
    // combined limit, for the paper: one journal column, serif type.
    group: 'Lanternfish Combination Board',
    author: 'cyrus@lanternfish.example',
    isPublic: true,
    spec: {
      title: 'Limits on the V′ benchmark: dijet search and combination',
      theme: 'publication',
      size: { preset: 'one-column' },
      x: { scale: 'linear', min: 1, max: 7, label: "$m_{V'}$ [TeV]" },
      y: { scale: 'log', min: null, max: null, label: "$\\sigma(pp \\to V') \\times B(V' \\to jj)$ [fb]" },
      layers: [
        { slug: COMBINED, version: 1, label: 'Combination' },
        { slug: VPRIME, version: 2, label: 'Dijet', show: { observed: true, expected: true, band1: false, band2: false, theory: false, theoryBand: false, crossings: false } },
      ],
      bandsLayer: 0,
      legend: { position: 'auto', columns: 1 },
      annotations: [{ text: 'Lanternfish', x: 0.05, y: 0.95 }],
    },
  },
  {
    // The dijet team shows what the full 2031 data gained over the first look, for a talk.
    group: 'Lanternfish Dijet Resonances',
    author: 'edda@lanternfish.example',
    isPublic: true,
    spec: {
      title: 'V′ → two jets: first look and full 2031 data',
      theme: 'slides',
      size: { preset: 'slide' },
      x: { scale: 'linear', min: null, max: null, label: "$m_{V'}$ [TeV]" },
      y: { scale: 'log', min: null, max: null, label: '$\\sigma \\times B$ [fb]' },
      layers: [
        { slug: VPRIME, version: 2, label: '2031, 96.5 fb$^{-1}$' },
        // The same result twice: the older version gets a hue of its own.
        { slug: VPRIME, version: 1, label: '2030, 41.7 fb$^{-1}$', hue: 1, show: { observed: true, expected: true, band1: false, band2: false, theory: false, theoryBand: false, crossings: false } },
      ],
      bandsLayer: 0,
      excludedShading: false,
    },
  },
  {
    // The outreach office's page for the public: plain words, one band, the excluded masses shaded.
    group: 'Lanternfish Outreach Office',
    author: 'edda@lanternfish.example',
    isPublic: true,
    spec: {
      title: 'Where a new heavy particle V′ cannot be',
      theme: 'outreach',
      size: { preset: 'web' },
      x: { scale: 'linear', min: null, max: null, label: '' },
      y: { scale: 'log', min: null, max: null, label: '' },
      layers: [{ slug: COMBINED, version: 1, label: 'Lanternfish, all searches combined', show: { observed: true, expected: true, band1: true, band2: false, theory: true, theoryBand: true, crossings: false } }],
      bandsLayer: 0,
      clLabel: false,
      excludedShading: true,
    },
  },
  {
    // The combination board's summary of excluded masses: one bar per analysis, grouped by model
    // (the portal scalar's summary, limits on μ without a theory curve, excludes where μ < 1), on a log mass axis that
    // takes the GeV result and the TeV ones alike.
    group: 'Lanternfish Combination Board',
    author: 'cyrus@lanternfish.example',
    isPublic: true,
    spec: {
      title: 'Excluded masses of the Lanternfish searches, 2031 data',
      kind: 'ranges',
      theme: 'publication',
      size: { preset: 'two-column', heightCm: 8 },
      x: { scale: 'log', min: null, max: null, label: 'Mass [TeV]' },
      layers: [
        { slug: COMBINED, version: 1, label: 'Dijet + dilepton combination' },
        { slug: VPRIME, version: 2, label: 'Dijet search', note: '96.5 fb$^{-1}$, LFN 31.04' },
        { title: 'Search for a heavy axial boson A′ → bb̄, two b-tagged jets', version: 1, label: 'A′ → bb̄ (scan)' },
        { title: 'Search for a heavy axial boson A′ → two light jets', version: 1, label: 'A′ → two light jets (scan)' },
        { slug: PORTAL, version: 1, label: 'Portal scalar, best channel' },
      ],
      ranges: { sort: 'reach', groupByModel: true, expected: 'outline', notes: true },
    },
  },
  {
    // The dijet team's two-parameter search as the paper shows it: the exclusion contours over
    // the map of the observed σ×B limit, the forbidden corner drawn grey.
    group: 'Lanternfish Dijet Resonances',
    author: 'edda@lanternfish.example',
    isPublic: true,
    spec: {
      title: 'Heavy partner Z̃ → jets + invisible χ: excluded masses',
      kind: 'plane',
      theme: 'publication',
      size: { preset: 'two-column', heightCm: 11 },
      x: { scale: 'linear', min: null, max: null, label: '$m_{\\tilde{Z}}$ [TeV]' },
      y: { scale: 'linear', min: null, max: null, label: '$m_{\\chi}$ [TeV]' },
      layers: [{ slug: 'heavy-partner-plane-18tev-lfp01', version: 1, label: 'Lanternfish, 96.5 fb$^{-1}$' }],
      plane: { colorMap: true, forbidden: 'drawn', excludedMark: 'hatch' },
    },
  },
  {
    // Group-only: the scalar search's signal-strength limit (its result is not public).
    group: 'Lanternfish Dijet Resonances',
    author: 'anouk@lanternfish.example',
    isPublic: false,
    spec: {
      title: 'Scalar S → bb̄: signal-strength limit (internal)',
      theme: 'publication',
      size: { preset: 'two-column' },
      x: { scale: 'linear', min: null, max: null, label: '$m_S$ [TeV]' },
      y: { scale: 'log', min: null, max: null, label: '' },
      layers: [{ slug: SCALAR, version: 1 }],
      bandsLayer: 0,
    },
  },
];

/** Adds the demo figures that are missing; skips any whose group, author or results are missing. Returns how many were added. */
export async function seedDemoFigures(ctx: Ctx): Promise<number> {
  let added = 0;
  for (const demo of DEMO_FIGURES) {
    const [group] = await ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.slug, groupSlug(demo.group)));
    if (!group) continue;
    const exists = await ctx.db.select({ id: figures.id }).from(figures).where(and(eq(figures.groupId, group.id), eq(figures.title, demo.spec.title)));
    if (exists.length) continue;
    const [author] = await ctx.db.select({ id: user.id }).from(user).where(eq(user.email, demo.author));
    if (!author || !(await getRole(ctx.db, group.id, author.id))) continue;

    const layers: FigureSpecInput['layers'] = [];
    for (const entry of demo.spec.layers) {
      const { slug, title, ...layer } = { slug: undefined, title: undefined, ...entry };
      const [r] = slug
        ? await ctx.db.select({ id: results.id }).from(results).where(eq(results.slug, slug))
        : await ctx.db
            .select({ id: results.id })
            .from(results)
            .innerJoin(resultVersions, eq(resultVersions.resultId, results.id))
            .where(and(eq(resultVersions.title, title!), eq(resultVersions.version, layer.version)));
      if (!r) break;
      layers.push({ ...layer, resultId: r.id });
    }
    if (layers.length !== demo.spec.layers.length) continue;
    const spec = figureSpecSchema.parse({ ...demo.spec, layers });
    await figuresService.createFigure(ctx, group.id, { id: author.id }, { spec, public: demo.isPublic });
    added += 1;
  }
  return added;
}
