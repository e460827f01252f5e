import { bestExpectedEnvelope } from '../../shared/combine/envelope';
import { jointGrid, nuisanceOverview, type ChannelGrid } from '../../shared/combine/joint';
import type { CombinationAnswer, CombinationPlan, CreateCombinationBody, CreateEnvelopeInput, EnvelopePreview, EnvelopeVersion } from '../../shared/schemas/combine';
import { countingModelSchema, type CountingModel } from '../../shared/schemas/counting-model';
import type { VersionMeta } from '../../shared/schemas/results';
import type { ScanInputPoint } from '../../shared/schemas/scans';
import { StatsInputError } from '../../shared/stats/errors';
import { getLayerVersions } from '../../db/queries/figures';
import { insertVersionInputs, setVersionEnvelope } from '../../db/queries/results';
import { listScanInputsOfVersions } from '../../db/queries/scans';
import type { Ctx } from '../context';
import { AppError, type ErrorDetail } from '../lib/errors';
import { metaOf } from './figure-layers';
import { addVersion, createResult, type Actor } from './results';
import { startScan } from './scans';

/**
 * Derived results of the combination board. A best-expected envelope (shared/combine/envelope.ts)
 * is built from 2–20 result versions the group may build on — its own in any state, other groups'
 * public versions except drafts: the `pinning` reader of the one visibility rule, as for figure
 * layers — and stored as a draft in the caller's group with its inputs recorded beside it.
 */

const refuse = (details: ErrorDetail[]): never => {
  throw new AppError(400, 'validation_failed', `${details[0]!.field}: ${details[0]!.message}`, details);
};

type Pin = { resultId: string; version: number };
const pinKey = (p: Pin) => `${p.resultId}@${p.version}`;

/**
 * The input versions as the group may build on them (the `pinning` reader of the one visibility
 * rule), in the order given; refuses a repeated input or one the group may not use (`inputs.N`),
 * and inputs at different confidence levels (`what` needs one).
 */
async function loadInputs(ctx: Ctx, groupId: string, pins: Pin[], what: string) {
  const seen = new Set<string>();
  const dup = pins.findIndex((p) => (seen.has(pinKey(p)) ? true : (seen.add(pinKey(p)), false)));
  if (dup >= 0) refuse([{ field: `inputs.${dup}`, message: 'is listed twice' }]);
  const rows = await getLayerVersions(ctx.db, { kind: 'pinning', groupId }, pins);
  const byPin = new Map(rows.map((r) => [pinKey(r), r]));
  const missing = pins.flatMap((p, i) => (byPin.has(pinKey(p)) ? [] : [{ field: `inputs.${i}`, message: `version ${p.version} of result ${p.resultId} cannot be used by this group: an input must be one of the group's own results or a published version of a public result` }]));
  if (missing.length) refuse(missing);
  const inputs = pins.map((p) => byPin.get(pinKey(p))!);
  const flat = inputs.findIndex((r) => !r.curve);
  if (flat >= 0) refuse([{ field: `inputs.${flat}`, message: `(${inputName(inputs[flat]!)}) is a result over two parameters: ${what} combines limit curves over one parameter` }]);
  const cls = inputs.findIndex((r) => r.cl !== inputs[0]!.cl);
  if (cls >= 0) refuse([{ field: `inputs.${cls}`, message: `(${inputName(inputs[cls]!)}) is at ${inputs[cls]!.cl * 100}% CL, ${inputName(inputs[0]!)} at ${inputs[0]!.cl * 100}%: ${what} needs one confidence level` }]);
  return inputs;
}

const inputName = (r: { title: string; version: number }) => `“${r.title}” v${r.version}`;

type EnvelopeBody = Required<Pick<CreateEnvelopeInput, 'inputs'>> & Pick<CreateEnvelopeInput, 'title'>;

/**
 * Everything an envelope is, computed and checked but not stored: the inputs the group may use
 * (else 400 naming `inputs.N`), the curve, its provenance and the per-point choice.
 */
