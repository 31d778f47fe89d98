"""Energetic-material screening: oxygen balance, explosophore groups, the
UN Appendix 6 screening for explosive properties.

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
* Maximum decomposition energy: see :mod:`dossier.engine.decomposition`.
"""
from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Literal, Mapping, Sequence, Union

from dossier.chem.elements import ATOMIC_WEIGHTS
from dossier.chem.formula import Formula, parse_formula
from dossier.constants import ZERO_CELSIUS
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.errors import CaseError, FormulaError

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


def composition_of(formula: FormulaLike) -> tuple[dict[str, float], int, str]:
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


def molar_mass_of(comp: Mapping[str, float]) -> float:
    return float(sum(ATOMIC_WEIGHTS[el] * n for el, n in comp.items()))


def oxygen_balance(formula_or_composition: FormulaLike) -> float:
    """Oxygen balance in percent (g of O2 excess per 100 g; negative = deficient).

    OB% = -1600 * (oxygen demand in atoms) / M, with M in g/mol.  For
    CxHyNwOz this is -1600 (2x + y/2 - z) / M.  Other elements follow
    :data:`OXYGEN_BALANCE_ASSUMPTIONS`; an element with no assumed product
    raises :class:`FormulaError`.
    """
    comp, charge, text = composition_of(formula_or_composition)
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
    M = molar_mass_of(comp)
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


def patterns_key() -> str:
    """A digest of every group's key and SMARTS patterns: a table of group counts made
    with other patterns (tools/make_structure_groups.py records this key) is not used."""
    text = "\n".join(f"{g.key}:{'|'.join(g.smarts)}" for g in EXPLOSOPHORE_GROUPS + EXTRA_ALERTS)
    return hashlib.sha256(text.encode()).hexdigest()[:16]


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


def smiles_elements(Chem, mol) -> dict[str, float]:
    """The element counts of a structure read by RDKit, hydrogens included."""
    comp: dict[str, float] = {}
    for atom in Chem.AddHs(mol).GetAtoms():
        sym = atom.GetSymbol()
        comp[sym] = comp.get(sym, 0.0) + 1.0
    return comp


def same_elements(a: Mapping[str, float], b: Mapping[str, float]) -> bool:
    """Whether two element counts agree (to 1e-6 of an atom: formulas carry fractions)."""
    return ({k: round(float(v), 6) for k, v in a.items()}
            == {k: round(float(v), 6) for k, v in b.items()})


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
        want, _, text = composition_of(formula)
        got = smiles_elements(Chem, mol)
        if not same_elements(want, got):
            raise FormulaError(
                f"SMILES '{smiles}' has elements "
                f"{', '.join(f'{k}{v:g}' for k, v in sorted(got.items()))} but the formula "
                f"'{text}' has {', '.join(f'{k}{v:g}' for k, v in sorted(want.items()))}"
            )
    return groups_from_counts(group_counts(Chem, mol))


def group_counts(Chem, mol) -> dict[str, int]:
    """How many distinct atom sets of ``mol`` match each group of
    :data:`EXPLOSOPHORE_GROUPS` and :data:`EXTRA_ALERTS` (groups with no match are left out)."""
    counts: dict[str, int] = {}
    for group in EXPLOSOPHORE_GROUPS + EXTRA_ALERTS:
        matched: set[tuple[int, ...]] = set()
        for sm in group.smarts:
            patt = Chem.MolFromSmarts(sm)
            for match in mol.GetSubstructMatches(patt, uniquify=True):
                matched.add(tuple(sorted(match)))
        if matched:
            counts[group.key] = len(matched)
    return counts


def groups_from_counts(counts: Mapping[str, int]) -> GroupCheck:
    """The :class:`GroupCheck` of a structure whose group counts are known (from
    :func:`group_counts`, or from a table of them made with it)."""
    hits = [GroupHit(g.key, g.name, g.contains_oxygen, g.in_un_table, int(counts[g.key]))
            for g in EXPLOSOPHORE_GROUPS + EXTRA_ALERTS if counts.get(g.key)]
    if any(h.in_un_table for h in hits):
        note = "groups found: " + ", ".join(h.name for h in hits if h.in_un_table)
    else:
        note = "no Table A6.1 group found"
    return GroupCheck(True, tuple(hits), note)


# --------------------------------------------------------------------------
# UN Appendix 6 screening for explosive properties
# --------------------------------------------------------------------------

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

#: What the screening calls its two measured inputs when they are missing, in its
#: own words; the assessment passes case-file keys for the same two.
SCREENING_WORDS: dict[str, str] = {
    "energy": "exothermic decomposition energy (e.g. DSC)",
    "onset": "onset of exothermic decomposition",
}

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
    settings: MethodSettings = DEFAULT,
    labels: Mapping[str, str] = SCREENING_WORDS,
) -> ScreeningResult:
    """Apply the Appendix 6 screening clauses (a), (b), (c) in that order.

    ``groups`` may be passed precomputed; otherwise they are looked for in
    ``smiles`` (RDKit needed).  ``organic`` defaults to "contains carbon
    and hydrogen".  The decomposition energy is the exothermic energy as a
    positive number (e.g. from DSC), J/g; ``onset_K`` its onset, K.  The
    thresholds come from ``settings``; missing inputs are named with
    ``labels`` (keys ``energy`` and ``onset``).
    """
    notes: list[str] = []
    ob = None
    comp = None
    if formula is not None:
        comp, _, _ = composition_of(formula)
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
    if groups.extra_hits:
        notes.append("extra alerts (not in Table A6.1, not used by the screening): "
                     + ", ".join(h.name for h in groups.extra_hits))
    screen = _Screening(groups, ob, organic, decomposition_energy_J_per_g, onset_K, settings,
                        labels, notes)
    return screen.run()


