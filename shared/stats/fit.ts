/**
 * The binned Poisson likelihood with Gaussian-constrained nuisance parameters, and its fits.
 *
 *   −ln L(μ, θ) = Σ_i [ν_i − n_i − n_i ln(ν_i / n_i)] + ½ Σ_k (θ_k − g_k)² + const,
 *   ν_i = μ s_i(θ) + Σ_j b_ij(θ),   y_pi(θ) = y_pi · Π_k (1 + δ_kpi)^θ_k.
 *
 * Written relative to the saturated model (the n_i ln n_i terms) so that −ln L is ≥ 0 and small
 * near the best fit: differences of two fits, which are all a test statistic needs, keep their
 * digits. Fits are Newton steps with the analytic gradient and Hessian in (μ, θ), Levenberg
 * damping where the Hessian is not positive definite, a backtracking line search, and a lower
 * bound on μ handled as an active set. Work arrays are allocated once per likelihood.
 */
import type { PreparedModel } from './model';

// Module-scope aliases: cheaper than global lookups in sandboxed runtimes (test runners' VM contexts).
const { abs, exp, log, max, min, sqrt } = Math;
const INF = Number.POSITIVE_INFINITY;
const isFiniteNumber = Number.isFinite;

/**
 * How μ is bounded below in a free fit: "zero" (μ ≥ 0, the fit that defines q̃_μ in Cowan, Cranmer,
 * Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554) or "feasible" (only ν_i ≥ 0 in every bin: the
 * unconstrained best fit μ̂, which may be negative).
 */
export type MuBound = 'zero' | 'feasible';

const MAX_ITERATIONS = 100;
/** Newton decrement (expected gain in −ln L) below which a fit has converged, for small counts. */
const DECREMENT_TOLERANCE = 1e-11;
/**
 * −ln L is a sum of terms ν_i − n_i − n_i ln(ν_i/n_i) that cancel to O(1) from O(n_i): its
 * rounding is ≈ ε·Σ(n_i + ν_i), 2e-10 at 10⁶ events. A decrement below a few times that cannot
 * be resolved by evaluating −ln L (nor can it change q̃_μ = 2Δ(−ln L) by more than as much), so
 * the tolerance grows with the counts: relative to Σ(n_i + ν_i), absolute for small counts.
 */
const RELATIVE_DECREMENT_TOLERANCE = 4 * Number.EPSILON;
/** When the line search finds no decrease, a decrement this small (or within rounding) is a minimum. */
const STALL_TOLERANCE = 1e-7;
/** Longest step in any θ per iteration: keeps (1+δ)^θ finite while far from the minimum. */
const MAX_THETA_STEP = 3;

export interface FitOutcome {
  nll: number;
  mu: number;
  converged: boolean;
}

export class Likelihood {
  readonly model: PreparedModel;
  /** Counts being fitted (observed, Asimov or a pseudo-experiment). */
  readonly data: Float64Array;
  /** Centres of the Gaussian constraints (global observables). */
  readonly globals: Float64Array;
  fits = 0;
  failedFits = 0;
  /** Newton iterations allowed per fit. */
  maxIterations = MAX_ITERATIONS;
  /** Σ_i (n_i + ν_i) at the last point whose derivatives were taken: the size of −ln L's rounding. */
  private countScale = 0;

  private readonly y: Float64Array;
  private readonly s: Float64Array;
  private readonly b: Float64Array;
  private readonly w: Float64Array;
  private readonly v: Float64Array;
  private readonly dnu: Float64Array;
  private readonly expo: Float64Array;
  private readonly x: Float64Array;
  private readonly trial: Float64Array;
  private readonly grad: Float64Array;
  private readonly hess: Float64Array;
  private readonly chol: Float64Array;
  private readonly step: Float64Array;
  private readonly idx: Int32Array;

