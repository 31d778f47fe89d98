"""The assessment of one case as plain data: what the pages, the packets, the
terminal and ``dossier evaluate --json`` all show.

Frozen dataclasses with units in the field names; :meth:`Assessment.to_dict`
is the JSON export.  Made by :func:`dossier.assess.evaluate.evaluate`.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any

import numpy as np

from dossier.model.findings import Finding


@dataclass(frozen=True)
class Crossover:
    """A temperature where ΔrG° = 0.

    ``direction`` says how ΔrG° changes sign with rising temperature:
    ``"favourable above"`` (ΔrG° goes from + to −), ``"favourable below"``
    (− to +), or ``"touches zero"`` for a tangent root with no sign change.
    """

    T: float
    direction: str


@dataclass(frozen=True)
class SpeciesUse:
    key: str  # as written in the reaction, e.g. "C6H5NO2(l)"
    nu: float  # signed coefficient
    record_id: str
    name: str
    formula: str
    phase: str
    model: str  # nasa7 | shomate | constant-cp
    t_min_K: float  # the data range of the model (where its fit holds) ...
    t_max_K: float  # ... which says nothing about phase stability
    #: Where the phase written is the stable one at the case pressure, from the record's
    #: phase boundaries (None ends: no limit; () stable nowhere at this pressure);
    #: None when no boundary is known.
    stable_phase_K: tuple[float | None, ...] | None
    stable_phase: str  # the same in words, with how each boundary was found
    hf298_kJ_mol: float
    s298_J_molK: float
    cp298_J_molK: float
    molar_mass_g_mol: float
    source: str
    note: str
    uncertainty: tuple[tuple[str, float], ...]
    missing: tuple[str, ...]  # properties the record's source does not give (e.g. "cp")
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
    # -- 95 % intervals from the stated uncertainties (assess/uncertainty.py) --
    dH_low_kJ_mol: float | None = None
    dH_high_kJ_mol: float | None = None
    dG_low_kJ_mol: float | None = None
    dG_high_kJ_mol: float | None = None
    conversion_low: float | None = None
    conversion_high: float | None = None


@dataclass(frozen=True)
class SolutionState:
    """The liquid solution at equilibrium at one temperature: mole fraction and
    activity coefficient of each member (in the order of ``solution_members``)."""

    T_K: float
    x: tuple[float, ...]
    gamma: tuple[float, ...]


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
    # -- the liquid solution (empty when the reaction has no liquid mixture) --
    activity_model: str = "ideal"  # asked for by the case: ideal | unifac | unifac-dortmund
    solution_model: str = ""  # used: "" (no liquid solution) | ideal | unifac | unifac-dortmund
    solution_model_text: str = ""  # the model used, in words
    solution_members: tuple[str, ...] = ()  # the reaction's liquids, then the liquid inerts
    solution_groups: tuple[tuple[str, str, str], ...] = ()  # (member, groups, origin)
    solution_note: str = ""
    solution_states: tuple[SolutionState, ...] = ()  # at the low and high ends of the window
    #: 95 % interval of each crossover (K; None for an end beyond the scanned range).
    crossover_intervals_K: tuple[tuple[float | None, float | None], ...] = ()
    #: The temperatures the crossover search covered (K): the window widened to the
    #: species data's common range, within the method settings' scan limits.  For the
    #: words "none between ... K"; not part of the JSON export.
    crossover_search_K: tuple[float, float] | None = None

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
class Margin:
    """How far a figure stays from the boundary or limit it is compared with (positive on
    the side the figure is on nominally, in ``unit``), and the 95 % interval of that
    distance.  Borderline when the interval includes zero."""

    what: str                 # "MTSR below TD24"
    unit: str
    nominal: float
    interval: tuple[float | None, float | None]
    consequence: str          # what lies on the other side of the boundary

    @property
    def borderline(self) -> bool:
        lo, hi = self.interval
        return (lo is None or lo <= 0.0) and (hi is None or hi >= 0.0)


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
    # -- 95 % intervals from the stated uncertainties (assess/uncertainty.py) ------
    adiabatic_rise_interval_K: tuple[float | None, float | None] | None = None
    mtsr_interval_K: tuple[float | None, float | None] | None = None
    td24_interval_K: tuple[float | None, float | None] | None = None
    tmrad_at_mtsr_interval_h: tuple[float | None, float | None] | None = None
    pressure_at_mtsr_interval_bar: tuple[float | None, float | None] | None = None
    #: (class, share of the draws), most likely first; empty without a class.
    criticality_class_probabilities: tuple[tuple[int, float], ...] = ()
    samples: int = 0
    uncertain_inputs: tuple[str, ...] = ()  # what carried an uncertainty, in words
    margins: tuple[Margin, ...] = ()


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
class VariantResult:
    """A what-if of the case: what it changes, and its safety figures and findings."""

    name: str
    note: str
    changes: tuple[tuple[str, str], ...]   # (case-file key, value as written)
    safety: Safety
    findings: tuple[Finding, ...]


@dataclass(frozen=True)
class Envelope:
    """The criticality class over process temperature × accumulation, the other inputs
    as the case gives them: ``classes[i][j]`` at ``T_K[j]`` and ``accumulation[i]``."""

    T_K: tuple[float, ...]
    accumulation: tuple[float, ...]
    classes: tuple[tuple[int, ...], ...]
    points: tuple[tuple[str, float, float], ...]  # (label, T_p in K, accumulation) to mark
    #: The class boundaries as curves: (name, accumulation at each of ``T_K`` where the
    #: MTSR reaches the level; above 1 where it is not reached) for "MTSR = MTT" and
    #: "MTSR = TD24".
    boundaries: tuple[tuple[str, tuple[float, ...]], ...] = ()


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
    cautions: tuple[str, ...]
    library_version: str
    tool_version: str
    variants: tuple[VariantResult, ...] = ()
    envelope: Envelope | None = None

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
            "crossover_intervals_K": [list(c) for c in t.crossover_intervals_K],
            "standard_298K": {"dH_kJ_mol": t.dH298_kJ_mol, "dS_J_molK": t.dS298_J_molK,
                              "dG_kJ_mol": t.dG298_kJ_mol},
            "favourable_in_window": t.favourable,
            "equilibrium": {"mode": t.equilibrium_mode, "note": t.equilibrium_note,
                            "basis": t.basis, "activity_model": t.activity_model,
                            "liquid_solution": _solution_dict(t)},
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
                **_uncertainty_dict(s),
            }
        if self.variants:
            out["variants"] = [_variant_dict(v) for v in self.variants]
        return _clean(out)


def _variant_dict(v: VariantResult) -> dict[str, Any]:
    s = v.safety
    return {"name": v.name, "note": v.note,
            "changes": [{"key": k, "value": val} for k, val in v.changes],
            "adiabatic_rise_K": s.adiabatic_rise_K, "mtsr_K": s.mtsr_K, "td24_K": s.td24_K,
            "tmrad_at_mtsr_h": s.tmrad_at_mtsr_h, "criticality_class": s.criticality_class,
            "criticality_class_probabilities": {
                str(k): p for k, p in s.criticality_class_probabilities},
            "mtsr_interval_K": _pair(s.mtsr_interval_K), "severity": s.severity,
            "probability": s.probability, "cooling_margin_kW": s.cooling_margin_kW,
            "pressure_at_mtsr_bar": s.pressure_at_mtsr_bar,
            "findings": [f.to_dict() for f in v.findings]}


def _uncertainty_dict(s: Safety) -> dict[str, Any]:
    """The safety figures' 95 % intervals, the class probabilities and the margins."""
    return {
        "adiabatic_rise_interval_K": _pair(s.adiabatic_rise_interval_K),
        "mtsr_interval_K": _pair(s.mtsr_interval_K),
        "td24_interval_K": _pair(s.td24_interval_K),
        "tmrad_at_mtsr_interval_h": _pair(s.tmrad_at_mtsr_interval_h),
        "pressure_at_mtsr_interval_bar": _pair(s.pressure_at_mtsr_interval_bar),
        "criticality_class_probabilities": {
            str(k): p for k, p in s.criticality_class_probabilities},
        "samples": s.samples,
        "uncertain_inputs": list(s.uncertain_inputs),
        "margins": [{"what": m.what, "unit": m.unit, "nominal": m.nominal,
                     "interval": list(m.interval), "borderline": m.borderline,
                     "consequence": m.consequence} for m in s.margins],
    }


def _pair(value):
    return None if value is None else list(value)


def _solution_dict(t: Thermodynamics) -> dict[str, Any] | None:
    """The liquid solution of the equilibrium, or None when there is none."""
    if not t.solution_model:
        return None
    members = t.solution_members
    return {
        "model": t.solution_model,
        "model_text": t.solution_model_text,
        "members": list(members),
        "groups": [{"species": m, "groups": g, "origin": o} for m, g, o in t.solution_groups],
        "note": t.solution_note,
        "at_window_ends": [{"T_K": s.T_K, "x": dict(zip(members, s.x)),
                            "gamma": dict(zip(members, s.gamma))}
                           for s in t.solution_states],
    }


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


__all__ = ["Crossover", "SpeciesUse", "ProfileRow", "SolutionState", "Thermodynamics",
           "ScaleFigures", "Margin", "Safety", "EnergeticScreen", "VariantResult", "Envelope", "Assessment"]
