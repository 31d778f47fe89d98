"""Reaction thermodynamics from per-species models (pure, numeric).

Given the signed stoichiometric coefficients and the species' thermodynamic
models, this module evaluates on numpy arrays

* ΔrCp°(T), ΔrH°(T), ΔrS°(T), ΔrG°(T) = ΔrH° − T ΔrS°, ln K = −ΔrG°/(R T),
* the surroundings' view at constant T and p: q_surr = −ΔrH°,
  ΔS_surr = −ΔrH°/T and ΔS_univ = ΔrS° + ΔS_surr (= −ΔrG°/T),
* every crossover temperature (ΔrG° = 0) in a range, including a tangent
  (double) root where ΔrG° touches zero without changing sign.

Summing each species' H(T) and S(T) is Kirchhoff's law carried out exactly:
each model's H and S are the integrals of its own Cp.  The symbolic form of
the same sums (for display) lives in :mod:`dossier.engine.derivation`.

All quantities are SI: K, J/mol, J/(mol K).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Protocol, Sequence

import numpy as np

from dossier.constants import R, T_REF
from dossier.engine.roots import brent
from dossier.model.assessment import Crossover



class ThermoModel(Protocol):
    """What the engine needs from a species model (see dossier.library.lookup)."""

    kind: str

    @property
    def t_min(self) -> float: ...

    @property
    def t_max(self) -> float: ...

    def cp(self, T): ...

    def h(self, T): ...

    def s(self, T): ...


@dataclass(frozen=True)
class ReactionThermo:
    """ΔrX°(T) of one reaction, as numpy functions of temperature.

    ``nus`` are the signed coefficients (negative for reactants) and
    ``models`` the matching species models, in the same order.
    """

    nus: tuple[float, ...]
    models: tuple[ThermoModel, ...]

    def __post_init__(self) -> None:
        if len(self.nus) != len(self.models):
            raise ValueError("one coefficient per model")

    def _sum(self, attr: str, T) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        total = np.zeros_like(T)
        for nu, model in zip(self.nus, self.models):
            total = total + nu * getattr(model, attr)(T)
        return total

    def dCp(self, T) -> np.ndarray:
        return self._sum("cp", T)

    def dH(self, T) -> np.ndarray:
        return self._sum("h", T)

    def dS(self, T) -> np.ndarray:
        return self._sum("s", T)

    def dG(self, T) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        return self.dH(T) - T * self.dS(T)

    def lnK(self, T) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        return -self.dG(T) / (R * T)

    def dS_surroundings(self, T) -> np.ndarray:
        """Entropy change of the surroundings, −ΔrH°/T, J/(mol K)."""
        T = np.asarray(T, dtype=float)
        return -self.dH(T) / T

    def dS_universe(self, T) -> np.ndarray:
        """ΔrS° + ΔS_surr, J/(mol K); equals −ΔrG°/T."""
        T = np.asarray(T, dtype=float)
        return self.dS(T) + self.dS_surroundings(T)

    def q_surroundings(self, T) -> np.ndarray:
        """Heat received by the surroundings per mole of reaction, −ΔrH°, J/mol."""
        return -self.dH(T)

    @property
    def data_range(self) -> tuple[float, float]:
        """The temperatures where every model is inside its own validity range."""
        lo = max(m.t_min for m in self.models)
        hi = min(m.t_max for m in self.models)
        return lo, hi

    @property
    def breakpoints(self) -> tuple[float, ...]:
        """All interior joins of the piecewise models, sorted."""
        pts: set[float] = set()
        for m in self.models:
            pts.update(getattr(m, "breakpoints", ()))
        return tuple(sorted(pts))

    def crossovers(self, t_low: float, t_high: float, samples: int = 4001) -> tuple[Crossover, ...]:
        """Every temperature in [t_low, t_high] where ΔrG° = 0.

        Sign changes are bracketed on a fine grid (joined with the models'
        breakpoints) and refined with Brent's method.  A tangent root, where
        ΔrG° touches zero without changing sign, sits at an extremum of ΔrG°,
        that is a root of d(ΔrG°)/dT = −ΔrS°; those extrema are located the same
        way and kept when ΔrG° there is zero to within round-off.
        """
        if not t_high > t_low:
            return ()
        grid = sorted_distinct(np.concatenate([
            np.linspace(t_low, t_high, samples),
            [b for b in self.breakpoints if t_low < b < t_high],
        ]))
        g = self.dG(grid)
        scale = max(float(np.max(np.abs(self.dH(grid)))), 1.0)
        found: list[Crossover] = []

        def g_scalar(t: float) -> float:
            return float(self.dG(np.array([t]))[0])

        for i in range(len(grid) - 1):
            a, b = grid[i], grid[i + 1]
            ga, gb = g[i], g[i + 1]
            if ga == 0.0:
                if i == 0 or np.sign(g[i - 1]) != np.sign(gb):
                    found.append(Crossover(float(a), _direction(g[i - 1] if i else ga, gb)))
                continue
            if ga * gb < 0:
                root = brent(g_scalar, a, b, xtol=1e-9, rtol=1e-14, maxiter=100)
                found.append(Crossover(float(root), _direction(ga, gb)))
        if g[-1] == 0.0 and (len(grid) < 2 or g[-2] != 0.0):
            found.append(Crossover(float(grid[-1]), _direction(g[-2], g[-1])))

        # Tangent roots: extrema of ΔrG° (roots of ΔrS°) where ΔrG° ≈ 0.
        s = self.dS(grid)
        for i in range(len(grid) - 1):
            if s[i] * s[i + 1] < 0:
                t_ext = brent(lambda t: float(self.dS(np.array([t]))[0]), grid[i], grid[i + 1],
                              xtol=1e-9, rtol=1e-14, maxiter=100)
                g_ext = g_scalar(t_ext)
                if abs(g_ext) <= 1e-9 * scale and not any(abs(c.T - t_ext) < 1e-3 for c in found):
                    found.append(Crossover(float(t_ext), "touches zero"))
        return tuple(sorted(found, key=lambda c: c.T))


def _direction(g_before: float, g_after: float) -> str:
    if g_before > 0 > g_after or (g_before > 0 and g_after == 0):
        return "favourable above"
    if g_before < 0 < g_after or (g_before < 0 and g_after == 0):
        return "favourable below"
    return "touches zero"


def temperature_grid(t_low: float, t_high: float, extra: Sequence[float] = (),
                     steps: Sequence[float] = (1.0, 2.0, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0,
                                               200.0, 250.0, 500.0, 1000.0),
                     min_step: float = 5.0, max_points: int = 41) -> np.ndarray:
    """A readable grid over a window: round steps, the ends, plus given points.

    The step is the first of ``steps`` not below ``min_step`` with which the
    window needs at most ``max_points`` rows (the assessment passes its method
    settings); the window ends and every extra temperature are kept exactly as
    given.
    """
    span = t_high - t_low
    chosen = steps[-1]
    for st in steps:
        if st >= min_step and span / st <= max_points - 2:
            chosen = st
            break
    if span / chosen > max_points - 2:
        # wider than the largest step allows: a round step (1, 2, 2.5 or 5 times a
        # power of ten) that keeps the grid within max_points rows, for any window
        decade = 10.0 ** math.floor(math.log10(span / (max_points - 2)))
        chosen = next(decade * m for m in (1.0, 2.0, 2.5, 5.0, 10.0)
                      if span / (decade * m) <= max_points - 2)
    inner = np.arange(np.ceil(t_low / chosen) * chosen, t_high, chosen)
    pts = np.concatenate([[t_low], inner, [t_high], np.asarray(list(extra), dtype=float)])
    return sorted_distinct(np.round(pts, 9))


def sorted_distinct(values: np.ndarray) -> np.ndarray:
    """The distinct values of a finite float array in ascending order: ``np.unique``
    without its first-call import of ``numpy.ma`` (about 14 ms of `dossier evaluate`)."""
    v = np.sort(np.asarray(values, dtype=float).ravel())
    if v.size == 0:
        return v
    return v[np.concatenate(([True], v[1:] != v[:-1]))]
