/**
 * Derived results of the combination board: the best-expected envelope of several results.
 */
import { z } from 'zod';
import { ENVELOPE_MAX_INPUTS, ENVELOPE_MIN_INPUTS } from '../combine/envelope';
import { intField, uuidParam } from './common';
import type { ResultVersion } from './results';

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
export type EnvelopeVersion = ResultVersion & { choice: { chosen: number[]; crossing: boolean[]; segments: { input: number; from: number; to: number }[] } };