async function planEnvelope(ctx: Ctx, groupId: string, body: EnvelopeBody) {
  const pins = body.inputs.map((i) => ({ resultId: i.resultId, version: i.version }));
  const inputs = await loadInputs(ctx, groupId, pins, 'an envelope');
  const name = inputName;

  let env: ReturnType<typeof bestExpectedEnvelope>;
  try {
    env = bestExpectedEnvelope(inputs.map((r) => ({ name: name(r), units: { parameterUnit: r.parameterUnit, quantity: r.quantity, quantityUnit: r.quantityUnit }, curve: r.curve! })));
  } catch (e) {
    if (!(e instanceof StatsInputError)) throw e;
    return refuse([{ field: e.field, message: e.reason }]);
  }
  const first = metaOf(inputs[0]!);
  const lumis = [...new Set(inputs.map((r) => r.luminosity))];
  const used = [...new Set(env.chosen)].map((i) => name(inputs[i]!));
  const notes = [
    `Best expected of ${inputs.length} inputs: at each parameter value the input with the lowest expected median limit, with its observed limit and bands (inputs interpolated linearly in x and ln(limit); switches at the crossing of the expected medians).`,
    `Inputs: ${inputs.map(name).join('; ')}. Chosen somewhere: ${used.join('; ')}.`,
    env.converted.length ? `Converted: ${env.converted.map((c) => `${name(inputs[c.input]!)} (${c.change})`).join('; ')}.` : '',
    env.missingBands.length ? `Bands not given by every input are left out (${env.missingBands.join(', ')}σ).` : '',
    lumis.length > 1 ? `The inputs use different luminosities (${lumis.join(', ')} fb⁻¹); the first input's is shown.` : '',
  ].filter(Boolean);
  const meta: VersionMeta = {
    ...first,
    title: body.title ?? `Best expected of ${inputs.length}: ${first.title}`.slice(0, 200),
    parameterUnit: env.units.parameterUnit,
    quantityUnit: env.units.quantityUnit as VersionMeta['quantityUnit'],
    method: 'other',
    reference: '',
    notes: notes.join('\n').slice(0, 5000),
  };
  // A theory curve only when every input carries the same one (else no single excluded range).
  const theory = inputs.every((r) => JSON.stringify(r.theory) === JSON.stringify(inputs[0]!.theory)) && env.converted.length === 0 ? (inputs[0]!.theory ?? null) : null;
  const recorded = inputs.map((r) => ({ resultId: r.resultId, version: r.version, title: r.title }));
  return { meta, curve: env.curve, theory, recorded, groups: inputs.map((r) => r.groupName), choice: { chosen: env.chosen, crossing: env.crossing, segments: env.segments } };
}

/** The envelope as it would be stored, without storing anything (the builder's preview and check). */
export async function previewEnvelope(ctx: Ctx, groupId: string, body: EnvelopeBody): Promise<EnvelopePreview> {
  const plan = await planEnvelope(ctx, groupId, body);
  return { meta: plan.meta, curve: plan.curve, theory: plan.theory, choice: plan.choice, inputs: plan.recorded.map((r, i) => ({ ...r, groupName: plan.groups[i]! })) };
}

export async function createEnvelope(ctx: Ctx, groupId: string, actor: Actor, body: EnvelopeBody & Pick<CreateEnvelopeInput, 'resultId'>): Promise<EnvelopeVersion> {
  const plan = await planEnvelope(ctx, groupId, body);
  const sources = { titles: plan.recorded.map((r) => r.title), segments: plan.choice.segments };
  const hooks = {
    after: async (tx: Parameters<typeof insertVersionInputs>[0], w: { resultId: string; version: number }) => {
      await insertVersionInputs(tx, groupId, w.resultId, w.version, plan.recorded);
      await setVersionEnvelope(tx, groupId, w.resultId, w.version, sources);
    },
  };
  const input = { meta: plan.meta, curve: plan.curve, theory: plan.theory, source: null };
  const version = body.resultId
    ? await addVersion(ctx, groupId, actor, body.resultId, { ...input, changeNote: `Rebuilt from ${plan.recorded.length} inputs` }, { hooks })
    : await createResult(ctx, groupId, actor, input, { hooks });
  return { ...version, choice: plan.choice };
}

// ---------------------------------------------------------------------------------------------
// Joint combination

/**
 * A joint combination of result versions computed by scans (shared/combine/joint.ts): their stored
 * counting models are concatenated at every parameter value all inputs have, and the combined grid
 * is started as a scan of the caller's group — the same engine, queue, plan limits
 * (`startScan`: SCAN_COST_LIMIT, the plan's queue room), progress, cancel and draft as any scan.
 * The inputs follow the `pinning` reader (as an envelope's) and must have stored models; the plan
 * (inputs, unlinked and shared parameters, grid) is stored with the scan and its draft lists the
 * inputs. `dryRun` answers the plan only.
 */
