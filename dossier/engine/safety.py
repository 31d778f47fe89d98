"""Thermal-safety methods for the runaway scenario after a cooling failure.

Pure computation: SI floats in (K, J, J/kg, J/mol, kg, mol, W, W/kg, W/K, s,
m3, Pa), frozen dataclasses out, no I/O.  The case/assessment layer converts
units, calls these functions and turns the results into findings.

What is here, and where each method comes from:

* adiabatic temperature rise and MTSR (maximum temperature of the synthesis
  reaction): energy balance of an adiabatic mass, dT_ad = Q / (m cp'),
  MTSR = T_p + X_acc dT_ad;
* TMRad, the adiabatic time to maximum rate, in the zero-order approximation
  of Townsend and Tou (Thermochimica Acta 37 (1980) 1-30):
  TMRad(T) = cp' R T^2 / (q'(T) Ea), q'(T) = q'_ref exp[-(Ea/R)(1/T - 1/T_ref)];
  TD24 is the temperature where TMRad = 24 h;
* the criticality classes of F. Stoessel (five classes from the order of
  T_p, MTSR, MTT and TD24) and three-level severity / probability scales;
* cooling capacity against the mean heat-release rate of a dosed reaction;
* gas volume and pressure from evolved gas (ideal gas);
* the entropy balance of heat passing from a hot body to a cold one.

Provenance is written beside each threshold table (``*_SOURCE``).  "From
memory" means: recalled from the published method, not checked against the
published text while writing this module.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from dossier.errors import CaseError
from dossier.engine.roots import brent

# --------------------------------------------------------------------------
# Constants
# --------------------------------------------------------------------------

R = 8.314462618
"""Molar gas constant, J mol^-1 K^-1 (CODATA 2018; exact, N_A times k)."""

T_NORMAL = 273.15
"""0 degC in kelvin (normal conditions for gas volumes)."""

P_NORMAL = 101325.0
"""1 atm = 1.01325 bar in pascal (normal conditions for gas volumes)."""

SECONDS_PER_HOUR = 3600.0
TD24_TIME_S = 24.0 * SECONDS_PER_HOUR
"""TMRad that defines TD24: 24 h, in seconds."""

Level = Literal["low", "medium", "high"]

# --------------------------------------------------------------------------
# Threshold tables with provenance
# --------------------------------------------------------------------------

SEVERITY_BANDS: tuple[tuple[Level, float, float], ...] = (
    ("low", -math.inf, 50.0),
    ("medium", 50.0, 200.0),
    ("high", 200.0, math.inf),
)
"""Severity from the adiabatic temperature rise, (level, from K, to K)."""

SEVERITY_SOURCE = (
    "F. Stoessel, Thermal Safety of Chemical Processes: Risk Assessment and "
    "Process Design, Wiley-VCH 2008 - three-level severity scale on the "
    "adiabatic temperature rise (low < 50 K, medium 50-200 K, high > 200 K); "
    "from memory, not checked against the published text. Boundaries as "
    "coded here: 50 K and 200 K both count as 'medium'; a rise of zero or "
    "less (endothermic) is 'low'."
)

PROBABILITY_BANDS: tuple[tuple[Level, float, float], ...] = (
    ("high", 0.0, 8.0),
    ("medium", 8.0, 24.0),
    ("low", 24.0, math.inf),
)
"""Probability from TMRad at the MTSR, (level, from h, to h)."""

PROBABILITY_SOURCE = (
    "F. Stoessel, Thermal Safety of Chemical Processes: Risk Assessment and "
    "Process Design, Wiley-VCH 2008 - three-level probability scale on "
    "TMRad at the MTSR (low > 24 h, medium 8-24 h, high < 8 h); from "
    "memory, not checked against the published text. Boundaries as coded "
    "here: exactly 8 h and exactly 24 h both count as 'medium'."
)

CRITICALITY_SOURCE = (
    "F. Stoessel, criticality classes of the cooling-failure scenario "
    "(Thermal Safety of Chemical Processes, Wiley-VCH 2008; and 'Planning "
    "protection measures against runaway reactions using criticality "
    "classes', IChemE Symposium Series No. 153, 2007, which names the four "
    "temperature levels T_p, MTSR, MTT and TD24). Class definitions from "
    "memory, not checked against the published text: "
    "1: MTSR < MTT, MTSR < TD24, MTT < TD24; "
    "2: MTSR < MTT, MTSR < TD24, MTT > TD24; "
    "3: MTT <= MTSR < TD24; "
    "4: MTSR >= TD24, MTT < TD24; "
    "5: MTSR >= TD24, MTT >= TD24. "
    "Equalities are resolved toward the more critical class: "
    "MTSR = TD24 counts as MTSR >= TD24 (class 4 or 5); MTSR = MTT counts as "
    "MTSR >= MTT (class 3); MTT = TD24 counts as MTT >= TD24 (class 2, or 5)."
)

TMR_SOURCE = (
    "D. I. Townsend and J. C. Tou, 'Thermal hazard evaluation by an "
    "accelerating rate calorimeter', Thermochimica Acta 37 (1980) 1-30: "
    "zero-order approximation TMRad = cp' R T^2 / (q'(T) Ea)."
)

# Names of the inputs, as the case file spells them, for 'missing' reports.
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
}


# --------------------------------------------------------------------------
# Small validation helpers (module-private)
# --------------------------------------------------------------------------

def _finite(name: str, value: float) -> float:
    v = float(value)
    if not math.isfinite(v):
        raise CaseError(f"{name} must be a finite number, got {value!r}")
    return v


def _positive(name: str, value: float) -> float:
    v = _finite(name, value)
    if v <= 0.0:
        raise CaseError(f"{name} must be greater than zero, got {v:g}")
    return v


def _non_negative(name: str, value: float) -> float:
    v = _finite(name, value)
    if v < 0.0:
        raise CaseError(f"{name} must not be negative, got {v:g}")
    return v


# --------------------------------------------------------------------------
# Heat balance: adiabatic rise, MTSR, decomposition rise
# --------------------------------------------------------------------------

def adiabatic_rise(q_J: float, mass_kg: float, cp_J_per_kgK: float) -> float:
    """Adiabatic temperature rise dT_ad = Q / (m cp'), in K.

    ``q_J`` is the heat released to the mass (positive for an exothermic
    reaction); a negative ``q_J`` (endothermic) gives a negative value.
    """
    q = _finite("heat released", q_J)
    m = _positive("reaction mass", mass_kg)
    cp = _positive("specific heat capacity", cp_J_per_kgK)
    return q / (m * cp)


def mtsr(t_process: float, accumulation: float, dT_ad: float) -> float:
    """Maximum temperature of the synthesis reaction, K.

    MTSR = T_p + X_acc * dT_ad, with X_acc the unreacted (accumulated) share
    of the reactant at the worst moment, 0..1.  For an endothermic reaction
    (dT_ad <= 0) a cooling failure does not heat the mass, so MTSR = T_p.
    """
    tp = _positive("process temperature", t_process)
    x = _finite("accumulation", accumulation)
    if not 0.0 <= x <= 1.0:
        raise CaseError(f"accumulation must be a fraction between 0 and 1, got {x:g}")
    rise = _finite("adiabatic temperature rise", dT_ad)
    return tp + x * max(rise, 0.0)


def decomposition_rise(energy_J_per_kg: float, cp_J_per_kgK: float) -> float:
    """Adiabatic temperature rise of the secondary decomposition, K.

    dT_ad,d = Q'_d / cp', with Q'_d the decomposition energy per kg of the
    reaction mass (positive when heat is released).
    """
    q = _non_negative("decomposition energy", energy_J_per_kg)
    cp = _positive("specific heat capacity", cp_J_per_kgK)
    return q / cp


def decomposition_final_temperature(mtsr_K: float, energy_J_per_kg: float,
                                    cp_J_per_kgK: float) -> float:
    """Final temperature if the decomposition is triggered at the MTSR, K."""
    return _positive("MTSR", mtsr_K) + decomposition_rise(energy_J_per_kg, cp_J_per_kgK)


# --------------------------------------------------------------------------
# TMRad and TD24 (Townsend and Tou zero-order approximation)
# --------------------------------------------------------------------------

def heat_release_rate(T, ea: float, q_ref: float, t_ref: float):
    """Specific heat-release rate q'(T) in W/kg, Arrhenius from one point.

    q'(T) = q'_ref exp[-(Ea/R)(1/T - 1/T_ref)].  Accepts a float or an array
    for ``T``.
    """
    ea = _positive("activation energy", ea)
    q_ref = _positive("reference heat-release rate", q_ref)
    t_ref = _positive("reference temperature", t_ref)
    T_arr = np.asarray(T, dtype=float)
    if np.any(~np.isfinite(T_arr)) or np.any(T_arr <= 0.0):
        raise CaseError("temperature for the heat-release rate must be a positive number of kelvin")
    out = q_ref * np.exp(-(ea / R) * (1.0 / T_arr - 1.0 / t_ref))
    return float(out) if out.ndim == 0 else out


def tmr_ad(T, cp: float, ea: float, q_ref: float, t_ref: float):
    """Adiabatic time to maximum rate at the start temperature ``T``, s.

    Zero-order approximation (Townsend and Tou, 1980):
    TMRad = cp' R T^2 / (q'(T) Ea).  ``cp`` in J/(kg K), ``ea`` in J/mol,
    ``q_ref`` in W/kg at ``t_ref`` in K.  ``T`` may be a float or an array;
    the result has the same shape.

    The approximation assumes Ea/(R T) >> 1; it decreases monotonically
    with T for T < Ea/(2R) (where d ln TMRad / dT = 2/T - Ea/(R T^2) < 0).
    """
    cp = _positive("specific heat capacity", cp)
    q = heat_release_rate(T, ea, q_ref, t_ref)
    T_arr = np.asarray(T, dtype=float)
    out = cp * R * T_arr ** 2 / (np.asarray(q) * ea)
    return float(out) if np.ndim(out) == 0 else out


def td24(cp: float, ea: float, q_ref: float, t_ref: float,
         bracket: tuple[float, float] = (200.0, 1500.0)) -> float:
    """TD24: the start temperature where TMRad = 24 h, K.

    Solved with a bracketed root (Brent's method, :func:`dossier.engine.roots.brent`)
    on ln TMRad(T) - ln(24 h), to better than 1e-6 K.  The bracket is capped
    at Ea/(2R), where the approximation stops decreasing with T.  If 24 h
    is not crossed in the bracket, it is widened once to (100 K, 3000 K); if
    there is still no root, a :class:`CaseError` says on which side 24 h
    lies.
    """
    cp = _positive("specific heat capacity", cp)
    ea = _positive("activation energy", ea)
    q_ref = _positive("reference heat-release rate", q_ref)
    t_ref = _positive("reference temperature", t_ref)
    t_turn = ea / (2.0 * R)  # TMRad has its minimum here
    target = math.log(TD24_TIME_S)

    def ln_tmr(T: float) -> float:
        # ln of the Townsend-Tou formula, written out so that no
        # exponential can overflow for extreme kinetics
        return math.log(cp * R * T * T / (q_ref * ea)) + (ea / R) * (1.0 / T - 1.0 / t_ref)

    def f(T: float) -> float:
        return ln_tmr(T) - target

    for lo, hi in (bracket, (100.0, 3000.0)):
        hi = min(hi, t_turn * (1.0 - 1e-9))
        if hi <= lo:
            continue
        f_lo, f_hi = f(lo), f(hi)
        if f_lo >= 0.0 >= f_hi:
            if f_lo == 0.0:
                return lo
            if f_hi == 0.0:
                return hi
            return brent(f, lo, hi, xtol=1e-9, rtol=4 * np.finfo(float).eps, maxiter=200)
    lo, hi = 100.0, min(3000.0, t_turn)
    if hi <= lo:
        raise CaseError(
            f"TD24 cannot be computed: the activation energy {ea / 1000:g} kJ/mol is too "
            f"small for the zero-order TMRad approximation (it needs Ea/(R T) well above 2)"
        )
    t_lo_h = math.exp(min(ln_tmr(lo), 700.0)) / SECONDS_PER_HOUR
    t_hi_h = math.exp(min(ln_tmr(hi * (1.0 - 1e-9)), 700.0)) / SECONDS_PER_HOUR
    if t_lo_h < 24.0:
        raise CaseError(
            f"TD24 is below {lo:g} K: TMRad is already {t_lo_h:.3g} h there; "
            f"check the decomposition rate and activation energy"
        )
    raise CaseError(
        f"TD24 is above {hi:.0f} K: TMRad is still {t_hi_h:.3g} h there; "
        f"check the decomposition rate and activation energy"
    )


# --------------------------------------------------------------------------
# Criticality class, severity and probability
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class CriticalityResult:
    """Stoessel criticality class, or why it could not be assigned.

    ``klass`` is 1..5, or ``None`` when inputs are missing; ``missing`` then
    names them (case-file labels) and ``reason`` says "could not be
    assessed because ... is missing".
    """

    klass: int | None
    reason: str
    missing: tuple[str, ...] = ()
    source: str = field(default=CRITICALITY_SOURCE, repr=False)


def _fmt_K(T: float) -> str:
    return f"{T:.1f} K ({T - 273.15:.1f} °C)"


def criticality_class(t_process: float | None, mtsr: float | None,
                      mtt: float | None, td24: float | None) -> CriticalityResult:
    """Stoessel criticality class from T_p, MTSR, MTT and TD24 (all K).

    Any input may be ``None``; then no class is guessed and the result
    lists what is missing.  Boundary handling: see :data:`CRITICALITY_SOURCE`
    (equalities go to the more critical class).
    """
    given = {"t_process": t_process, "mtsr": mtsr, "mtt": mtt, "td24": td24}
    labels = {
        "t_process": INPUT_LABELS["t_process"],
        "mtsr": "MTSR (needs the heat released, charge.mass, charge.cp, "
                "charge.process_temperature and charge.accumulation)",
        "mtt": INPUT_LABELS["mtt"],
        "td24": INPUT_LABELS["td24"],
    }
    missing = tuple(labels[k] for k, v in given.items() if v is None)
    if missing:
        return CriticalityResult(
            None, "criticality class could not be assessed because "
            + "; ".join(missing) + (" is" if len(missing) == 1 else " are") + " missing",
            missing,
        )
    tp = _positive("process temperature", t_process)
    ms = _positive("MTSR", mtsr)
    mt = _positive("MTT", mtt)
    td = _positive("TD24", td24)
    if ms < tp:
        raise CaseError(
            f"MTSR {_fmt_K(ms)} is below the process temperature {_fmt_K(tp)}; "
            "the MTSR cannot be lower than the temperature the runaway starts from"
        )
    temps = (f"T_p = {_fmt_K(tp)}, MTSR = {_fmt_K(ms)}, MTT = {_fmt_K(mt)}, "
             f"TD24 = {_fmt_K(td)}")
    if ms >= td:
        if mt < td:
            klass, why = 4, ("MTSR is at or above TD24, so the decomposition can be triggered; "
                             "MTT is below TD24, so evaporative cooling or relief at MTT "
                             "could act as a barrier if designed for it")
        else:
            klass, why = 5, ("MTSR is at or above TD24, so the decomposition can be triggered; "
                             "MTT is not below TD24, so the technical limit offers no barrier "
                             "before the decomposition runs away")
    elif ms >= mt:
        klass, why = 3, ("MTSR reaches or exceeds MTT but stays below TD24: the mass reaches "
                         "the technical limit (e.g. boiling) without triggering the "
                         "decomposition; the limit must be able to hold the temperature")
    elif mt < td:
        klass, why = 1, ("MTSR is below MTT and below TD24, and MTT is below TD24: neither "
                         "the technical limit nor the decomposition is reached")
    else:
        klass, why = 2, ("MTSR is below MTT and below TD24, but MTT is not below TD24: if "
                         "the mass stays at elevated temperature for long, the "
                         "decomposition could be triggered before the technical limit acts")
    notes = ""
    if tp >= td:
        notes = " Note: the process temperature itself is at or above TD24."
    return CriticalityResult(klass, f"class {klass}: {why} ({temps}).{notes}")


def severity_from_rise(dT_ad: float) -> Level:
    """Three-level severity from the adiabatic temperature rise (K).

    low: dT_ad < 50 K (including zero or negative); medium: 50 K <= dT_ad
    <= 200 K; high: dT_ad > 200 K.  See :data:`SEVERITY_SOURCE`.
    """
    v = _finite("adiabatic temperature rise", dT_ad)
    low_below, medium_upto = SEVERITY_BANDS[0][2], SEVERITY_BANDS[1][2]  # 50 K, 200 K
    if v < low_below:
        return "low"
    if v <= medium_upto:
        return "medium"
    return "high"


def probability_from_tmr(tmr_h: float) -> Level:
    """Three-level probability from TMRad at the MTSR, given in hours.

    high: TMRad < 8 h; medium: 8 h <= TMRad <= 24 h; low: TMRad > 24 h.
    See :data:`PROBABILITY_SOURCE`.
    """
    v = float(tmr_h)
    if math.isnan(v) or v < 0.0:
        raise CaseError(f"TMRad must be a non-negative number of hours, got {tmr_h!r}")
    high_below, medium_upto = PROBABILITY_BANDS[0][2], PROBABILITY_BANDS[1][2]  # 8 h, 24 h
    if v < high_below:
        return "high"
    if v <= medium_upto:
        return "medium"
    return "low"


# --------------------------------------------------------------------------
# Cooling, gas, entropy
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class CoolingResult:
    """Mean heat-release rate of a dosed reaction against the cooling capacity.

    ``ratio`` = release / capacity (infinite when the coolant is not colder
    than the mass); ``margin_W`` = capacity - release; ``sufficient`` when
    the capacity covers the mean release rate.
    """

    release_rate_W: float
    capacity_W: float
    margin_W: float
    ratio: float
    sufficient: bool


def cooling_check(heat_J: float, feed_time_s: float, ua_W_per_K: float,
                  t_process: float, t_coolant: float) -> CoolingResult:
    """Mean release rate Q / t_feed against U*A*(T_p - T_coolant).

    A mean rate only: the peak rate of a dosed reaction can be several times
    higher, so a ratio close to 1 is not a comfortable margin.
    """
    q = _finite("heat released", heat_J)
    t = _positive("feed time", feed_time_s)
    ua = _non_negative("cooling U*A", ua_W_per_K)
    tp = _positive("process temperature", t_process)
    tc = _positive("coolant temperature", t_coolant)
    release = max(q, 0.0) / t
    capacity = ua * (tp - tc)
    if capacity > 0.0:
        ratio = release / capacity
    else:
        ratio = math.inf if release > 0.0 else 0.0
    return CoolingResult(release, capacity, capacity - release, ratio, release <= capacity)


def gas_volume_normal(n_gas_mol: float) -> float:
    """Volume of ``n_gas_mol`` of ideal gas at 0 degC and 1.01325 bar, m3."""
    n = _non_negative("amount of gas", n_gas_mol)
    return n * R * T_NORMAL / P_NORMAL


def gas_pressure(n_gas_mol: float, free_volume_m3: float, T: float,
                 p_initial_Pa: float) -> float:
    """Pressure in a closed gas space after ``n_gas_mol`` of gas is evolved, Pa.

    p = p_initial + n R T / V (ideal gas; the initial gas-space pressure is
    added as is, i.e. its own heating is not counted).
    """
    n = _non_negative("amount of gas", n_gas_mol)
    v = _positive("free volume", free_volume_m3)
    t = _positive("temperature", T)
    p0 = _non_negative("initial pressure", p_initial_Pa)
    return p0 + n * R * t / v


@dataclass(frozen=True)
class HeatEntropyBalance:
    """Entropy changes (J/K) when heat passes from a hot body to a cold one.

    ``possible`` is False when the total is negative, i.e. the heat would be
    flowing from the colder body to the hotter one on its own.
    """

    q_J: float
    T_hot: float
    T_cold: float
    dS_hot: float
    dS_cold: float
    dS_total: float
    possible: bool


def heat_entropy_balance(q_to_surroundings_J: float, T_hot: float,
                         T_cold: float) -> HeatEntropyBalance:
    """Heat Q leaving a body at T_hot and reaching one at T_cold.

    dS_hot = -Q/T_hot, dS_cold = +Q/T_cold, dS_total = Q (1/T_cold - 1/T_hot).
    """
    q = _finite("heat", q_to_surroundings_J)
    th = _positive("hot-body temperature", T_hot)
    tc = _positive("cold-body temperature", T_cold)
    ds_hot = -q / th
    ds_cold = q / tc
    total = ds_hot + ds_cold
    return HeatEntropyBalance(q, th, tc, ds_hot, ds_cold, total, total >= 0.0)


# --------------------------------------------------------------------------
# The whole runaway scenario, with what could not be computed
# --------------------------------------------------------------------------

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
) -> RunawayScenario:
    """Compute the cooling-failure scenario from whatever inputs are given.

    All inputs are SI floats or ``None``.  ``td24_given`` (a measured TD24)
    is preferred over TD24 from the kinetics (``ea``, ``q_ref`` at
    ``t_ref``); the kinetics are still used for TMRad at the MTSR.
    ``p_initial_Pa`` defaults to 0 (gauge) with a note if the gas pressure
    can otherwise be computed.
    """
    L = INPUT_LABELS
    blocked: list[tuple[str, tuple[str, ...]]] = []
    notes: list[str] = []

    def need(figure: str, **inputs: object) -> bool:
        lacking = tuple(L[k] for k, v in inputs.items() if v is None)
        if lacking:
            blocked.append((figure, lacking))
            return False
        return True

    # Heat balance
    dT = None
    if need("adiabatic temperature rise", heat=heat_J, mass=mass_kg, cp=cp):
        dT = adiabatic_rise(heat_J, mass_kg, cp)
    severity = severity_from_rise(dT) if dT is not None else None
    if dT is None:
        blocked.append(("severity", ("adiabatic temperature rise",)))

    T_mtsr = None
    if dT is not None:
        if need("MTSR", t_process=t_process, accumulation=accumulation):
            T_mtsr = mtsr(t_process, accumulation, dT)
    else:
        need("MTSR", heat=heat_J, mass=mass_kg, cp=cp, t_process=t_process,
             accumulation=accumulation)

    # Decomposition kinetics and TD24
    have_kinetics = None not in (ea, q_ref, t_ref)
    T_d24, origin = None, None
    if td24_given is not None:
        T_d24, origin = _positive("TD24", td24_given), "given"
        if have_kinetics and cp is not None:
            computed = td24(cp, ea, q_ref, t_ref)
            if abs(computed - T_d24) > 5.0:
                notes.append(
                    f"the given TD24 ({_fmt_K(T_d24)}) differs by {abs(computed - T_d24):.1f} K "
                    f"from TD24 computed from the kinetics ({_fmt_K(computed)}); the given "
                    "value is used"
                )
    elif have_kinetics and cp is not None:
        T_d24, origin = td24(cp, ea, q_ref, t_ref), "from kinetics"
    else:
        lacking = [L["td24"]]
        if have_kinetics and cp is None:
            lacking = [L["cp"]]
        blocked.append(("TD24", tuple(lacking)))

    tmr_s, probability, basis = None, None, None
    if T_mtsr is not None and have_kinetics and cp is not None:
        tmr_s = tmr_ad(T_mtsr, cp, ea, q_ref, t_ref)
        probability = probability_from_tmr(tmr_s / SECONDS_PER_HOUR)
        basis = "TMRad at the MTSR from the decomposition kinetics"
    elif T_mtsr is not None and T_d24 is not None and T_mtsr < T_d24:
        # TMRad falls with temperature, so below TD24 it is longer than 24 h.
        probability = "low"
        basis = ("MTSR is below TD24, so TMRad at the MTSR is longer than 24 h "
                 "(kinetics not given, TMRad itself not computed)")
        blocked.append(("TMRad at the MTSR", (L["kinetics"],)))
    else:
        lacking = []
        if T_mtsr is None:
            lacking.append("MTSR")
        if not have_kinetics:
            lacking.append(L["kinetics"])
        elif cp is None:
            lacking.append(L["cp"])
        blocked.append(("TMRad at the MTSR", tuple(lacking)))
        blocked.append(("probability", tuple(lacking)))

    crit = criticality_class(t_process, T_mtsr, mtt, T_d24)

    # Secondary decomposition
    d_rise, t_final = None, None
    if need("decomposition temperature rise", decomposition_energy=decomposition_energy_J_per_kg,
            cp=cp):
        d_rise = decomposition_rise(decomposition_energy_J_per_kg, cp)
        if T_mtsr is not None:
            t_final = T_mtsr + d_rise
        else:
            blocked.append(("final temperature", ("MTSR",)))
    else:
        blocked.append(("final temperature", ("decomposition temperature rise",)))

    # Cooling
    cool = None
    if need("cooling check", heat=heat_J, feed_time=feed_time_s, cooling_ua=ua_W_per_K,
            t_process=t_process, coolant_temperature=t_coolant):
        cool = cooling_check(heat_J, feed_time_s, ua_W_per_K, t_process, t_coolant)

    # Gas
    v_norm, p_gas, t_gas, exceeds = None, None, None, None
    if need("gas volume", n_gas=n_gas_mol):
        v_norm = gas_volume_normal(n_gas_mol)
    # The gas comes from the desired reaction, so its pressure is taken at the
    # MTSR, the highest temperature that reaction alone can reach.
    t_gas = T_mtsr
    if need("gas pressure", n_gas=n_gas_mol, free_volume=free_volume_m3):
        if t_gas is None:
            blocked.append(("gas pressure", ("MTSR",)))
        else:
            p0 = p_initial_Pa
            if p0 is None:
                p0 = 0.0
                notes.append("gas pressure is the rise above the initial pressure "
                             "(no initial pressure given)")
            p_gas = gas_pressure(n_gas_mol, free_volume_m3, t_gas, p0)
            if need("pressure against design pressure", design_pressure=design_pressure_Pa):
                exceeds = p_gas > design_pressure_Pa

    seen: dict[str, None] = {}
    for _, lacking in blocked:
        for item in lacking:
            if item in L.values():
                seen.setdefault(item, None)
    for item in crit.missing:
        if item in L.values():
            seen.setdefault(item, None)
    return RunawayScenario(
        dT_ad=dT, mtsr=T_mtsr, severity=severity, td24=T_d24, td24_origin=origin,
        tmr_at_mtsr_s=tmr_s, probability=probability, probability_basis=basis,
        criticality=crit, decomposition_rise=d_rise, final_temperature=t_final,
        cooling=cool, gas_volume_normal_m3=v_norm, gas_pressure_Pa=p_gas,
        gas_temperature=t_gas if p_gas is not None else None,
        pressure_exceeds_design=exceeds, blocked=tuple(blocked), missing=tuple(seen),
        notes=tuple(notes),
    )
