/**
 * Joint combination of counting models (pure): independent channels put side by side in one
 * likelihood. The combined model's bins are the channels' bins one after the other; its
 * likelihood is the product of the channels' Poisson terms and one unit Gaussian constraint per
 * nuisance parameter, so channels that share no parameter multiply exactly as independent
 * measurements do, and a parameter that several channels name is ONE parameter (fully
 * correlated). The signal of every channel keeps its own nominal yield: the combined limit is on
 * a common signal strength μ (the standard construction of a binned combination; the test
 * statistic q̃_μ and its asymptotic distribution are those of Cowan, Cranmer, Gross, Vitells,
 * EPJC 71 (2011) 1554).
 *
 * - Processes are matched by name across channels ("signal" always); a process a channel lacks
 *   has zero yield in that channel's bins.
 * - A systematic's effect becomes one number per combined bin: the channel's δ in its own bins,
 *   0 (no effect, (1+0)^θ = 1) elsewhere. Two entries with the same name in one channel act on
 *   the same θ, so their effects multiply: (1+δ₁)^θ (1+δ₂)^θ = ((1+δ₁)(1+δ₂))^θ.
 * - Unlinking a name (`unlinked`) gives each channel its own parameter: the name with the
 *   channel's index appended (`unlinkedName`).
 *
 * Refusals are StatsInputError naming the channel (`inputs.N`).
 */
import type { CountingModel } from '../schemas/counting-model';
import { StatsInputError } from '../stats/errors';

export const JOINT_MIN_INPUTS = 2;
export const JOINT_MAX_INPUTS = 10;

/** The parameter a channel's systematic `name` becomes when the name is unlinked. */
export function unlinkedName(name: string, input: number): string {
  return `${name} (input ${input})`;
}

/** The systematic names of a model, each once, in order of first appearance. */
export function nuisanceNames(model: Pick<CountingModel, 'systematics'>): string[] {
  return [...new Set(model.systematics.map((s) => s.name))];
}

/**
 * Per channel its parameter names, and the names that more than one channel uses (one correlated
 * parameter unless unlinked).
 */
export function nuisanceOverview(models: Pick<CountingModel, 'systematics'>[]): { perInput: string[][]; shared: string[] } {
  const perInput = models.map(nuisanceNames);
  const count = new Map<string, number>();
  for (const names of perInput) for (const n of names) count.set(n, (count.get(n) ?? 0) + 1);
  return { perInput, shared: [...count].filter(([, c]) => c > 1).map(([n]) => n) };
}

/** The name channel `input`'s systematic has in the combination. */
function combinedName(name: string, input: number, unlinked: ReadonlySet<string>): string {
  return unlinked.has(name) ? unlinkedName(name, input) : name;
}

/**
 * The channels' models as one counting model (bins concatenated in channel order). `unlinked`
 * names the systematics that get one parameter per channel; every other shared name stays one
 * parameter. The combined model carries no `cl` (the combination's options give it).
 */