export async function createCombination(ctx: Ctx, groupId: string, actor: Actor, body: CreateCombinationBody): Promise<CombinationAnswer> {
  const pins = body.inputs.map((i) => ({ resultId: i.resultId, version: i.version }));
  const inputs = await loadInputs(ctx, groupId, pins, 'a combination');
  const scans = await listScanInputsOfVersions(ctx.db, { kind: 'pinning', groupId }, pins);
  const scanOf = new Map(scans.map((s) => [pinKey(s), s]));
  const noModels = inputs.flatMap((r, i) =>
    scanOf.get(pinKey(r))?.points.length ? [] : [{ field: `inputs.${i}`, message: `(${inputName(r)}) has no stored counting models: only results computed by a scan can be combined jointly (an uploaded curve can go into a best-expected envelope)` }],
  );
  if (noModels.length) refuse(noModels);
  const units = inputs.findIndex((r) => r.parameterUnit !== inputs[0]!.parameterUnit || r.parameterName !== inputs[0]!.parameterName);
  if (units >= 0) refuse([{ field: `inputs.${units}`, message: `(${inputName(inputs[units]!)}) is a scan of ${inputs[units]!.parameterName} [${inputs[units]!.parameterUnit}], ${inputName(inputs[0]!)} of ${inputs[0]!.parameterName} [${inputs[0]!.parameterUnit}]: a combination needs one parameter` }]);

  // The channels: each input's finished points with a valid model (the others are not in its result).
  const channels: (ChannelGrid & { scan: (typeof scans)[number] })[] = inputs.map((r) => {
    const scan = scanOf.get(pinKey(r))!;
    return {
      scan,
      points: scan.points.flatMap((p) => {
        const m = countingModelSchema.safeParse(p.model);
        return m.success ? [{ x: p.x, sigmaNominal: p.sigmaNominal, model: m.data as CountingModel }] : [];
      }),
    };
  });
  const overview = nuisanceOverview(channels.map((c) => ({ systematics: [...new Map(c.points.flatMap((p) => p.model.systematics).map((s) => [s.name, s])).values()] })));
  const known = new Set(overview.perInput.flat());
  const unknown = body.unlinked.flatMap((n, k) => (known.has(n) ? [] : [{ field: `unlinked.${k}`, message: `"${n}" is not a nuisance parameter of any input (known: ${[...known].join(', ') || 'none'})` }]));
  if (unknown.length) refuse(unknown);
  const unlinked = [...new Set(body.unlinked)];

  let grid: ReturnType<typeof jointGrid>;
  try {
    grid = jointGrid(channels, unlinked);
  } catch (e) {
    if (!(e instanceof StatsInputError)) throw e;
    return refuse([{ field: e.field, message: e.reason }]);
  }
  const common = grid.points.map((p) => p.x);
  if (common.length < 2) {
    refuse([{ field: 'inputs', message: common.length ? `only ${inputs[0]!.parameterName} = ${common[0]} is in every input; a combination needs at least two common parameter values` : `no value of ${inputs[0]!.parameterName} is in every input: the inputs' grids do not meet` }]);
  }

  // σ×B when every input limits σ×B in one unit and gives the same nominal σ×B at every common value.
  const xsecInputs = inputs.every((r) => r.quantity === 'xsec' && r.quantityUnit === inputs[0]!.quantityUnit);
  const quantity: CombinationPlan['quantity'] = xsecInputs && grid.sigmaAgrees ? 'xsec' : 'mu';
  const quantityNote =
    quantity === 'xsec'
      ? null
      : !xsecInputs
        ? 'The limit is on the signal strength μ only: not every input limits σ×B in the same unit.'
        : 'The limit is on the signal strength μ only: the inputs do not give the same nominal σ×B at every common parameter value, so no single σ×B corresponds to μ = 1.';
  const combination: CombinationPlan = {
    inputs: inputs.map((r, i) => ({
      resultId: r.resultId,
      version: r.version,
      title: r.title,
      scanId: channels[i]!.scan.scanId,
      nuisance: overview.perInput[i]!,
      points: channels[i]!.points.length,
      missing: grid.missing[i]!,
    })),
    common,
    shared: overview.shared,
    unlinked,
    quantity,
    quantityNote,
  };
  if (body.dryRun) return { dryRun: true, combination };

  const first = metaOf(inputs[0]!);
  const correlated = overview.shared.filter((n) => !unlinked.includes(n));
  const notes = [
    `Joint combination of ${inputs.length} inputs as independent channels: at each of the ${common.length} parameter values every input has, the inputs' bins in one likelihood and one limit on a common signal strength μ (each channel's signal at its own nominal σ×B).`,
    `Inputs: ${inputs.map(inputName).join('; ')}.`,
    correlated.length ? `One parameter shared by the inputs (fully correlated): ${correlated.join(', ')}.` : 'No nuisance parameter is shared between the inputs.',
    unlinked.length ? `Unlinked (one parameter per input): ${unlinked.join(', ')}.` : '',
    grid.missing.some((m) => m.length) ? `Left out (not in every input): ${grid.missing.flatMap((m, i) => (m.length ? [`${inputName(inputs[i]!)} at ${m.join(', ')}`] : [])).join('; ')}.` : '',
    quantityNote ?? '',
  ].filter(Boolean);
  const meta: VersionMeta = {
    ...first,
    title: body.title ?? `Combination of ${inputs.length}: ${first.title}`.slice(0, 200),
    quantity,
    quantityUnit: quantity === 'xsec' ? first.quantityUnit : '',
    method: body.options.method,
    reference: '',
    notes: notes.join('\n').slice(0, 5000),
  };
  const points: ScanInputPoint[] = grid.points.map((p) => ({ x: p.x, ...(p.sigmaNominal !== null ? { sigmaNominal: p.sigmaNominal } : {}), model: p.model }));
  const theoryLabel = quantity === 'xsec' && channels.every((c) => c.scan.theoryLabel === channels[0]!.scan.theoryLabel) ? channels[0]!.scan.theoryLabel : null;
  const options = { cl: inputs[0]!.cl, ...body.options };
  const scan = await startScan(ctx, groupId, actor.id, {
    points,
    options,
    meta,
    resultId: body.resultId,
    theoryLabel,
    sourceName: null,
    sourceBytes: Buffer.byteLength(JSON.stringify(combination)),
    combination,
  });
  return { dryRun: false, ...scan, combination };
}