  constructor(model: PreparedModel) {
    this.model = model;
    const { nBins, nProc, nPar } = model;
    const d = nPar + 1;
    this.data = Float64Array.from(model.observed);
    this.globals = new Float64Array(nPar);
    this.y = new Float64Array(nProc * nBins);
    this.s = new Float64Array(nBins);
    this.b = new Float64Array(nBins);
    this.w = new Float64Array(nBins);
    this.v = new Float64Array(nBins);
    this.dnu = new Float64Array(nPar * nBins);
    this.expo = new Float64Array(nBins);
    this.x = new Float64Array(d);
    this.trial = new Float64Array(d);
    this.grad = new Float64Array(d);
    this.hess = new Float64Array(d * d);
    this.chol = new Float64Array(d * d);
    this.step = new Float64Array(d);
    this.idx = new Int32Array(d);
  }

  /** Expected signal s_i(θ) and background Σ_j b_ij(θ) per bin, written to `signal` and `background`. */
  expected(theta: ArrayLike<number>, signal: Float64Array, background: Float64Array): void {
    this.setYields(theta, 0);
    signal.set(this.s);
    background.set(this.b);
  }

  /** −ln L (relative to the saturated model) at (μ, θ); +∞ where some ν_i ≤ 0 has n_i > 0. */
  nll(mu: number, theta: ArrayLike<number>): number {
    this.setYields(theta, 0);
    return this.nllFromYields(mu, theta, 0);
  }

  /** Profiles θ at fixed μ, starting from and writing to `theta`. Returns −ln L at the minimum. */
  fitConditional(mu: number, theta: Float64Array): number {
    if (this.model.nPar === 0) {
      this.fits++;
      return this.nll(mu, theta);
    }
    return this.newton(false, 'zero', mu, theta).nll;
  }

  /** Fits μ and θ together with μ bounded below as `bound` says; θ in/out. */
  fitFree(bound: MuBound, muStart: number, theta: Float64Array): FitOutcome {
    return this.newton(true, bound, muStart, theta);
  }

  /** y_pi(θ), s_i and b_i for the θ stored at `theta[offset…]`. */
  private setYields(theta: ArrayLike<number>, offset: number): void {
    const { nBins, nProc, nPar, yields, logEffects, affects, effectFrom, effectTo } = this.model;
    const { y, s, b, expo } = this;
    if (nPar === 0) {
      y.set(yields);
    } else {
      for (let p = 0; p < nProc; p++) {
        expo.fill(0);
        let any = false;
        for (let k = 0; k < nPar; k++) {
          if (affects[k * nProc + p] === 0) continue;
          any = true;
          const t = theta[offset + k] as number;
          const base = (k * nProc + p) * nBins;
          const to = effectTo[k * nProc + p] as number;
          for (let i = effectFrom[k * nProc + p] as number; i < to; i++) expo[i] = (expo[i] as number) + t * (logEffects[base + i] as number);
        }
        const base = p * nBins;
        if (any) for (let i = 0; i < nBins; i++) y[base + i] = (yields[base + i] as number) * exp(expo[i] as number);
        else for (let i = 0; i < nBins; i++) y[base + i] = yields[base + i] as number;
      }
    }
    for (let i = 0; i < nBins; i++) {
      s[i] = y[i] as number;
      let sum = 0;
      for (let p = 1; p < nProc; p++) sum += y[p * nBins + i] as number;
      b[i] = sum;
    }
  }

  private nllFromYields(mu: number, theta: ArrayLike<number>, offset: number): number {
    const { nBins, nPar } = this.model;
    const { s, b, data, globals } = this;
    let total = 0;
    for (let i = 0; i < nBins; i++) {
      const nu = mu * (s[i] as number) + (b[i] as number);
      const n = data[i] as number;
      if (n > 0) {
        if (!(nu > 0)) return INF;
        total += nu - n - n * log(nu / n);
      } else {
        // Rounding at the ν = 0 boundary can leave −1e-17: that is still ν = 0.
        if (nu < -1e-12 * (b[i] as number) - 1e-300) return INF;
        total += nu > 0 ? nu : 0;
      }
    }
    for (let k = 0; k < nPar; k++) {
      const r = (theta[offset + k] as number) - (globals[k] as number);
      total += 0.5 * r * r;
    }
    return total;
  }

