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
from typing import Literal, Mapping

import numpy as np

from dossier.constants import R, SECONDS_PER_HOUR
from dossier.engine.roots import brent
from dossier.engine.settings import DEFAULT, Bands
from dossier.errors import CaseError
from dossier.temperature import kelvin_celsius

Level = Literal["low", "medium", "high"]

# --------------------------------------------------------------------------
# Threshold tables with provenance
# --------------------------------------------------------------------------

def severity_source(bands: Bands = DEFAULT.severity_bands_K) -> str:
    """Provenance of the severity scale, with the bands in use."""
    (low, _inf, b1), (medium, _b1, b2), (high, _b2, _top) = bands
    return (
        "F. Stoessel, Thermal Safety of Chemical Processes: Risk Assessment and "
        "Process Design, Wiley-VCH 2008 - three-level severity scale on the "
        f"adiabatic temperature rise ({low} < {b1:g} K, {medium} {b1:g}-{b2:g} K, {high} > {b2:g} K); "
        "from memory, not checked against the published text. Boundaries as "
        f"coded here: {b1:g} K and {b2:g} K both count as '{medium}'; a rise of zero or "
        "less (endothermic) is 'low'."
    )


def probability_source(bands: Bands = DEFAULT.probability_bands_h) -> str:
    """Provenance of the probability scale, with the bands in use."""
    (hi_level, _z, b1), (medium, _b1, b2), (lo_level, _b2, _inf) = bands
    return (
        "F. Stoessel, Thermal Safety of Chemical Processes: Risk Assessment and "
        "Process Design, Wiley-VCH 2008 - three-level probability scale on "
        f"TMRad at the MTSR ({lo_level} > {b2:g} h, {medium} {b1:g}-{b2:g} h, {hi_level} < {b1:g} h); from "
        "memory, not checked against the published text. Boundaries as coded "
        f"here: exactly {b1:g} h and exactly {b2:g} h both count as '{medium}'."
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

#: What each input of the scenario is called in "missing" reports, in the
#: method's own words.  A caller that knows where the inputs come from (the
#: assessment: case-file keys) passes its own labels for the same keys.
INPUT_WORDS: dict[str, str] = {
    "heat": "heat released per batch",
    "mass": "total reaction mass",
    "cp": "specific heat capacity of the reaction mass",
    "t_process": "process temperature",
    "accumulation": "unreacted share at the worst moment (accumulation)",
    "mtt": "maximum technical temperature (MTT)",
    "td24": "TD24 (or the decomposition kinetics)",
    "kinetics": "decomposition kinetics (activation energy and heat-release rate at a temperature)",
    "decomposition_energy": "decomposition energy per mass",
    "feed_time": "dosing time",
    "cooling_ua": "overall U*A of jacket or coil",
    "coolant_temperature": "coolant temperature",
    "n_gas": "gas evolved by the reaction",
    "free_volume": "free gas volume of the vessel",
    "design_pressure": "design pressure of the vessel",
    "mtsr": "MTSR",
}


# --------------------------------------------------------------------------
# Input checks (also used by dossier.engine.runaway)
# --------------------------------------------------------------------------

def finite(name: str, value: float) -> float:
    v = float(value)
    if not math.isfinite(v):
        raise CaseError(f"{name} must be a finite number, got {value!r}")
    return v


def positive(name: str, value: float) -> float:
    v = finite(name, value)
    if v <= 0.0:
        raise CaseError(f"{name} must be greater than zero, got {v:g}")
    return v


def non_negative(name: str, value: float) -> float:
    v = finite(name, value)
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
    q = finite("heat released", q_J)
    m = positive("reaction mass", mass_kg)
    cp = positive("specific heat capacity", cp_J_per_kgK)
    return q / (m * cp)


def mtsr(t_process: float, accumulation: float, dT_ad: float) -> float:
    """Maximum temperature of the synthesis reaction, K.

    MTSR = T_p + X_acc * dT_ad, with X_acc the unreacted (accumulated) share
    of the reactant at the worst moment, 0..1.  For an endothermic reaction
    (dT_ad <= 0) a cooling failure does not heat the mass, so MTSR = T_p.
    """
    tp = positive("process temperature", t_process)
    x = finite("accumulation", accumulation)
    if not 0.0 <= x <= 1.0:
        raise CaseError(f"accumulation must be a fraction between 0 and 1, got {x:g}")
    rise = finite("adiabatic temperature rise", dT_ad)
    return tp + x * max(rise, 0.0)


def decomposition_rise(energy_J_per_kg: float, cp_J_per_kgK: float) -> float:
    """Adiabatic temperature rise of the secondary decomposition, K.

    dT_ad,d = Q'_d / cp', with Q'_d the decomposition energy per kg of the
    reaction mass (positive when heat is released).
    """
    q = non_negative("decomposition energy", energy_J_per_kg)
    cp = positive("specific heat capacity", cp_J_per_kgK)
    return q / cp


def decomposition_final_temperature(mtsr_K: float, energy_J_per_kg: float,
                                    cp_J_per_kgK: float) -> float:
    """Final temperature if the decomposition is triggered at the MTSR, K."""
    return positive("MTSR", mtsr_K) + decomposition_rise(energy_J_per_kg, cp_J_per_kgK)


# --------------------------------------------------------------------------
# TMRad and TD24 (Townsend and Tou zero-order approximation)
# --------------------------------------------------------------------------

def heat_release_rate(T, ea: float, q_ref: float, t_ref: float):
    """Specific heat-release rate q'(T) in W/kg, Arrhenius from one point.

    q'(T) = q'_ref exp[-(Ea/R)(1/T - 1/T_ref)].  Accepts a float or an array
    for ``T``.
    """
    ea = positive("activation energy", ea)
    q_ref = positive("reference heat-release rate", q_ref)
    t_ref = positive("reference temperature", t_ref)
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
    cp = positive("specific heat capacity", cp)
    q = heat_release_rate(T, ea, q_ref, t_ref)
    T_arr = np.asarray(T, dtype=float)
    out = cp * R * T_arr ** 2 / (np.asarray(q) * ea)
    return float(out) if np.ndim(out) == 0 else out


def td24(cp: float, ea: float, q_ref: float, t_ref: float,
         bracket: tuple[float, float] = (200.0, 1500.0),
         time_s: float = DEFAULT.td24_time_s) -> float:
    """TD24: the start temperature where TMRad = ``time_s`` (24 h), K.

    Solved with a bracketed root (Brent's method, :func:`dossier.engine.roots.brent`)
    on ln TMRad(T) - ln(24 h), to better than 1e-6 K.  The bracket is capped
    at Ea/(2R), where the approximation stops decreasing with T.  If 24 h
    is not crossed in the bracket, it is widened once to (100 K, 3000 K); if
    there is still no root, a :class:`CaseError` says on which side 24 h
    lies.
    """
    cp = positive("specific heat capacity", cp)
    ea = positive("activation energy", ea)
    q_ref = positive("reference heat-release rate", q_ref)
    t_ref = positive("reference temperature", t_ref)
    t_turn = ea / (2.0 * R)  # TMRad has its minimum here
    target = math.log(time_s)

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
    if t_lo_h < time_s / SECONDS_PER_HOUR:
        raise CaseError(
            f"TD24 is below {lo:g} K: TMRad is already {t_lo_h:.3g} h there; "
            f"check the decomposition rate and activation energy"
        )
    raise CaseError(
        f"TD24 is above {hi:.0f} K: TMRad is still {t_hi_h:.3g} h there; "
        f"check the decomposition rate and activation energy"
    )


def td24_many(cp, ea, q_ref, t_ref, time_s: float = DEFAULT.td24_time_s) -> np.ndarray:
    """TD24 (K) for arrays of inputs, element by element, by bisection on the same
    ln TMRad as :func:`td24`; NaN where an input is not positive or 24 h is not crossed
    between 100 K and min(3000 K, Ea/(2R)).  For sampling: one solve for thousands of
    draws."""
    cp, ea, q_ref, t_ref = (np.asarray(v, dtype=float) for v in (cp, ea, q_ref, t_ref))
    cp, ea, q_ref, t_ref = np.broadcast_arrays(cp, ea, q_ref, t_ref)
    with np.errstate(all="ignore"):
        ok = (cp > 0) & (ea > 0) & (q_ref > 0) & (t_ref > 0)
        target = math.log(time_s)

        def f(T):
            return np.log(cp * R * T * T / (q_ref * ea)) + (ea / R) * (1.0 / T - 1.0 / t_ref) \
                - target

        lo = np.full(cp.shape, 100.0)
        hi = np.minimum(3000.0, ea / (2.0 * R) * (1.0 - 1e-9))
        ok &= (hi > lo) & (f(lo) >= 0.0) & (f(hi) <= 0.0)
        for _ in range(64):
            mid = 0.5 * (lo + hi)
            above = f(mid) > 0.0
            lo = np.where(above, mid, lo)
            hi = np.where(above, hi, mid)
    return np.where(ok, 0.5 * (lo + hi), np.nan)


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


#: Why each class is what it is, in words.
_CLASS_WHY = {
    1: ("MTSR is below MTT and below TD24, and MTT is below TD24: neither the technical "
        "limit nor the decomposition is reached"),
    2: ("MTSR is below MTT and below TD24, but MTT is not below TD24: if the mass stays at "
        "elevated temperature for long, the decomposition could be triggered before the "
        "technical limit acts"),
    3: ("MTSR reaches or exceeds MTT but stays below TD24: the mass reaches the technical "
        "limit (e.g. boiling) without triggering the decomposition; the limit must be able "
        "to hold the temperature"),
    4: ("MTSR is at or above TD24, so the decomposition can be triggered; MTT is below TD24, "
        "so evaporative cooling or relief at MTT could act as a barrier if designed for it"),
    5: ("MTSR is at or above TD24, so the decomposition can be triggered; MTT is not below "
        "TD24, so the technical limit offers no barrier before the decomposition runs away"),
}


def criticality_class(t_process: float | None, mtsr: float | None,
                      mtt: float | None, td24: float | None,
                      labels: Mapping[str, str] = INPUT_WORDS) -> CriticalityResult:
    """Stoessel criticality class from T_p, MTSR, MTT and TD24 (all K).

    Any input may be ``None``; then no class is guessed and the result
    lists what is missing, in ``labels``' words.  Boundary handling: see :data:`CRITICALITY_SOURCE`
    (equalities go to the more critical class).
    """
    given = {"t_process": t_process, "mtsr": mtsr, "mtt": mtt, "td24": td24}
    missing = tuple(labels[k] for k, v in given.items() if v is None)
    if missing:
        return CriticalityResult(
            None, "criticality class could not be assessed because "
            + "; ".join(missing) + (" is" if len(missing) == 1 else " are") + " missing",
            missing,
        )
    tp = positive("process temperature", t_process)
    ms = positive("MTSR", mtsr)
    mt = positive("MTT", mtt)
    td = positive("TD24", td24)
    if ms < tp:
        raise CaseError(
            f"MTSR {kelvin_celsius(ms)} is below the process temperature {kelvin_celsius(tp)}; "
            "the MTSR cannot be lower than the temperature the runaway starts from"
        )
    temps = (f"T_p = {kelvin_celsius(tp)}, MTSR = {kelvin_celsius(ms)}, MTT = {kelvin_celsius(mt)}, "
             f"TD24 = {kelvin_celsius(td)}")
    klass = int(criticality_classes(ms, mt, td))
    why = _CLASS_WHY[klass]
    notes = ""
    if tp >= td:
        notes = " Note: the process temperature itself is at or above TD24."
    return CriticalityResult(klass, f"class {klass}: {why} ({temps}).{notes}")


def criticality_classes(mtsr_K, mtt_K, td24_K):
    """The criticality class (1..5) for arrays of MTSR, MTT and TD24 (K), element by
    element; 0 where any of the three is not a finite number.  The one place where the
    order of the temperature levels becomes a class (see :data:`CRITICALITY_SOURCE`;
    equalities go to the more critical class)."""
    ms, mt, td = (np.asarray(v, dtype=float) for v in (mtsr_K, mtt_K, td24_K))
    known = np.isfinite(ms) & np.isfinite(mt) & np.isfinite(td)
    with np.errstate(invalid="ignore"):
        klass = np.where(ms >= td, np.where(mt < td, 4, 5),
                         np.where(ms >= mt, 3, np.where(mt < td, 1, 2)))
    return np.where(known, klass, 0)


def severity_from_rise(dT_ad: float, bands: Bands = DEFAULT.severity_bands_K) -> Level:
    """Three-level severity from the adiabatic temperature rise (K).

    With the default bands: low: dT_ad < 50 K (including zero or negative);
    medium: 50 K <= dT_ad <= 200 K; high: dT_ad > 200 K.  See
    :func:`severity_source`.
    """
    v = finite("adiabatic temperature rise", dT_ad)
    (low, _inf, low_below), (medium, _lo, medium_upto), (high, _hi, _top) = bands
    if v < low_below:
        return low
    if v <= medium_upto:
        return medium
    return high


def probability_from_tmr(tmr_h: float, bands: Bands = DEFAULT.probability_bands_h) -> Level:
    """Three-level probability from TMRad at the MTSR, given in hours.

    With the default bands: high: TMRad < 8 h; medium: 8 h <= TMRad <= 24 h;
    low: TMRad > 24 h.  See :func:`probability_source`.
    """
    v = float(tmr_h)
    if math.isnan(v) or v < 0.0:
        raise CaseError(f"TMRad must be a non-negative number of hours, got {tmr_h!r}")
    (high, _zero, high_below), (medium, _lo, medium_upto), (low, _hi, _top) = bands
    if v < high_below:
        return high
    if v <= medium_upto:
        return medium
    return low


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
    q = finite("heat released", heat_J)
    t = positive("feed time", feed_time_s)
    ua = non_negative("cooling U*A", ua_W_per_K)
    tp = positive("process temperature", t_process)
    tc = positive("coolant temperature", t_coolant)
    release = max(q, 0.0) / t
    capacity = ua * (tp - tc)
    if capacity > 0.0:
        ratio = release / capacity
    else:
        ratio = math.inf if release > 0.0 else 0.0
    return CoolingResult(release, capacity, capacity - release, ratio, release <= capacity)


def gas_volume_normal(n_gas_mol: float, T_normal: float = DEFAULT.gas_normal_T_K,
                      p_normal: float = DEFAULT.gas_normal_p_Pa) -> float:
    """Volume of ``n_gas_mol`` of ideal gas at normal conditions (0 degC and
    1.01325 bar by default), m3."""
    n = non_negative("amount of gas", n_gas_mol)
    return n * R * T_normal / p_normal


def gas_pressure(n_gas_mol: float, free_volume_m3: float, T: float,
                 p_initial_Pa: float) -> float:
    """Pressure in a closed gas space after ``n_gas_mol`` of gas is evolved, Pa.

    p = p_initial + n R T / V (ideal gas; the initial gas-space pressure is
    added as is, i.e. its own heating is not counted).
    """
    n = non_negative("amount of gas", n_gas_mol)
    v = positive("free volume", free_volume_m3)
    t = positive("temperature", T)
    p0 = non_negative("initial pressure", p_initial_Pa)
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
    q = finite("heat", q_to_surroundings_J)
    th = positive("hot-body temperature", T_hot)
    tc = positive("cold-body temperature", T_cold)
    ds_hot = -q / th
    ds_cold = q / tc
    total = ds_hot + ds_cold
    return HeatEntropyBalance(q, th, tc, ds_hot, ds_cold, total, total >= 0.0)
