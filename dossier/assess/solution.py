"""The case's equilibrium system: which liquids form one solution, and how their
activities are computed.

The liquids of the reaction and the liquid inerts (``inerts``, "label(l)" =
mol per mol of the basis fed) form one liquid solution when there are at
least two of them and the reaction has no aqueous species
(:class:`dossier.engine.equilibrium.EquilibriumSystem` says the same).  Its
activities are mole fractions (ideal solution) unless ``[equilibrium]
activity_model`` asks for UNIFAC; then every member needs its UNIFAC groups
(:func:`dossier.engine.activity.assign_groups`, from the record's CAS number
or its structure) and the parameter table needs every interaction between
their main groups.  When any is missing, the solution is taken as ideal and a
warning says which species or groups stopped it.

Liquid inerts are looked up (through the one resolver,
:func:`dossier.assess.resolve.resolve_species`) only for UNIFAC, which needs
their structure; the ideal solution needs only their amounts.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.assess.resolve import Resolution, resolve_species
from dossier.chem.phases import split_phase
from dossier.chem.reaction import Reaction, Term
from dossier.engine.activity import (MODEL_NAMES, GroupAssignment, GroupContribution,
                                     assign_groups, group_names, missing_interactions,
                                     thermo_version)
from dossier.engine.equilibrium import EqSpecies, EquilibriumSystem
from dossier.engine.settings import MethodSettings
from dossier.errors import DossierError
from dossier.library.lookup import Library
from dossier.library.record import SpeciesRecord
from dossier.model.case import ActivityModel, Case

_OPTION = "[equilibrium] activity_model"


@dataclass(frozen=True)
class SolutionPlan:
    """The equilibrium system of a case and what the dossier says about its liquids."""

    system: EquilibriumSystem
    requested: str                                # the case's activity model
    used: str                                     # "" without a liquid solution
    model_text: str                               # the model used, in words
    members: tuple[str, ...]                      # the solution's liquids: terms, then inerts
    groups: tuple[tuple[str, str, str], ...]      # (member, groups, origin) under UNIFAC
    note: str                                     # what the dossier says about the solution
    warnings: tuple[str, ...]                     # data warnings (fallback, extrapolation)
    records: tuple[SpeciesRecord, ...]            # inert records UNIFAC used


def _inert_record(case: Case, body: str, library: Library,
                  settings: MethodSettings) -> SpeciesRecord | None:
    """The record of a liquid inert through the one resolver, or None when nothing
    (or more than one thing) answers its label."""
    term = Term.of(1, body, "l")
    try:
        pseudo = Reaction((term,), (term,))  # the resolver takes reactions; one term here
        return resolve_species(case, pseudo, library, settings).terms[0].record
    except DossierError:
        return None


def _liquid_inerts(case: Case, per_reaction: float) -> tuple[tuple[str, str, float], ...]:
    """(label, body, mol per mol of reaction) of every liquid inert with an amount."""
    out = []
    for label, per_basis in case.inerts:
        body, phase = split_phase(label)
        if phase == "l" and per_basis > 0:
            out.append((label, body, per_basis * per_reaction))
    return tuple(out)


def plan_equilibrium(case: Case, reaction: Reaction, resolution: Resolution, basis: Term,
                     library: Library, settings: MethodSettings) -> SolutionPlan:
    """The equilibrium system of ``case`` with its liquid solution, if it has one."""
    signed = reaction.signed()
    species = tuple(EqSpecies(float(nu), term.phase) for nu, term in signed)
    per_reaction = float(basis.coefficient)
    inert_gas = sum(per_basis * per_reaction for label, per_basis in case.inerts
                    if label.replace(" ", "").endswith("(g)"))
    inerts = _liquid_inerts(case, per_reaction)
    system = EquilibriumSystem(species, case.pressure, inert_gas,
                               tuple(n for _l, _b, n in inerts),
                               scan_points=settings.activity_scan_points)
    requested = str(case.activity_model)
    if not system.has_solution:
        why = ("the reaction has aqueous species: its liquids are taken as pure phases"
               if any(s.phase == "aq" for s in species) and any(s.phase == "l" for s in species)
               else "the reaction has no liquid mixture")
        note = (f"{_OPTION} = \"{requested}\" plays no part: {why}."
                if requested != ActivityModel.IDEAL else "")
        return SolutionPlan(system, requested, "", "", (), (), note, (), ())
    members = tuple(signed[i][1].key for i in system.liquid_members) + tuple(
        label for label, _b, _n in inerts)
    if requested == ActivityModel.IDEAL:
        note = ("Real liquid mixtures deviate from an ideal solution; "
                f"{_OPTION} = \"unifac\" estimates by how much.")
        return SolutionPlan(system, requested, "ideal", MODEL_NAMES["ideal"], members, (),
                            note, (), ())
    return _with_unifac(case, resolution, system, members, inerts, library, settings)


def _member_records(case: Case, resolution: Resolution, system: EquilibriumSystem,
                    inerts, library: Library, settings: MethodSettings):
    """(key, record or None, smiles, is an inert) of every member of the solution."""
    out = []
    for i in system.liquid_members:
        r = resolution.terms[i]
        out.append((r.term.key, r.record, r.record.smiles or r.smiles, False))
    for label, body, _n in inerts:
        rec = _inert_record(case, body, library, settings)
        out.append((label, rec, rec.smiles if rec is not None else None, True))
    return out


def _with_unifac(case: Case, resolution: Resolution, system: EquilibriumSystem,
                 members: tuple[str, ...], inerts, library: Library,
                 settings: MethodSettings) -> SolutionPlan:
    variant = str(case.activity_model)
    name = variant.replace("unifac-dortmund", "modified UNIFAC (Dortmund)").replace(
        "unifac", "UNIFAC")
    assignments: list[GroupAssignment] = []
    unknown: list[str] = []
    used_inerts: list[SpeciesRecord] = []
    for key, rec, smiles, inert in _member_records(case, resolution, system, inerts, library,
                                                   settings):
        found = None if rec is None else assign_groups(variant, rec.cas, smiles,
                                                       rec.composition)
        if found is None:
            unknown.append(_unknown_reason(key, rec, smiles))
            continue
        assignments.append(found)
        if inert:
            used_inerts.append(rec)
    fallback = (f"the liquid solution is taken as ideal instead of {name}, which {_OPTION} "
                "asks for")
    if unknown:
        warning = f"the {name} groups are not known for {'; '.join(unknown)}: {fallback}"
        return _ideal_fallback(system, variant, members, warning)
    gaps = missing_interactions(variant, assignments)
    if gaps:
        pairs = ", ".join(f"{a} and {b}" for a, b in gaps)
        warning = (f"the {name} parameter table has no interaction between the main groups "
                   f"{pairs}: {fallback}")
        return _ideal_fallback(system, variant, members, warning)
    activity = GroupContribution(variant, tuple(a.groups for a in assignments))
    groups = tuple((m, group_names(variant, a.groups), a.origin)
                   for m, a in zip(members, assignments))
    warnings = []
    lo, hi = settings.unifac_range_K
    t_lo, t_hi = case.window
    if t_lo < lo or t_hi > hi:
        warnings.append(f"the {name} activity coefficients are extrapolated in part of the "
                        f"window {t_lo:.2f}-{t_hi:.2f} K: its parameters rest on data of about "
                        f"{lo:.0f}-{hi:.0f} K")
    text = f"{MODEL_NAMES[variant]}, thermo {thermo_version(variant)}"
    note = (f"Each liquid's activity is γ·x, with γ from {name} and the groups of each "
            "liquid, listed with where they come from.")
    return SolutionPlan(_with_activity(system, activity), variant, variant, text, members,
                        groups, note, tuple(warnings), tuple(used_inerts))


def _unknown_reason(key: str, rec: SpeciesRecord | None, smiles: str | None) -> str:
    if rec is None:
        return f"{key} (not found in the library or the case's [[species]] tables)"
    cas = f"no group assignment for CAS {rec.cas}" if rec.cas else "no CAS number"
    structure = (f"its structure {smiles} does not split cleanly into the groups" if smiles
                 else "no structure (SMILES) to split into groups")
    return f"{key} ({cas}; {structure})"


def _ideal_fallback(system: EquilibriumSystem, variant: str, members: tuple[str, ...],
                    warning: str) -> SolutionPlan:
    note = ("The activity model asked for could not be used, so the solution is taken as "
            "ideal: see the data warnings for why.")
    return SolutionPlan(system, variant, "ideal", MODEL_NAMES["ideal"], members, (), note,
                        (warning,), ())


def _with_activity(system: EquilibriumSystem, activity: GroupContribution) -> EquilibriumSystem:
    return EquilibriumSystem(system.species, system.pressure, system.inert_gas_per_reaction,
                             system.inert_liquids_per_reaction, activity, system.scan_points)


__all__ = ["SolutionPlan", "plan_equilibrium"]
