"""The whole cooling-failure scenario: every figure its inputs allow, and what
could not be computed for want of which input.

Pure: SI floats in, a frozen :class:`RunawayScenario` out.  The methods are
in :mod:`dossier.engine.safety`; the thresholds come from the
:class:`~dossier.engine.settings.MethodSettings` passed in, and the names of
missing inputs from the caller's ``labels`` (the method's own words by
default), so this module never needs to know where the inputs come from.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping

from dossier.constants import SECONDS_PER_HOUR
from dossier.engine.safety import (
    INPUT_WORDS, CoolingResult, CriticalityResult, Level, adiabatic_rise, cooling_check,
    criticality_class, decomposition_rise, gas_pressure, gas_volume_normal, mtsr,
    positive, probability_from_tmr, severity_from_rise, td24, tmr_ad)
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.temperature import kelvin_celsius

@dataclass(frozen=True)
class RunawayScenario:
    """Every figure of the cooling-failure scenario that the inputs allow.

    Figures that could not be computed are ``None``; ``blocked`` pairs each
    such figure with the inputs it lacked, and ``missing`` lists those
    inputs once each (case-file labels), so nothing is silently blank.
    """

    dT_ad: float | None
    mtsr: float | None
    severity: Level | None
    td24: float | None
    td24_origin: str | None            # "given" or "from kinetics"
    tmr_at_mtsr_s: float | None
    probability: Level | None
    probability_basis: str | None
    criticality: CriticalityResult
    decomposition_rise: float | None
    final_temperature: float | None
    cooling: CoolingResult | None
    gas_volume_normal_m3: float | None
    gas_pressure_Pa: float | None
    gas_temperature: float | None
    pressure_exceeds_design: bool | None
    blocked: tuple[tuple[str, tuple[str, ...]], ...]
    missing: tuple[str, ...]
    notes: tuple[str, ...]


def runaway_scenario(
    *,
    heat_J: float | None = None,
    mass_kg: float | None = None,
    cp: float | None = None,
    t_process: float | None = None,
    accumulation: float | None = None,
    mtt: float | None = None,
    td24_given: float | None = None,
    ea: float | None = None,
    q_ref: float | None = None,
    t_ref: float | None = None,
    decomposition_energy_J_per_kg: float | None = None,
    feed_time_s: float | None = None,
    ua_W_per_K: float | None = None,
    t_coolant: float | None = None,
    n_gas_mol: float | None = None,
    free_volume_m3: float | None = None,
    p_initial_Pa: float | None = None,
    design_pressure_Pa: float | None = None,
    settings: MethodSettings = DEFAULT,
    labels: Mapping[str, str] = INPUT_WORDS,
) -> RunawayScenario:
    """Compute the cooling-failure scenario from whatever inputs are given.

    All inputs are SI floats or ``None``.  ``td24_given`` (a measured TD24)
    is preferred over TD24 from the kinetics (``ea``, ``q_ref`` at
    ``t_ref``); the kinetics are still used for TMRad at the MTSR.
    ``p_initial_Pa`` defaults to 0 (gauge) with a note if the gas pressure
    can otherwise be computed.  Missing inputs are named with ``labels``.
    """
    x = ScenarioInputs(heat_J, mass_kg, cp, t_process, accumulation, mtt, td24_given, ea, q_ref,
                       t_ref, decomposition_energy_J_per_kg, feed_time_s, ua_W_per_K, t_coolant,
                       n_gas_mol, free_volume_m3, p_initial_Pa, design_pressure_Pa)
    ledger = _Ledger(labels)
    dT, severity, T_mtsr = _heat_balance(ledger, x, settings)
    T_d24, origin = _td24(ledger, x, settings)
    tmr_s, probability, basis = _probability(ledger, x, T_mtsr, T_d24, settings)
    crit = criticality_class(t_process, T_mtsr, mtt, T_d24, labels)
    d_rise, t_final = _secondary(ledger, x, T_mtsr)
    cool = None
    if ledger.need("cooling check", heat=heat_J, feed_time=feed_time_s, cooling_ua=ua_W_per_K,
                   t_process=t_process, coolant_temperature=t_coolant):
        cool = cooling_check(heat_J, feed_time_s, ua_W_per_K, t_process, t_coolant)
    v_norm, p_gas, exceeds = _gas(ledger, x, T_mtsr, settings)
    return RunawayScenario(
        dT_ad=dT, mtsr=T_mtsr, severity=severity, td24=T_d24, td24_origin=origin,
        tmr_at_mtsr_s=tmr_s, probability=probability, probability_basis=basis,
        criticality=crit, decomposition_rise=d_rise, final_temperature=t_final,
        cooling=cool, gas_volume_normal_m3=v_norm, gas_pressure_Pa=p_gas,
        gas_temperature=T_mtsr if p_gas is not None else None,
        pressure_exceeds_design=exceeds, blocked=tuple(ledger.blocked),
        missing=ledger.missing_inputs(crit), notes=tuple(ledger.notes),
    )


@dataclass(frozen=True)
class ScenarioInputs:
    """The scenario's inputs (SI floats or None), as :func:`runaway_scenario` takes them."""

    heat_J: float | None
    mass_kg: float | None
    cp: float | None
    t_process: float | None
    accumulation: float | None
    mtt: float | None
    td24_given: float | None
    ea: float | None
    q_ref: float | None
    t_ref: float | None
    decomposition_energy_J_per_kg: float | None
    feed_time_s: float | None
    ua_W_per_K: float | None
    t_coolant: float | None
    n_gas_mol: float | None
    free_volume_m3: float | None
    p_initial_Pa: float | None
    design_pressure_Pa: float | None

    @property
    def have_kinetics(self) -> bool:
        return None not in (self.ea, self.q_ref, self.t_ref)


