/**
 * Bracketed scalar root finding: Brent's method (R. P. Brent 1973, "Algorithms for
 * Minimization without Derivatives", Prentice-Hall, ch. 4; also Brent 1971, Comput. J. 14, 422).
 *
 * The method keeps a bracket [b, c] with f(b) f(c) <= 0 and |f(b)| <= |f(c)|; each step tries
 * inverse quadratic interpolation (or the secant step when only two distinct points are
 * known) and falls back to bisection whenever the interpolated step is not safely inside the
 * bracket or does not shrink fast enough. Convergence is therefore guaranteed for any
 * function that changes sign on the bracket (at worst like bisection), and superlinear for
 * smooth simple roots.
 *
 * Generic: no physics here.
 */

/** The two ends of the bracket do not enclose a sign change (or are not finite). */
export class BracketError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'BracketError';
  }
}

/** The iteration limit was reached, or the function returned NaN. */
export class RootNotConvergedError extends Error {
  /** Best estimate when the iteration stopped. */
  readonly estimate: number;
  readonly iterations: number;
  constructor(message: string, estimate: number, iterations: number) {
    super(message);
    this.name = 'RootNotConvergedError';
    this.estimate = estimate;
    this.iterations = iterations;
  }
}

export interface BrentOptions {
  /** Absolute tolerance on x (same unit as x). Default 0. */
  xAbsTol?: number;
  /** Relative tolerance on x. Default 4 * Number.EPSILON (a couple of ulp). */
  xRelTol?: number;
  /** Stop as soon as |f(x)| <= fAbsTol. Default 0 (only an exact zero stops early). */
  fAbsTol?: number;
  /** Maximum number of function evaluations after the two at the ends. Default 200. */
  maxIterations?: number;
}

export interface BrentResult {
  /** The root estimate: the bracket end with the smaller |f|. */
  root: number;
  /** f(root). */
  fRoot: number;
  /** Width of the final bracket, |c - b| (an upper bound on the distance to a sign change). */
  bracketWidth: number;
  /** Number of function evaluations after the two at the ends. */
  iterations: number;
}

/**
 * Finds x in [lo, hi] with f(x) = 0, for a continuous f with f(lo) and f(hi) of opposite signs
 * (either may be exactly 0). The order of `lo` and `hi` does not matter.
 *
 * Stops when the bracket is narrower than 2 tol, with
 * tol = max(xAbsTol, xRelTol |x|) / 2 + 2 eps |x| (eps = Number.EPSILON), when |f| <= fAbsTol,
 * or on an exact zero.
 *
 * Throws `BracketError` if the ends are not finite or f does not change sign between them,
 * and `RootNotConvergedError` if f returns NaN or the iteration limit is reached.
 */
export function brent(f: (x: number) => number, lo: number, hi: number, options: BrentOptions = {}): BrentResult {
  const xAbsTol = options.xAbsTol ?? 0;
  const xRelTol = options.xRelTol ?? 4 * Number.EPSILON;
  const fAbsTol = options.fAbsTol ?? 0;
  const maxIterations = options.maxIterations ?? 200;
  if (!(xAbsTol >= 0) || !(xRelTol >= 0) || !(fAbsTol >= 0) || !(maxIterations >= 1)) {
    throw new RangeError('brent: tolerances must be >= 0 and maxIterations >= 1');
  }
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) {
    throw new BracketError(`brent: bracket ends must be finite; got [${lo}, ${hi}]`);
  }

  let b = lo;
  let fb = f(b);
  let a = hi;
  let fa = f(a);
  if (Number.isNaN(fa) || Number.isNaN(fb)) {
    throw new BracketError(`brent: f is NaN at a bracket end (f(${lo}) = ${fb}, f(${hi}) = ${fa})`);
  }
  if (fb === 0) return { root: b, fRoot: 0, bracketWidth: 0, iterations: 0 };
  if (fa === 0) return { root: a, fRoot: 0, bracketWidth: 0, iterations: 0 };
  if (Math.sign(fa) === Math.sign(fb)) {
    throw new BracketError(`brent: f does not change sign on [${lo}, ${hi}] (f = ${fb} and ${fa})`);
  }

  // Invariants at the top of each pass: f(b) and f(c) have opposite signs, |f(b)| <= |f(c)|,
  // b is the current best estimate and a the previous one.
  let c = a;
  let fc = fa;
  let step = b - a; // last step taken
  let prevStep = step; // step before last

  for (let iter = 0; ; iter++) {
    if (Math.sign(fb) === Math.sign(fc)) {
      // The sign change is now between a and b: restart the bracket from a.
      c = a;
      fc = fa;
      step = b - a;
      prevStep = step;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      // Keep b as the end with the smaller residual.
      a = b;
      fa = fb;
      b = c;
      fb = fc;
      c = a;
      fc = fa;
    }

    const tol = 0.5 * Math.max(xAbsTol, xRelTol * Math.abs(b)) + 2 * Number.EPSILON * Math.abs(b) + Number.MIN_VALUE;
    const half = 0.5 * (c - b);
    if (Math.abs(half) <= tol || fb === 0 || Math.abs(fb) <= fAbsTol) {
      return { root: b, fRoot: fb, bracketWidth: Math.abs(c - b), iterations: iter };
    }
    if (iter >= maxIterations) {
      throw new RootNotConvergedError(
        `brent: no convergence in ${maxIterations} iterations (bracket [${Math.min(b, c)}, ${Math.max(b, c)}])`,
        b,
        iter,
      );
    }

    if (Math.abs(prevStep) >= tol && Math.abs(fa) > Math.abs(fb)) {
      // Try interpolation: p/q is the proposed correction to b.
      let p: number;
      let q: number;
      const s = fb / fa;
      if (a === c) {
        // Two distinct points: secant.
        p = 2 * half * s;
        q = 1 - s;
      } else {
        // Three distinct points: inverse quadratic interpolation through (a, fa), (b, fb), (c, fc).
        const qa = fa / fc;
        const rb = fb / fc;
        p = s * (2 * half * qa * (qa - rb) - (b - a) * (rb - 1));
        q = (qa - 1) * (rb - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      // Accept only if the step lands well inside the bracket and is less than half the step
      // before last (which forces at least linear-by-halves shrinkage); otherwise bisect.
      if (2 * p < Math.min(3 * half * q - Math.abs(tol * q), Math.abs(prevStep * q))) {
        prevStep = step;
        step = p / q;
      } else {
        step = half;
        prevStep = half;
      }
    } else {
      step = half;
      prevStep = half;
    }

    a = b;
    fa = fb;
    b += Math.abs(step) > tol ? step : half > 0 ? tol : -tol;
    fb = f(b);
    if (Number.isNaN(fb)) {
      throw new RootNotConvergedError(`brent: f returned NaN at x = ${b}`, a, iter + 1);
    }
  }
}
