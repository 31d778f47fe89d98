"""Assess one case: resolve its species, run the engine, the safety methods
and the finding rules, and return one plain, serialisable Assessment.

This is the pipeline's middle step (``Case`` in, ``Assessment`` out).  It does
no I/O: the case has been loaded and the library is passed in.  Errors are
located at the case file's line and key.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np

from dossier import __version__
from dossier.model.case import Case, LocalSpecies
from dossier.engine.equilibrium import EqSpecies, EquilibriumSystem
from dossier.errors import CaseError, DossierError, Problem
from dossier.model.findings import Finding, run_rules
from dossier.chem.formula import parse_formula
from dossier.chem.reaction import Reaction, Term, check_balance, parse_reaction
from dossier.library.lookup import ConstantCp, Library, SpeciesRecord
from dossier.engine.thermo import T_REF, Crossover, ReactionThermo, temperature_grid

#: Settings that change the numbers; part of every integrity record.
METHOD_SETTINGS: dict[str, Any] = {
    "standard_pressure_Pa": 1.0e5,
    "reference_temperature_K": T_REF,
    "gas_constant": 8.314462618,
    "grid": "window ends, round steps of 1-1000 K (<= 41 rows), and requested temperatures",
    "equilibrium": "stoichiometric feed; ideal gases; pure condensed phases; "
                   "ideal dilute solutes at 1 mol of reaction per kg of water",
    "enthalpy_mismatch": "20 % or 30 kJ/mol",
    "equilibrium_limited_below": 0.95,
}

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


# --------------------------------------------------------------------------
# Plain-data results

@dataclass(frozen=True)
class SpeciesUse:
    key: str  # as written in the reaction, e.g. "C6H5NO2(l)"
    nu: float  # signed coefficient
    record_id: str
    name: str
    formula: str
    phase: str
    model: str  # nasa7 | shomate | constant-cp
    t_min_K: float
    t_max_K: float
    stable_range_K: tuple[float, float] | None
    hf298_kJ_mol: float
    s298_J_molK: float
    cp298_J_molK: float
    molar_mass_g_mol: float
    source: str
    note: str
    uncertainty: tuple[tuple[str, float], ...]
    local: bool  # from the case's own [[species]] table
    overrides_library: bool  # a case-local record that replaces a library record
    digest: str


@dataclass(frozen=True)
class ProfileRow:
    T_K: float
    dH_kJ_mol: float
    dS_J_molK: float
    dG_kJ_mol: float
    lnK: float
    dS_surr_J_molK: float
    dS_univ_J_molK: float
    q_surr_kJ_mol: float
    conversion: float
    extrapolated: bool
    requested: bool  # asked for with --at


@dataclass(frozen=True)
class Thermodynamics:
    reaction: str
    reversible: bool
    pressure_bar: float
    window_K: tuple[float, float]
    data_range_K: tuple[float, float]
    dH298_kJ_mol: float
    dS298_J_molK: float
    dG298_kJ_mol: float
    crossovers: tuple[Crossover, ...]  # within the window widened to the data range
    crossover_constant_K: float | None  # ΔH°(298)/ΔS°(298), for comparison
    profile: tuple[ProfileRow, ...]
    equilibrium_mode: str
    equilibrium_note: str
    basis: str
    favourable: str  # "everywhere" | "nowhere" | "partly" in the window

    @property
    def crossovers_in_window(self) -> tuple[Crossover, ...]:
        lo, hi = self.window_K
        return tuple(c for c in self.crossovers if lo <= c.T <= hi)


@dataclass(frozen=True)
class ScaleFigures:
    """Heat and entropy at the scale of the batch (needs [charge])."""

    basis: str
    basis_mol: float
    reaction_mol: float  # moles of reaction as written at full conversion
    enthalpy_used_kJ_mol: float
    enthalpy_origin: str  # "measured" | "computed"
    enthalpy_computed_kJ_mol: float
    enthalpy_measured_kJ_mol: float | None
    measured_method: str | None
    heat_released_kJ: float
    heat_released_kJ_per_kg: float
    release_rate_kW: float | None
    T_process_K: float
    entropy_system_kJ_per_K: float
    entropy_surroundings_kJ_per_K: float
    entropy_universe_kJ_per_K: float
    entropy_reading: str
    gas_mol: float


@dataclass(frozen=True)
class Safety:
    scale: ScaleFigures | None
    adiabatic_rise_K: float | None
    severity: str | None
    mtsr_K: float | None
    mtt_K: float | None
    td24_K: float | None
    td24_origin: str | None
    tmrad_at_mtsr_h: float | None
    probability: str | None
    probability_basis: str | None
    criticality_class: int | None
    criticality_reason: str
    decomposition_rise_K: float | None
    final_temperature_K: float | None
    release_rate_kW: float | None
    cooling_capacity_kW: float | None
    cooling_margin_kW: float | None
    cooling_sufficient: bool | None
    gas_volume_normal_m3: float | None
    pressure_at_mtsr_bar: float | None
    design_pressure_bar: float | None
    pressure_exceeds_design: bool | None
    not_assessed: tuple[tuple[str, tuple[str, ...]], ...]
    missing_inputs: tuple[str, ...]
    notes: tuple[str, ...]
    energetics: tuple["EnergeticScreen", ...] = ()


@dataclass(frozen=True)
class EnergeticScreen:
    species: str
    oxygen_balance_pct: float | None
    max_decomposition_J_per_g: float | None
    products: tuple[str, ...]
    screening_outcome: str
    screening_reason: str
    explosophores: tuple[str, ...]
    explosophore_note: str


@dataclass(frozen=True)
class Assessment:
    case_id: str
    title: str
    revision: int
    status: str
    owner: str | None
    gate: str | None
    meeting: str | None
    species: tuple[SpeciesUse, ...]
    thermo: Thermodynamics
    safety: Safety | None
    findings: tuple[Finding, ...]
    warnings: tuple[str, ...]
    cautions: tuple[str, ...] = CAUTIONS
    library_version: str = ""
    tool_version: str = __version__

    def to_dict(self) -> dict:
        """JSON-ready dict; the keys documented for ``dossier evaluate --json``."""
        t = self.thermo
        out: dict[str, Any] = {
            "case": self.case_id,
            "title": self.title,
            "revision": self.revision,
            "status": self.status,
            "owner": self.owner,
            "gate": self.gate,
            "meeting": self.meeting,
            "reaction": t.reaction,
            "reversible": t.reversible,
            "pressure_bar": t.pressure_bar,
            "window_K": list(t.window_K),
            "data_range_K": list(t.data_range_K),
            "crossover_K": [c.T for c in t.crossovers],
            "crossovers": [{"T_K": c.T, "direction": c.direction} for c in t.crossovers],
            "crossover_constant_properties_K": t.crossover_constant_K,
            "standard_298K": {"dH_kJ_mol": t.dH298_kJ_mol, "dS_J_molK": t.dS298_J_molK,
                              "dG_kJ_mol": t.dG298_kJ_mol},
            "favourable_in_window": t.favourable,
            "equilibrium": {"mode": t.equilibrium_mode, "note": t.equilibrium_note,
                            "basis": t.basis},
            "warnings": list(self.warnings),
            "profile": [asdict(r) for r in t.profile],
            "species": [_clean(asdict(s)) for s in self.species],
            "findings": [f.to_dict() for f in self.findings],
            "cautions": list(self.cautions),
            "library_version": self.library_version,
            "tool_version": self.tool_version,
        }
        if self.safety is not None:
            s = self.safety
            sc = s.scale
            out["safety"] = {
                "heat_released_kJ": sc.heat_released_kJ if sc else None,
                "heat_released_kJ_per_kg": sc.heat_released_kJ_per_kg if sc else None,
                "enthalpy_used_kJ_mol": sc.enthalpy_used_kJ_mol if sc else None,
                "enthalpy_origin": sc.enthalpy_origin if sc else None,
                "release_rate_kW": s.release_rate_kW,
                "adiabatic_rise_K": s.adiabatic_rise_K,
                "severity": s.severity,
                "mtsr_K": s.mtsr_K,
                "mtt_K": s.mtt_K,
                "td24_K": s.td24_K,
                "td24_origin": s.td24_origin,
                "tmrad_at_mtsr_h": s.tmrad_at_mtsr_h,
                "probability": s.probability,
                "criticality_class": s.criticality_class,
                "criticality_reason": s.criticality_reason,
                "decomposition_rise_K": s.decomposition_rise_K,
                "final_temperature_K": s.final_temperature_K,
                "cooling_capacity_kW": s.cooling_capacity_kW,
                "cooling_margin_kW": s.cooling_margin_kW,
                "gas_mol": sc.gas_mol if sc else None,
                "gas_volume_normal_m3": s.gas_volume_normal_m3,
                "pressure_at_mtsr_bar": s.pressure_at_mtsr_bar,
                "design_pressure_bar": s.design_pressure_bar,
                "entropy_system_kJ_per_K": sc.entropy_system_kJ_per_K if sc else None,
                "entropy_surroundings_kJ_per_K": sc.entropy_surroundings_kJ_per_K if sc else None,
                "entropy_universe_kJ_per_K": sc.entropy_universe_kJ_per_K if sc else None,
                "entropy_reading": sc.entropy_reading if sc else None,
                "not_assessed": [{"figure": f, "missing": list(m)} for f, m in s.not_assessed],
                "missing_inputs": list(s.missing_inputs),
                "notes": list(s.notes),
                "energetics": [_clean(asdict(e)) for e in s.energetics],
                "findings": [f.to_dict() for f in self.findings],
            }
        return _clean(out)


def _clean(value):
    """Tuples to lists, non-finite floats to None (JSON has no NaN)."""
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, (np.floating,)):
        return _clean(float(value))
    if isinstance(value, Crossover):
        return {"T_K": value.T, "direction": value.direction}
    return value


# --------------------------------------------------------------------------
# Species resolution

def local_record(sp: LocalSpecies, window: tuple[float, float]) -> SpeciesRecord:
    """A library record built from a case's own [[species]] entry (constant Cp)."""
    formula = parse_formula(sp.formula)
    phase = "s" if str(sp.phase) == "cr" else str(sp.phase)
    lo, hi = sp.t_range if sp.t_range else (min(T_REF, window[0]), max(T_REF, window[1]))
    return SpeciesRecord(
        id=f"{sp.name}({phase})",
        name=sp.name,
        aliases=(f"{formula.hill}({phase})",) if sp.name != formula.hill else (),
        formula=formula.hill,
        elements=tuple((e, float(n)) for e, n in formula.elements),
        charge=formula.charge,
        phase=phase,
        model=ConstantCp(sp.hf, sp.s, sp.cp, lo, hi),
        source=f"case-local data: {sp.source}",
        note="constant heat capacity" + ("" if sp.t_range else
                                         " (no range given: taken as valid over the window)"),
        uncertainty=tuple(sp.uncertainty),
        stable_range=None,
        cas=None,
        molar_mass=formula.molar_mass,
    )


