"""The case at the scale of its batch: heat and entropy per batch, the runaway
scenario after a cooling failure, gas and pressure, and the energetic
screening of its species, from the [charge], [vessel], [decomposition] and
[measured] tables.

Pure: the case, the resolved species, the reaction properties and the method
settings in; a :class:`~dossier.model.assessment.Safety` out.  The methods
live in :mod:`dossier.engine.safety` and :mod:`dossier.engine.runaway`;
this module maps the case's tables onto them and names missing inputs by
their case-file keys.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.assess.resolve import Resolution
from dossier.assess.screening import screen_terms
from dossier.chem.reaction import Reaction, Term
from dossier.constants import SECONDS_PER_HOUR
from dossier import number_policy as policy
from dossier.engine.runaway import RunawayScenario, runaway_scenario
from dossier.engine.settings import MethodSettings
from dossier.engine.thermo import ReactionThermo
from dossier.errors import CaseError, DossierError, Problem
from dossier.library.lookup import Library
from dossier.library.record import SpeciesRecord
from dossier.model.assessment import Safety, ScaleFigures
from dossier.model.case import Case

#: Names of the scenario's inputs as the case file spells them, for "missing" reports.
INPUT_LABELS: dict[str, str] = {
    "heat": "heat released per batch (reaction enthalpy with charge.basis and charge.amount)",
    "mass": "charge.mass (total reaction mass)",
    "cp": "charge.cp (specific heat capacity of the reaction mass)",
    "t_process": "charge.process_temperature",
    "accumulation": "charge.accumulation (unreacted share at the worst moment)",
    "mtt": "vessel.mtt (maximum technical temperature)",
    "td24": "decomposition.td24 (or decomposition.activation_energy with decomposition.rate)",
    "kinetics": "decomposition.activation_energy and decomposition.rate (heat-release rate at a temperature)",
    "decomposition_energy": "decomposition.energy (decomposition energy per mass)",
    "feed_time": "charge.feed_time (dosing time)",
    "cooling_ua": "vessel.cooling_ua (overall U*A of jacket or coil)",
    "coolant_temperature": "vessel.coolant_temperature",
    "n_gas": "gas evolved by the reaction (gaseous products in the reaction)",
    "free_volume": "vessel.free_volume (gas space)",
    "design_pressure": "vessel.design_pressure",
    "mtsr": "MTSR (needs the heat released, charge.mass, charge.cp, "
            "charge.process_temperature and charge.accumulation)",
}
_GAS_FIGURES = ("gas volume", "gas pressure", "pressure against design pressure")
_GAS_INPUTS = ("gas evolved", "vessel.free_volume", "vessel.design_pressure")
_NO_CHARGE = "[charge] table (basis, amount, mass, cp, process_temperature, accumulation)"


@dataclass(frozen=True)
class BatchResult:
    """The safety figures and the library records they used besides the reaction's own."""

    safety: Safety
    product_records: tuple[SpeciesRecord, ...]  # decomposition products of the screening


def entropy_reading(s_sys: float, s_surr: float, measured: bool = False) -> str:
    """The sign of the universe's entropy change, said in words.  With a measured
    reaction enthalpy the surroundings' entropy comes from it (the heat actually
    released), so the verdict is that of ΔH_measured − TΔS° rather than of ΔG°."""
    s_univ = s_sys + s_surr
    same = ("ΔH_measured − TΔS° < 0" if measured else "ΔG° < 0",
            "ΔH_measured − TΔS° > 0" if measured else "ΔG° > 0")
    tail = ("; the surroundings' share is the measured heat of reaction over T, the "
            "system's the computed ΔrS°" if measured else "")
    if s_sys < 0 < s_surr:
        how = ("the surroundings gain more entropy from the heat released than the system "
               "loses" if s_univ > 0 else
               "the entropy the surroundings gain from the heat released does not make up for "
               "what the system loses")
    elif s_surr < 0 < s_sys:
        how = ("the system gains more entropy than the surroundings lose by supplying the heat"
               if s_univ > 0 else
               "the system gains less entropy than the surroundings lose by supplying the heat")
    elif s_univ > 0:
        how = "system and surroundings both gain entropy"
    else:
        how = "system and surroundings both lose entropy"
    if s_univ > 0:
        return (f"positive: {how}, so the reaction runs spontaneously at standard state at the "
                f"process temperature (the same verdict as {same[0]}){tail}")
    if s_univ < 0:
        return (f"negative: {how}, so the reaction does not run spontaneously at standard state "
                f"at the process temperature (the same verdict as {same[1]}){tail}")
    zero = "ΔH_measured − TΔS° = 0" if measured else "ΔG° = 0"
    return f"zero: the reaction is at equilibrium at standard state ({zero}){tail}"