  /** Lowest μ allowed by `bound` at the current yields. */
  private muLowerBound(bound: MuBound): number {
    if (bound === 'zero') return 0;
    const { s, b } = this;
    let lo = -INF;
    for (let i = 0; i < s.length; i++) {
      const si = s[i] as number;
      if (si > 0) {
        const edge = -(b[i] as number) / si;
        if (edge > lo) lo = edge;
      }
    }
    return lo;
  }

  /**
   * −ln L, gradient and Hessian at x = (μ?, θ). With `freeMu` the first variable is μ; otherwise μ
   * is `fixedMu` and x holds θ only. Assumes setYields was called for this θ.
   */
  private derivatives(x: Float64Array, freeMu: boolean, fixedMu: number): number {
    const { nBins, nProc, nPar, logEffects, affects, binFrom, binTo, effectFrom, effectTo } = this.model;
    const { y, s, b, w, v, dnu, data, grad, hess } = this;
    const off = freeMu ? 1 : 0;
    const mu = freeMu ? (x[0] as number) : fixedMu;
    const d = nPar + off;
    const f = this.nllFromYields(mu, x, off);
    if (!isFiniteNumber(f)) return f;
    let countScale = 0;
    for (let i = 0; i < nBins; i++) {
      const n = data[i] as number;
      const nu = mu * (s[i] as number) + (b[i] as number);
      countScale += n + abs(nu);
      if (n > 0) {
        const r = n / nu;
        w[i] = 1 - r;
        v[i] = r / nu;
      } else {
        w[i] = 1;
        v[i] = 0;
      }
    }
    this.countScale = countScale;
    // dν_i/dθ_k = μ s_i ln(1+δ_k0i) + Σ_j b_ij ln(1+δ_kji)
    for (let k = 0; k < nPar; k++) {
      const row = k * nBins;
      for (let i = 0; i < nBins; i++) dnu[row + i] = 0;
      for (let p = 0; p < nProc; p++) {
        if (affects[k * nProc + p] === 0) continue;
        const coef = p === 0 ? mu : 1;
        const lb = (k * nProc + p) * nBins;
        const yb = p * nBins;
        const to = effectTo[k * nProc + p] as number;
        for (let i = effectFrom[k * nProc + p] as number; i < to; i++) dnu[row + i] = (dnu[row + i] as number) + coef * (y[yb + i] as number) * (logEffects[lb + i] as number);
      }
    }
    hess.fill(0, 0, d * d);
    if (freeMu) {
      let g0 = 0;
      let h00 = 0;
      for (let i = 0; i < nBins; i++) {
        const si = s[i] as number;
        g0 += (w[i] as number) * si;
        h00 += (v[i] as number) * si * si;
      }
      grad[0] = g0;
      hess[0] = h00;
      for (let k = 0; k < nPar; k++) {
        const row = k * nBins;
        const lb = k * nProc * nBins; // process 0 = signal
        const signalAffected = affects[k * nProc] === 1;
        let h = 0;
        const to = binTo[k] as number;
        for (let i = binFrom[k] as number; i < to; i++) {
          const si = s[i] as number;
          h += (v[i] as number) * si * (dnu[row + i] as number);
          if (signalAffected) h += (w[i] as number) * si * (logEffects[lb + i] as number);
        }
        hess[k + 1] = h;
        hess[(k + 1) * d] = h;
      }
    }
    for (let k = 0; k < nPar; k++) {
      const row = k * nBins;
      const kFrom = binFrom[k] as number;
      const kTo = binTo[k] as number;
      let g = (x[off + k] as number) - (this.globals[k] as number);
      for (let i = kFrom; i < kTo; i++) g += (w[i] as number) * (dnu[row + i] as number);
      grad[off + k] = g;
      for (let l = k; l < nPar; l++) {
        const rowL = l * nBins;
        let h = k === l ? 1 : 0;
        // Only bins both parameters act in: elsewhere every term below is exactly 0.
        const from = max(kFrom, binFrom[l] as number);
        const to = min(kTo, binTo[l] as number);
        for (let i = from; i < to; i++) h += (v[i] as number) * (dnu[row + i] as number) * (dnu[rowL + i] as number);
        // Σ_i w_i ∂²ν_i/∂θ_k∂θ_l, with ∂²y_pi/∂θ_k∂θ_l = y_pi ln(1+δ_kpi) ln(1+δ_lpi)
        for (let p = 0; p < nProc; p++) {
          if (affects[k * nProc + p] === 0 || affects[l * nProc + p] === 0) continue;
          const coef = p === 0 ? mu : 1;
          const lk = (k * nProc + p) * nBins;
          const ll = (l * nProc + p) * nBins;
          const yb = p * nBins;
          const pTo = min(effectTo[k * nProc + p] as number, effectTo[l * nProc + p] as number);
          for (let i = max(effectFrom[k * nProc + p] as number, effectFrom[l * nProc + p] as number); i < pTo; i++) {
            h += coef * (w[i] as number) * (y[yb + i] as number) * (logEffects[lk + i] as number) * (logEffects[ll + i] as number);
          }
        }
        hess[(off + k) * d + off + l] = h;
        hess[(off + l) * d + off + k] = h;
      }
    }
    return f;
  }

