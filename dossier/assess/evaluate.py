"""Assess one case: resolve its species, run the engine, the safety methods and
the finding rules, and return the assessment with everything it used.

This is the pipeline's middle step (``Case`` in, :class:`Evaluation` out).
It does no I/O: the case has been loaded and the library is passed in.
Errors are located at the case file's line and key.  The integrity digest,
the revision history and the pages all take the records and the settings
from the :class:`Evaluation`, never by resolving anything again.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from dossier import number_policy as policy
from dossier import __version__
from dossier.assess.batch import BatchResult, assess_batch
from dossier.assess.resolve import Resolution, resolve_species, unused_table_warning
from dossier.assess.rules import RuleSubject, run_rules
from dossier.assess.solution import SolutionPlan, plan_equilibrium
from dossier.assess.uncertainty import safety_intervals, sample_case, thermo_intervals
from dossier.assess.variants import envelope, variant_results
from dossier.chem.reaction import Reaction, Term, check_balance, parse_reaction
from dossier.constants import T_REF
from dossier.engine.estimate import package_version
from dossier.engine.phases import StableRange, describe_range, phase_warnings, stable_range
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.engine.thermo import ReactionThermo, temperature_grid
from dossier.errors import CaseError, DossierError, Problem
from dossier.library.lookup import Library
from dossier.library.record import SpeciesRecord
from dossier.model.assessment import (Assessment, ProfileRow, SolutionState, SpeciesUse,
                                      Thermodynamics)
from dossier.model.case import Case
from dossier.model.findings import Finding

_NB = policy.UNIT_SPACE


def _K(T: float) -> str:
    """A temperature of a range, to 0.1 K (the number policy)."""
    return policy.fixed(T, 1, group=False)


CAUTIONS: tuple[str, ...] = (
    "These are screening-level estimates from tabulated data and published "
    "approximate methods. They do not replace calorimetric testing of the real "
    "reaction mass (reaction calorimetry, DSC/ARC), a structured hazard study "
    "(HAZOP or equivalent), or the relief and equipment design of the plant.",
    "Local codes, regulations and company standards take precedence over anything "
    "in this dossier; decisions rest with competent, licensed practitioners who "
    "know the plant.",
    "Standard-state thermodynamics (p° = 1 bar, ideal gases, pure condensed phases, "
    "ideal dilute solutions) ignores mixing, non-ideality and kinetics: a reaction "
    "that is favourable may still be too slow, and one that is unfavourable at "
    "standard state may run under other conditions.",
    "Values outside a species' data range are extrapolations and are marked as such.",
)


@dataclass(frozen=True)
class Evaluation:
    """An assessment together with exactly what it rests on."""

    assessment: Assessment
    properties: ReactionThermo                # the reaction's properties, for figures and derivation
    reaction_records: tuple[SpeciesRecord, ...]  # one per term, in the order of assessment.species
    records: tuple[SpeciesRecord, ...]        # every record used: the terms', then the screening's
    settings: MethodSettings
    #: (package, version) of each general-purpose library whose numbers this assessment
    #: used: thermo for activity coefficients and Joback estimates, pgradd for Benson
    #: estimates, rdkit for reading structures.  Part of the integrity record.
    method_libraries: tuple[tuple[str, str], ...] = ()


def evaluate(case: Case, library: Library, extra_temperatures: tuple[float, ...] = (),
             settings: MethodSettings = DEFAULT) -> Evaluation:
    """The assessment of ``case`` with the records, properties, settings and method
    libraries (with their versions) it used."""
    ev = _evaluation(case, library, extra_temperatures, settings)
    return dataclasses.replace(ev, method_libraries=method_libraries(case, ev.assessment))


def _evaluation(case: Case, library: Library, extra_temperatures: tuple[float, ...],
                settings: MethodSettings) -> Evaluation:
    """:func:`evaluate` without the method libraries' versions (reading package metadata
    costs ``dossier evaluate`` about 20 ms, and it prints no versions)."""
    reaction = _located(case, "reaction", lambda: parse_reaction(case.reaction))
    resolution = resolve_species(case, reaction, library, settings)
    compositions = {r.term.key: (r.record.composition, r.record.charge)
                    for r in resolution.terms}
    _located(case, "reaction", lambda: check_balance(reaction, compositions))
    nus = tuple(float(nu) for nu, _term in reaction.signed())
    properties = ReactionThermo(nus, tuple(r.model for r in resolution.records))
    uses, warnings = _species_uses(case, resolution, nus, settings)
    thermo, plan = _thermodynamics(case, reaction, properties, extra_temperatures, settings,
                                   resolution, library)
    warnings += plan.warnings
    basis = _basis_term(case, reaction)
    molar_mass = resolution.record_for(basis.key).molar_mass
    sampled = sample_case(case, resolution, nus, settings)
    thermo = thermo_intervals(thermo, properties, sampled,
                              lambda T, lnK: plan.system.solve(T, lnK).conversion, settings)

    def batch_of(c: Case) -> tuple[BatchResult, tuple[Finding, ...]]:
        """The batch part of the assessment of ``c`` (the case or one of its variants)."""
        b = assess_batch(c, reaction, resolution, properties, basis, library, settings)
        if b.safety is not None:  # the case's own draws are made above; a variant's here
            drawn = sampled if c is case else sample_case(c, resolution, nus, settings)
            b = dataclasses.replace(b, safety=safety_intervals(
                c, b.safety, properties, drawn, molar_mass, settings))
        return b, run_rules(RuleSubject(case=c, thermo=thermo, safety=b.safety,
                                        species=uses, settings=settings, warnings=warnings))

    def variant_of(c: Case):
        b, found = batch_of(c)
        return b.safety, found

    batch, findings = batch_of(case)
    variants = variant_results(case, variant_of)
    assessment = Assessment(
        case_id=case.id, title=case.title, revision=case.revision, status=str(case.status),
        owner=case.owner, gate=case.gate,
        meeting=case.meeting.isoformat() if case.meeting else None,
        species=uses, thermo=thermo, safety=batch.safety, findings=findings,
        warnings=warnings, cautions=CAUTIONS, library_version=library.version,
        tool_version=__version__, variants=variants,
        envelope=envelope(case, batch.safety, properties))
    used = {r.id: r for r in resolution.records + batch.product_records + plan.records}
    return Evaluation(assessment, properties, resolution.records, tuple(used.values()), settings)


def method_libraries(case: Case, assessment: Assessment) -> tuple[tuple[str, str], ...]:
    """The libraries whose numbers ``assessment`` rests on, with their installed versions
    (read from the package metadata, without importing them)."""
    used = set()
    if assessment.thermo.activity_model != "ideal":
        used.add("thermo")
    for sp in case.species:
        if sp.estimate is not None:
            used |= {"thermo", "rdkit"} | ({"pgradd"} if str(sp.estimate) == "benson" else set())
    if assessment.safety is not None and any(
            e.explosophores or not e.explosophore_note.startswith("not checked")
            for e in assessment.safety.energetics):
        used.add("rdkit")
    return tuple((name, package_version(name)) for name in sorted(used))


def assess_case(case: Case, library: Library, extra_temperatures: tuple[float, ...] = (),
                settings: MethodSettings = DEFAULT) -> Assessment:
    """The assessment alone (for callers that need no digest, figures or derivation)."""
    return _evaluation(case, library, extra_temperatures, settings).assessment


def _located(case: Case, key: str, step):
    """Run ``step``; its problems are reported at ``key``'s line of the case file."""
    try:
        return step()
    except DossierError as err:
        raise CaseError([Problem(p.message, str(case.path), case.line_of(key), key)
                         for p in err.problems]) from None


