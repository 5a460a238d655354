/**
 * Root finding on a bracket: Brent's method (bisection, secant and inverse quadratic interpolation).
 *
 * Brent, R. P. (1973), "Algorithms for Minimization without Derivatives", Prentice-Hall, ch. 4
 * (the algorithm "zero"); the same steps as Forsythe, Malcolm & Moler (1977) "zeroin". Each step keeps
 * a bracket [b, c] on which f changes sign, so the method converges for any f that changes sign on
 * [a, b] — also a discontinuous one (a step function), where it finds the jump — and never needs
 * more than about (log2((b − a)/tol))² evaluations; on a smooth f it converges superlinearly.
 */
import { ModelInputError, requireNumber } from './errors.ts';

const FN = 'brentRoot';

export interface BrentOptions {
  /** Absolute tolerance on the root, in the unit of x (> 0): the final bracket is at most about this wide. */
  xTolerance?: number;
  /** Most evaluations of f after the two bracket ends (1 – 10 000; default 200). */
  maxIterations?: number;
}

export interface BrentResult {
  /** The best estimate of the root: |f(root)| ≤ |f(other)|, or f(root) = 0. */
  root: number;
  /** The other end of the final bracket (f changes sign between root and other; equal to root when f(root) = 0). */
  other: number;
  /** f at root and at other. */
  fRoot: number;
  fOther: number;
  /** Evaluations of f, the two bracket ends included. */
  evaluations: number;
  /** The tolerance used, in the unit of x. */
  xTolerance: number;
}

function value(f: (x: number) => number, x: number): number {
  const y = f(x);
  if (typeof y !== 'number' || !Number.isFinite(y))
    throw new ModelInputError(FN, 'f(x)', '', `a finite number at every x of the bracket (x = ${x})`, y);
  return y;
}

/** The arguments both root finders share, checked: the tolerance and iteration bound they resolve to. */
function checkedBracket(
  fn: string,
  f: unknown,
  a: number,
  b: number,
  options: BrentOptions,
): { xTol: number; maxIt: number } {
  if (typeof f !== 'function') throw new ModelInputError(fn, 'f', '', 'a function of one number', f);
  requireNumber(fn, 'a', a, '');
  requireNumber(fn, 'b', b, '');
  if (a === b) throw new ModelInputError(fn, 'b', '', 'a bracket end different from a', b);
  if (options === null || typeof options !== 'object')
    throw new ModelInputError(fn, 'options', '', 'an object (or nothing)', options);
  const xTol = requireNumber(
    fn,
    'options.xTolerance',
    options.xTolerance ?? 1e-12 * Math.max(1, Math.abs(a), Math.abs(b)),
    '',
    { min: 0, minExclusive: true },
  );
  const maxIt = requireNumber(fn, 'options.maxIterations', options.maxIterations ?? 200, '', {
    min: 1,
    max: 10_000,
    integer: true,
  });
  return { xTol, maxIt };
}

/** Refuses a bracket whose ends do not have values of opposite sign. */
function requireOppositeSigns(fn: string, a: number, b: number, fa: number, fb: number): void {
  if (fa > 0 === fb > 0)
    throw new ModelInputError(
      fn,
      'f(a), f(b)',
      '',
      `values of opposite sign at the bracket ends (f(${a}) = ${fa}, f(${b}) = ${fb})`,
      [fa, fb],
    );
}

/**
 * Brent's root of f on the bracket [a, b].
 *
 * Formula: keeps b (best estimate), a (previous b) and c (sign change against b); each step takes
 * the inverse quadratic interpolation through (a, f(a)), (b, f(b)), (c, f(c)) — or the secant when
 * a = c — when it falls inside the bracket and shrinks the step fast enough, else bisects
 * m = (c − b)/2; stops when |m| ≤ 2·ε·|b| + tol/2 or f(b) = 0.
 *
 * Symbols: f, a function of x returning a finite number; a, b, the bracket ends (unit of x; f(a) and
 * f(b) of opposite sign, or one of them zero); tol, the absolute tolerance on x.
 *
 * Validity: any f that changes sign on [a, b] (continuity is not needed for convergence to a sign
 * change); for a monotone f the sign change is unique.
 *
 * Source: Brent (1973), ch. 4; Forsythe, Malcolm & Moler (1977), "zeroin".
 *
 * @param f the function (called with x in [min(a,b), max(a,b)])
 * @param a one end of the bracket
 * @param b the other end (≠ a)
 * @param options xTolerance (default 1e-12·max(1, |a|, |b|)) and maxIterations (default 200)
 * @returns the root, the other end of the final bracket, f at both, evaluations and the tolerance
 * @throws ModelInputError when f is not a function, a or b is not finite, a = b, f(a) and f(b) have
 *   the same sign, f returns a non-finite value, the options are out of range, or the root is not
 *   found within maxIterations
 * @example brentRoot((x) => x * x - 2, 0, 2).root // 1.4142135623730951 (√2, within 1e-12)
 */
