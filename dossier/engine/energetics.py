"""Energetic-material screening: oxygen balance, explosophore groups, the
UN Appendix 6 screening for explosive properties, and the maximum
decomposition energy by linear programming.

Pure computation, no I/O.  Enthalpies in J/mol, energies per mass in J/g
(the unit the UN screening threshold is written in), temperatures in K.

Provenance
----------
* Oxygen balance, OB% = -1600 (2x + y/2 - z) / M for CxHyNwOz: the formula
  of the UN Manual of Tests and Criteria, Appendix 6 (for the reaction
  CxHyOz + [x + y/4 - z/2] O2 -> x CO2 + y/2 H2O), as quoted in ECHA
  registration dossiers; the same formula with a metal term appears in
  US Army TM 9-1300-214, Military Explosives (1984) - from memory.
* Chemical groups (Table A6.1) and the screening clauses (a)-(c): see
  :data:`UN_SCREENING_SOURCE` and :data:`GROUPS_SOURCE`.
* Maximum decomposition energy: maximise the heat released over
  non-negative amounts of a fixed set of simple products subject to the
  element balance - a linear programme (our formulation; the products and
  their enthalpies of formation come from the caller, i.e. the species
  library).  It is solved here by enumerating the vertices of the feasible
  set (see :func:`_min_cost_vertex`), not by a general LP library: the
  programme is tiny (about a dozen products, a handful of elements) and
  importing a general solver would cost more start-up time than the whole
  rest of ``dossier evaluate``.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Literal, Mapping, Sequence, Union

import numpy as np

from dossier.chem.elements import ATOMIC_WEIGHTS
from dossier.errors import CaseError, FormulaError, SpeciesError
from dossier.chem.formula import Formula, parse_formula

FormulaLike = Union[Formula, str, Mapping[str, "float | Fraction | int"]]

# --------------------------------------------------------------------------
# Oxygen balance
# --------------------------------------------------------------------------

OXYGEN_PER_ATOM: dict[str, float] = {
    # element: O atoms taken up per atom of the element in the assumed product
    "C": 2.0,    # CO2
    "H": 0.5,    # H2O
    "N": 0.0,    # N2
    "O": -1.0,   # the oxygen itself
    "S": 2.0,    # SO2
    "P": 2.5,    # P4O10
    "B": 1.5,    # B2O3
    "Si": 2.0,   # SiO2
    # metals: to the oxide named
    "Li": 0.5, "Na": 0.5, "K": 0.5, "Rb": 0.5, "Cs": 0.5,   # M2O
    "Be": 1.0, "Mg": 1.0, "Ca": 1.0, "Sr": 1.0, "Ba": 1.0,  # MO
    "Zn": 1.0, "Cu": 1.0, "Pb": 1.0, "Ni": 1.0,             # MO
    "Al": 1.5, "Fe": 1.5, "Cr": 1.5,                        # M2O3
    "Ti": 2.0, "Zr": 2.0,                                   # MO2
}
"""Oxygen taken up per atom in the products assumed by :func:`oxygen_balance`."""

HALOGENS = ("F", "Cl", "Br", "I")
_NONMETALS_WITH_OXIDES = {"C", "H", "N", "O", "S", "P", "B", "Si"}

OXYGEN_BALANCE_ASSUMPTIONS = (
    "Products assumed: C -> CO2, H -> H2O, N -> N2, S -> SO2, P -> P4O10, "
    "B -> B2O3, Si -> SiO2, and each listed metal to the oxide in "
    "OXYGEN_PER_ATOM (alkali metals M2O; Be, Mg, alkaline earths, Zn, Cu, "
    "Pb, Ni MO; Al, Fe, Cr M2O3; Ti, Zr MO2). Halogens take oxygen from "
    "nothing: each halogen atom first forms a halide with a metal (using one "
    "unit of the metal's oxide valence), then HX with hydrogen; halogen left "
    "over is set free as X2. Any other element is refused rather than "
    "guessed. Charged formulas are refused (the balance is for a neutral "
    "substance)."
)


def _composition(formula: FormulaLike) -> tuple[dict[str, float], int, str]:
    """Element counts (floats), charge and a display text for a formula."""
    if isinstance(formula, Formula):
        return {el: float(n) for el, n in formula.elements}, formula.charge, formula.text
    if isinstance(formula, str):
        f = parse_formula(formula)
        return {el: float(n) for el, n in f.elements}, f.charge, f.text
    comp: dict[str, float] = {}
    for el, n in dict(formula).items():
        if el not in ATOMIC_WEIGHTS:
            raise FormulaError(f"'{el}' is not an element symbol")
        v = float(n)
        if not math.isfinite(v) or v < 0:
            raise FormulaError(f"element count for '{el}' must be a non-negative number, got {n!r}")
        if v:
            comp[el] = comp.get(el, 0.0) + v
    if not comp:
        raise FormulaError("composition has no elements")
    text = "".join(f"{el}{n:g}" for el, n in sorted(comp.items()))
    return comp, 0, text


def _molar_mass(comp: Mapping[str, float]) -> float:
    return float(sum(ATOMIC_WEIGHTS[el] * n for el, n in comp.items()))


def oxygen_balance(formula_or_composition: FormulaLike) -> float:
    """Oxygen balance in percent (g of O2 excess per 100 g; negative = deficient).

    OB% = -1600 * (oxygen demand in atoms) / M, with M in g/mol.  For
    CxHyNwOz this is -1600 (2x + y/2 - z) / M.  Other elements follow
    :data:`OXYGEN_BALANCE_ASSUMPTIONS`; an element with no assumed product
    raises :class:`FormulaError`.
    """
    comp, charge, text = _composition(formula_or_composition)
    if charge:
        raise FormulaError(f"oxygen balance needs a neutral formula; '{text}' has charge {charge:+d}")
    unknown = sorted(el for el in comp if el not in OXYGEN_PER_ATOM and el not in HALOGENS)
    if unknown:
        raise FormulaError(
            f"oxygen balance of '{text}': no assumed oxidation product for "
            f"{', '.join(unknown)}; only C, H, N, O, halogens, S, P, B, Si and "
            f"{', '.join(sorted(set(OXYGEN_PER_ATOM) - _NONMETALS_WITH_OXIDES))} are handled"
        )
    halogen = sum(comp.get(x, 0.0) for x in HALOGENS)
    demand = 0.0
    # Metals first bind halogen as halides: one halogen per unit of valence
    # (valence = 2 x oxygen per atom), which frees half an O per halogen.
    for el, n in comp.items():
        if el in HALOGENS or el in _NONMETALS_WITH_OXIDES:
            continue
        valence_units = 2.0 * OXYGEN_PER_ATOM[el] * n
        bound = min(halogen, valence_units)
        halogen -= bound
        demand += OXYGEN_PER_ATOM[el] * n - 0.5 * bound
    # Then hydrogen halides.
    h = comp.get("H", 0.0)
    h_bound = min(halogen, h)
    comp_rest = dict(comp)
    comp_rest["H"] = h - h_bound
    for el in _NONMETALS_WITH_OXIDES:
        demand += OXYGEN_PER_ATOM[el] * comp_rest.get(el, 0.0)
    M = _molar_mass(comp)
    return -1600.0 * demand / M


# --------------------------------------------------------------------------
# Explosophore groups (UN Manual of Tests and Criteria, Appendix 6, Table A6.1)
# --------------------------------------------------------------------------

GROUPS_SOURCE = (
    "UN Recommendations on the Transport of Dangerous Goods, Manual of Tests "
    "and Criteria, Appendix 6, Table A6.1 'Examples of chemical groups "
    "indicating explosive properties in organic materials'. The seven groups "
    "and their examples were checked against quotations of the table in "
    "ECHA registration dossiers (citing the 5th revised edition, 2009), not "
    "against the UN text itself. The SMARTS patterns are our own reading of "
    "each group. Strained rings are not in the quoted table: they are "
    "reported separately as an extra alert and do not enter the UN screening."
)

_METALS = (
    "#3,#4,#11,#12,#13,#19,#20,#21,#22,#23,#24,#25,#26,#27,#28,#29,#30,#31,"
    "#37,#38,#39,#40,#41,#42,#43,#44,#45,#46,#47,#48,#49,#50,#55,#56,#57,#58,"
    "#72,#73,#74,#75,#76,#77,#78,#79,#80,#81,#82,#83"
)


@dataclass(frozen=True)
class ExplosophoreGroup:
    """One chemical group associated with explosive properties."""

    key: str
    name: str
    examples: str
    smarts: tuple[str, ...]
    contains_oxygen: bool
    in_un_table: bool = True


EXPLOSOPHORE_GROUPS: tuple[ExplosophoreGroup, ...] = (
    ExplosophoreGroup("cc_unsaturation", "C-C unsaturation",
                      "acetylenes, acetylides, 1,2-dienes",
                      ("[#6]#[#6]", "[#6]=[#6]=[#6]"), False),
    ExplosophoreGroup("c_metal", "C-metal, N-metal",
                      "Grignard reagents, organo-lithium compounds",
                      (f"[#6]~[{_METALS}]", f"[#7]~[{_METALS}]"), False),
    ExplosophoreGroup("contiguous_nitrogen", "contiguous nitrogen atoms",
                      "azides, aliphatic azo compounds, diazonium salts, hydrazines, "
                      "sulphonylhydrazides",
                      ("[#7]~[#7]",), False),
    ExplosophoreGroup("contiguous_oxygen", "contiguous oxygen atoms",
                      "peroxides, ozonides",
                      ("[#8]~[#8]",), True),
    ExplosophoreGroup("n_o", "N-O",
                      "hydroxylamines, nitrates, nitro compounds, nitroso compounds, "
                      "N-oxides, 1,2-oxazoles",
                      ("[#7]~[#8]",), True),
    ExplosophoreGroup("n_halogen", "N-halogen",
                      "chloramines, fluoroamines",
                      ("[#7]~[F,Cl,Br,I]",), False),
    ExplosophoreGroup("o_halogen", "O-halogen",
                      "chlorates, perchlorates, iodosyl compounds",
                      ("[#8]~[F,Cl,Br,I]",), True),
)
"""The groups of Table A6.1 (see :data:`GROUPS_SOURCE`)."""

EXTRA_ALERTS: tuple[ExplosophoreGroup, ...] = (
    ExplosophoreGroup("strained_ring", "strained ring (three- or four-membered)",
                      "epoxides, aziridines, cyclopropanes, cyclobutanes",
                      ("[r3]", "[r4]"), False, in_un_table=False),
)
"""Alerts beyond Table A6.1: reported, but not used by the UN screening."""


@dataclass(frozen=True)
class GroupHit:
    key: str
    name: str
    contains_oxygen: bool
    in_un_table: bool
    matches: int


@dataclass(frozen=True)
class GroupCheck:
    """The result of looking for explosophore groups in a structure.

    ``checked`` is False when there was no structure or no toolkit; then
    ``note`` says which, e.g. "not checked (no structure toolkit)".
    """

    checked: bool
    hits: tuple[GroupHit, ...]
    note: str
    source: str = field(default=GROUPS_SOURCE, repr=False)

    @property
    def un_hits(self) -> tuple[GroupHit, ...]:
        return tuple(h for h in self.hits if h.in_un_table)

    @property
    def extra_hits(self) -> tuple[GroupHit, ...]:
        return tuple(h for h in self.hits if not h.in_un_table)


def _load_toolkit():
    """The RDKit ``Chem`` module, or None when RDKit is not installed."""
    try:
        from rdkit import Chem, RDLogger  # type: ignore
    except ImportError:
        return None
    RDLogger.DisableLog("rdApp.*")
    return Chem


def toolkit_available() -> bool:
    """True when a structure toolkit (RDKit) can be imported."""
    return _load_toolkit() is not None


def _smiles_formula(Chem, mol) -> dict[str, float]:
    comp: dict[str, float] = {}
    for atom in Chem.AddHs(mol).GetAtoms():
        sym = atom.GetSymbol()
        comp[sym] = comp.get(sym, 0.0) + 1.0
    return comp


def find_explosophores(smiles: str | None, formula: FormulaLike | None = None) -> GroupCheck:
    """Look for the Table A6.1 groups (and extra alerts) in a SMILES string.

    Without a SMILES, or without RDKit, nothing is guessed: the result has
    ``checked=False`` and says why.  When ``formula`` is given too, the
    SMILES must describe the same elements (a mismatch raises
    :class:`FormulaError`, because a wrong structure would silently drop a
    safety alert).
    """
    if smiles is None or not str(smiles).strip():
        return GroupCheck(False, (), "not checked (no structure given)")
    Chem = _load_toolkit()
    if Chem is None:
        return GroupCheck(False, (), "not checked (no structure toolkit)")
    mol = Chem.MolFromSmiles(str(smiles).strip())
    if mol is None:
        raise FormulaError(f"cannot read SMILES '{smiles}'")
    if formula is not None:
        want, _, text = _composition(formula)
        got = _smiles_formula(Chem, mol)
        if {k: round(v, 6) for k, v in want.items()} != {k: round(v, 6) for k, v in got.items()}:
            raise FormulaError(
                f"SMILES '{smiles}' has elements "
                f"{', '.join(f'{k}{v:g}' for k, v in sorted(got.items()))} but the formula "
                f"'{text}' has {', '.join(f'{k}{v:g}' for k, v in sorted(want.items()))}"
            )
    hits = []
    for group in EXPLOSOPHORE_GROUPS + EXTRA_ALERTS:
        matched: set[tuple[int, ...]] = set()
        for sm in group.smarts:
            patt = Chem.MolFromSmarts(sm)
            for match in mol.GetSubstructMatches(patt, uniquify=True):
                matched.add(tuple(sorted(match)))
        if matched:
            hits.append(GroupHit(group.key, group.name, group.contains_oxygen,
                                 group.in_un_table, len(matched)))
    if any(h.in_un_table for h in hits):
        note = "groups found: " + ", ".join(h.name for h in hits if h.in_un_table)
    else:
        note = "no Table A6.1 group found"
    return GroupCheck(True, tuple(hits), note)


# --------------------------------------------------------------------------
# UN Appendix 6 screening for explosive properties
# --------------------------------------------------------------------------

UN_ENERGY_THRESHOLD_J_PER_G = 500.0
UN_ONSET_THRESHOLD_K = 500.0 + 273.15
UN_OXYGEN_BALANCE_THRESHOLD = -200.0

UN_SCREENING_SOURCE = (
    "UN Recommendations on the Transport of Dangerous Goods, Manual of Tests "
    "and Criteria, Appendix 6 (screening procedures), explosive properties: "
    "the acceptance procedure need not be applied when (a) there are no "
    "chemical groups associated with explosive properties in the molecule; "
    "(b) the substance contains such groups which include oxygen and the "
    "calculated oxygen balance is less than -200; (c) the organic substance "
    "or homogeneous mixture of organic substances contains such groups but "
    "the exothermic decomposition energy is less than 500 J/g and the onset "
    "of exothermic decomposition is below 500 degC. Checked against "
    "quotations of the Manual in ECHA registration dossiers and the "
    "equivalent wording of REACH Annex VII, column 2; not against the UN "
    "text itself (paragraph numbers are therefore not given)."
)

Outcome = Literal["no further tests", "not excluded", "undecided"]


@dataclass(frozen=True)
class ScreeningResult:
    """Outcome of the Appendix 6 screening for explosive properties.

    ``outcome``: "no further tests" (a clause applies, named in ``clause``);
    "not excluded" (every clause was checked and none applies, so the
    acceptance procedure of the Manual is needed); "undecided" (a clause
    could still apply, but data are missing - listed in ``missing``).
    """

    outcome: Outcome
    clause: str | None
    reason: str
    groups: GroupCheck
    oxygen_balance_pct: float | None
    missing: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    source: str = field(default=UN_SCREENING_SOURCE, repr=False)


def un_screening(
    formula: FormulaLike | None = None,
    *,
    smiles: str | None = None,
    groups: GroupCheck | None = None,
    decomposition_energy_J_per_g: float | None = None,
    onset_K: float | None = None,
    organic: bool | None = None,
) -> ScreeningResult:
    """Apply the Appendix 6 screening clauses (a), (b), (c) in that order.

    ``groups`` may be passed precomputed; otherwise they are looked for in
    ``smiles`` (RDKit needed).  ``organic`` defaults to "contains carbon
    and hydrogen".  The decomposition energy is the exothermic energy as a
    positive number (e.g. from DSC), J/g; ``onset_K`` its onset, K.
    """
    notes: list[str] = []
    missing: list[str] = []
    ob = None
    comp = None
    if formula is not None:
        comp, _, _ = _composition(formula)
        try:
            ob = oxygen_balance(formula)
        except FormulaError as exc:
            notes.append(f"oxygen balance not computed: {exc.problems[0].message}")
    if groups is None:
        groups = find_explosophores(smiles, formula)
    if organic is None and comp is not None:
        organic = "C" in comp and "H" in comp
    if decomposition_energy_J_per_g is not None:
        e = float(decomposition_energy_J_per_g)
        if not math.isfinite(e) or e < 0:
            raise CaseError("decomposition energy for the UN screening must be a "
                            f"non-negative number of J/g (heat released), got {decomposition_energy_J_per_g!r}")
    extra = groups.extra_hits
    if extra:
        notes.append("extra alerts (not in Table A6.1, not used by the screening): "
                     + ", ".join(h.name for h in extra))

    def result(outcome: Outcome, clause: str | None, reason: str) -> ScreeningResult:
        return ScreeningResult(outcome, clause, reason, groups, ob, tuple(missing), tuple(notes))

    # (a) no explosophore groups
    un_hits = groups.un_hits
    if groups.checked and not un_hits:
        return result("no further tests", "(a)",
                      "no chemical group associated with explosive properties "
                      "(Table A6.1) is present in the molecule")
    # (b) only oxygen-bearing groups and OB < -200
    b_possible = True
    if groups.checked:
        if all(h.contains_oxygen for h in un_hits):
            if ob is not None and ob < UN_OXYGEN_BALANCE_THRESHOLD:
                return result("no further tests", "(b)",
                              f"the groups present ({', '.join(h.name for h in un_hits)}) all "
                              f"include oxygen and the oxygen balance {ob:.1f} % is below "
                              f"{UN_OXYGEN_BALANCE_THRESHOLD:g}")
            if ob is None:
                missing.append("formula (for the oxygen balance)")
            else:
                b_possible = False
        else:
            b_possible = False
    # (c) organic, decomposition energy < 500 J/g and onset < 500 degC
    c_possible = True
    if organic is False:
        c_possible = False
    elif decomposition_energy_J_per_g is not None and onset_K is not None:
        if organic is None:
            missing.append("whether the substance is organic (formula)")
        elif (decomposition_energy_J_per_g < UN_ENERGY_THRESHOLD_J_PER_G
              and onset_K < UN_ONSET_THRESHOLD_K):
            return result("no further tests", "(c)",
                          f"organic substance with exothermic decomposition energy "
                          f"{decomposition_energy_J_per_g:.0f} J/g < "
                          f"{UN_ENERGY_THRESHOLD_J_PER_G:g} J/g and onset "
                          f"{onset_K - 273.15:.0f} degC < 500 degC")
        else:
            c_possible = False
    else:
        if decomposition_energy_J_per_g is None:
            missing.append("decomposition.energy (exothermic decomposition energy, e.g. DSC)")
        if onset_K is None:
            missing.append("decomposition.onset (onset of exothermic decomposition)")

    if not groups.checked:
        missing.insert(0, f"explosophore groups ({groups.note})")
        return result("undecided", None,
                      "the screening could not be completed: " + "; ".join(missing) + " missing")
    found = ", ".join(f"{h.name} ({h.matches} {'site' if h.matches == 1 else 'sites'})"
                      for h in un_hits)
    if (b_possible or c_possible) and missing:
        return result("undecided", None,
                      f"groups associated with explosive properties are present ({found}); "
                      "the screening could still exclude explosive properties, but "
                      + "; ".join(missing) + (" is" if len(missing) == 1 else " are") + " missing")
    why = [f"groups associated with explosive properties are present ({found})"]
    if any(not h.contains_oxygen for h in un_hits):
        why.append("clause (b) does not apply: not every group includes oxygen")
    elif ob is not None:
        why.append(f"clause (b) does not apply: oxygen balance {ob:.1f} % is not below -200")
    if organic is False:
        why.append("clause (c) does not apply: not an organic substance")
    elif decomposition_energy_J_per_g is not None and onset_K is not None:
        why.append(f"clause (c) does not apply: decomposition energy "
                   f"{decomposition_energy_J_per_g:.0f} J/g, onset {onset_K - 273.15:.0f} degC")
    return result("not excluded", None,
                  "; ".join(why) + "; the acceptance procedure for explosive properties "
                  "is needed")


# --------------------------------------------------------------------------
# Maximum decomposition energy (linear programme)
# --------------------------------------------------------------------------

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
"""Most column subsets :func:`_min_cost_vertex` will enumerate (C(k, r) for k
products and r independent elements); C(12, 6) = 924 for a dozen products."""

_FEASIBILITY_TOL = 1e-10
"""Tolerance on amounts and on the element balance, relative to the largest
element amount (the right-hand side is scaled to 1 before solving)."""


def _min_cost_vertex(A: np.ndarray, rhs: np.ndarray, cost: np.ndarray) -> np.ndarray | None:
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
                      molar_mass: float | None) -> DecompositionEnergy:
    if abs(charge_per_g) > 1e-9:
        raise CaseError(f"{label}: the charges do not balance, so no set of neutral "
                        "products can be formed")
    if not products:
        raise SpeciesError(f"{label}: no candidate decomposition products were given")
    prod_comp = []
    for p in products:
        comp, charge, text = _composition(p.formula)
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
    x = _min_cost_vertex(A, rhs / scale, cost)
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
    return DecompositionEnergy(
        energy, chosen, UN_ENERGY_THRESHOLD_J_PER_G,
        energy >= UN_ENERGY_THRESHOLD_J_PER_G, molar_mass,
    )


def max_decomposition_energy(formula: FormulaLike, hf_J_per_mol: float,
                             products: Sequence[Product]) -> DecompositionEnergy:
    """Maximum decomposition energy of one substance, J/g (positive = released).

    Minimises Σ n_j ΔfH°_j over n_j >= 0 subject to the element balance
    (a linear programme, solved exactly by vertex enumeration in
    :func:`_min_cost_vertex`), per gram of substance, and compares
    the result with the 500 J/g of the UN screening.
    """
    comp, charge, text = _composition(formula)
    M = _molar_mass(comp)
    hf = float(hf_J_per_mol)
    if not math.isfinite(hf):
        raise CaseError(f"enthalpy of formation of '{text}' must be a finite number")
    b = {el: n / M for el, n in comp.items()}
    return _solve_max_energy(b, hf / M, charge / M, products, f"'{text}'", M)


def max_decomposition_energy_mixture(components: Sequence[Component],
                                     products: Sequence[Product]) -> DecompositionEnergy:
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
        comp, charge, text = _composition(c.formula)
        M = _molar_mass(comp)
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
                             "mixture of " + ", ".join(names), None)