def _species_uses(case: Case, resolution: Resolution, nus: tuple[float, ...],
                  settings: MethodSettings) -> tuple[tuple[SpeciesUse, ...], tuple[str, ...]]:
    """What each term uses, and the warnings about the data (data ranges, phases that are
    not the stable ones at the case pressure, missing heat capacities, replaced records,
    unused case tables)."""
    t_lo, t_hi = case.window
    uses, warnings = [], []
    for r, nu in zip(resolution.terms, nus):
        rec, m, key = r.record, r.record.model, r.term.key
        sr = stable_range(rec.phase, rec.phase_data, case.pressure,
                          normal_pressure=settings.normal_boiling_pressure_Pa,
                          trouton=settings.trouton_entropy_J_molK,
                          extrapolation=settings.vapour_pressure_extrapolation)
        uses.append(SpeciesUse(
            key=key, nu=nu, record_id=rec.id, name=rec.name, formula=rec.formula,
            phase=rec.phase, model=m.kind, t_min_K=float(m.t_min), t_max_K=float(m.t_max),
            stable_phase_K=_limits(sr), stable_phase=describe_range(sr),
            hf298_kJ_mol=rec.hf298 / 1e3,
            s298_J_molK=rec.s298, cp298_J_molK=float(m.cp(T_REF)),
            molar_mass_g_mol=rec.molar_mass, source=rec.source, note=rec.note,
            uncertainty=rec.uncertainty, missing=rec.missing, local=r.local,
            overrides_library=r.replaces is not None, digest=rec.digest()))
        if t_lo < m.t_min or t_hi > m.t_max:
            warnings.append(
                f"{key}: the {m.kind} data range is {_K(m.t_min)}–{_K(m.t_max)}{_NB}K; "
                f"the window {_K(t_lo)}–{_K(t_hi)}{_NB}K extends beyond it, so values there are "
                "extrapolated")
        if sr is not None:
            warnings.extend(phase_warnings(key, rec.phase, rec.phase_data, sr, case.window))
        if "cp" in rec.missing:
            warnings.append(_missing_cp_warning(key, nu, rec, case.window))
        if r.replaces is not None:
            warnings.append(f"{key}: the case's own data replace the library record "
                            f"'{r.replaces}'")
    warnings.extend(unused_table_warning(case, i, sp) for i, sp in resolution.unused_local)
    return tuple(uses), tuple(warnings)


