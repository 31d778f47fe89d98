"""Equilibrium extent and conversion of one reaction (pure, numeric).

The feed is stoichiometric: each reactant enters with |ν_i| mol (one mole of
reaction at complete conversion), products with none, and inert gases with
``inert_per_basis`` mol per mol of the basis reactant fed.  Activities follow
the standard state of the case format:

* ideal gas: a_i = y_i p / p°, with p the total pressure;
* pure solid or liquid: a_i = 1;
* ideal dilute solute: a_i = m_i / (1 mol/kg).  With no solvent amount in a
  case, aqueous species are taken per kilogram of water: the stoichiometric
  feed is 1 mol of reaction per kg of water (reactants at |ν_i| mol/kg).  This
  is stated on every dossier that uses it.

The extent is found by solving ln Q(ξ) = ln K.  To survive K between
10^-300 and 10^+300 the unknown is u with ξ = expit(u) (ξ_max = 1), and every
amount is carried as a logarithm: ln ξ = −log1p(e^−u),
ln(1 − ξ) = −log1p(e^u).  ln Q is monotone in u, so a bracketed root on
u ∈ [−750, 750] is reliable.  Where Q does not depend on ξ at all (only pure
condensed phases, or one pure gas with condensed partners), the answer is all
or nothing and is reported as such.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from dossier.constants import P_STANDARD
from dossier.engine.roots import brent

CONDENSED = ("s", "l")


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


def _softplus(x: float) -> float:
    """log(1 + e^x) without overflow."""
    return x + math.log1p(math.exp(-x)) if x > 0 else math.log1p(math.exp(x))


@dataclass(frozen=True)
class EquilibriumSystem:
    species: tuple[EqSpecies, ...]
    pressure: float  # Pa, total
    inert_gas_per_reaction: float = 0.0  # mol of inert gas per mol of reaction fed

    def depends_on_extent(self) -> bool:
        """True when the reaction quotient changes with the extent.

        It does not when every species is a pure condensed phase, or when the
        gases all sit on one side of the equation with no inert gas: they are
        then made (or used) in a fixed ratio, so their mole fractions never
        change (e.g. CaCO3(s) -> CaO(s) + CO2(g), or
        2 NaHCO3(s) -> Na2CO3(s) + H2O(g) + CO2(g)).
        """
        if any(s.phase == "aq" for s in self.species):
            return True
        gases = [s for s in self.species if s.phase == "g"]
        if not gases:
            return False
        if self.inert_gas_per_reaction > 0.0:
            return True
        one_side = all(s.nu > 0 for s in gases) or all(s.nu < 0 for s in gases)
        return not one_side

    def ln_q_fixed(self) -> float:
        """ln Q when it does not depend on the extent (gas mole fractions fixed
        by the stoichiometry)."""
        gases = [s for s in self.species if s.phase == "g"]
        total_nu = sum(abs(s.nu) for s in gases)
        ln_p = math.log(self.pressure / P_STANDARD)
        return sum(s.nu * (math.log(abs(s.nu) / total_nu) + ln_p) for s in gases)

    def ln_q(self, u: float) -> float:
        """ln Q at the extent ξ = expit(u)."""
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
        return total

    def solve(self, T: float, lnK: float) -> EquilibriumResult:
        if not math.isfinite(lnK):
            raise ValueError("ln K must be finite")
        if not self.depends_on_extent():
            lnq = self.ln_q_fixed()
            if all(s.phase in CONDENSED for s in self.species):
                why = ("every species is a pure solid or liquid (activity 1), so the model "
                       "gives all or nothing; a real liquid mixture stops at an intermediate "
                       "equilibrium that needs activity data")
            else:
                why = ("the gases are all on one side of the equation and form (or are used) "
                       "in a fixed ratio, so the reaction quotient is fixed by the pressure and "
                       "the answer is all or nothing")
            if lnK > lnq:
                return EquilibriumResult(T, lnK, 1.0, "all-or-nothing", why)
            return EquilibriumResult(T, lnK, 0.0, "all-or-nothing", why)
        lo, hi = -750.0, 750.0
        f_lo = self.ln_q(lo) - lnK
        f_hi = self.ln_q(hi) - lnK
        if f_lo >= 0:
            return EquilibriumResult(T, lnK, 0.0, "solved", "conversion below 1e-300")
        if f_hi <= 0:
            return EquilibriumResult(T, lnK, 1.0, "solved", "conversion complete to within 1e-300")
        u = brent(lambda x: self.ln_q(x) - lnK, lo, hi, xtol=1e-12, rtol=1e-14, maxiter=500)
        conversion = math.exp(-_softplus(-u))
        return EquilibriumResult(T, lnK, conversion, "solved")

    def conversions(self, temperatures: Sequence[float], lnKs: Sequence[float]) -> np.ndarray:
        return np.array([self.solve(float(t), float(k)).conversion
                         for t, k in zip(temperatures, lnKs)])
