"""Equilibrium extent and conversion of one reaction (pure, numeric).

The feed is stoichiometric: each reactant enters with |ν_i| mol (one mole of
reaction at complete conversion), products with none, and inert gases with
``inert_per_basis`` mol per mol of the basis reactant fed.  Activities follow
the standard state of the case format:

* ideal gas: a_i = y_i p / p°, with p the total pressure;
* pure solid: a_i = 1;
* liquid: the liquids of the reaction and the liquid inerts form one
  solution, a_i = γ_i x_i, with x_i the mole fraction in that solution and
  γ_i = 1 (ideal solution) unless an activity model is given
  (:mod:`dossier.engine.activity`).  A single liquid with no liquid inert is
  a pure liquid (x = 1, a = 1).  When the reaction has aqueous species, its
  liquids stay pure phases (a = 1): water is then the solvent of the solutes
  and no second, non-aqueous solution is modelled;
* ideal dilute solute: a_i = m_i / (1 mol/kg).  With no solvent amount in a
  case, aqueous species are taken per kilogram of water: the stoichiometric
  feed is 1 mol of reaction per kg of water (reactants at |ν_i| mol/kg).  This
  is stated on every dossier that uses it.

The extent is found by solving ln Q(ξ) = ln K.  To survive K between
10^-300 and 10^+300 the unknown is u with ξ = expit(u) (ξ_max = 1), and every
amount is carried as a logarithm: ln ξ = −log1p(e^−u),
ln(1 − ξ) = −log1p(e^u).  ln Q is monotone in u, so a bracketed root on
u ∈ [−750, 750] is reliable.  With an activity model, ln Q need not be
monotone (the model may predict that the liquid splits into two phases along
the way): ln Q − ln K is then scanned along the extent, every crossing from
below is refined, the one of least Gibbs energy is kept, and the result says
so.  Where Q does not depend on ξ at all (only pure condensed phases, or each
mixture's members all on one side of the equation), the answer is all or
nothing and is reported as such.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Protocol, Sequence

import numpy as np

from dossier.constants import P_STANDARD
from dossier.engine.roots import brent
from dossier.engine.settings import DEFAULT

CONDENSED = ("s", "l")

_U_LO, _U_HI = -750.0, 750.0


@dataclass(frozen=True)
class EqSpecies:
    nu: float  # signed: negative for reactants
    phase: str  # "g" | "l" | "s" | "aq"


@dataclass(frozen=True)
class EquilibriumResult:
    T: float
    lnK: float
    conversion: float  # of the basis reactant, 0..1
    mode: str  # "solved" | "all-or-nothing"
    note: str = ""
    #: The liquid solution at equilibrium (empty without one): mole fractions and
    #: activity coefficients of its members, the reaction's liquids then the inerts.
    x: tuple[float, ...] = ()
    gammas: tuple[float, ...] = ()


class ActivityCoefficients(Protocol):
    """Activity coefficients of the members of the liquid solution."""

    def ln_gammas(self, T: float, xs: Sequence[float]) -> Sequence[float]: ...


def _softplus(x: float) -> float:
    """log(1 + e^x) without overflow."""
    return x + math.log1p(math.exp(-x)) if x > 0 else math.log1p(math.exp(x))


def _logsumexp(values: Sequence[float]) -> float:
    m = max(values)
    return m + math.log(sum(math.exp(v - m) for v in values))


def _one_sided(nus: Sequence[float]) -> bool:
    return all(nu > 0 for nu in nus) or all(nu < 0 for nu in nus)


@dataclass(frozen=True)
class EquilibriumSystem:
    """One reaction's species, the pressure, the inerts fed and the liquids' activity
    model: everything ln Q(ξ) depends on."""

    species: tuple[EqSpecies, ...]
    pressure: float  # Pa, total
    inert_gas_per_reaction: float = 0.0  # mol of inert gas per mol of reaction fed
    #: mol of each liquid inert (solvent) per mol of reaction fed
    inert_liquids_per_reaction: tuple[float, ...] = ()
    #: activity coefficients of the liquid solution; None for an ideal solution
    activity: ActivityCoefficients | None = None
    #: points along the extent on which ln Q is scanned when an activity model is used
    scan_points: int = DEFAULT.activity_scan_points

    @property
    def liquid_members(self) -> tuple[int, ...]:
        """Indices of the reaction's liquids that form a solution (empty when the
        liquids are pure phases: a single liquid with no liquid inert, or a reaction
        with aqueous species)."""
        if any(s.phase == "aq" for s in self.species):
            return ()
        liquids = tuple(i for i, s in enumerate(self.species) if s.phase == "l")
        if not liquids or len(liquids) + len(self._solution_inerts()) < 2:
            return ()
        return liquids

    @property
    def has_solution(self) -> bool:
        return bool(self.liquid_members)

    def _solution_inerts(self) -> tuple[float, ...]:
        return tuple(n for n in self.inert_liquids_per_reaction if n > 0)

    def depends_on_extent(self) -> bool:
        """True when the reaction quotient changes with the extent.

        It does not when every species is a pure condensed phase, or when each
        mixture (the gas, the liquid solution) has all its members on one side
        of the equation and no inert: they are then made (or used) in a fixed
        ratio, so their mole fractions never change (e.g. CaCO3(s) -> CaO(s) +
        CO2(g), or 2 NaHCO3(s) -> Na2CO3(s) + H2O(g) + CO2(g)).
        """
        if any(s.phase == "aq" for s in self.species):
            return True
        gases = [s.nu for s in self.species if s.phase == "g"]
        if gases and (self.inert_gas_per_reaction > 0.0 or not _one_sided(gases)):
            return True
        liquids = [self.species[i].nu for i in self.liquid_members]
        return bool(liquids) and (bool(self._solution_inerts()) or not _one_sided(liquids))

    def fixed_note(self) -> str:
        """Why the answer is all or nothing (for a system that does not depend on the
        extent)."""
        if all(s.phase in CONDENSED for s in self.species) and not self.has_solution:
            return ("every species is a pure solid or a single liquid (activity 1), so the "
                    "model gives all or nothing")
        mixtures = [m for m, present in (("gases", any(s.phase == "g" for s in self.species)),
                                         ("liquids", self.has_solution)) if present]
        return (f"the {' and the '.join(mixtures)} are all on one side of the equation and form "
                "(or are used) in a fixed ratio, so the reaction quotient is fixed"
                + (" by the pressure" if mixtures == ["gases"] else "")
                + " and the answer is all or nothing")

    def ln_q_fixed(self, T: float | None = None) -> float:
        """ln Q when it does not depend on the extent (mole fractions fixed by the
        stoichiometry)."""
        gases = [s for s in self.species if s.phase == "g"]
        total_nu = sum(abs(s.nu) for s in gases)
        ln_p = math.log(self.pressure / P_STANDARD)
        out = sum(s.nu * (math.log(abs(s.nu) / total_nu) + ln_p) for s in gases)
        members = self.liquid_members
        if members:
            nus = [self.species[i].nu for i in members]
            total = sum(abs(nu) for nu in nus)
            xs = [abs(nu) / total for nu in nus]
            out += sum(nu * math.log(x) for nu, x in zip(nus, xs))
            if self.activity is not None and T is not None:
                out += sum(nu * g for nu, g in zip(nus, self.activity.ln_gammas(T, xs)))
        return out

    def _ln_amounts(self, u: float) -> list[float]:
        """ln n of every species at the extent ξ = expit(u) (condensed ones included)."""
        ln_xi = -_softplus(-u)  # ln ξ
        ln_rest = -_softplus(u)  # ln (1 − ξ)
        return [math.log(abs(s.nu)) + (ln_rest if s.nu < 0 else ln_xi) for s in self.species]

    def _ln_x(self, u: float) -> list[float]:
        """ln x of the solution's members (the reaction's liquids, then the inerts)."""
        ln_n = self._ln_amounts(u)
        values = [ln_n[i] for i in self.liquid_members]
        values += [math.log(n) for n in self._solution_inerts()]
        ln_tot = _logsumexp(values)
        return [v - ln_tot for v in values]

    def solution_state(self, u: float, T: float) -> tuple[tuple[float, ...], tuple[float, ...]]:
        """Mole fractions and ln γ of the solution's members (liquids, then inerts)."""
        if not self.has_solution:
            return (), ()
        xs = tuple(math.exp(v) for v in self._ln_x(u))
        if self.activity is None:
            return xs, tuple(0.0 for _x in xs)
        return xs, tuple(float(g) for g in self.activity.ln_gammas(T, xs))

    def ln_q(self, u: float, T: float | None = None) -> float:
        """ln Q at the extent ξ = expit(u) (T is needed only by an activity model)."""
        ln_xi = -_softplus(-u)  # ln ξ
        ln_rest = -_softplus(u)  # ln (1 − ξ)
        ln_gas: list[float] = []
        terms: list[tuple[float, float]] = []  # (nu, ln n) for gases
        total = 0.0
        for s in self.species:
            if s.phase in CONDENSED:
                continue
            ln_n = math.log(abs(s.nu)) + (ln_rest if s.nu < 0 else ln_xi)
            if s.phase == "g":
                ln_gas.append(ln_n)
                terms.append((s.nu, ln_n))
            else:  # aq: molality per kg water, feed of 1 mol reaction per kg
                total += s.nu * ln_n
        if terms:
            if self.inert_gas_per_reaction > 0:
                ln_gas.append(math.log(self.inert_gas_per_reaction))
            m = max(ln_gas)
            ln_tot = m + math.log(sum(math.exp(v - m) for v in ln_gas))
            ln_p = math.log(self.pressure / P_STANDARD)
            for nu, ln_n in terms:
                total += nu * (ln_n - ln_tot + ln_p)
        members = self.liquid_members
        if members:
            ln_x = self._ln_x(u)
            ln_g = [0.0] * len(ln_x)
            if self.activity is not None:
                if T is None:
                    raise ValueError("an activity model needs the temperature")
                ln_g = list(self.activity.ln_gammas(T, [math.exp(v) for v in ln_x]))
            for k, i in enumerate(members):
                total += self.species[i].nu * (ln_x[k] + ln_g[k])
        return total

    def solve(self, T: float, lnK: float) -> EquilibriumResult:
        if not math.isfinite(lnK):
            raise ValueError("ln K must be finite")
        if not self.depends_on_extent():
            lnq = self.ln_q_fixed(T)
            conversion = 1.0 if lnK > lnq else 0.0
            u = _U_HI if lnK > lnq else _U_LO
            return self._result(T, lnK, conversion, "all-or-nothing", self.fixed_note(), u)
        f_lo = self.ln_q(_U_LO, T) - lnK
        f_hi = self.ln_q(_U_HI, T) - lnK
        if f_lo >= 0:
            return self._result(T, lnK, 0.0, "solved", "conversion below 1e-300", _U_LO)
        if f_hi <= 0:
            return self._result(T, lnK, 1.0, "solved", "conversion complete to within 1e-300",
                                _U_HI)
        note = ""
        if self.activity is None or not self.has_solution:
            lo, hi = _U_LO, _U_HI
        else:
            lo, hi, note = self._bracket_least_gibbs(T, lnK)
        u = brent(lambda x: self.ln_q(x, T) - lnK, lo, hi, xtol=1e-12, rtol=1e-14, maxiter=500)
        conversion = math.exp(-_softplus(-u))
        return self._result(T, lnK, conversion, "solved", note, u)

    def _result(self, T: float, lnK: float, conversion: float, mode: str, note: str,
                u: float) -> EquilibriumResult:
        xs, ln_g = self.solution_state(u, T)
        return EquilibriumResult(T, lnK, conversion, mode, note, xs,
                                 tuple(math.exp(g) for g in ln_g))

    def _bracket_least_gibbs(self, T: float, lnK: float) -> tuple[float, float, str]:
        """The bracket of the equilibrium when an activity model is used.

        ln Q − ln K is scanned on extents evenly spaced in (0, 1).  Where it crosses
        zero from below more than once, the Gibbs energy of the one-phase mixture,
        whose slope along the extent is RT (ln Q − ln K), is lowest at one of those
        crossings; that one is kept.
        """
        n = max(int(self.scan_points), 4)
        us = [_U_LO] + [math.log(k / (n - k)) for k in range(1, n)] + [_U_HI]
        fs = [self.ln_q(u, T) - lnK for u in us]
        ups = [k for k in range(len(us) - 1) if fs[k] < 0 <= fs[k + 1]]
        monotone = all(b >= a for a, b in zip(fs, fs[1:]))
        if len(ups) == 1 and monotone:
            return us[ups[0]], us[ups[0] + 1], ""
        note = ("the activity model gives a reaction quotient that is not monotone along "
                "the extent: it predicts that the liquid may split into two phases on the "
                "way, which a one-phase calculation does not follow; the one-phase state of "
                "least Gibbs energy is shown, and the conversion is uncertain there")
        best = min(ups, key=lambda k: self._gibbs(0.5, us[k], T, lnK))
        return us[best], us[best + 1], note

    def _gibbs(self, xi_from: float, u_to: float, T: float, lnK: float) -> float:
        """(G(ξ_to) − G(ξ_from)) / RT of the one-phase mixture, by Simpson's rule in ξ."""
        xi_to = math.exp(-_softplus(-u_to))
        steps = 64
        h = (xi_to - xi_from) / steps
        total = 0.0
        for k in range(steps + 1):
            xi = min(max(xi_from + k * h, 1e-300), 1.0 - 1e-16)
            weight = 1 if k in (0, steps) else (4 if k % 2 else 2)
            total += weight * (self.ln_q(math.log(xi) - math.log1p(-xi), T) - lnK)
        return total * h / 3

    def conversions(self, temperatures: Sequence[float], lnKs: Sequence[float]) -> np.ndarray:
        return np.array([self.solve(float(t), float(k)).conversion
                         for t, k in zip(temperatures, lnKs)])