def _resolve(case: Case, reaction: Reaction, library: Library
             ) -> tuple[list[tuple[Term, SpeciesRecord, bool, bool]], Library]:
    local = [local_record(sp, case.window) for sp in case.species]
    lib = library.with_records(local) if local else library
    local_ids = {r.id for r in local}
    problems: list[Problem] = []
    out = []
    line = case.line_of("reaction")
    for term in reaction.terms:
        try:
            rec = lib.resolve(term.label, term.phase)
        except DossierError as err:
            for p in err.problems:
                problems.append(Problem(f"species '{term.key}': {p.message}", str(case.path),
                                        line, "reaction"))
            continue
        is_local = rec.id in local_ids
        out.append((term, rec, is_local, is_local and rec.id in library))
    if problems:
        raise CaseError(problems)
    return out, lib


# --------------------------------------------------------------------------
# The assessment

def assess_case(case: Case, library: Library, extra_temperatures: tuple[float, ...] = ()
                ) -> Assessment:
    path = str(case.path)
    try:
        reaction = parse_reaction(case.reaction)
    except DossierError as err:
        raise CaseError([Problem(p.message, path, case.line_of("reaction"), "reaction")
                         for p in err.problems]) from None
    resolved, _lib = _resolve(case, reaction, library)
    compositions = {term.key: (rec.composition, rec.charge) for term, rec, _, _ in resolved}
    try:
        check_balance(reaction, compositions)
    except DossierError as err:
        raise CaseError([Problem(p.message, path, case.line_of("reaction"), "reaction")
                         for p in err.problems]) from None

    nus = tuple(float(-t.coefficient) if i < len(reaction.reactants) else float(t.coefficient)
                for i, t in enumerate(reaction.terms))
    thermo = ReactionThermo(nus, tuple(rec.model for _, rec, _, _ in resolved))
    warnings: list[str] = []

    # Species uses and data warnings
    t_lo, t_hi = case.window
    uses = []
    for (term, rec, is_local, overrides), nu in zip(resolved, nus):
        m = rec.model
        uses.append(SpeciesUse(
            key=term.key, nu=nu, record_id=rec.id, name=rec.name, formula=rec.formula,
            phase=rec.phase, model=m.kind, t_min_K=float(m.t_min), t_max_K=float(m.t_max),
            stable_range_K=rec.stable_range, hf298_kJ_mol=rec.hf298 / 1e3,
            s298_J_molK=rec.s298, cp298_J_molK=float(m.cp(T_REF)),
            molar_mass_g_mol=rec.molar_mass, source=rec.source, note=rec.note,
            uncertainty=rec.uncertainty, local=is_local, overrides_library=overrides,
            digest=rec.digest()))
        if t_lo < m.t_min or t_hi > m.t_max:
            warnings.append(
                f"{term.key}: the {m.kind} data are valid for {m.t_min:.2f}-{m.t_max:.2f} K; "
                f"the window {t_lo:.2f}-{t_hi:.2f} K extends beyond them, so values there are "
                "extrapolated")
        if rec.stable_range and (t_lo < rec.stable_range[0] or t_hi > rec.stable_range[1]):
            lo, hi = rec.stable_range
            warnings.append(
                f"{term.key}: at 1 bar this phase is the stable one only between {lo:.2f} and "
                f"{hi:.2f} K; part of the window lies outside (at {case.pressure / 1e5:g} bar "
                "the boundaries shift): check that the phase written is the one present")
        if overrides:
            warnings.append(f"{term.key}: the case's own data replace the library record "
                            f"'{rec.id}'")

    # Profile
    grid = temperature_grid(t_lo, t_hi, extra_temperatures)
    requested = set(np.round(np.asarray(extra_temperatures, dtype=float), 9).tolist())
    with np.errstate(all="ignore"):  # non-finite values are reported just below
        dH = thermo.dH(grid)
        dS = thermo.dS(grid)
        dG = dH - grid * dS
        lnK = thermo.lnK(grid)
    data_lo, data_hi = thermo.data_range

    if not (np.all(np.isfinite(dH)) and np.all(np.isfinite(dG)) and np.all(np.isfinite(lnK))):
        # checked before the equilibrium is solved, which needs a finite ln K
        raise CaseError([Problem("the thermodynamic data give non-finite values in the "
                                 f"window {t_lo:.6g}-{t_hi:.6g} K; check the temperatures "
                                 "and the species data", path,
                                 case.line_of("temperature"), "temperature")])
    basis_term = _basis_term(case, reaction)
    eq = _equilibrium_system(case, reaction, basis_term)
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

    # Crossovers: in the window, and across the data range around it.
    scan_lo = min(t_lo, max(data_lo, 200.0))
    scan_hi = max(t_hi, min(data_hi, 3000.0))
    crossovers = thermo.crossovers(scan_lo, scan_hi)
    dH298, dS298 = float(thermo.dH(T_REF)), float(thermo.dS(T_REF))
    const_cross = dH298 / dS298 if dS298 != 0 and dH298 / dS298 > 0 else None

    g_window = thermo.dG(np.linspace(t_lo, t_hi, 401))
    favourable = ("everywhere" if np.all(g_window < 0) else
                  "nowhere" if np.all(g_window >= 0) else "partly")

    thermo_out = Thermodynamics(
        reaction=reaction.text, reversible=reaction.reversible,
        pressure_bar=case.pressure / 1e5, window_K=(t_lo, t_hi),
        data_range_K=(float(data_lo), float(data_hi)),
        dH298_kJ_mol=dH298 / 1e3, dS298_J_molK=dS298,
        dG298_kJ_mol=(dH298 - T_REF * dS298) / 1e3,
        crossovers=crossovers, crossover_constant_K=const_cross, profile=tuple(rows),
        equilibrium_mode=mode, equilibrium_note=note, basis=basis_term.key,
        favourable=favourable)

    from dossier.assess.batch import assess_safety  # safety methods, kept in their own module

    safety = assess_safety(case, reaction, resolved, thermo, basis_term, library)
    subject = RuleSubject(case=case, thermo=thermo_out, safety=safety, species=tuple(uses),
                          warnings=tuple(warnings))
    from dossier.assess import rules  # noqa: F401  (registers the rules)

    findings = run_rules(subject)
    return Assessment(
        case_id=case.id, title=case.title, revision=case.revision, status=str(case.status),
        owner=case.owner, gate=case.gate,
        meeting=case.meeting.isoformat() if case.meeting else None,
        species=tuple(uses), thermo=thermo_out, safety=safety, findings=findings,
        warnings=tuple(warnings), library_version=library.version)


@dataclass(frozen=True)
class RuleSubject:
    """What the finding rules see."""

    case: Case
    thermo: Thermodynamics
    safety: Safety | None
    species: tuple[SpeciesUse, ...]
    warnings: tuple[str, ...] = field(default=())


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


__all__ = ["Assessment", "assess_case", "METHOD_SETTINGS", "CAUTIONS"]
