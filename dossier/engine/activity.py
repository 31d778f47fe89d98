"""Activity coefficients of a liquid solution by group contribution (UNIFAC).

Two published variants, both evaluated by the ``thermo`` package (imported
only when a case asks for one of them):

* ``unifac``: the original UNIFAC of Fredenslund, Jones and Prausnitz
  (AIChE J. 21 (1975) 1086), with the group volumes and areas (R, Q) and the
  temperature-independent interaction parameters a_mn of the published
  tables (thermo's ``UFSG`` and ``UFIP``).
* ``unifac-dortmund``: modified UNIFAC (Dortmund) of Weidlich and Gmehling
  (Ind. Eng. Chem. Res. 26 (1987) 1372), with its 3/4-power combinatorial
  term and temperature-dependent parameters (thermo's ``DOUFSG`` and
  ``DOUFIP2016``, the parameters published up to 2016).

The groups of a species come, in this order of preference, from

1. the group assignment of the Dortmund Data Bank that thermo carries, looked
   up by the species' CAS number (a curated assignment per compound), or
2. its structure (SMILES), fragmented by the SMARTS patterns of the groups
   (thermo's ``smarts_fragment_priority``).  The fragmentation is accepted
   only for a molecule with carbon in it, when every atom falls in exactly
   one group and the groups add up to the molecular formula; otherwise the
   groups count as unknown.

A mixture is refused (groups unknown) when the parameter table lacks the
interaction between two of its main groups: thermo would take the missing
parameter as zero, which is not the published model.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from typing import Sequence

VARIANTS = ("unifac", "unifac-dortmund")

#: The model behind each name a case may ask for, in words for the dossier.
MODEL_NAMES = {
    "ideal": "ideal solution (each liquid's activity is its mole fraction)",
    "unifac": ("UNIFAC activity coefficients (Fredenslund, Jones and Prausnitz, AIChE J. 21 "
               "(1975) 1086; published group and interaction parameters as carried by the "
               "thermo package)"),
    "unifac-dortmund": ("modified UNIFAC (Dortmund) activity coefficients (Weidlich and "
                        "Gmehling, Ind. Eng. Chem. Res. 26 (1987) 1372; parameters published "
                        "up to 2016, as carried by the thermo package)"),
}

#: The thermo database name of the Dortmund Data Bank's assignments, per variant.
_DDBST_MODEL = {"unifac": "UNIFAC", "unifac-dortmund": "MODIFIED_UNIFAC"}

# Smallest mole fraction handed to the activity model: the coefficient of a
# vanishing species is then its value at infinite dilution.
_X_FLOOR = 1e-15


@dataclass(frozen=True)
class GroupAssignment:
    """The UNIFAC subgroups of one species: ((subgroup id, count), ...) and where
    they come from, in words."""

    groups: tuple[tuple[int, int], ...]
    origin: str


@functools.lru_cache(maxsize=None)
def _tables(variant: str):
    """(thermo's UNIFAC module, subgroup table, interaction table, thermo's model number,
    thermo's version), loaded once: thermo reads its parameter files again on every
    ``load_unifac_ip()``."""
    if variant not in VARIANTS:
        raise ValueError(f"unknown activity model '{variant}'; expected one of {VARIANTS}")
    import thermo
    import thermo.unifac as unifac

    unifac.load_unifac_ip()
    if variant == "unifac":
        return unifac, unifac.UFSG, unifac.UFIP, 0, thermo.__version__
    return unifac, unifac.DOUFSG, unifac.DOUFIP2016, 1, thermo.__version__


def thermo_version(variant: str) -> str:
    """The version of the thermo package that evaluates ``variant``."""
    return _tables(variant)[4]


def group_names(variant: str, groups: tuple[tuple[int, int], ...]) -> str:
    """'CH3 ×1, COOH ×1': the subgroups by their published names."""
    subgroups = _tables(variant)[1]
    return ", ".join(f"{subgroups[g].group} ×{n}" for g, n in groups)


def _atoms_of(subgroups, groups: dict[int, int]) -> dict[str, float] | None:
    total: dict[str, float] = {}
    for g, n in groups.items():
        atoms = getattr(subgroups[g], "atoms", None)
        if not atoms:
            return None
        for element, count in atoms.items():
            total[element] = total.get(element, 0.0) + count * n
    return {e: c for e, c in total.items() if c}


def assign_groups(variant: str, cas: str | None, smiles: str | None,
                  elements: dict[str, float]) -> GroupAssignment | None:
    """The groups of one species from its CAS number or its structure, or None.

    ``elements`` is the species' composition ({"C": 2, "H": 4, "O": 2}); a
    fragmentation from the structure must add up to it.
    """
    unifac, subgroups, _ip, _version, _tv = _tables(variant)
    if cas:
        found = unifac.UNIFAC_group_assignment_DDBST(cas, _DDBST_MODEL[variant])
        if found and all(g in subgroups for g in found):
            return GroupAssignment(tuple(sorted((int(g), int(n)) for g, n in found.items())),
                                   f"Dortmund Data Bank group assignment for CAS {cas}")
    if smiles and elements.get("C", 0) > 0:
        from rdkit import Chem, rdBase
        from thermo.group_contribution.group_contribution_base import smarts_fragment_priority

        with rdBase.BlockLogs():  # a structure that cannot be read is reported by the caller
            mol = Chem.MolFromSmiles(smiles)
        if mol is None:
            return None
        catalog = [sg for sg in subgroups.values() if sg.smarts]
        counts, _where, _atoms, success, _status = smarts_fragment_priority(catalog,
                                                                          rdkitmol=mol)
        wanted = {e: float(n) for e, n in elements.items() if n}
        if success and counts and _atoms_of(subgroups, counts) == wanted:
            return GroupAssignment(tuple(sorted((int(g), int(n)) for g, n in counts.items())),
                                   f"fragmented from the structure {smiles} by the groups' "
                                   "SMARTS patterns (not a curated assignment)")
    return None


def missing_interactions(variant: str, assignments: Sequence[GroupAssignment]
                         ) -> tuple[tuple[str, str], ...]:
    """Pairs of main groups of the mixture whose interaction the parameter table lacks."""
    _unifac, subgroups, ip, _version, _tv = _tables(variant)
    mains = sorted({subgroups[g].main_group_id for a in assignments for g, _n in a.groups})
    names = {subgroups[g].main_group_id: subgroups[g].main_group
             for a in assignments for g, _n in a.groups}
    out = []
    for i, m in enumerate(mains):
        for n in mains[i + 1:]:
            if ip.get(m, {}).get(n) is None or ip.get(n, {}).get(m) is None:
                out.append((names[m], names[n]))
    return tuple(out)


@functools.lru_cache(maxsize=16)
def _model(variant: str, groups: tuple[tuple[tuple[int, int], ...], ...]):
    """The thermo UNIFAC object for these members (immutable input, reused across calls)."""
    unifac, subgroups, ip, version, _tv = _tables(variant)
    n = len(groups)
    return unifac.UNIFAC.from_subgroups(T=298.15, xs=[1.0 / n] * n,
                                        chemgroups=[dict(g) for g in groups],
                                        subgroups=subgroups, interaction_data=ip,
                                        version=version)


@dataclass(frozen=True)
class GroupContribution:
    """Activity coefficients of the members of one liquid solution (UNIFAC)."""

    variant: str
    groups: tuple[tuple[tuple[int, int], ...], ...]  # one assignment per member

    def ln_gammas(self, T: float, xs: Sequence[float]) -> tuple[float, ...]:
        """ln γ of every member at temperature ``T`` (K) and mole fractions ``xs``."""
        floored = [max(float(x), _X_FLOOR) for x in xs]
        total = sum(floored)
        model = _model(self.variant, self.groups).to_T_xs(float(T), [x / total for x in floored])
        return tuple(math.log(g) for g in model.gammas())


__all__ = ["VARIANTS", "MODEL_NAMES", "GroupAssignment", "GroupContribution", "assign_groups",
           "group_names", "missing_interactions", "thermo_version"]