def _limits(sr: StableRange | None) -> tuple[float | None, float | None] | None:
    """The stable range's two ends in K (None for no limit), or None without boundaries."""
    if sr is None:
        return None
    if sr.never:
        return ()  # stable at no temperature at this pressure
    return (sr.lower.T_K if sr.lower else None, sr.upper.T_K if sr.upper else None)


def _missing_cp_warning(key: str, nu: float, rec: SpeciesRecord,
                        window: tuple[float, float]) -> str:
    """A record without heat capacity: what it is held at, and what that can cost."""
    u = dict(rec.uncertainty).get("cp", 0.0)
    far = max(window, key=lambda T: abs(T - T_REF))
    cost = abs(nu) * u * abs(far - T_REF) / 1e3
    return (f"{key}: its source gives no heat capacity, so Cp is held at 0 J/(mol·K) with an "
            f"uncertainty of ±{policy.quantity(u, 'J/(mol·K)', figures=2)} (see the record's "
            f"note); ΔH° may be off by up to {policy.quantity(cost, 'kJ/mol')} at "
            f"{_K(far)}{_NB}K, and ΔS° and ΔG° likewise away from 298.15{_NB}K")

def _profile(case: Case, reaction: Reaction, properties: ReactionThermo, grid: np.ndarray,
             requested: set[float], plan_of) -> tuple[tuple[ProfileRow, ...], str, str,
                                                      SolutionPlan, tuple[SolutionState, ...]]:
    """The rows of the profile table, with the equilibrium's mode and note, the
    equilibrium system's plan (``plan_of(basis)`` makes it) and the liquid solution at
    the ends of the window."""
    with np.errstate(all="ignore"):  # non-finite values are reported just below
        dH = properties.dH(grid)
        dS = properties.dS(grid)
        dG = dH - grid * dS
        lnK = properties.lnK(grid)
    if not (np.all(np.isfinite(dH)) and np.all(np.isfinite(dG)) and np.all(np.isfinite(lnK))):
        # checked before the equilibrium is solved, which needs a finite ln K
        t_lo, t_hi = case.window
        raise CaseError([Problem("the thermodynamic data give non-finite values in the "
                                 f"window {t_lo:.6g}-{t_hi:.6g} K; check the temperatures "
                                 "and the species data", str(case.path),
                                 case.line_of("temperature"), "temperature")])
    data_lo, data_hi = properties.data_range
    plan = plan_of(_basis_term(case, reaction))
    rows, states = [], []
    mode, note, split_at = "solved", "", []
    for i, T in enumerate(grid):
        res = plan.system.solve(float(T), float(lnK[i]))
        mode = res.mode
        if res.mode == "all-or-nothing":
            note = res.note
        elif res.note.startswith("the activity model"):
            note = res.note
            split_at.append(float(T))
        if float(T) in case.window and res.x:
            states.append(SolutionState(float(T), res.x, res.gammas))
        rows.append(ProfileRow(
            T_K=float(T), dH_kJ_mol=float(dH[i]) / 1e3, dS_J_molK=float(dS[i]),
            dG_kJ_mol=float(dG[i]) / 1e3, lnK=float(lnK[i]),
            dS_surr_J_molK=float(-dH[i] / T), dS_univ_J_molK=float(dS[i] - dH[i] / T),
            q_surr_kJ_mol=float(-dH[i]) / 1e3, conversion=float(res.conversion),
            extrapolated=bool(T < data_lo or T > data_hi),
            requested=float(np.round(T, 9)) in requested))
    if split_at:
        note = (f"{note} (at {len(split_at)} of the {len(rows)} temperatures, from "
                f"{min(split_at):.2f} to {max(split_at):.2f} K)")
    return tuple(rows), mode, note, plan, tuple(states)