export function brentRoot(
  f: (x: number) => number,
  a: number,
  b: number,
  options: BrentOptions = {},
): BrentResult {
  const { xTol, maxIt } = checkedBracket(FN, f, a, b, options);
  let fa = value(f, a);
  let fb = value(f, b);
  let evaluations = 2;
  const done = (root: number, other: number, fr: number, fo: number): BrentResult => ({
    root,
    other,
    fRoot: fr,
    fOther: fo,
    evaluations,
    xTolerance: xTol,
  });
  if (fa === 0) return done(a, a, 0, 0);
  if (fb === 0) return done(b, b, 0, 0);
  requireOppositeSigns(FN, a, b, fa, fb);
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let it = 0; it <= maxIt; it++) {
    if (fb > 0 === fc > 0) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * xTol;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb === 0) return done(b, fb === 0 ? b : c, fb, fb === 0 ? fb : fc);
    if (it === maxIt) break;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qq = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) {
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
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = value(f, b);
    evaluations++;
  }
  throw new ModelInputError(
    FN,
    'options.maxIterations',
    '',
    `enough iterations to reach the tolerance ${xTol} (${maxIt} were not)`,
    maxIt,
  );
}

/**
 * Bisection root of f on the bracket [a, b]: halves the bracket, keeping the half on which f changes
 * sign, until it is at most xTolerance wide.
 *
 * Formula: m = (a + b)/2; [a, b] ← [a, m] if sign f(m) ≠ sign f(a), else [m, b]; stops after
 * ⌈log2(|b − a| / tol)⌉ halvings (or at an exact zero).
 *
 * Symbols: f, a function of x returning a finite number; a, b, the bracket ends (unit of x; f of
 * opposite sign there, or zero at one); tol, the absolute tolerance on x.
 *
 * Validity: any f that changes sign on [a, b]. Unlike brentRoot its number of evaluations does not
 * depend on f: the choice for a step function (a Monte Carlo quantile), where interpolation gains
 * nothing and Brent's safeguards can cost up to twice as many evaluations.
 *
 * Source: the bisection method (Bolzano's intermediate value theorem); Press et al., "Numerical
 * Recipes", 3rd ed. (2007), §9.1.
 *
 * @param f the function
 * @param a one end of the bracket
 * @param b the other end (≠ a)
 * @param options xTolerance (default 1e-12·max(1, |a|, |b|)); maxIterations (default 200) bounds the halvings
 * @returns the end of the final bracket where |f| is smaller as root, the other end, f at both,
 *   the evaluations and the tolerance
 * @throws ModelInputError as brentRoot
 * @example bisectRoot((x) => x * x - 2, 0, 2, { xTolerance: 1e-3 }).evaluations // 13 (2 ends + 11 halvings)
 */
export function bisectRoot(
  f: (x: number) => number,
  a: number,
  b: number,
  options: BrentOptions = {},
): BrentResult {
  const fn = 'bisectRoot';
  const { xTol, maxIt } = checkedBracket(fn, f, a, b, options);
  let fa = value(f, a);
  let fb = value(f, b);
  let evaluations = 2;
  const done = (root: number, other: number, fr: number, fo: number): BrentResult => ({
    root,
    other,
    fRoot: fr,
    fOther: fo,
    evaluations,
    xTolerance: xTol,
  });
  if (fa === 0) return done(a, a, 0, 0);
  if (fb === 0) return done(b, b, 0, 0);
  requireOppositeSigns(fn, a, b, fa, fb);
  for (let it = 0; it < maxIt; it++) {
    if (Math.abs(b - a) <= xTol) break;
    const m = a + (b - a) / 2;
    if (m === a || m === b) break; // the bracket is as narrow as the numbers allow
    const fm = value(f, m);
    evaluations++;
    if (fm === 0) return done(m, m, 0, 0);
    if (fm > 0 === fa > 0) {
      a = m;
      fa = fm;
    } else {
      b = m;
      fb = fm;
    }
  }
  if (Math.abs(b - a) > xTol && Math.abs(b - a) > 4 * Number.EPSILON * Math.max(Math.abs(a), Math.abs(b)))
    throw new ModelInputError(
      fn,
      'options.maxIterations',
      '',
      `enough iterations to reach the tolerance ${xTol} (${maxIt} were not)`,
      maxIt,
    );
  return Math.abs(fa) <= Math.abs(fb) ? done(a, b, fa, fb) : done(b, a, fb, fa);
}
