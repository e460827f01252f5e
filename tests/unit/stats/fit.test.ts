/**
 * The likelihood fits: they stop at a stationary point of −ln L (checked by finite differences of
 * the likelihood itself, independent of the analytic derivatives the fit uses), report
 * non-convergence, and survive zero counts and yields driven towards zero.
 */
import { Likelihood } from '@/shared/stats/fit';
import { prepareModel } from '@/shared/stats/model';
import { fitFailureWarning } from '@/shared/stats/limit';
import { findDecreasingRoot } from '@/shared/stats/roots';
import type { CountingModelInput } from '@/shared/stats';

const model: CountingModelInput = {
  observed: [15, 10, 9, 1],
  signal: [1.5, 3.2, 0.8, 0.4],
  backgrounds: [
    { name: 'falling', yields: [10.2, 4.1, 5.5, 0.3] },
    { name: 'flat', yields: [2.0, 2.0, 2.0, 0] },
  ],
  systematics: [
    { name: 'luminosity', effects: { signal: 0.025, falling: 0.025, flat: 0.025 } },
    { name: 'falling shape', effects: { falling: [0.05, -0.1, 0.3, 0.5] } },
    { name: 'flat normalisation', effects: { flat: 0.4, signal: [-0.05, 0, 0.05, 0.1] } },
  ],
};

/** Central finite-difference gradient of −ln L in (μ, θ). */
function numericGradient(lik: Likelihood, mu: number, theta: Float64Array): number[] {
  const h = 1e-6;
  const g = [(lik.nll(mu + h, theta) - lik.nll(mu - h, theta)) / (2 * h)];
  for (let k = 0; k < theta.length; k++) {
    const up = Float64Array.from(theta);
    const down = Float64Array.from(theta);
    up[k] = (up[k] as number) + h;
    down[k] = (down[k] as number) - h;
    g.push((lik.nll(mu, up) - lik.nll(mu, down)) / (2 * h));
  }
  return g;
}

test('a free fit stops where the finite-difference gradient of −ln L vanishes', () => {
  const lik = new Likelihood(prepareModel(model));
  const theta = new Float64Array(3);
  const fit = lik.fitFree('zero', 0.5, theta);
  expect(fit.converged).toBe(true);
  expect(fit.mu).toBeGreaterThan(0);
  for (const g of numericGradient(lik, fit.mu, theta)) expect(Math.abs(g)).toBeLessThan(1e-5);
  // A minimum, not a saddle: every nearby point is higher.
  for (const [dm, dk] of [[0.05, -1], [-0.05, -1], [0, 0], [0, 1], [0, 2]] as const) {
    const t = Float64Array.from(theta);
    if (dk >= 0) t[dk] = (t[dk] as number) + 0.05;
    expect(lik.nll(fit.mu + dm, t)).toBeGreaterThan(fit.nll);
  }
});

test('a conditional fit at fixed μ stops where ∂(−ln L)/∂θ vanishes', () => {
  const lik = new Likelihood(prepareModel(model));
  const theta = new Float64Array(3);
  const nll = lik.fitConditional(2.7, theta);
  expect(nll).toBeCloseTo(lik.nll(2.7, theta), 12);
  const g = numericGradient(lik, 2.7, theta).slice(1);
  for (const v of g) expect(Math.abs(v)).toBeLessThan(1e-5);
});

test('the fit with μ ≥ 0 stops at the bound for a deficit; the unbounded fit goes below', () => {
  const deficit = { ...model, observed: [6, 1, 3, 0] };
  const lik = new Likelihood(prepareModel(deficit));
  const bounded = lik.fitFree('zero', 1, new Float64Array(3));
  expect(bounded.mu).toBe(0);
  expect(bounded.converged).toBe(true);
  const free = lik.fitFree('feasible', 0, new Float64Array(3));
  expect(free.mu).toBeLessThan(0);
  expect(free.nll).toBeLessThanOrEqual(bounded.nll);
});

test('a fit cut short reports that it did not converge and keeps the best point it reached', () => {
  const lik = new Likelihood(prepareModel(model));
  lik.maxIterations = 1;
  const theta = new Float64Array(3);
  const start = lik.nll(3, theta);
  const fit = lik.fitFree('zero', 3, theta);
  expect(fit.converged).toBe(false);
  expect(lik.failedFits).toBe(1);
  expect(fit.nll).toBeLessThan(start);
  expect(fit.nll).toBeCloseTo(lik.nll(fit.mu, theta), 12);
  expect(fitFailureWarning({ fits: 10, failed: 1 })).toMatch(/1 of 10 likelihood fits did not converge/);
  expect(fitFailureWarning({ fits: 10, failed: 0 })).toBeUndefined();
});

test('a yield that the fit drives towards zero (δ = −0.95) and empty bins do not break the fit', () => {
  const m = prepareModel({
    observed: [0, 0, 2],
    signal: [1, 0.5, 0.2],
    backgrounds: [{ name: 'fake', yields: [6, 4, 0.1] }],
    systematics: [{ name: 'fake rate', effects: { fake: -0.95 } }],
  });
  const lik = new Likelihood(m);
  const theta = new Float64Array(1);
  const fit = lik.fitFree('zero', 0, theta);
  expect(fit.converged).toBe(true);
  expect(Number.isFinite(fit.nll)).toBe(true);
  expect(theta[0]).toBeGreaterThan(0.5); // pulled to shrink the unseen background
});

test('the root finder says when the root lies outside the searched range', () => {
  const inside = findDecreasingRoot((x) => 3 - x, 1, 1e-6, 100);
  expect(inside.bracketed).toBe(true);
  expect(inside.x).toBeCloseTo(3, 4);
  const above = findDecreasingRoot((x) => 300 - x, 1, 1e-6, 100);
  expect(above.bracketed).toBe(false);
  expect(above.x).toBe(100);
  const below = findDecreasingRoot((x) => 1e-9 - x, 1, 1e-6, 100);
  expect(below.bracketed).toBe(false);
  expect(below.x).toBe(1e-6);
});
