/**
 * Fitted nuisance parameters for diagnostics: the unconditional fit (μ̂, θ̂) and the
 * background-only fit (μ = 0, θ̂̂(0)), with post-fit uncertainties from the inverse Hessian of
 * −ln L. Each θ has a unit Gaussian constraint centred at 0, so θ̂ is directly the pull in units of
 * the prior width, and a post-fit uncertainty below 1 shows the data constraining it (common practice).
 */
import type { CountingModelInput } from '../schemas/counting-model';
import { Likelihood } from './fit';
import { prepareModel } from './model';

export interface NuisancePull {
  name: string;
  /** Best-fit θ̂ (pull in units of its prior width). */
  value: number;
  /** Post-fit uncertainty √(H⁻¹)ₖₖ; NaN where the Hessian could not be inverted. */
  error: number;
  /** θ̂̂ in the background-only fit (μ = 0). */
  valueAtZero: number;
}

export interface NuisanceFit {
  muHat: number;
  /** Uncertainty of μ̂ from the same inverse Hessian. */
  muError: number;
  pulls: NuisancePull[];
  converged: boolean;
}

/** Inverse of a small symmetric matrix by Gauss–Jordan elimination with partial pivoting; null if singular. */
function invert(a: number[][]): number[][] | null {
  const n = a.length;
  const m = a.map((row, i) => [...row, ...Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r]![c]!) > Math.abs(m[p]![c]!)) p = r;
    if (!(Math.abs(m[p]![c]!) > 1e-12)) return null;
    [m[c], m[p]] = [m[p]!, m[c]!];
    const piv = m[c]![c]!;
    for (let j = 0; j < 2 * n; j++) m[c]![j]! /= piv;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = m[r]![c]!;
      if (f !== 0) for (let j = 0; j < 2 * n; j++) m[r]![j]! -= f * m[c]![j]!;
    }
  }
  return m.map((row) => row.slice(n));
}

/**
 * Fits μ and every nuisance parameter to the observed counts and returns the pulls.
 * Throws StatsInputError (naming the field) for a bad model.
 */
export function fitNuisanceParameters(model: CountingModelInput): NuisanceFit {
  const prepared = prepareModel(model, 'model');
  const L = new Likelihood(prepared);
  const nPar = prepared.nPar;
  const theta = new Float64Array(nPar);
  const free = L.fitFree('feasible', 0, theta);
  const thetaZero = new Float64Array(nPar);
  L.fitConditional(0, thetaZero);

  // Hessian of −ln L in (μ, θ) by central differences around the minimum.
  const x0 = [free.mu, ...theta];
  const f = (x: number[]) => L.nll(x[0]!, x.slice(1));
  const d = x0.length;
  const h = x0.map((v, i) => (i === 0 ? 1e-4 * Math.max(1, Math.abs(v)) : 1e-4));
  const H: number[][] = Array.from({ length: d }, () => new Array<number>(d).fill(0));
  const at = (i: number, di: number, j: number, dj: number) => {
    const x = [...x0];
    x[i]! += di;
    x[j]! += dj;
    return f(x);
  };
  const f0 = f(x0);
  for (let i = 0; i < d; i++) {
    H[i]![i] = (at(i, h[i]!, i, 0) - 2 * f0 + at(i, -h[i]!, i, 0)) / (h[i]! * h[i]!);
    for (let j = i + 1; j < d; j++) {
      const v = (at(i, h[i]!, j, h[j]!) - at(i, h[i]!, j, -h[j]!) - at(i, -h[i]!, j, h[j]!) + at(i, -h[i]!, j, -h[j]!)) / (4 * h[i]! * h[j]!);
      H[i]![j] = v;
      H[j]![i] = v;
    }
  }
  const cov = H.every((row) => row.every(Number.isFinite)) ? invert(H) : null;
  const err = (k: number) => (cov && cov[k]![k]! > 0 ? Math.sqrt(cov[k]![k]!) : NaN);
  return {
    muHat: free.mu,
    muError: err(0),
    converged: free.converged,
    pulls: prepared.parameterNames.map((name, k) => ({ name, value: theta[k]!, error: err(k + 1), valueAtZero: thetaZero[k]! })),
  };
}
