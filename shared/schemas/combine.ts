/**
 * Derived results of the combination board: the best-expected envelope of several results.
 */
import { z } from 'zod';
import { ENVELOPE_MAX_INPUTS, ENVELOPE_MIN_INPUTS } from '../combine/envelope';
import { intField, uuidParam } from './common';
import type { Curve, ResultVersion, Theory, VersionMeta } from './results';

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