class _Screening:
    """One application of the clauses (a), (b), (c), collecting what is missing (a
    working record of one call)."""

    def __init__(self, groups: GroupCheck, ob: float | None, organic: bool | None,
                 energy: float | None, onset: float | None, settings: MethodSettings,
                 labels: Mapping[str, str], notes: list[str]):
        self.groups, self.ob, self.organic = groups, ob, organic
        self.energy, self.onset, self.settings, self.labels = energy, onset, settings, labels
        self.notes, self.missing = notes, []

    def result(self, outcome: Outcome, clause: str | None, reason: str) -> ScreeningResult:
        return ScreeningResult(outcome, clause, reason, self.groups, self.ob,
                               tuple(self.missing), tuple(self.notes))

    def run(self) -> ScreeningResult:
        un_hits = self.groups.un_hits
        # (a) no explosophore groups
        if self.groups.checked and not un_hits:
            return self.result("no further tests", "(a)",
                               "no chemical group associated with explosive properties "
                               "(Table A6.1) is present in the molecule")
        done, b_possible = self.clause_b(un_hits)
        if done is not None:
            return done
        done, c_possible = self.clause_c()
        if done is not None:
            return done
        return self.conclusion(un_hits, b_possible, c_possible)

    def clause_b(self, un_hits) -> tuple[ScreeningResult | None, bool]:
        """(b) only oxygen-bearing groups and an oxygen balance below the limit."""
        limit = self.settings.un_oxygen_balance_pct
        if not self.groups.checked:
            return None, True
        if not all(h.contains_oxygen for h in un_hits):
            return None, False
        if self.ob is not None and self.ob < limit:
            return self.result("no further tests", "(b)",
                               f"the groups present ({', '.join(h.name for h in un_hits)}) all "
                               f"include oxygen and the oxygen balance {self.ob:.1f} % is below "
                               f"{limit:g}"), True
        if self.ob is None:
            self.missing.append("formula (for the oxygen balance)")
            return None, True
        return None, False

    def clause_c(self) -> tuple[ScreeningResult | None, bool]:
        """(c) organic, decomposition energy and onset below the limits."""
        energy_limit, onset_limit = self.settings.un_energy_J_per_g, self.settings.un_onset_K
        if self.organic is False:
            return None, False
        if self.energy is None or self.onset is None:
            if self.energy is None:
                self.missing.append(self.labels["energy"])
            if self.onset is None:
                self.missing.append(self.labels["onset"])
            return None, True
        if self.organic is None:
            self.missing.append("whether the substance is organic (formula)")
            return None, True
        if self.energy < energy_limit and self.onset < onset_limit:
            return self.result("no further tests", "(c)",
                               f"organic substance with exothermic decomposition energy "
                               f"{self.energy:.0f} J/g < {energy_limit:g} J/g and onset "
                               f"{self.onset - ZERO_CELSIUS:.0f} degC < "
                               f"{onset_limit - ZERO_CELSIUS:.0f} degC"), True
        return None, False

    def conclusion(self, un_hits, b_possible: bool, c_possible: bool) -> ScreeningResult:
        missing = self.missing
        if not self.groups.checked:
            missing.insert(0, f"explosophore groups ({self.groups.note})")
            return self.result("undecided", None, "the screening could not be completed: "
                               + "; ".join(missing) + " missing")
        found = ", ".join(f"{h.name} ({h.matches} {'site' if h.matches == 1 else 'sites'})"
                          for h in un_hits)
        if (b_possible or c_possible) and missing:
            return self.result("undecided", None,
                               f"groups associated with explosive properties are present "
                               f"({found}); the screening could still exclude explosive "
                               "properties, but " + "; ".join(missing)
                               + (" is" if len(missing) == 1 else " are") + " missing")
        why = [f"groups associated with explosive properties are present ({found})"]
        if any(not h.contains_oxygen for h in un_hits):
            why.append("clause (b) does not apply: not every group includes oxygen")
        elif self.ob is not None:
            why.append(f"clause (b) does not apply: oxygen balance {self.ob:.1f} % is not below "
                       f"{self.settings.un_oxygen_balance_pct:g}")
        if self.organic is False:
            why.append("clause (c) does not apply: not an organic substance")
        elif self.energy is not None and self.onset is not None:
            why.append(f"clause (c) does not apply: decomposition energy "
                       f"{self.energy:.0f} J/g, onset {self.onset - ZERO_CELSIUS:.0f} degC")
        return self.result("not excluded", None, "; ".join(why) + "; the acceptance procedure "
                           "for explosive properties is needed")
