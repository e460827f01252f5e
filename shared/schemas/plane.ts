/**
 * Results over two parameters (a plane, e.g. a mass against the mass it decays to): the points of
 * a rectangular grid, stored column-wise like a one-parameter curve. Point k is at (x[k], y[k]);
 * every other column has one value per point. The grid may have holes (cells with no point, such
 * as a kinematically forbidden triangle) and irregular spacing on either axis; `planeGrid`
 * (shared/plane/grid.ts) checks that the points form such a grid.
 *
 * The first parameter is the version's own `parameterName`/`parameterUnit`; the second is named
 * here. Limits are on the version's quantity (μ or σ×B in its unit); the theory columns, when
 * present, are σ×B in the same unit (for μ limits there is no theory: the limit is the ratio).
 */
import { z } from 'zod';
import { shortText } from './common';
import { EXPECTED_KEYS, type ExpectedKey } from './counting-model';

/** Size limits of a plane (each axis, and points in all): 200 × 200. */
export const PLANE_LIMITS = { maxAxisValues: 200, maxPoints: 200 * 200, minAxisValues: 2 } as const;

const column = z.array(z.number({ error: 'must be a number' }), { error: 'must be a list of numbers' });
const coordinate = column.min(4, 'must have at least four points (two values on each axis)').max(PLANE_LIMITS.maxPoints, `must have at most ${PLANE_LIMITS.maxPoints} points (${PLANE_LIMITS.maxAxisValues} × ${PLANE_LIMITS.maxAxisValues})`);

export const planeSchema = z.object({
  /** The second parameter's name and unit (the first is the version's). */
  yName: shortText(60),
  yUnit: z.string().trim().max(20, 'must be at most 20 characters').default(''),
  x: coordinate,
  y: coordinate,
  observed: column.optional(),
  expected: z.object(Object.fromEntries(EXPECTED_KEYS.map((k) => [k, column.optional()])) as Record<ExpectedKey, z.ZodOptional<typeof column>>).partial().optional(),
  /** Theory σ×B per point (same unit as the limits), with an optional band. */
  theory: z.object({ central: column, lower: column.optional(), upper: column.optional() }).optional(),
});
export type Plane = z.infer<typeof planeSchema>;


/**
 * The contour lines of a plane as stored with its version (`plane_contours`): the type of
 * shared/plane/contours.ts `planeContours`, named here beside the plane it is derived from.
 */
export type { ContourLine as PlaneContourLine, PlaneContours } from '../plane/contours';
