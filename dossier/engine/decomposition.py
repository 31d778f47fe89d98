"""Maximum decomposition energy by linear programming.

Maximise the heat released over non-negative amounts of a fixed set of
simple products subject to the element balance - a linear programme (our
formulation; the products and their enthalpies of formation come from the
caller, i.e. the species library).  It is solved here by enumerating the
vertices of the feasible set (see :func:`min_cost_vertex`), not by a general
LP library: the programme is tiny (about a dozen products, a handful of
elements) and importing a general solver would cost more start-up time than
the whole rest of ``dossier evaluate``.

Pure computation, no I/O.  Enthalpies in J/mol, energies per mass in J/g.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from dossier.engine.energetics import FormulaLike, composition_of, molar_mass_of
from dossier.engine.settings import DEFAULT
from dossier.errors import CaseError, SpeciesError

WATER_CHOICE = (
    "Recommended product set: CO2(g), CO(g), H2O(g), N2(g), O2(g), H2(g), "
    "C(s), plus HX(g) for halogens. Water is taken as gas: at the "
    "temperatures of a decomposition the water formed is vapour, and the "
    "heat of condensation is only given back on cooling to 25 degC, where "
    "it no longer drives the runaway. Passing H2O(l) instead gives the "
    "larger figure quoted as 'H2O liquid' (the programme picks whichever "
    "of the candidates releases more heat)."
)


@dataclass(frozen=True)
class Product:
    """A candidate decomposition product: name, formula and ΔfH° (J/mol)."""

    name: str
    formula: FormulaLike
    hf_J_per_mol: float


@dataclass(frozen=True)
class Component:
    """One substance of a mixture: formula, ΔfH° (J/mol) and mass fraction."""

    formula: FormulaLike
    hf_J_per_mol: float
    mass_fraction: float = 1.0
    name: str | None = None


@dataclass(frozen=True)
class DecompositionEnergy:
    """Maximum heat released by decomposition into the given products.

    ``energy_J_per_g`` is positive when heat is released.  ``products`` are
    the amounts chosen, in mol per gram of substance/mixture (only those
    above 1e-12 mol/g); ``molar_mass`` is set for a single substance, so
    that :attr:`products_per_mole` can give mol per mol.
    """

    energy_J_per_g: float
    products: tuple[tuple[str, float], ...]
    threshold_J_per_g: float
    exceeds_threshold: bool
    molar_mass: float | None = None
    note: str = field(default=WATER_CHOICE, repr=False)

    @property
    def energy_J_per_kg(self) -> float:
        return self.energy_J_per_g * 1000.0

    @property
    def products_per_mole(self) -> tuple[tuple[str, float], ...] | None:
        if self.molar_mass is None:
            return None
        return tuple((n, x * self.molar_mass) for n, x in self.products)


MAX_BASES = 50_000
"""Most column subsets :func:`min_cost_vertex` will enumerate (C(k, r) for k
products and r independent elements); C(12, 6) = 924 for a dozen products."""

_FEASIBILITY_TOL = 1e-10
"""Tolerance on amounts and on the element balance, relative to the largest
element amount (the right-hand side is scaled to 1 before solving)."""


def min_cost_vertex(A: np.ndarray, rhs: np.ndarray, cost: np.ndarray) -> np.ndarray | None:
    """Minimise ``cost @ n`` subject to ``A n = rhs``, ``n >= 0``; None if infeasible.

    Vertex enumeration, exact up to rounding.  The feasible set
    {n >= 0 : A n = rhs} is a polyhedron whose vertices are its basic
    feasible solutions: with r = rank(A), a vertex has its non-zero
    amounts on r linearly independent columns and is the unique solution
    of the equations restricted to them.  A linear objective that is
    bounded below on a non-empty polyhedron with vertices attains its
    minimum at a vertex (fundamental theorem of linear programming).  So
    every subset of r columns is tried: subsets that are not linearly
    independent are skipped, the restricted system is solved (in the
    least-squares sense, which also tells whether ``rhs`` can be matched at
    all), solutions that are negative or do not match ``rhs`` within
    :data:`_FEASIBILITY_TOL` are dropped, and the cheapest of the rest is
    returned (the first in subset order among equally cheap ones).

    Here the objective is bounded: every column (a product's element
    counts) is non-negative and non-zero, so ``A n = rhs`` with ``n >= 0``
    bounds every amount.  Columns whose elements are missing from ``rhs``
    must be zero and are removed first, which keeps the enumeration small
    (C(7, 4) = 35 subsets for a CHNO substance and seven products).  The
    caller scales ``rhs`` to a largest entry of 1.
    """
    m, k = A.shape
    x_full = np.zeros(k)
    absent = rhs <= 0.0
    usable = ~np.any(A[absent] > 0.0, axis=0)
    if not np.any(usable):
        return x_full if not np.any(rhs > _FEASIBILITY_TOL) else None
    cols = np.flatnonzero(usable)
    A_u = A[:, cols]
    r = int(np.linalg.matrix_rank(A_u))
    n_bases = math.comb(len(cols), r)
    if n_bases > MAX_BASES:
        raise SpeciesError(
            f"{len(cols)} candidate products over {r} independent elements give "
            f"{n_bases} bases to enumerate, more than the {MAX_BASES} this solver allows; "
            "pass fewer candidate products"
        )
    subsets = np.array(list(itertools.combinations(range(len(cols)), r)), dtype=int)
    B = np.transpose(A_u[:, subsets], (1, 0, 2))          # (bases, m, r)
    U, sv, Vt = np.linalg.svd(B, full_matrices=False)     # sv descending
    independent = sv[:, -1] > sv[:, 0] * max(m, r) * np.finfo(float).eps
    sv_safe = np.where(independent[:, None], sv, 1.0)
    x = np.einsum("nij,ni->nj", Vt, np.einsum("nmi,m->ni", U, rhs) / sv_safe)
    residual = np.einsum("nmi,ni->nm", B, x) - rhs
    tol_balance = _FEASIBILITY_TOL * max(1.0, float(np.max(np.abs(A_u))))
    feasible = (independent
                & np.all(np.abs(residual) <= tol_balance, axis=1)
                & np.all(x >= -_FEASIBILITY_TOL, axis=1))
    if not np.any(feasible):
        return None
    x = np.maximum(x[feasible], 0.0)
    chosen = subsets[feasible]
    objective = np.einsum("ni,ni->n", x, cost[cols][chosen])
    best = int(np.argmin(objective))
    x_full[cols[chosen[best]]] = x[best]
    return x_full


def _solve_max_energy(b: dict[str, float], hf_per_g: float, charge_per_g: float,
                      products: Sequence[Product], label: str,
                      molar_mass: float | None, threshold_J_per_g: float) -> DecompositionEnergy:
    if abs(charge_per_g) > 1e-9:
        raise CaseError(f"{label}: the charges do not balance, so no set of neutral "
                        "products can be formed")
    if not products:
        raise SpeciesError(f"{label}: no candidate decomposition products were given")
    prod_comp = []
    for p in products:
        comp, charge, text = composition_of(p.formula)
        if charge:
            raise SpeciesError(f"candidate product '{p.name}' ({text}) is charged; "
                               "products must be neutral")
        hf = float(p.hf_J_per_mol)
        if not math.isfinite(hf):
            raise SpeciesError(f"candidate product '{p.name}' has no finite enthalpy of formation")
        prod_comp.append(comp)
    uncovered = sorted(el for el, n in b.items() if n > 0 and not any(el in c for c in prod_comp))
    if uncovered:
        raise SpeciesError(
            f"{label}: no candidate product contains {', '.join(uncovered)}; add a product "
            "for each element (at least the element in its reference state)"
        )
    elements = sorted(set(b) | {el for c in prod_comp for el in c})
    A = np.array([[c.get(el, 0.0) for c in prod_comp] for el in elements])
    rhs = np.array([b.get(el, 0.0) for el in elements])
    cost = np.array([float(p.hf_J_per_mol) for p in products])
    # Scale the amounts so that the tolerances are relative to them.
    scale = max(float(np.max(np.abs(rhs))), 1e-300)
    x = min_cost_vertex(A, rhs / scale, cost)
    if x is None:
        raise SpeciesError(
            f"{label}: the candidate products cannot balance the elements "
            "(no non-negative amounts of them carry exactly the elements of the "
            "substance); include each element in its reference state "
            "(C(s), H2(g), N2(g), O2(g), ...)"
        )
    x = x * scale
    h_products = float(cost @ x)
    energy = hf_per_g - h_products
    chosen = tuple((p.name, float(n)) for p, n in zip(products, x) if n > 1e-12)
    return DecompositionEnergy(energy, chosen, threshold_J_per_g, energy >= threshold_J_per_g,
                               molar_mass)


def max_decomposition_energy(formula: FormulaLike, hf_J_per_mol: float,
                             products: Sequence[Product],
                             threshold_J_per_g: float = DEFAULT.un_energy_J_per_g
                             ) -> DecompositionEnergy:
    """Maximum decomposition energy of one substance, J/g (positive = released).

    Minimises Σ n_j ΔfH°_j over n_j >= 0 subject to the element balance
    (a linear programme, solved exactly by vertex enumeration in
    :func:`min_cost_vertex`), per gram of substance, and compares
    the result with ``threshold_J_per_g`` (the 500 J/g of the UN screening).
    """
    comp, charge, text = composition_of(formula)
    M = molar_mass_of(comp)
    hf = float(hf_J_per_mol)
    if not math.isfinite(hf):
        raise CaseError(f"enthalpy of formation of '{text}' must be a finite number")
    b = {el: n / M for el, n in comp.items()}
    return _solve_max_energy(b, hf / M, charge / M, products, f"'{text}'", M, threshold_J_per_g)


def max_decomposition_energy_mixture(components: Sequence[Component],
                                     products: Sequence[Product],
                                     threshold_J_per_g: float = DEFAULT.un_energy_J_per_g
                                     ) -> DecompositionEnergy:
    """Maximum decomposition energy of a mixture (reaction mass), J/g.

    Element amounts and enthalpies per gram are summed with the mass
    fractions, which must add up to 1 (within 1e-6).
    """
    if not components:
        raise CaseError("a mixture needs at least one component")
    total = sum(float(c.mass_fraction) for c in components)
    if any(float(c.mass_fraction) < 0 for c in components) or abs(total - 1.0) > 1e-6:
        raise CaseError(f"mass fractions of the mixture must be non-negative and add up to 1, "
                        f"they add up to {total:.6g}")
    b: dict[str, float] = {}
    hf_per_g = 0.0
    charge_per_g = 0.0
    names = []
    for c in components:
        comp, charge, text = composition_of(c.formula)
        M = molar_mass_of(comp)
        w = float(c.mass_fraction)
        hf = float(c.hf_J_per_mol)
        if not math.isfinite(hf):
            raise CaseError(f"enthalpy of formation of '{c.name or text}' must be a finite number")
        for el, n in comp.items():
            b[el] = b.get(el, 0.0) + w * n / M
        hf_per_g += w * hf / M
        charge_per_g += w * charge / M
        names.append(c.name or text)
    return _solve_max_energy(b, hf_per_g, charge_per_g, products,
                             "mixture of " + ", ".join(names), None, threshold_J_per_g)
