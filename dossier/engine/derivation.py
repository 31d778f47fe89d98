"""The symbolic route (sympy): Kirchhoff's law written out for one reaction.

For every temperature segment between the models' breakpoints the reaction's
ΔrCp°(T) is a single closed form (a polynomial for NASA 7-coefficient data,
with a 1/T² term for Shomate data).  Integrating it from an anchor
temperature gives the closed forms

    ΔrH°(T) = ΔrH°(T_a) + ∫_{T_a}^{T} ΔrCp° dT
    ΔrS°(T) = ΔrS°(T_a) + ∫_{T_a}^{T} ΔrCp°/T dT
    ΔrG°(T) = ΔrH°(T) − T ΔrS°(T)

with the numbers substituted.  The anchor is 298.15 K for the segment that
contains it and the segment's own lower end otherwise, where ΔrH° and ΔrS°
are carried over from the neighbouring segment, so the whole curve is one
continuous piecewise function.  The numeric engine (:mod:`dossier.engine.thermo`)
sums the species' H and S directly; the test suite checks that the
lambdified closed forms here give the same numbers.

sympy is imported only by this module, which the plotting and publishing
steps use; ``dossier evaluate`` does not need it.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from dossier.constants import T_REF
from dossier.engine.thermo import ReactionThermo


@dataclass(frozen=True)
class Segment:
    """One temperature segment with its closed forms (LaTeX, SI units)."""

    t_low: float
    t_high: float
    anchor: float
    dH_anchor: float  # J/mol
    dS_anchor: float  # J/(mol K)
    dCp_latex: str
    dH_latex: str
    dS_latex: str
    dG_latex: str


@dataclass(frozen=True)
class Derivation:
    segments: tuple[Segment, ...]
    dH: Callable[[np.ndarray], np.ndarray]
    dS: Callable[[np.ndarray], np.ndarray]
    dG: Callable[[np.ndarray], np.ndarray]
    dCp: Callable[[np.ndarray], np.ndarray]


def _piece_at(expr, T, t_mid: float):
    """The branch of a (possibly) Piecewise expression that holds at t_mid."""
    import sympy as sp

    if isinstance(expr, sp.Piecewise):
        for e, cond in expr.args:
            if bool(cond.subs(T, t_mid)):
                return e
        raise ValueError("no branch of the piecewise model holds at %g K" % t_mid)
    return expr


def _integral_of_powers(expr, T, t_a: float):
    """∫ from t_a to T of a sum of terms c·T^k, by the power rule (k = −1 gives a logarithm).

    Every species model gives ΔrCp° as such a sum (polynomials, plus T^-2 for
    Shomate data), so this is exact and much faster than general integration.
    """
    import sympy as sp

    a = sp.Float(t_a, 17)
    total = sp.Integer(0)
    for term in sp.Add.make_args(sp.expand(expr)):
        coeff, k = term.as_coeff_exponent(T)
        if coeff.has(T):
            raise ValueError(f"cannot integrate the term {term} by the power rule")
        if k == -1:
            total += coeff * (sp.log(T) - sp.log(a))
        else:
            total += coeff * (T ** (k + 1) - a ** (k + 1)) / (k + 1)
    return total


def derive(thermo: ReactionThermo, t_low: float, t_high: float,
           digits: int = 6) -> Derivation:
    """Closed forms of ΔrCp°, ΔrH°, ΔrS°, ΔrG° on [t_low, t_high]."""
    import sympy as sp

    T = sp.Symbol("T", positive=True)
    per_model = [m.sympy(T) for m in thermo.models]  # (cp, h, s) each
    cuts = sorted({t_low, t_high, *[b for b in thermo.breakpoints if t_low < b < t_high]})
    bounds = list(zip(cuts[:-1], cuts[1:]))

    # Which segment holds the reference temperature; build outwards from it.
    def seg_index(t: float) -> int:
        for i, (a, b) in enumerate(bounds):
            if a <= t <= b:
                return i
        return 0 if t < bounds[0][0] else len(bounds) - 1

    dcp_pieces = []
    for a, b in bounds:
        mid = 0.5 * (a + b)
        dcp_pieces.append(sp.expand(sum(
            sp.Rational(0) + sp.Float(nu, 17) * _piece_at(cp, T, mid)
            for nu, (cp, _h, _s) in zip(thermo.nus, per_model))))

    i0 = seg_index(T_REF)
    anchors: dict[int, tuple[float, float, float]] = {}
    # anchor of the reference segment: 298.15 K (or its nearest end when the
    # examined range does not contain 298.15 K); values from the numeric sums.
    t_a0 = min(max(T_REF, bounds[i0][0]), bounds[i0][1])
    anchors[i0] = (t_a0, float(thermo.dH(np.array([t_a0]))[0]), float(thermo.dS(np.array([t_a0]))[0]))
    order = list(range(i0 + 1, len(bounds))) + list(range(i0 - 1, -1, -1))
    h_exprs: dict[int, object] = {}
    s_exprs: dict[int, object] = {}

    def integrate(i: int):
        t_a, h_a, s_a = anchors[i]
        dcp = dcp_pieces[i]
        h = sp.Float(h_a, 17) + _integral_of_powers(dcp, T, t_a)
        s = sp.Float(s_a, 17) + _integral_of_powers(sp.expand(dcp / T), T, t_a)
        h_exprs[i], s_exprs[i] = sp.expand(h), sp.expand(s)

    integrate(i0)
    for i in order:
        if i > i0:
            t_a = bounds[i][0]
            prev = i - 1
        else:
            t_a = bounds[i][1]
            prev = i + 1
        h_a = float(h_exprs[prev].subs(T, t_a))
        s_a = float(s_exprs[prev].subs(T, t_a))
        anchors[i] = (t_a, h_a, s_a)
        integrate(i)

    def tex(expr) -> str:
        return sp.latex(sp.N(expr, digits), min=-4, max=6, ln_notation=True)

    segments = []
    for i, (a, b) in enumerate(bounds):
        g = sp.expand(h_exprs[i] - T * s_exprs[i])
        segments.append(Segment(
            t_low=float(a), t_high=float(b), anchor=anchors[i][0],
            dH_anchor=anchors[i][1], dS_anchor=anchors[i][2],
            dCp_latex=tex(dcp_pieces[i]), dH_latex=tex(h_exprs[i]),
            dS_latex=tex(s_exprs[i]), dG_latex=tex(g),
        ))

    hs = [h_exprs[i] for i in range(len(bounds))]
    ss = [s_exprs[i] for i in range(len(bounds))]
    gs = [sp.expand(h - T * s) for h, s in zip(hs, ss)]
    return Derivation(
        segments=tuple(segments),
        dH=_numeric(T, bounds, hs), dS=_numeric(T, bounds, ss), dG=_numeric(T, bounds, gs),
        dCp=_numeric(T, bounds, dcp_pieces),
    )


def _numeric(T, bounds: Sequence[tuple[float, float]], exprs: Sequence
             ) -> Callable[[np.ndarray], np.ndarray]:
    """The per-segment closed forms as one numpy function of T (for checking them).

    The generated code names only ``numpy``: it gets that one name (with sympy's
    numpy printer), not ``modules="numpy"``, whose ``from numpy import *`` loads
    numpy.f2py and numpy.testing (70-90 ms of a build's first derivation)."""
    import sympy as sp
    from sympy.printing.numpy import NumPyPrinter

    branches = []
    for i, (_a, b) in enumerate(bounds):
        cond = T <= b if i < len(bounds) - 1 else sp.true
        branches.append((exprs[i], cond))
    f = sp.lambdify(T, sp.Piecewise(*branches), modules=[{"numpy": np}], printer=NumPyPrinter)
    return lambda x: np.asarray(f(np.asarray(x, dtype=float)), dtype=float) * np.ones_like(
        np.asarray(x, dtype=float))