export function concatenateModels(channels: readonly CountingModel[], unlinked: Iterable<string> = []): CountingModel {
  if (channels.length < 1) throw new StatsInputError('inputs', 'needs at least one channel');
  const unlink = new Set(unlinked);
  const offsets: number[] = [];
  let bins = 0;
  for (const m of channels) {
    offsets.push(bins);
    bins += m.observed.length;
  }
  // Every name a channel's parameters take, to refuse an unlinked name that meets a real one.
  const ownNames = channels.map((m) => new Set(nuisanceNames(m)));
  channels.forEach((m, i) => {
    for (const name of ownNames[i]!) {
      if (!unlink.has(name)) continue;
      const renamed = unlinkedName(name, i);
      const clash = ownNames.findIndex((names) => names.has(renamed));
      if (clash >= 0) throw new StatsInputError(`inputs.${clash}`, `has a systematic named "${renamed}", the name "${name}" of input ${i} takes when unlinked; rename it`);
    }
  });

  const observed = channels.flatMap((m) => m.observed);
  const signal = channels.flatMap((m) => m.signal);

  const backgroundOrder: string[] = [];
  const backgrounds = new Map<string, number[]>();
  channels.forEach((m, i) => {
    for (const bg of m.backgrounds) {
      let yields = backgrounds.get(bg.name);
      if (!yields) {
        yields = new Array<number>(bins).fill(0);
        backgrounds.set(bg.name, yields);
        backgroundOrder.push(bg.name);
      }
      const into = yields;
      bg.yields.forEach((y, k) => (into[offsets[i]! + k] = into[offsets[i]! + k]! + y));
    }
  });

  // Per parameter, per process: the factor (1+δ) in each combined bin (1 = no effect).
  const systOrder: string[] = [];
  const factors = new Map<string, Map<string, number[]>>();
  channels.forEach((m, i) => {
    const n = m.observed.length;
    for (const syst of m.systematics) {
      const name = combinedName(syst.name, i, unlink);
      let perProcess = factors.get(name);
      if (!perProcess) {
        perProcess = new Map();
        factors.set(name, perProcess);
        systOrder.push(name);
      }
      for (const [process, effect] of Object.entries(syst.effects)) {
        let f = perProcess.get(process);
        if (!f) {
          f = new Array<number>(bins).fill(1);
          perProcess.set(process, f);
        }
        for (let k = 0; k < n; k++) f[offsets[i]! + k]! *= 1 + (Array.isArray(effect) ? effect[k]! : effect);
      }
    }
  });

  return {
    observed,
    signal,
    backgrounds: backgroundOrder.map((name) => ({ name, yields: backgrounds.get(name)! })),
    systematics: systOrder.map((name) => ({
      name,
      effects: Object.fromEntries([...factors.get(name)!].map(([process, f]) => [process, f.map((v) => v - 1)])),
    })),
  };
}

/** A channel's grid: parameter values with their models and nominal σ×B (when given). */
export type ChannelGrid = { points: { x: number; sigmaNominal: number | null; model: CountingModel }[] };

/** Parameter values are matched to 12 significant digits (stored as double precision, read back the same). */
const key = (x: number) => Number(x.toPrecision(12));

/**
 * The parameter values every channel has (ascending), and per channel the values it has that some
 * other channel lacks.
 */
export function commonGrid(channels: readonly ChannelGrid[]): { common: number[]; missing: number[][] } {
  const sets = channels.map((c) => new Set(c.points.map((p) => key(p.x))));
  const common = [...sets[0]!].filter((x) => sets.every((s) => s.has(x))).sort((a, b) => a - b);
  const inAll = new Set(common);
  return { common, missing: sets.map((s) => [...s].filter((x) => !inAll.has(x)).sort((a, b) => a - b)) };
}

/** Relative agreement needed for the channels' nominal σ×B at a point to count as the same. */
export const SIGMA_NOMINAL_TOLERANCE = 1e-9;

/**
 * The combined grid: at each common value the concatenated model, and the nominal σ×B when every
 * channel gives the same one there (then a limit on μ converts to σ×B); `sigmaAgrees` is false
 * when some point lacks one or the channels differ.
 */
export function jointGrid(channels: readonly ChannelGrid[], unlinked: Iterable<string> = []): {
  points: { x: number; sigmaNominal: number | null; model: CountingModel }[];
  missing: number[][];
  sigmaAgrees: boolean;
} {
  if (channels.length < JOINT_MIN_INPUTS) throw new StatsInputError('inputs', `must hold at least ${JOINT_MIN_INPUTS} inputs`);
  const unlink = [...unlinked];
  const { common, missing } = commonGrid(channels);
  const byX = channels.map((c) => new Map(c.points.map((p) => [key(p.x), p])));
  let sigmaAgrees = true;
  const points = common.map((x) => {
    const at = byX.map((m) => m.get(x)!);
    const s0 = at[0]!.sigmaNominal;
    const same = s0 !== null && at.every((p) => p.sigmaNominal !== null && Math.abs(p.sigmaNominal - s0) <= SIGMA_NOMINAL_TOLERANCE * Math.abs(s0));
    if (!same) sigmaAgrees = false;
    return { x: at[0]!.x, sigmaNominal: same ? s0 : null, model: concatenateModels(at.map((p) => p.model), unlink) };
  });
  return { points, missing, sigmaAgrees };
}
