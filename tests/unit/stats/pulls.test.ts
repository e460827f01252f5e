import { fitNuisanceParameters } from '@/shared/stats';

test('without systematics, μ̂ = (n − b)/s and its error is √n/s (Poisson, common practice)', () => {
  const fit = fitNuisanceParameters({ observed: [150], signal: [20], backgrounds: [{ name: 'bkg', yields: [100] }] });
  expect(fit.muHat).toBeCloseTo(2.5, 5);
  // −ln L curvature at the minimum: s²/n → σ_μ = √n / s.
  expect(fit.muError).toBeCloseTo(Math.sqrt(150) / 20, 3);
  expect(fit.pulls).toEqual([]);
});

test('a systematic the data cannot separate from μ keeps its prior width 1 and no pull (common practice)', () => {
  const fit = fitNuisanceParameters({
    observed: [130],
    signal: [20],
    backgrounds: [{ name: 'bkg', yields: [100] }],
    systematics: [{ name: 'signal efficiency', effects: { signal: 0.1 } }],
  });
  expect(fit.pulls[0]!.value).toBeCloseTo(0, 3);
  expect(fit.pulls[0]!.error).toBeCloseTo(1, 2);
  expect(fit.converged).toBe(true);
});

test('a background-only excess pulls the background normalisation up, less than it would unconstrained', () => {
  // Bin 2 has no signal and sees 20% more than expected: the shared background systematic (10%)
  // moves up, by less than the full 2σ because the Gaussian constraint holds it back.
  const fit = fitNuisanceParameters({
    observed: [100, 600],
    signal: [10, 0],
    backgrounds: [{ name: 'bkg', yields: [100, 500] }],
    systematics: [{ name: 'bkg norm', effects: { bkg: 0.1 } }],
  });
  const p = fit.pulls[0]!;
  expect(p.value).toBeGreaterThan(0.5);
  expect(p.value).toBeLessThan(Math.log(1.2) / Math.log(1.1));
  expect(p.error).toBeLessThan(1);
  expect(p.valueAtZero).toBeGreaterThan(0.5);
});
