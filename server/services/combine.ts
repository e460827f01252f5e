import { bestExpectedEnvelope } from '../../shared/combine/envelope';
import type { CreateEnvelopeInput, EnvelopePreview, EnvelopeVersion } from '../../shared/schemas/combine';
import type { VersionMeta } from '../../shared/schemas/results';
import { StatsInputError } from '../../shared/stats/errors';
import { getLayerVersions } from '../../db/queries/figures';
import { insertVersionInputs } from '../../db/queries/results';
import type { Ctx } from '../context';
import { AppError, type ErrorDetail } from '../lib/errors';
import { metaOf } from './figure-layers';
import { addVersion, createResult, type Actor } from './results';

/**
 * Derived results of the combination board. A best-expected envelope (shared/combine/envelope.ts)
 * is built from 2–20 result versions the group may build on — its own in any state, other groups'
 * public versions except drafts: the `pinning` reader of the one visibility rule, as for figure
 * layers — and stored as a draft in the caller's group with its inputs recorded beside it.
 */


const refuse = (details: ErrorDetail[]): never => {
  throw new AppError(400, 'validation_failed', `${details[0]!.field}: ${details[0]!.message}`, details);
};

type EnvelopeBody = Required<Pick<CreateEnvelopeInput, 'inputs'>> & Pick<CreateEnvelopeInput, 'title'>;

/**
 * Everything an envelope is, computed and checked but not stored: the inputs the group may use
 * (else 400 naming `inputs.N`), the curve, its provenance and the per-point choice.
 */
async function planEnvelope(ctx: Ctx, groupId: string, body: EnvelopeBody) {
  const pins = body.inputs.map((i) => ({ resultId: i.resultId, version: i.version }));
  const seen = new Set<string>();
  const dup = pins.findIndex((p) => (seen.has(`${p.resultId}@${p.version}`) ? true : (seen.add(`${p.resultId}@${p.version}`), false)));
  if (dup >= 0) refuse([{ field: `inputs.${dup}`, message: 'is listed twice' }]);
  const rows = await getLayerVersions(ctx.db, { kind: 'pinning', groupId }, pins);
  const byPin = new Map(rows.map((r) => [`${r.resultId}@${r.version}`, r]));
  const missing = pins.flatMap((p, i) => (byPin.has(`${p.resultId}@${p.version}`) ? [] : [{ field: `inputs.${i}`, message: `version ${p.version} of result ${p.resultId} cannot be used by this group: an input must be one of the group's own results or a published version of a public result` }]));
  if (missing.length) refuse(missing);
  const inputs = pins.map((p) => byPin.get(`${p.resultId}@${p.version}`)!);
  const name = (r: (typeof inputs)[number]) => `“${r.title}” v${r.version}`;
  const cls = inputs.findIndex((r) => r.cl !== inputs[0]!.cl);
  if (cls >= 0) refuse([{ field: `inputs.${cls}`, message: `(${name(inputs[cls]!)}) is at ${inputs[cls]!.cl * 100}% CL, ${name(inputs[0]!)} at ${inputs[0]!.cl * 100}%: an envelope needs one confidence level` }]);

  let env: ReturnType<typeof bestExpectedEnvelope>;
  try {
    env = bestExpectedEnvelope(inputs.map((r) => ({ name: name(r), units: { parameterUnit: r.parameterUnit, quantity: r.quantity, quantityUnit: r.quantityUnit }, curve: r.curve })));
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
  const hooks = { after: (tx: Parameters<typeof insertVersionInputs>[0], w: { resultId: string; version: number }) => insertVersionInputs(tx, groupId, w.resultId, w.version, plan.recorded) };
  const input = { meta: plan.meta, curve: plan.curve, theory: plan.theory, source: null };
  const version = body.resultId
    ? await addVersion(ctx, groupId, actor, body.resultId, { ...input, changeNote: `Rebuilt from ${plan.recorded.length} inputs` }, { hooks })
    : await createResult(ctx, groupId, actor, input, { hooks });
  return { ...version, choice: plan.choice };
}