class _Ledger:
    """What one scenario could not compute and why, in the order it was found (a local
    working record of one call, never shared)."""

    def __init__(self, labels: Mapping[str, str]):
        self.labels = labels
        self.blocked: list[tuple[str, tuple[str, ...]]] = []
        self.notes: list[str] = []

    def need(self, figure: str, **inputs: object) -> bool:
        lacking = tuple(self.labels[k] for k, v in inputs.items() if v is None)
        if lacking:
            self.blocked.append((figure, lacking))
            return False
        return True

    def missing_inputs(self, crit: CriticalityResult) -> tuple[str, ...]:
        """Each missing input once, in order (the MTSR is a figure, not an input)."""
        inputs = {v for k, v in self.labels.items() if k != "mtsr"}
        seen: dict[str, None] = {}
        for item in [i for _f, lacking in self.blocked for i in lacking] + list(crit.missing):
            if item in inputs:
                seen.setdefault(item, None)
        return tuple(seen)


def _heat_balance(ledger: _Ledger, x: ScenarioInputs, settings: MethodSettings
                  ) -> tuple[float | None, Level | None, float | None]:
    """(adiabatic rise, severity, MTSR)."""
    dT = None
    if ledger.need("adiabatic temperature rise", heat=x.heat_J, mass=x.mass_kg, cp=x.cp):
        dT = adiabatic_rise(x.heat_J, x.mass_kg, x.cp)
    severity = severity_from_rise(dT, settings.severity_bands_K) if dT is not None else None
    if dT is None:
        ledger.blocked.append(("severity", ("adiabatic temperature rise",)))
    T_mtsr = None
    if dT is not None:
        if ledger.need("MTSR", t_process=x.t_process, accumulation=x.accumulation):
            T_mtsr = mtsr(x.t_process, x.accumulation, dT)
    else:
        ledger.need("MTSR", heat=x.heat_J, mass=x.mass_kg, cp=x.cp, t_process=x.t_process,
                    accumulation=x.accumulation)
    return dT, severity, T_mtsr


def _td24(ledger: _Ledger, x: ScenarioInputs, settings: MethodSettings
          ) -> tuple[float | None, str | None]:
    """(TD24, "given" or "from kinetics"); a given TD24 is compared with the kinetics."""
    L = ledger.labels
    if x.td24_given is not None:
        T_d24 = positive("TD24", x.td24_given)
        if x.have_kinetics and x.cp is not None:
            computed = td24(x.cp, x.ea, x.q_ref, x.t_ref, time_s=settings.td24_time_s)
            if abs(computed - T_d24) > settings.td24_agreement_K:
                ledger.notes.append(
                    f"the given TD24 ({kelvin_celsius(T_d24)}) differs by "
                    f"{abs(computed - T_d24):.1f} K from TD24 computed from the kinetics "
                    f"({kelvin_celsius(computed)}); the given value is used")
        return T_d24, "given"
    if x.have_kinetics and x.cp is not None:
        return td24(x.cp, x.ea, x.q_ref, x.t_ref, time_s=settings.td24_time_s), "from kinetics"
    lacking = [L["cp"]] if x.have_kinetics and x.cp is None else [L["td24"]]
    ledger.blocked.append(("TD24", tuple(lacking)))
    return None, None


