/**
 * The seeded generator: reproducible, and its Poisson and normal deviates follow their
 * distributions (checked against @stdlib/stats-base-dists-poisson and -chisquare).
 */
import poisson from '@stdlib/stats-base-dists-poisson';
import chisquare from '@stdlib/stats-base-dists-chisquare';
import normal from '@stdlib/stats-base-dists-normal';
import { Random } from '@/shared/stats';

test('the same seed gives the same stream; different seeds differ', () => {
  const a = new Random(2024);
  const b = new Random(2024);
  const c = new Random(2025);
  const sa = Array.from({ length: 50 }, () => a.nextUint32());
  expect(Array.from({ length: 50 }, () => b.nextUint32())).toEqual(sa);
  expect(Array.from({ length: 50 }, () => c.nextUint32())).not.toEqual(sa);
});

test('uniform deviates lie in (0, 1) with mean 1/2 and variance 1/12', () => {
  const r = new Random(7);
  const n = 200000;
  let sum = 0;
  let sum2 = 0;
  let outside = 0;
  for (let i = 0; i < n; i++) {
    const u = r.uniform();
    if (!(u > 0 && u < 1)) outside++;
    sum += u;
    sum2 += u * u;
  }
  expect(outside).toBe(0);
  const mean = sum / n;
  // exact: a uniform variable has mean 1/2 and variance 1/12; 5 standard errors of tolerance
  expect(Math.abs(mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / n));
  expect(Math.abs(sum2 / n - mean * mean - 1 / 12)).toBeLessThan(0.002);
});

/** Pearson χ² goodness of fit of Poisson deviates against @stdlib's pmf; returns the p-value. */
function poissonFitPValue(lambda: number, n: number, seed: number): number {
  const r = new Random(seed);
  const counts = new Map<number, number>();
  for (let i = 0; i < n; i++) {
    const k = r.poisson(lambda);
    counts.set(k, (counts.get(k) ?? 0) + 1);
  }
  // Merge tail cells so every expected count is ≥ 5.
  const lo = Math.max(0, Math.floor(lambda - 6 * Math.sqrt(lambda)));
  const hi = Math.ceil(lambda + 6 * Math.sqrt(lambda) + 6);
  let chi2 = 0;
  let cells = 0;
  let obsAcc = 0;
  let expAcc = 0;
  for (let k = 0; k <= hi; k++) {
    obsAcc += counts.get(k) ?? 0;
    // @stdlib/stats-base-dists-poisson
    expAcc += n * (k < lo ? poisson.pmf(k, lambda) : poisson.pmf(k, lambda));
    if (k >= lo && expAcc >= 5) {
      chi2 += (obsAcc - expAcc) ** 2 / expAcc;
      cells++;
      obsAcc = 0;
      expAcc = 0;
    }
  }
  let beyond = 0;
  for (const [k, c] of counts) if (k > hi) beyond += c;
  const expBeyond = n * (1 - poisson.cdf(hi, lambda));
  chi2 += (obsAcc + beyond - (expAcc + expBeyond)) ** 2 / Math.max(expAcc + expBeyond, 1e-9);
  cells++;
  // @stdlib/stats-base-dists-chisquare
  return 1 - chisquare.cdf(chi2, cells - 1);
}

test.each([0.3, 3.7, 9.9, 10, 42.5, 1234])('Poisson deviates with λ = %f pass a χ² goodness-of-fit test', (lambda) => {
  // Inverse transform below λ = 10, transformed rejection above: both branches.
  expect(poissonFitPValue(lambda, 100000, 11)).toBeGreaterThan(0.001);
});

test('Poisson deviates have mean and variance λ', () => {
  for (const lambda of [2.2, 57]) {
    const r = new Random(3);
    const n = 100000;
    let sum = 0;
    let sum2 = 0;
    for (let i = 0; i < n; i++) {
      const k = r.poisson(lambda);
      sum += k;
      sum2 += k * k;
    }
    const mean = sum / n;
    // exact: Poisson mean and variance both equal λ
    expect(Math.abs(mean - lambda)).toBeLessThan(5 * Math.sqrt(lambda / n));
    expect(Math.abs(sum2 / n - mean * mean - lambda) / lambda).toBeLessThan(0.03);
  }
});

test('normal deviates: tail fractions agree with @stdlib/stats-base-dists-normal', () => {
  const r = new Random(5);
  const n = 200000;
  let above1 = 0;
  let below2 = 0;
  for (let i = 0; i < n; i++) {
    const x = r.normal();
    if (x > 1) above1++;
    if (x < -2) below2++;
  }
  // @stdlib/stats-base-dists-normal
  const p1 = 1 - normal.cdf(1, 0, 1);
  const p2 = normal.cdf(-2, 0, 1);
  expect(Math.abs(above1 / n - p1)).toBeLessThan(5 * Math.sqrt((p1 * (1 - p1)) / n));
  expect(Math.abs(below2 / n - p2)).toBeLessThan(5 * Math.sqrt((p2 * (1 - p2)) / n));
});