def scale_figures(case: Case, reaction: Reaction, resolution: Resolution,
                  properties: ReactionThermo, basis: Term) -> ScaleFigures | None:
    """Heat, entropy and gas per batch (None without a [charge] table)."""
    ch, meas = case.charge, case.measured
    if ch is None:
        return None
    if ch.amount_kind == "mass":
        basis_rec = resolution.record_for(basis.key)
        if not basis_rec.molar_mass:
            raise CaseError([Problem("the basis species has no molar mass; give the amount "
                                     "in mol", str(case.path), case.line_of("charge.amount"),
                                     "charge.amount")])
        n_basis = ch.amount / (basis_rec.molar_mass / 1e3)
    else:
        n_basis = ch.amount
    n_rxn = n_basis / float(basis.coefficient)
    T_p = ch.process_temperature
    dH_comp = float(properties.dH(T_p))
    dS_comp = float(properties.dS(T_p))
    if meas is not None:
        dH_used, origin = meas.reaction_enthalpy, "measured"
    else:
        dH_used, origin = dH_comp, "computed"
    heat_J = -dH_used * n_rxn
    gas_per_rxn = sum(float(nu) for nu, term in reaction.signed() if term.phase == "g")
    s_sys = n_rxn * dS_comp
    # The heat the surroundings receive is the heat released, so their entropy change
    # uses the same enthalpy as the heat per batch (the measured one when given).
    s_surr = -n_rxn * dH_used / T_p
    return ScaleFigures(
        basis=basis.key, basis_mol=n_basis, reaction_mol=n_rxn,
        enthalpy_used_kJ_mol=dH_used / 1e3, enthalpy_origin=origin,
        enthalpy_computed_kJ_mol=dH_comp / 1e3,
        enthalpy_measured_kJ_mol=meas.reaction_enthalpy / 1e3 if meas else None,
        measured_method=meas.method if meas else None,
        heat_released_kJ=heat_J / 1e3, heat_released_kJ_per_kg=heat_J / 1e3 / ch.mass,
        release_rate_kW=(heat_J / ch.feed_time / 1e3) if ch.feed_time else None,
        T_process_K=T_p,
        entropy_system_kJ_per_K=s_sys / 1e3, entropy_surroundings_kJ_per_K=s_surr / 1e3,
        entropy_universe_kJ_per_K=(s_sys + s_surr) / 1e3,
        entropy_reading=entropy_reading(s_sys, s_surr, measured=meas is not None),
        gas_mol=gas_per_rxn * n_rxn if gas_per_rxn > 0 else 0.0)


def _heat_J(case: Case, scale: ScaleFigures | None, properties: ReactionThermo) -> float | None:
    """Heat released per batch, J, computed exactly as :func:`scale_figures` does."""
    if scale is None or case.charge is None:
        return None
    if case.measured is not None:
        return -case.measured.reaction_enthalpy * scale.reaction_mol
    return -float(properties.dH(case.charge.process_temperature)) * scale.reaction_mol


def _scenario(case: Case, scale: ScaleFigures | None, heat_J: float | None,
              settings: MethodSettings) -> RunawayScenario:
    ch, vs, dec = case.charge, case.vessel, case.decomposition
    no_gas = scale is not None and scale.gas_mol <= 0.0
    try:
        return runaway_scenario(
            # An endothermic reaction cannot heat the mass: no adiabatic rise.
            heat_J=0.0 if heat_J is not None and heat_J < 0.0 else heat_J,
            mass_kg=ch.mass if ch else None, cp=ch.cp if ch else None,
            t_process=ch.process_temperature if ch else None,
            accumulation=ch.accumulation if ch else None,
            mtt=vs.mtt if vs else None,
            td24_given=dec.td24 if dec else None,
            ea=dec.activation_energy if dec else None,
            q_ref=dec.rate_power if dec else None,
            t_ref=dec.rate_temperature if dec else None,
            decomposition_energy_J_per_kg=dec.energy if dec else None,
            feed_time_s=ch.feed_time if ch else None,
            ua_W_per_K=vs.cooling_ua if vs else None,
            t_coolant=vs.coolant_temperature if vs else None,
            n_gas_mol=None if no_gas or scale is None else scale.gas_mol,
            free_volume_m3=vs.free_volume if vs else None,
            p_initial_Pa=case.pressure,
            design_pressure_Pa=vs.design_pressure if vs else None,
            settings=settings, labels=INPUT_LABELS,
        )
    except DossierError as err:
        problems = []
        for p in err.problems:
            key = "decomposition" if "TD24" in p.message or "decomposition" in p.message else None
            problems.append(Problem(p.message, str(case.path), case.line_of(key) if key else None,
                                    key))
        raise CaseError(problems) from None


