/**
 * Bracketing root finding on μ: a bracket is found by expanding from a guess, then narrowed by
 * Brent's method (R. P. Brent, "Algorithms for Minimization without Derivatives", 1973, ch. 4),
 * which never leaves the bracket, so it also works on the step-shaped CLs of pseudo-experiments.
 */

// Module-scope aliases: cheaper than global lookups in sandboxed runtimes (test runners' VM contexts).
const { abs, max, min } = Math;

export interface RootResult {
  x: number;
  /** False when no sign change was found inside [lo, hi]: x is then the edge that came closest. */
  bracketed: boolean;
  /** The two points of the final bracket and their function values (for slope estimates). */
  a: number;
  b: number;
  fa: number;
  fb: number;
}

/**
 * Root of f on (lo, hi), where f decreases through zero (f > 0 at small x, f < 0 at large x), as
 * CLs(μ) − α does. Starts at `guess`, expands geometrically to bracket, then Brent to relative
 * tolerance `rtol` on x.
 */
export function findDecreasingRoot(
  f: (x: number) => number,
  guess: number,
  lo: number,
  hi: number,
  rtol = 1e-5,
): RootResult {
  let x0 = min(max(guess, lo), hi);
  let f0 = f(x0);
  let x1: number;
  let f1: number;
  if (f0 > 0) {
    // Root above: step up.
    x1 = x0;
    f1 = f0;
    while (f1 > 0) {
      if (x1 >= hi) return { x: hi, bracketed: false, a: x0, b: hi, fa: f0, fb: f1 };
      x0 = x1;
      f0 = f1;
      x1 = min(x1 * 2, hi);
      f1 = f(x1);
    }
  } else {
    x1 = x0;
    f1 = f0;
    while (f0 <= 0) {
      if (x0 <= lo) return { x: lo, bracketed: false, a: lo, b: x1, fa: f0, fb: f1 };
      x1 = x0;
      f1 = f0;
      x0 = max(x0 / 2, lo);
      f0 = f(x0);
    }
  }
  return brent(f, x0, x1, f0, f1, rtol);
}

/** Brent's method on a bracket [a, b] with f(a), f(b) of opposite signs (or one zero). */
export function brent(f: (x: number) => number, a0: number, b0: number, fa0: number, fb0: number, rtol: number): RootResult {
  let a = a0;
  let b = b0;
  let fa = fa0;
  let fb = fb0;
  if (fa === 0) return { x: a, bracketed: true, a, b, fa, fb };
  if (fb === 0) return { x: b, bracketed: true, a, b, fa, fb };
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let iter = 0; iter < 200; iter++) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (abs(fc) < abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol = 4.5e-16 * abs(b) + 0.5 * rtol * abs(b);
    const m = 0.5 * (c - b);
    if (abs(m) <= tol || fb === 0) {
      return { x: b, bracketed: true, a: min(b, c), b: max(b, c), fa: b < c ? fb : fc, fb: b < c ? fc : fb };
    }
    if (abs(e) >= tol && abs(fa) > abs(fb)) {
      // Inverse quadratic interpolation, or secant when only two distinct points are known.
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qa = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1));
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < min(3 * m * q - abs(tol * q), abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = f(b);
  }
  return { x: b, bracketed: true, a: min(b, c), b: max(b, c), fa: b < c ? fb : fc, fb: b < c ? fc : fb };
}
