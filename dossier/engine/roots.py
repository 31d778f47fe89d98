"""Bracketed root finding by Brent's method (pure, no I/O, no scipy).

Why this module exists: ``dossier evaluate`` must start quickly, and
importing ``scipy.optimize`` alone costs more than half a second.  The
package needs only one scalar zero-finder, so it carries its own.

Method
------
R. P. Brent, *Algorithms for Minimization without Derivatives*,
Prentice-Hall 1973, chapter 4: the zero-finder that combines bisection,
the secant rule and inverse quadratic interpolation, keeping the root
bracketed at every step.  It converges whenever the bracket holds a sign
change, never needs many more evaluations than bisection would, and is
superlinear near a simple root.  The steps below follow the published
procedure (the variables a, b, c, d, e, m, p, q, r, s keep Brent's names):

* ``b`` is the best estimate so far, ``c`` the contrapoint (f(b) and f(c)
  of opposite sign), ``a`` the previous value of ``b``;
* the tolerance is ``tol = 2 macheps |b| + t``.  Here it is written with
  the usual pair of tolerances, ``tol = (rtol |b| + xtol) / 2``, so that the
  default ``rtol = 4 eps`` is Brent's ``2 macheps |b|`` term and
  ``xtol = 2 t``; the search stops when the half-bracket ``m = (c - b)/2``
  is within ``tol`` (or f(b) is exactly zero).  The answer is then within
  ``2 tol`` of a sign change of f, i.e. within ``xtol + rtol |b|``.

The tolerance convention (xtol, rtol and a limit on iterations, one function
evaluation per iteration after the two at the ends) is the one commonly used
by numerical libraries, so callers keep the tolerances they had.
"""
from __future__ import annotations

import math
import sys
from typing import Callable

EPS = sys.float_info.epsilon
"""Machine epsilon of a Python float (IEEE double), 2**-52."""


class ConvergenceError(RuntimeError):
    """Raised when the iteration limit is reached before the tolerance."""


def _value(f: Callable[[float], float], x: float) -> float:
    y = float(f(x))
    if math.isnan(y):
        raise ValueError(f"the function is not a number at x = {x!r}")
    return y


def _check_arguments(a: float, b: float, xtol: float, rtol: float, maxiter: int) -> None:
    if not (math.isfinite(a) and math.isfinite(b)):
        raise ValueError(f"the bracket [{a!r}, {b!r}] must be finite")
    if not xtol > 0.0:
        raise ValueError(f"xtol must be positive, got {xtol!r}")
    if not rtol >= 4 * EPS:
        raise ValueError(f"rtol must be at least 4 eps = {4 * EPS:.3g}, got {rtol!r}")
    if maxiter < 0:
        raise ValueError(f"maxiter must not be negative, got {maxiter!r}")


def _next_step(a: float, b: float, c: float, fa: float, fb: float, fc: float, d: float,
               e: float, m: float, tol: float) -> tuple[float, float]:
    """Brent's choice of the next step d (and the one before it, e): interpolation when
    it is inside the bracket and shrinks fast enough, else bisection."""
    if abs(e) < tol or abs(fa) <= abs(fb):
        # The last steps were too small, or f did not decrease: bisect.
        return m, m
    s = fb / fa
    if a == c:
        # Only two distinct points: linear interpolation (secant).
        p = 2.0 * m * s
        q = 1.0 - s
    else:
        # Inverse quadratic interpolation through a, b, c.
        q = fa / fc
        r = fb / fc
        p = s * (2.0 * m * q * (q - r) - (b - a) * (r - 1.0))
        q = (q - 1.0) * (r - 1.0) * (s - 1.0)
    if p > 0.0:
        q = -q
    else:
        p = -p
    s = e
    e = d
    if 2.0 * p < 3.0 * m * q - abs(tol * q) and p < abs(0.5 * s * q):
        # The interpolated point is inside the bracket and the step shrinks fast
        # enough: accept it.
        return p / q, e
    return m, m


def brent(f: Callable[[float], float], a: float, b: float, *,
          xtol: float = 1e-12, rtol: float = 4 * EPS, maxiter: int = 200) -> float:
    """A zero of ``f`` in the bracket [a, b] by Brent's method.

    ``f(a)`` and ``f(b)`` must not have the same sign (either may be zero);
    otherwise :class:`ValueError` is raised, as it is for a NaN value of f,
    for ``xtol <= 0``, for ``rtol < 4 eps`` (Brent's analysis needs the
    relative term at least ``2 macheps |b|``) and for ``maxiter < 0``.

    The result ``x`` lies in the closed bracket and within
    ``xtol + rtol |x|`` of a point where f changes sign.  ``f`` is called at
    most ``maxiter + 2`` times; if the tolerance is not met by then,
    :class:`ConvergenceError` (a :class:`RuntimeError`) is raised.
    """
    a, b = float(a), float(b)
    _check_arguments(a, b, xtol, rtol, maxiter)
    fa = _value(f, a)
    fb = _value(f, b)
    if fa != 0.0 and fb != 0.0 and (fa > 0.0) == (fb > 0.0):
        raise ValueError(
            f"f(a) and f(b) have the same sign (f({a!r}) = {fa!r}, f({b!r}) = {fb!r}); "
            "the bracket holds no sign change"
        )

    # Brent's label "int": c is the contrapoint, d the last step, e the one
    # before it.
    c, fc = a, fa
    d = e = b - a
    iterations = 0
    while True:
        # Label "ext": keep b the better of the two bracket ends.
        if abs(fc) < abs(fb):
            a, b, c = b, c, b
            fa, fb, fc = fb, fc, fb
        tol = 0.5 * (rtol * abs(b) + xtol)
        m = 0.5 * (c - b)
        if abs(m) <= tol or fb == 0.0:
            return b
        if iterations >= maxiter:
            raise ConvergenceError(
                f"Brent's method did not converge in {maxiter} iterations "
                f"(bracket [{min(b, c)!r}, {max(b, c)!r}])"
            )
        iterations += 1

        d, e = _next_step(a, b, c, fa, fb, fc, d, e, m, tol)

        a, fa = b, fb
        if abs(d) > tol:
            b += d
        elif m > 0.0:
            b += tol
        else:
            b -= tol
        fb = _value(f, b)
        if (fb > 0.0) == (fc > 0.0):
            # The sign change is now between a and b: back to label "int".
            c, fc = a, fa
            d = e = b - a
