/**
 * computeScan: one limit per point of a parameter grid (typically a mass scan), with limits in
 * σ×B units (μ_up × σ_nominal) where the nominal cross-section is given. A bad point reports its
 * own input problem and does not stop the scan.
 */
import type { LimitOptions, LimitResult, ScanPoint, ScanPointResult, SigmaBLimits } from '../schemas/counting-model';
import { formatPath, StatsInputError } from './errors';
import { limitForPrepared, resolveOptions } from './limit';
import { prepareModel } from './model';

function finite(value: unknown): value is number {
  return typeof value === 'number' && Number.isFinite(value);
}

/** A limit on μ with its σ×B limits (μ_up × σ_nominal) when the nominal cross-section is known. */
export function withSigmaB(result: LimitResult, sigmaNominal: number | undefined): LimitResult & { sigmaB?: SigmaBLimits } {
  if (sigmaNominal === undefined) return result;
  const e = result.expected;
  const s = sigmaNominal;
  return {
    ...result,
    sigmaB: { observed: result.observed * s, expected: { '-2': e['-2'] * s, '-1': e['-1'] * s, '0': e['0'] * s, '1': e['1'] * s, '2': e['2'] * s } },
  };
}

/**
 * Limits for every point of a scan.
 *
 * @param points `{ x, y?, model, sigmaNominal? }` per grid point
 * @param options as for computeLimit, applied to every point (bad options throw StatsInputError)
 * @returns per point `{ x, y?, ...LimitResult, sigmaB? }`, or `{ x, y?, error: { field, reason } }`
 *   for a point whose input is bad (fields are named from the point, e.g. `model.observed[2]`)
 */
export function computeScan(points: ReadonlyArray<ScanPoint>, options: LimitOptions = {}): ScanPointResult[] {
  const resolved = resolveOptions(options);
  return points.map((point, index) => {
    const x = finite(point?.x) ? point.x : NaN;
    const y = finite(point?.y) ? point.y : undefined;
    const where = y === undefined ? { x } : { x, y };
    try {
      if (!finite(point?.x)) throw new StatsInputError('x', 'must be a finite number');
      if (point.y !== undefined && !finite(point.y)) throw new StatsInputError('y', 'must be a finite number');
      const sigma = point.sigmaNominal;
      if (sigma !== undefined && !(finite(sigma) && sigma > 0)) {
        throw new StatsInputError('sigmaNominal', `must be a positive finite number (got ${String(sigma)})`);
      }
      const prepared = prepareModel(point.model, 'model');
      return { ...where, ...withSigmaB(limitForPrepared(prepared, resolved), sigma) };
    } catch (err) {
      if (err instanceof StatsInputError) return { ...where, error: { field: err.field, reason: err.reason } };
      // An unexpected failure is still this point's alone; say so rather than lose the scan.
      const message = err instanceof Error ? err.message : String(err);
      return { ...where, error: { field: formatPath([index], 'points'), reason: `could not be computed: ${message}` } };
    }
  });
}
