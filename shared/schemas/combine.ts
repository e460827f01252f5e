/**
 * Derived results of the combination board: the best-expected envelope of several results and the
 * joint combination of results computed by scans.
 */
import { z } from 'zod';
import { ENVELOPE_MAX_INPUTS, ENVELOPE_MIN_INPUTS } from '../combine/envelope';
import { JOINT_MAX_INPUTS, JOINT_MIN_INPUTS } from '../combine/joint';
import { intField, uuidParam } from './common';
import { asimovChoiceSchema } from './counting-model';
import type { Curve, ResultVersion, Theory, VersionMeta } from './results';
import type { ScanDetail } from './scan-views';
import { SCAN_METHODS } from './scans';

/** Build an envelope from 2–20 result versions; as a new result, or a new version of `resultId`. */
export const createEnvelopeSchema = z.object({
  inputs: z
    .array(z.object({ resultId: uuidParam, version: intField({ min: 1 }) }), { error: 'must be a list of result versions' })
    .min(ENVELOPE_MIN_INPUTS, `must hold at least ${ENVELOPE_MIN_INPUTS} result versions`)
    .max(ENVELOPE_MAX_INPUTS, `must hold at most ${ENVELOPE_MAX_INPUTS} result versions`),
  title: z.string({ error: 'must be text' }).trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters').optional(),
  /** Add the envelope as a new draft version of this (envelope) result of the group. */
  resultId: uuidParam.optional(),
});
export type CreateEnvelopeInput = z.input<typeof createEnvelopeSchema>;

/** The answer to building an envelope: the stored version, and per curve point the input chosen (an index into `inputs`). */
export type EnvelopeVersion = ResultVersion & { choice: EnvelopeChoice };

/** Stored with an envelope version: its inputs' titles and the stretch of x where each is the envelope (figures colour the observed line by them). */
export type EnvelopeSources = { titles: string[]; segments: { input: number; from: number; to: number }[] };

/** Which input the envelope takes at every point of its curve, where it switches, and the stretches of each. */
export type EnvelopeChoice = { chosen: number[]; crossing: boolean[]; segments: { input: number; from: number; to: number }[] };

/** `POST /api/groups/:groupId/envelopes/preview`: the envelope as it would be stored (nothing is stored). */
export const previewEnvelopeSchema = createEnvelopeSchema.omit({ resultId: true });
export type EnvelopePreview = {
  meta: VersionMeta;
  curve: Curve;
  theory: Theory | null;
  choice: EnvelopeChoice;
  inputs: { resultId: string; version: number; title: string; groupName: string }[];
};

/**
 * A joint combination of 2–10 result versions computed by scans (shared/combine/joint.ts): at every
 * parameter value all inputs have, their channels' bins in one likelihood and one limit on a common
 * μ, computed as a scan. Nuisance parameters with the same name are one parameter unless named in
 * `unlinked`. `dryRun` answers the overview (parameters per input, common and missing values)
 * without starting anything. `options` are the scan's (the confidence level is the inputs').
 */
export const createCombinationSchema = z.object({
  inputs: z
    .array(z.object({ resultId: uuidParam, version: intField({ min: 1 }) }), { error: 'must be a list of result versions' })
    .min(JOINT_MIN_INPUTS, `must hold at least ${JOINT_MIN_INPUTS} result versions`)
    .max(JOINT_MAX_INPUTS, `must hold at most ${JOINT_MAX_INPUTS} result versions`),
  /** Nuisance parameter names made one parameter per input (else one parameter shared by every input naming it). */
  unlinked: z.array(z.string({ error: 'must be text' }).trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters'), { error: 'must be a list of nuisance parameter names' }).max(500, 'must hold at most 500 names').default([]),
  options: z
    .object({
      method: z.enum(SCAN_METHODS, { error: 'must be "asymptotic" or "toys"' }).default('asymptotic'),
      asimov: asimovChoiceSchema.default('profiled'),
      toys: z.number({ error: 'must be a number' }).int('must be a whole number').min(100, 'must be at least 100').max(1_000_000, 'must be at most 1,000,000').default(5000),
      seed: z.number({ error: 'must be a number' }).int('must be a whole number').min(0).max(2 ** 31 - 1).default(1),
    })
    .default({ method: 'asymptotic', asimov: 'profiled', toys: 5000, seed: 1 }),
  title: z.string({ error: 'must be text' }).trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters').optional(),
  /** Add the combination as a new draft version of this result of the group. */
  resultId: uuidParam.optional(),
  /** Only answer the overview; nothing is started or stored. */
  dryRun: z.boolean({ error: 'must be true or false' }).default(false),
});
export type CreateCombinationInput = z.input<typeof createCombinationSchema>;
export type CreateCombinationBody = z.output<typeof createCombinationSchema>;

/** What a combination is made of, as answered by a dry run and stored with its scan (`scans.combination`). */
export type CombinationPlan = {
  inputs: { resultId: string; version: number; title: string; scanId: string; nuisance: string[]; points: number; missing: number[] }[];
  /** Parameter values every input has: the combination's grid. */
  common: number[];
  /** Names used by more than one input: one fully correlated parameter unless unlinked. */
  shared: string[];
  unlinked: string[];
  /** σ×B when every input gives the same nominal σ×B at every common value, else μ. */
  quantity: 'mu' | 'xsec';
  /** Why the limit is on μ only (null for σ×B). */
  quantityNote: string | null;
};

/** The answer to a combination: the dry run's overview, or the started scan with it. */
export type CombinationAnswer = ({ dryRun: true } | ({ dryRun: false } & ScanDetail)) & { combination: CombinationPlan };
