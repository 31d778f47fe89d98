"""Assess one case: resolve its species, run the engine, the safety methods and
the finding rules, and return the assessment with everything it used.

This is the pipeline's middle step (``Case`` in, :class:`Evaluation` out).
It does no I/O: the case has been loaded and the library is passed in.
Errors are located at the case file's line and key.  The integrity digest,
the revision history and the pages all take the records and the settings
from the :class:`Evaluation`, never by resolving anything again.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from dossier import __version__
from dossier.assess.batch import assess_batch
from dossier.assess.resolve import Resolution, resolve_species, unused_table_warning
from dossier.assess.rules import RuleSubject, run_rules
from dossier.chem.reaction import Reaction, Term, check_balance, parse_reaction
from dossier.constants import T_REF
from dossier.engine.equilibrium import EqSpecies, EquilibriumSystem
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.engine.thermo import ReactionThermo, temperature_grid
from dossier.errors import CaseError, DossierError, Problem
from dossier.library.lookup import Library
from dossier.library.record import SpeciesRecord
from dossier.model.assessment import Assessment, ProfileRow, SpeciesUse, Thermodynamics
from dossier.model.case import Case

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


def evaluate(case: Case, library: Library, extra_temperatures: tuple[float, ...] = (),
             settings: MethodSettings = DEFAULT) -> Evaluation:
    """The assessment of ``case`` with the records, properties and settings it used."""
    reaction = _located(case, "reaction", lambda: parse_reaction(case.reaction))
    resolution = resolve_species(case, reaction, library)
    compositions = {r.term.key: (r.record.composition, r.record.charge)
                    for r in resolution.terms}
    _located(case, "reaction", lambda: check_balance(reaction, compositions))
    nus = tuple(float(nu) for nu, _term in reaction.signed())
    properties = ReactionThermo(nus, tuple(r.model for r in resolution.records))
    uses, warnings = _species_uses(case, resolution, nus)
    thermo = _thermodynamics(case, reaction, properties, extra_temperatures, settings)
    batch = assess_batch(case, reaction, resolution, properties,
                         _basis_term(case, reaction), library, settings)
    findings = run_rules(RuleSubject(case=case, thermo=thermo, safety=batch.safety,
                                     species=uses, settings=settings, warnings=warnings))
    assessment = Assessment(
        case_id=case.id, title=case.title, revision=case.revision, status=str(case.status),
        owner=case.owner, gate=case.gate,
        meeting=case.meeting.isoformat() if case.meeting else None,
        species=uses, thermo=thermo, safety=batch.safety, findings=findings,
        warnings=warnings, cautions=CAUTIONS, library_version=library.version,
        tool_version=__version__)
    used = {r.id: r for r in resolution.records + batch.product_records}
    return Evaluation(assessment, properties, resolution.records, tuple(used.values()), settings)


def assess_case(case: Case, library: Library, extra_temperatures: tuple[float, ...] = (),
                settings: MethodSettings = DEFAULT) -> Assessment:
    """The assessment alone (for callers that need no digest, figures or derivation)."""
    return evaluate(case, library, extra_temperatures, settings).assessment


def _located(case: Case, key: str, step):
    """Run ``step``; its problems are reported at ``key``'s line of the case file."""
    try:
        return step()
    except DossierError as err:
        raise CaseError([Problem(p.message, str(case.path), case.line_of(key), key)
                         for p in err.problems]) from None