def _gaps(case: Case, scale: ScaleFigures | None, sc: RunawayScenario
          ) -> tuple[tuple[tuple[str, tuple[str, ...]], ...], tuple[str, ...], tuple[str, ...]]:
    """(figures not assessed with what they lacked, missing case-file inputs, notes)."""
    no_gas = scale is not None and scale.gas_mol <= 0.0
    not_assessed = sc.blocked
    if scale is None:
        not_assessed = (("heat and entropy at scale", ("[charge] table",)),) + not_assessed
    if no_gas:  # nothing to assess: the reaction makes no gas
        not_assessed = tuple((f, m) for f, m in not_assessed if f not in _GAS_FIGURES)
    if sc.criticality.klass is None:
        not_assessed += (("criticality class", sc.criticality.missing),)
    notes = list(sc.notes)
    if scale is not None and scale.heat_released_kJ < 0.0:
        notes.insert(0, f"the reaction is endothermic: it absorbs "
                        f"{policy.quantity(-scale.heat_released_kJ, 'kJ')} per batch and cannot heat the mass, so its adiabatic temperature rise is "
                        "taken as zero (MTSR = process temperature)")
    if no_gas:
        notes.append("the reaction releases no gas (it makes no more gas than it uses), so "
                     "there is no gas volume or pressure to assess")
    missing = tuple(m for m in sc.missing if not (no_gas and m.startswith(_GAS_INPUTS)))
    if case.charge is None:
        missing = (_NO_CHARGE,) + missing
    return tuple(not_assessed), missing, tuple(notes)


def assess_batch(case: Case, reaction: Reaction, resolution: Resolution,
                 properties: ReactionThermo, basis: Term, library: Library,
                 settings: MethodSettings) -> BatchResult:
    """Every safety figure of the case, and the product records the screening used."""
    screens, product_records = screen_terms(resolution.terms, library, settings)
    scale = scale_figures(case, reaction, resolution, properties, basis)
    sc = _scenario(case, scale, _heat_J(case, scale, properties), settings)
    not_assessed, missing, notes = _gaps(case, scale, sc)
    vs, cool = case.vessel, sc.cooling
    safety = Safety(
        scale=scale,
        adiabatic_rise_K=sc.dT_ad, severity=sc.severity, mtsr_K=sc.mtsr,
        mtt_K=vs.mtt if vs else None, td24_K=sc.td24, td24_origin=sc.td24_origin,
        tmrad_at_mtsr_h=(sc.tmr_at_mtsr_s / SECONDS_PER_HOUR
                         if sc.tmr_at_mtsr_s is not None else None),
        probability=sc.probability, probability_basis=sc.probability_basis,
        criticality_class=sc.criticality.klass, criticality_reason=sc.criticality.reason,
        decomposition_rise_K=sc.decomposition_rise, final_temperature_K=sc.final_temperature,
        release_rate_kW=(cool.release_rate_W / 1e3 if cool else
                         (scale.release_rate_kW if scale else None)),
        cooling_capacity_kW=cool.capacity_W / 1e3 if cool else None,
        cooling_margin_kW=cool.margin_W / 1e3 if cool else None,
        cooling_sufficient=cool.sufficient if cool else None,
        gas_volume_normal_m3=sc.gas_volume_normal_m3,
        pressure_at_mtsr_bar=sc.gas_pressure_Pa / 1e5 if sc.gas_pressure_Pa is not None else None,
        design_pressure_bar=vs.design_pressure / 1e5 if vs and vs.design_pressure else None,
        pressure_exceeds_design=sc.pressure_exceeds_design,
        not_assessed=not_assessed, missing_inputs=missing, notes=notes,
        energetics=screens,
    )
    return BatchResult(safety, product_records)


__all__ = ["INPUT_LABELS", "BatchResult", "entropy_reading", "scale_figures", "assess_batch"]
