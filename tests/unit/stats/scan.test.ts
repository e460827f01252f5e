/**
 * computeScan: one limit per grid point, σ×B = μ_up × σ_nominal, and a bad point that reports its
 * own problem without stopping the scan.
 */
import { computeLimit, computeScan, StatsInputError, type CountingModelInput } from '@/shared/stats';

const model = (s: number): CountingModelInput => ({
  observed: [21, 9],
  signal: [s, 0.5 * s],
  backgrounds: [{ name: 'flat', yields: [19.3, 8.8] }],
  systematics: [{ name: 'luminosity', effects: { signal: 0.03, flat: 0.03 } }],
});

test('each point carries the limit of its own model and its σ×B limits', () => {
  const out = computeScan([
    { x: 500, model: model(4), sigmaNominal: 12.5 },
    { x: 750, model: model(2), sigmaNominal: 3.1 },
    { x: 1000, model: model(1) },
  ]);
  expect(out.map((p) => p.x)).toEqual([500, 750, 1000]);
  const single = computeLimit(model(2));
  const p = out[1];
  if (!p || 'error' in p) throw new Error('point failed');
  expect(p.observed).toBeCloseTo(single.observed, 10);
  // DESIGN: σ×B = μ_up × σ_nominal
  expect(p.sigmaB?.observed).toBeCloseTo(single.observed * 3.1, 10);
  expect(p.sigmaB?.expected['-2']).toBeCloseTo(single.expected['-2'] * 3.1, 10);
  expect(p.sigmaB?.expected['2']).toBeCloseTo(single.expected['2'] * 3.1, 10);
  const last = out[2];
  if (!last || 'error' in last) throw new Error('point failed');
  expect(last.sigmaB).toBeUndefined();
});

test('a bad point reports its field and reason; the others are computed', () => {
  const out = computeScan([
    { x: 1, model: model(3) },
    { x: 2, model: { ...model(3), observed: [21, -4] } },
    { x: 3, model: model(3), sigmaNominal: -1 },
    { x: 4, y: 40, model: model(3) },
  ]);
  expect(out[0] && 'observed' in out[0]).toBe(true);
  expect(out[1]).toEqual({ x: 2, error: { field: 'model.observed[1]', reason: expect.stringMatching(/negative/) } });
  expect(out[2]).toEqual({ x: 3, error: { field: 'sigmaNominal', reason: expect.stringMatching(/positive/) } });
  expect(out[3] && 'observed' in out[3] && out[3].y === 40).toBe(true);
});

test('bad options stop the whole scan (they are wrong for every point)', () => {
  expect(() => computeScan([{ x: 1, model: model(3) }], { method: 'nope' as 'toys' })).toThrow(StatsInputError);
});