def _species_uses(case: Case, resolution: Resolution, nus: tuple[float, ...]
                  ) -> tuple[tuple[SpeciesUse, ...], tuple[str, ...]]:
    """What each term uses, and the warnings about the data (ranges, replaced records,
    unused case tables)."""
    t_lo, t_hi = case.window
    uses, warnings = [], []
    for r, nu in zip(resolution.terms, nus):
        rec, m, key = r.record, r.record.model, r.term.key
        uses.append(SpeciesUse(
            key=key, nu=nu, record_id=rec.id, name=rec.name, formula=rec.formula,
            phase=rec.phase, model=m.kind, t_min_K=float(m.t_min), t_max_K=float(m.t_max),
            stable_range_K=rec.stable_range, hf298_kJ_mol=rec.hf298 / 1e3,
            s298_J_molK=rec.s298, cp298_J_molK=float(m.cp(T_REF)),
            molar_mass_g_mol=rec.molar_mass, source=rec.source, note=rec.note,
            uncertainty=rec.uncertainty, local=r.local, overrides_library=r.replaces is not None,
            digest=rec.digest()))
        if t_lo < m.t_min or t_hi > m.t_max:
            warnings.append(
                f"{key}: the {m.kind} data are valid for {m.t_min:.2f}-{m.t_max:.2f} K; "
                f"the window {t_lo:.2f}-{t_hi:.2f} K extends beyond them, so values there are "
                "extrapolated")
        if rec.stable_range and (t_lo < rec.stable_range[0] or t_hi > rec.stable_range[1]):
            lo, hi = rec.stable_range
            warnings.append(
                f"{key}: at 1 bar this phase is the stable one only between {lo:.2f} and "
                f"{hi:.2f} K; part of the window lies outside (at {case.pressure / 1e5:g} bar "
                "the boundaries shift): check that the phase written is the one present")
        if r.replaces is not None:
            warnings.append(f"{key}: the case's own data replace the library record "
                            f"'{r.replaces}'")
    warnings.extend(unused_table_warning(case, i, sp) for i, sp in resolution.unused_local)
    return tuple(uses), tuple(warnings)


def _profile(case: Case, reaction: Reaction, properties: ReactionThermo, grid: np.ndarray,
             requested: set[float]) -> tuple[tuple[ProfileRow, ...], str, str]:
    """The rows of the profile table, with the equilibrium's mode and note."""
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
    eq = _equilibrium_system(case, reaction, _basis_term(case, reaction))
    rows = []
    mode, note = "solved", ""
    for i, T in enumerate(grid):
        res = eq.solve(float(T), float(lnK[i]))
        mode = res.mode
        note = res.note if res.mode == "all-or-nothing" else note
        rows.append(ProfileRow(
            T_K=float(T), dH_kJ_mol=float(dH[i]) / 1e3, dS_J_molK=float(dS[i]),
            dG_kJ_mol=float(dG[i]) / 1e3, lnK=float(lnK[i]),
            dS_surr_J_molK=float(-dH[i] / T), dS_univ_J_molK=float(dS[i] - dH[i] / T),
            q_surr_kJ_mol=float(-dH[i]) / 1e3, conversion=float(res.conversion),
            extrapolated=bool(T < data_lo or T > data_hi),
            requested=float(np.round(T, 9)) in requested))
    return tuple(rows), mode, note


def _thermodynamics(case: Case, reaction: Reaction, properties: ReactionThermo,
                    extra_temperatures: tuple[float, ...], settings: MethodSettings
                    ) -> Thermodynamics:
    t_lo, t_hi = case.window
    grid = temperature_grid(t_lo, t_hi, extra_temperatures, steps=settings.grid_steps_K,
                            min_step=settings.grid_min_step_K, max_points=settings.grid_max_rows)
    requested = set(np.round(np.asarray(extra_temperatures, dtype=float), 9).tolist())
    rows, mode, note = _profile(case, reaction, properties, grid, requested)
    data_lo, data_hi = properties.data_range
    # Crossovers: in the window, and across the data range around it.
    scan_min, scan_max = settings.crossover_scan_K
    crossovers = properties.crossovers(min(t_lo, max(data_lo, scan_min)),
                                       max(t_hi, min(data_hi, scan_max)))
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
        equilibrium_mode=mode, equilibrium_note=note, basis=_basis_term(case, reaction).key,
        favourable=favourable)


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


def _equilibrium_system(case: Case, reaction: Reaction, basis: Term) -> EquilibriumSystem:
    species = tuple(EqSpecies(float(nu), term.phase) for nu, term in reaction.signed())
    inert_gas = 0.0
    for label, per_basis in case.inerts:
        if label.replace(" ", "").endswith("(g)"):
            inert_gas += per_basis * float(basis.coefficient)
    return EquilibriumSystem(species, case.pressure, inert_gas)


__all__ = ["CAUTIONS", "Evaluation", "evaluate", "assess_case"]
