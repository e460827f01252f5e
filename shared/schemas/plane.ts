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

/** One contour line in the plane: its vertices (x, y) in order, closed when it returns to its start. */
export type PlaneContourLine = { points: [number, number][]; closed: boolean };

/** Which lines a two-parameter version has (the keys of `PlaneContours` that hold lines). */
export const PLANE_CONTOUR_KINDS = ['observed', 'expected-1', 'expected0', 'expected1', 'observedTheoryLower', 'observedTheoryUpper'] as const;
export type PlaneContourKind = (typeof PLANE_CONTOUR_KINDS)[number];

/**
 * The excluded-region boundaries of a plane (shared/plane/contours.ts `planeContours`), stored
 * with the version when it is written: where the limit crosses 1 (μ) or the theory (σ×B), for
 * the observed limit, the expected median and its ±1σ edges, and the observed limit against the
 * theory's lower and upper edges. `problem` says why there are none (e.g. no theory for σ×B).
 */
export type PlaneContours = {
  observed?: PlaneContourLine[];
  expected: { '-1'?: PlaneContourLine[]; '0'?: PlaneContourLine[]; '1'?: PlaneContourLine[] };
  observedTheoryLower?: PlaneContourLine[];
  observedTheoryUpper?: PlaneContourLine[];
  problem: string | null;
};
