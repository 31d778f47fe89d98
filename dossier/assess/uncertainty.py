"""The case's stated uncertainties carried into its figures.

Pure: the case, its resolved species, the reaction properties, the nominal
thermodynamics and safety figures and the settings in; the same figures with
their 95 % intervals out.  Sampling is done by :mod:`dossier.engine.uncertainty`
with a fixed seed (``settings.uncertainty_seed``), in a fixed order: the
species of the reaction first (ΔfH°, S°, Cp° of each term, in the order of the
reaction), then the inputs of the batch in the order of :data:`INPUT_ORDER`.
The same species draws serve the profile, the crossovers and the heat per
batch, so all three move together as they would if a species' data were off.

What carries an uncertainty:

* library records: the uncertainties their source states (ATcT's ΔfH°, a bound on
  a heat capacity the source does not give), read as 95 % half-widths;
* a case's own ``[[species]]`` table: its ``uncertainty`` table, 95 % half-widths;
* an estimate from a structure: the method's standard uncertainty, widened to a
  95 % half-width (× 1.96);
* values of [charge], [vessel], [decomposition] and [measured] written with ±.

Everything else is taken as exact, and the dossier lists what was sampled.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Callable

import numpy as np

from dossier.assess.resolve import ESTIMATE_PREFIX, Resolution
from dossier.constants import R, T_REF
from dossier.engine.thermo import ReactionThermo
from dossier.engine.uncertainty import (Z_95, ReactionShifts, ScenarioDraws, class_shares,
                                        crossover_draws, draw, interval, reaction_shifts,
                                        scenario_samples, shifted_properties)
from dossier.engine.settings import MethodSettings
from dossier.model.assessment import Margin, Safety, Thermodynamics
from dossier.model.case import Case

#: The batch inputs in the order they are drawn: (case-file key, lower bound, upper bound).
INPUT_ORDER: tuple[tuple[str, float, float], ...] = (
    ("charge.amount", 0.0, np.inf), ("charge.mass", 0.0, np.inf),
    ("charge.cp", 0.0, np.inf), ("charge.process_temperature", 0.0, np.inf),
    ("charge.accumulation", 0.0, 1.0), ("charge.feed_time", 0.0, np.inf),
    ("vessel.mtt", 0.0, np.inf), ("vessel.free_volume", 0.0, np.inf),
    ("vessel.design_pressure", 0.0, np.inf), ("vessel.cooling_ua", 0.0, np.inf),
    ("vessel.coolant_temperature", 0.0, np.inf),
    ("decomposition.td24", 0.0, np.inf), ("decomposition.activation_energy", 0.0, np.inf),
    ("decomposition.rate.temperature", 0.0, np.inf), ("decomposition.rate.power", 0.0, np.inf),
    ("measured.reaction_enthalpy", -np.inf, np.inf),
)


#: Each batch input in words, for the list of what carried an uncertainty.
INPUT_WORDS: dict[str, str] = {
    "charge.amount": "the amount of the basis", "charge.mass": "the reaction mass",
    "charge.cp": "the specific heat capacity of the reaction mass",
    "charge.process_temperature": "the process temperature",
    "charge.accumulation": "the accumulation", "charge.feed_time": "the dosing time",
    "vessel.mtt": "the MTT", "vessel.free_volume": "the free gas volume",
    "vessel.design_pressure": "the design pressure", "vessel.cooling_ua": "the cooling U·A",
    "vessel.coolant_temperature": "the coolant temperature",
    "decomposition.td24": "TD24", "decomposition.activation_energy":
        "the activation energy of the decomposition",
    "decomposition.rate.temperature": "the temperature of the decomposition rate",
    "decomposition.rate.power": "the decomposition's heat-release rate",
    "measured.reaction_enthalpy": "the measured reaction enthalpy",
}


@dataclass(frozen=True)
class Sampled:
    """What the propagation drew: the species shifts and the batch inputs."""

    shifts: ReactionShifts
    inputs: dict[str, np.ndarray | None]
    stated: tuple[str, ...]        # what carried an uncertainty, in words


def _value(case: Case, key: str) -> float | None:
    ch, vs, dec, meas = case.charge, case.vessel, case.decomposition, case.measured
    table, _, name = key.partition(".")
    obj = {"charge": ch, "vessel": vs, "decomposition": dec, "measured": meas}[table]
    if obj is None:
        return None
    attr = {"rate.temperature": "rate_temperature", "rate.power": "rate_power"}.get(name, name)
    return getattr(obj, attr)


def _species_half_widths(resolution: Resolution) -> tuple[tuple[float, float, float], ...]:
    out = []
    for r in resolution.terms:
        u = dict(r.record.uncertainty)
        widen = Z_95 if r.record.source.startswith(ESTIMATE_PREFIX) else 1.0
        out.append(tuple(widen * u.get(k, 0.0) for k in ("hf", "s", "cp")))
    return tuple(out)


def sample_case(case: Case, resolution: Resolution, nus: tuple[float, ...],
                settings: MethodSettings) -> Sampled:
    """Draw the species shifts and every batch input (fixed seed, fixed order)."""
    n = settings.uncertainty_samples
    rng = np.random.default_rng(settings.uncertainty_seed)
    widths = _species_half_widths(resolution)
    shifts = reaction_shifts(rng, nus, widths, n)
    # listed when they can move a figure at all: 1 J/mol, 0.01 J/(mol K) (an element's
    # reference state carries ATcT's 1e-5 J/mol)
    stated = [f"{k} of {r.term.key}" for r, w in zip(resolution.terms, widths)
              for k, x, least in zip(("ΔfH°", "S°", "Cp°"), w, (1.0, 0.01, 0.01)) if x >= least]
    inputs: dict[str, np.ndarray | None] = {}
    for key, low, high in INPUT_ORDER:
        value = _value(case, key)
        u = case.half_width(key)
        drawn = draw(rng, 0.0 if value is None else value, u, n, low, high)
        inputs[key] = None if value is None else drawn
        if value is not None and u > 0:
            stated.append(INPUT_WORDS[key])
    return Sampled(shifts, inputs, tuple(stated))


def thermo_intervals(thermo: Thermodynamics, properties: ReactionThermo, sampled: Sampled,
                     solve: Callable[[float, float], float], settings: MethodSettings
                     ) -> Thermodynamics:
    """The profile with the 95 % intervals of ΔrH°, ΔrG° and the conversion at each row,
    and the interval of each crossover.  The conversion rises with K at a given
    temperature, so its interval ends are the conversions at the ends of ΔrG°'s interval
    (``solve(T, ln K)`` gives the conversion)."""
    cov = settings.uncertainty_coverage
    T = np.array([r.T_K for r in thermo.profile])
    dH = np.array([r.dH_kJ_mol for r in thermo.profile]) * 1e3
    dS = np.array([r.dS_J_molK for r in thermo.profile])
    h, s = shifted_properties(T, dH, dS, sampled.shifts)
    g = h - T[None, :] * s
    rows = []
    for i, row in enumerate(thermo.profile):
        h_lo, h_hi = interval(h[:, i], cov)
        g_lo, g_hi = interval(g[:, i], cov)
        if sampled.shifts.any:
            RT = R * row.T_K
            c_lo = solve(row.T_K, -g_hi / RT)
            c_hi = solve(row.T_K, -g_lo / RT)
        else:
            c_lo = c_hi = row.conversion
        rows.append(dataclasses.replace(
            row, dH_low_kJ_mol=h_lo / 1e3, dH_high_kJ_mol=h_hi / 1e3,
            dG_low_kJ_mol=g_lo / 1e3, dG_high_kJ_mol=g_hi / 1e3,
            conversion_low=min(c_lo, c_hi), conversion_high=max(c_lo, c_hi)))
    scan_lo, scan_hi = settings.crossover_scan_K
    crossings = []
    for c in thermo.crossovers:
        if not sampled.shifts.any:
            crossings.append((c.T, c.T))
            continue
        roots = crossover_draws(properties.dH, properties.dS, c.T, sampled.shifts,
                                scan_lo, scan_hi)
        crossings.append(interval(roots, cov) or (None, None))
    return dataclasses.replace(thermo, profile=tuple(rows),
                               crossover_intervals_K=tuple(crossings))


def _heat_draws(case: Case, safety: Safety, properties: ReactionThermo, sampled: Sampled,
                molar_mass: float) -> tuple[np.ndarray | None, np.ndarray | None]:
    """(heat released per batch in J, gas evolved in mol), per draw, as
    :func:`dossier.assess.batch.scale_figures` computes them."""
    sc, ch, x = safety.scale, case.charge, sampled.inputs
    if sc is None or ch is None:
        return None, None
    amount = x["charge.amount"]
    n_basis = amount / (molar_mass / 1e3) if ch.amount_kind == "mass" else amount
    n_rxn = n_basis * (sc.reaction_mol / sc.basis_mol)
    if case.measured is not None:
        dH = x["measured.reaction_enthalpy"]
    else:
        tp = x["charge.process_temperature"]
        dH = properties.dH(tp) + sampled.shifts.dh + sampled.shifts.dcp * (tp - T_REF)
    gas = n_rxn * (sc.gas_mol / sc.reaction_mol) if sc.gas_mol > 0 else None
    return -dH * n_rxn, gas


def safety_intervals(case: Case, safety: Safety, properties: ReactionThermo, sampled: Sampled,
                     molar_mass: float, settings: MethodSettings) -> Safety:
    """The safety figures with their 95 % intervals, the criticality class's
    probabilities and the margins to each class boundary and design limit."""
    x, n = sampled.inputs, settings.uncertainty_samples
    heat, gas = _heat_draws(case, safety, properties, sampled, molar_mass)
    p0 = np.full(n, case.pressure)
    d = ScenarioDraws(
        heat_J=heat, mass_kg=x["charge.mass"], cp=x["charge.cp"],
        t_process=x["charge.process_temperature"], accumulation=x["charge.accumulation"],
        mtt=x["vessel.mtt"], td24_given=x["decomposition.td24"],
        ea=x["decomposition.activation_energy"], q_ref=x["decomposition.rate.power"],
        t_ref=x["decomposition.rate.temperature"], feed_time_s=x["charge.feed_time"],
        ua_W_per_K=x["vessel.cooling_ua"], t_coolant=x["vessel.coolant_temperature"],
        n_gas_mol=gas, free_volume_m3=x["vessel.free_volume"], p_initial_Pa=p0,
        design_pressure_Pa=x["vessel.design_pressure"])
    s = scenario_samples(d, settings.td24_time_s)
    cov = settings.uncertainty_coverage

    def iv(a, scale=1.0, known=True):
        if a is None or not known:
            return None
        got = interval(a, cov)
        return None if got is None else tuple(None if v is None else v * scale for v in got)

    shares = class_shares(s.klass) if s.klass is not None and safety.criticality_class else ()
    return dataclasses.replace(
        safety,
        adiabatic_rise_interval_K=iv(s.dT_ad, known=safety.adiabatic_rise_K is not None),
        mtsr_interval_K=iv(s.mtsr, known=safety.mtsr_K is not None),
        td24_interval_K=iv(s.td24, known=safety.td24_K is not None),
        tmrad_at_mtsr_interval_h=iv(s.tmr_h, known=safety.tmrad_at_mtsr_h is not None),
        pressure_at_mtsr_interval_bar=iv(s.pressure_Pa, 1e-5,
                                         known=safety.pressure_at_mtsr_bar is not None),
        criticality_class_probabilities=shares,
        samples=n, uncertain_inputs=sampled.stated,
        margins=_margins(safety, s, d, settings))


def _margin(what: str, unit: str, nominal: float | None, draws: np.ndarray | None,
            consequence: str, cov: float, scale: float = 1.0) -> Margin | None:
    if nominal is None or draws is None:
        return None
    got = interval(draws, cov)
    if got is None:
        return None
    lo, hi = got
    return Margin(what, unit, nominal, (None if lo is None else lo * scale,
                                        None if hi is None else hi * scale), consequence)


def _margins(safety: Safety, s, d: ScenarioDraws, settings: MethodSettings
             ) -> tuple[Margin, ...]:
    """How far each figure stays from the boundary or limit it is compared with (positive:
    on the safe side), with the 95 % interval of that distance."""
    cov, sf = settings.uncertainty_coverage, safety
    out: list[Margin | None] = []
    with np.errstate(all="ignore"):
        if sf.mtsr_K is not None and sf.td24_K is not None and s.mtsr is not None \
                and s.td24 is not None:
            out.append(_margin("MTSR below TD24", "K", sf.td24_K - sf.mtsr_K, s.td24 - s.mtsr,
                               "at or above TD24 the decomposition can be triggered "
                               "(criticality class 4 or 5)", cov))
        if sf.mtsr_K is not None and sf.mtt_K is not None and s.mtsr is not None:
            out.append(_margin("MTSR below MTT", "K", sf.mtt_K - sf.mtsr_K, d.mtt - s.mtsr,
                               "at or above the MTT the mass reaches the technical limit "
                               "(boiling or loss of containment)", cov))
        if sf.mtt_K is not None and sf.td24_K is not None and s.td24 is not None:
            out.append(_margin("MTT below TD24", "K", sf.td24_K - sf.mtt_K, s.td24 - d.mtt,
                               "whether the technical limit acts before the decomposition "
                               "(criticality class 1 or 2, 4 or 5)", cov))
        if sf.pressure_at_mtsr_bar is not None and sf.design_pressure_bar is not None \
                and s.pressure_Pa is not None:
            out.append(_margin("gas pressure at the MTSR below the design pressure", "bar",
                               sf.design_pressure_bar - sf.pressure_at_mtsr_bar,
                               d.design_pressure_Pa - s.pressure_Pa,
                               "above the design pressure the vessel is over-pressured", cov,
                               1e-5))
        if sf.cooling_margin_kW is not None and s.cooling_ratio is not None:
            capacity = d.ua_W_per_K * (d.t_process - d.t_coolant)
            release = np.maximum(d.heat_J, 0.0) / d.feed_time_s
            out.append(_margin("mean heat release below the cooling capacity", "kW",
                               sf.cooling_margin_kW, capacity - release,
                               "the cooling cannot remove the mean heat release", cov, 1e-3))
        if sf.adiabatic_rise_K is not None and s.dT_ad is not None:
            bands = settings.severity_bands_K
            for (a, _lo, edge), (b, _e, _hi) in zip(bands, bands[1:]):
                out.append(_margin(f"adiabatic temperature rise below the {edge:g} K boundary "
                                   f"between severity '{a}' and '{b}'", "K", edge - sf.adiabatic_rise_K,
                                   edge - s.dT_ad, f"the severity could be '{a}' or '{b}'",
                                   cov))
        if sf.tmrad_at_mtsr_h is not None and s.tmr_h is not None:
            bands = settings.probability_bands_h
            for (a, _lo, edge), (b, _e, _hi) in zip(bands, bands[1:]):
                out.append(_margin(f"TMRad at the MTSR above the {edge:g} h boundary between "
                                   f"probability '{a}' and '{b}'", "h",
                                   sf.tmrad_at_mtsr_h - edge, s.tmr_h - edge,
                                   f"the probability could be '{a}' or '{b}'", cov))
    return tuple(m for m in out if m is not None)


__all__ = ["INPUT_ORDER", "Sampled", "sample_case", "thermo_intervals", "safety_intervals"]