  /** Solves (H_FF + λ I) p_F = −g_F for the free variables idx[0..m); returns the Newton decrement −g·p. */
  private solveStep(d: number, m: number): number {
    const { hess, grad, chol, step, idx } = this;
    let maxDiag = 0;
    for (let a = 0; a < m; a++) maxDiag = max(maxDiag, abs(hess[(idx[a] as number) * d + (idx[a] as number)] as number));
    let lambda = 0;
    for (let attempt = 0; attempt < 60; attempt++) {
      if (cholesky(hess, d, idx, m, lambda, chol)) break;
      lambda = lambda === 0 ? max(1e-10 * maxDiag, 1e-12) : lambda * 10;
    }
    // Forward and back substitution; step[] is indexed like idx.
    for (let a = 0; a < m; a++) {
      let sum = -(grad[idx[a] as number] as number);
      for (let c = 0; c < a; c++) sum -= (chol[a * m + c] as number) * (step[c] as number);
      step[a] = sum / (chol[a * m + a] as number);
    }
    for (let a = m - 1; a >= 0; a--) {
      let sum = step[a] as number;
      for (let c = a + 1; c < m; c++) sum -= (chol[c * m + a] as number) * (step[c] as number);
      step[a] = sum / (chol[a * m + a] as number);
    }
    let dec = 0;
    for (let a = 0; a < m; a++) dec -= (grad[idx[a] as number] as number) * (step[a] as number);
    return dec;
  }