def _probability(ledger: _Ledger, x: ScenarioInputs, T_mtsr: float | None,
                 T_d24: float | None, settings: MethodSettings
                 ) -> tuple[float | None, Level | None, str | None]:
    """(TMRad at the MTSR in s, probability level, what the level rests on)."""
    L = ledger.labels
    if T_mtsr is not None and x.have_kinetics and x.cp is not None:
        tmr_s = tmr_ad(T_mtsr, x.cp, x.ea, x.q_ref, x.t_ref)
        return (tmr_s, probability_from_tmr(tmr_s / SECONDS_PER_HOUR, settings.probability_bands_h),
                "TMRad at the MTSR from the decomposition kinetics")
    if T_mtsr is not None and T_d24 is not None and T_mtsr < T_d24:
        # TMRad falls with temperature: below TD24 it is longer than the TD24 time.
        td24_h = settings.td24_time_s / SECONDS_PER_HOUR
        level = probability_from_tmr(math.nextafter(td24_h, math.inf), settings.probability_bands_h)
        ledger.blocked.append(("TMRad at the MTSR", (L["kinetics"],)))
        return (None, level, f"MTSR is below TD24, so TMRad at the MTSR is longer than "
                f"{td24_h:g} h (kinetics not given, TMRad itself not computed)")
    lacking = []
    if T_mtsr is None:
        lacking.append("MTSR")
    if not x.have_kinetics:
        lacking.append(L["kinetics"])
    elif x.cp is None:
        lacking.append(L["cp"])
    ledger.blocked.append(("TMRad at the MTSR", tuple(lacking)))
    ledger.blocked.append(("probability", tuple(lacking)))
    return None, None, None


def _secondary(ledger: _Ledger, x: ScenarioInputs, T_mtsr: float | None
               ) -> tuple[float | None, float | None]:
    """(temperature rise of the decomposition, final temperature if triggered at the MTSR)."""
    if not ledger.need("decomposition temperature rise",
                       decomposition_energy=x.decomposition_energy_J_per_kg, cp=x.cp):
        ledger.blocked.append(("final temperature", ("decomposition temperature rise",)))
        return None, None
    d_rise = decomposition_rise(x.decomposition_energy_J_per_kg, x.cp)
    if T_mtsr is None:
        ledger.blocked.append(("final temperature", ("MTSR",)))
        return d_rise, None
    return d_rise, T_mtsr + d_rise


def _gas(ledger: _Ledger, x: ScenarioInputs, T_mtsr: float | None, settings: MethodSettings
         ) -> tuple[float | None, float | None, bool | None]:
    """(gas volume at normal conditions, pressure at the MTSR, above the design pressure?)."""
    v_norm, p_gas, exceeds = None, None, None
    if ledger.need("gas volume", n_gas=x.n_gas_mol):
        v_norm = gas_volume_normal(x.n_gas_mol, settings.gas_normal_T_K, settings.gas_normal_p_Pa)
    # The gas comes from the desired reaction, so its pressure is taken at the
    # MTSR, the highest temperature that reaction alone can reach.
    if ledger.need("gas pressure", n_gas=x.n_gas_mol, free_volume=x.free_volume_m3):
        if T_mtsr is None:
            ledger.blocked.append(("gas pressure", ("MTSR",)))
        else:
            p0 = x.p_initial_Pa
            if p0 is None:
                p0 = 0.0
                ledger.notes.append("gas pressure is the rise above the initial pressure "
                                    "(no initial pressure given)")
            p_gas = gas_pressure(x.n_gas_mol, x.free_volume_m3, T_mtsr, p0)
            if ledger.need("pressure against design pressure", design_pressure=x.design_pressure_Pa):
                exceeds = p_gas > x.design_pressure_Pa
    return v_norm, p_gas, exceeds