def _thermodynamics(case: Case, reaction: Reaction, properties: ReactionThermo,
                    extra_temperatures: tuple[float, ...], settings: MethodSettings,
                    resolution: Resolution, library: Library
                    ) -> tuple[Thermodynamics, SolutionPlan]:
    t_lo, t_hi = case.window
    grid = temperature_grid(t_lo, t_hi, extra_temperatures, steps=settings.grid_steps_K,
                            min_step=settings.grid_min_step_K, max_points=settings.grid_max_rows)
    requested = set(np.round(np.asarray(extra_temperatures, dtype=float), 9).tolist())
    rows, mode, note, plan, states = _profile(
        case, reaction, properties, grid, requested,
        lambda basis: plan_equilibrium(case, reaction, resolution, basis, library, settings))
    data_lo, data_hi = properties.data_range
    # Crossovers: in the window, and across the data range around it.
    scan_min, scan_max = settings.crossover_scan_K
    searched = (float(min(t_lo, max(data_lo, scan_min))), float(max(t_hi, min(data_hi, scan_max))))
    crossovers = properties.crossovers(*searched)
    dH298, dS298 = float(properties.dH(T_REF)), float(properties.dS(T_REF))
    const_cross = dH298 / dS298 if dS298 != 0 and dH298 / dS298 > 0 else None
    g_window = properties.dG(np.linspace(t_lo, t_hi, settings.favourable_points))
    favourable = ("everywhere" if np.all(g_window < 0) else
                  "nowhere" if np.all(g_window >= 0) else "partly")
    return Thermodynamics(
        reaction=reaction.text, reversible=reaction.reversible,
        pressure_bar=case.pressure / 1e5, window_K=(t_lo, t_hi),
        data_range_K=(float(data_lo), float(data_hi)),
        dH298_kJ_mol=dH298 / 1e3, dS298_J_molK=dS298,
        dG298_kJ_mol=(dH298 - T_REF * dS298) / 1e3,
        crossovers=crossovers, crossover_constant_K=const_cross, profile=rows,
        crossover_search_K=searched,
        equilibrium_mode=mode, equilibrium_note=note, basis=_basis_term(case, reaction).key,
        favourable=favourable, activity_model=plan.requested, solution_model=plan.used,
        solution_model_text=plan.model_text, solution_members=plan.members,
        solution_groups=plan.groups, solution_note=plan.note, solution_states=states), plan


def _basis_term(case: Case, reaction: Reaction) -> Term:
    """The reactant that conversions refer to: [charge].basis, else the first reactant."""
    if case.charge is None:
        return reaction.reactants[0]
    wanted = case.charge.basis.replace(" ", "")
    for term in reaction.reactants:
        if term.key.replace(" ", "") == wanted:
            return term
    keys = ", ".join(t.key for t in reaction.reactants)
    raise CaseError([Problem(f"expected one of the reactants as written in the reaction "
                             f"({keys}); got '{case.charge.basis}'", str(case.path),
                             case.line_of("charge.basis"), "charge.basis")])


__all__ = ["CAUTIONS", "Evaluation", "evaluate", "assess_case"]