  private newton(freeMu: boolean, bound: MuBound, mu0: number, theta: Float64Array): FitOutcome {
    const { nPar } = this.model;
    const off = freeMu ? 1 : 0;
    const d = nPar + off;
    const { x, trial, grad, step, idx } = this;
    this.fits++;
    if (freeMu) x[0] = mu0;
    for (let k = 0; k < nPar; k++) x[off + k] = theta[k] as number;
    this.setYields(x, off);
    if (freeMu) x[0] = max(x[0] as number, this.muLowerBound(bound));
    let f = this.derivatives(x, freeMu, mu0);
    if (!isFiniteNumber(f)) {
      // Restart from the nominal θ, where every yield is positive.
      for (let k = 0; k < nPar; k++) x[off + k] = 0;
      this.setYields(x, off);
      if (freeMu) x[0] = max(x[0] as number, this.muLowerBound(bound));
      f = this.derivatives(x, freeMu, mu0);
    }
    if (!isFiniteNumber(f) && freeMu) {
      // Events in a bin with no background need signal there: start with enough μ to explain them.
      const { data, s, b } = this;
      let need = x[0] as number;
      for (let i = 0; i < data.length; i++) {
        if ((data[i] as number) > 0 && !((b[i] as number) > 0) && (s[i] as number) > 0) need = max(need, (data[i] as number) / (s[i] as number));
      }
      x[0] = need;
      f = this.derivatives(x, freeMu, mu0);
    }
    let converged = false;
    if (isFiniteNumber(f)) {
      for (let iter = 0; iter < this.maxIterations; iter++) {
        let m = 0;
        if (freeMu) {
          const lo = this.muLowerBound(bound);
          const muFixedAtBound = (x[0] as number) <= lo + 1e-12 * (1 + abs(lo)) && (grad[0] as number) > 0;
          if (!muFixedAtBound) idx[m++] = 0;
        }
        for (let k = 0; k < nPar; k++) idx[m++] = off + k;
        if (m === 0) {
          converged = true;
          break;
        }
        const dec = this.solveStep(d, m);
        const rounding = RELATIVE_DECREMENT_TOLERANCE * this.countScale;
        if (!(dec > DECREMENT_TOLERANCE + rounding)) {
          converged = true;
          break;
        }
        let scale = 1;
        for (let a = 0; a < m; a++) {
          if ((idx[a] as number) >= off) scale = max(scale, abs(step[a] as number) / MAX_THETA_STEP);
        }
        let t = 1 / scale;
        let accepted = false;
        for (let halving = 0; halving < 50; halving++) {
          trial.set(x);
          for (let a = 0; a < m; a++) trial[idx[a] as number] = (x[idx[a] as number] as number) + t * (step[a] as number);
          this.setYields(trial, off);
          if (freeMu) trial[0] = max(trial[0] as number, this.muLowerBound(bound));
          // A step shorter than the rounding of x (or projected away onto the bound) moves
          // nothing: accepting it would repeat the same iteration until the budget runs out.
          let moved = false;
          for (let j = 0; j < d; j++) if (trial[j] !== x[j]) moved = true;
          if (!moved) break;
          const fTrial = this.nllFromYields(freeMu ? (trial[0] as number) : mu0, trial, off);
          // Armijo condition on the (possibly projected) step actually taken.
          let slope = 0;
          for (let j = 0; j < d; j++) slope += (grad[j] as number) * ((trial[j] as number) - (x[j] as number));
          if (fTrial <= f + 1e-4 * min(slope, 0) && fTrial <= f) {
            accepted = true;
            break;
          }
          t *= 0.5;
        }
        if (!accepted) {
          // No decrease along a descent direction: we sit at the minimum to rounding (a larger
          // decrement that −ln L cannot resolve, 64× its rounding, counts as such too).
          converged = dec < STALL_TOLERANCE + 64 * rounding;
          this.setYields(x, off);
          break;
        }
        x.set(trial);
        f = this.derivatives(x, freeMu, mu0);
        if (!isFiniteNumber(f)) break;
      }
    }
    // A likelihood that is zero everywhere (events where this μ allows no expectation) is an
    // answer, not a failure to converge: the caller sees −ln L = +∞.
    if (!converged && isFiniteNumber(f)) this.failedFits++;
    for (let k = 0; k < nPar; k++) theta[k] = x[off + k] as number;
    return { nll: f, mu: freeMu ? (x[0] as number) : mu0, converged };
  }
}

/**
 * Cholesky factor L (row-major m×m, lower) of H restricted to `idx`, plus λ on the diagonal.
 * Returns false when the matrix is not numerically positive definite.
 */
function cholesky(h: Float64Array, d: number, idx: Int32Array, m: number, lambda: number, out: Float64Array): boolean {
  for (let a = 0; a < m; a++) {
    const ia = idx[a] as number;
    for (let c = 0; c <= a; c++) {
      const ic = idx[c] as number;
      let sum = (h[ia * d + ic] as number) + (a === c ? lambda : 0);
      for (let e = 0; e < c; e++) sum -= (out[a * m + e] as number) * (out[c * m + e] as number);
      if (a === c) {
        if (!(sum > 1e-14 * abs(h[ia * d + ia] as number)) || !(sum > 0)) return false;
        out[a * m + a] = sqrt(sum);
      } else {
        out[a * m + c] = sum / (out[c * m + c] as number);
      }
    }
  }
  return true;
}
