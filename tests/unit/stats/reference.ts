/**
 * Independent references for the statistics tests (not a test file itself): re-implementations of
 * the asymptotic formulae of Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554
 * ("CCGV") that share no code with the engine, built on @stdlib's normal distribution.
 */
import normal from '@stdlib/stats-base-dists-normal';

const lnPhi = (x: number) => normal.logcdf(x, 0, 1);

/**
 * An independent brute-force implementation of CCGV for one bin with one log-normal background
 * uncertainty: profiles by golden-section search, no Newton steps, no shared code.
 */
export function goldenMin(f: (x: number) => number, lo: number, hi: number): { x: number; f: number } {
  const g = (Math.sqrt(5) - 1) / 2;
  let a = lo;
  let b = hi;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let fc = f(c);
  let fd = f(d);
  for (let i = 0; i < 200 && b - a > 1e-12 * (1 + Math.abs(a)); i++) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - g * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + g * (b - a);
      fd = f(d);
    }
  }
  const x = 0.5 * (a + b);
  return { x, f: f(x) };
}

export function bruteForce(n: number, s: number, b: number, kappa: number, asimov: 'nominal' | 'profiled') {
  const lnk = Math.log(kappa);
  const nll = (data: number, centre: number, mu: number, theta: number) => {
    const nu = mu * s + b * Math.exp(theta * lnk);
    return nu - (data > 0 ? data * Math.log(nu) : 0) + 0.5 * (theta - centre) ** 2;
  };
  // θ searched far beyond its prior width: a small uncertainty on a large deficit pulls it to tens of σ.
  const profile = (data: number, centre: number, mu: number) => goldenMin((t) => nll(data, centre, mu, t), -300, 300).f;
  const thetaZero = goldenMin((t) => nll(n, 0, 0, t), -300, 300).x;
  const globalMin = goldenMin((mu) => profile(n, 0, mu), 0, 50 * (n + 5) / s);
  const asimovTheta = asimov === 'profiled' ? thetaZero : 0;
  const nA = b * Math.exp(asimovTheta * lnk);
  const asimovMin = nll(nA, asimovTheta, 0, asimovTheta);
  const qObs = (mu: number) => (mu <= globalMin.x ? 0 : Math.max(0, 2 * (profile(n, 0, mu) - globalMin.f)));
  const qA = (mu: number) => 2 * (profile(nA, asimovTheta, mu) - asimovMin);
  const cls = (mu: number) => {
    const q = qObs(mu);
    const a = qA(mu);
    // CCGV eqs. (65)-(66), both branches, with @stdlib's normal log-CDF (ln(1 − Φ(x)) = ln Φ(−x)).
    if (q <= a) return Math.exp(lnPhi(-Math.sqrt(q)) - lnPhi(Math.sqrt(a) - Math.sqrt(q)));
    return Math.exp(lnPhi(-(q + a) / (2 * Math.sqrt(a))) - lnPhi(-(q - a) / (2 * Math.sqrt(a))));
  };
  return { cls, qA, thetaZero };
}

/**
 * CCGV for one bin without systematics, in log space: q̃_μ and q_μ,A in closed form, CLs from
 * eqs. (65)-(66) with ln(1 − Φ(x)) = ln Φ(−x) from @stdlib's normal log-CDF (finite where the
 * tails underflow), the observed limit by bisection in ln μ.
 */
export function ccgvObservedLimit(n: number, s: number, b: number, alpha = 0.05): number {
  const dev = (nu: number, k: number) => (k === 0 ? 2 * nu : 2 * (nu - k - k * Math.log(nu / k)));
  const muHat = (n - b) / s;
  const lnSf = (x: number) => normal.logcdf(-x, 0, 1);
  const lnCls = (mu: number) => {
    const q = mu <= Math.max(0, muHat) ? 0 : Math.max(0, dev(mu * s + b, n) - (muHat < 0 ? dev(b, n) : 0));
    const qA = dev(mu * s + b, b);
    const sA = Math.sqrt(qA);
    if (q <= qA) return lnSf(Math.sqrt(q)) - normal.logcdf(sA - Math.sqrt(q), 0, 1);
    return lnSf((q + qA) / (2 * sA)) - lnSf((q - qA) / (2 * sA));
  };
  let lo = Math.log(1e-3 / s);
  let hi = Math.log(1e6 / s);
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (lnCls(Math.exp(mid)) > Math.log(alpha)) lo = mid;
    else hi = mid;
  }
  return Math.exp(0.5 * (lo + hi));
}
