"""Phase boundaries at a pressure: the temperatures where the phase written is the stable one.

Numbers in (a phase code, the record's :class:`~dossier.library.phasedata.PhaseData`,
a pressure), frozen dataclasses and plain sentences out.  Callers pass their
own label for the species; nothing here knows a case file.

Method
------
* **Boiling point at a pressure p.**  From the record's vapour-pressure curve
  p_sat(T) (a published correlation, named in the record): the T where
  p_sat(T) = p, found by Brent's method (:mod:`dossier.engine.roots`) inside
  the correlation's range, or a little beyond it (at most the fraction
  ``extrapolation`` of the range's ends; the text then says "extrapolated").
  Without a curve, from the normal boiling point T_b (at 1 atm) by the
  Clausius-Clapeyron equation with Trouton's rule, ΔvapH ≈ ΔvapS_Trouton·T_b:
  1/T = 1/T_b − R ln(p/p_atm)/ΔvapH (an estimate, and the text says so; it
  knows nothing of the critical point, so it is rough at high pressure).  At
  or above the critical pressure of a Wagner curve there is no boiling point.
* **Melting point.**  The normal melting point, taken as independent of
  pressure (it moves by hundredths of a kelvin per bar for most substances).
* **Sublimation.**  A normal boiling point below the melting point is a
  sublimation point: at 1 atm there is no stable liquid.  Where the liquid's
  vapour-pressure curve reaches the melting point, its pressure there (close
  to the triple-point pressure) tells whether the case pressure is high
  enough for a liquid; otherwise the sublimation point at 1 atm is used and
  the text says that its shift with pressure is not known.
* **Heat of vaporisation** (for the words only): ΔvapH ≈ R T² d ln p_sat/dT
  (Clausius-Clapeyron, ideal vapour, liquid volume neglected).

The stable range of each phase: gas above the boiling (or sublimation)
point; liquid between the melting and the boiling point; solid below the
melting (or sublimation) point and, for one solid form of several, inside
its form range; a dissolved (aqueous) species where its solvent is liquid.
A pure-substance criterion: in a gas mixture a vapour stays a vapour below
its boiling point as long as its partial pressure is below p_sat, which the
warning states with the number.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from dossier.constants import R, ZERO_CELSIUS
from dossier.engine.roots import brent
from dossier.library.phasedata import PhaseData, VapourPressure
from dossier.number_policy import UNIT_SPACE, fixed, plain, quantity, temperature

_PHASE_WORDS = {"g": "gas", "l": "liquid", "s": "solid", "aq": "dissolved (aqueous) species"}

#: Every sentence of :func:`phase_warnings` contains this phrase (rules can look for it).
PHASE_WARNING_MARK = "is not the stable phase"


@dataclass(frozen=True)
class Boundary:
    """One end of a stable range: its temperature, what it is, and how it was found."""

    T_K: float
    what: str    # "melting point", "boiling point", "sublimation point", "form change"
    basis: str   # how it was found, in a few words
    source: str  # the published source (citation), or "" 


@dataclass(frozen=True)
class StableRange:
    """Where ``phase`` is the stable one at ``pressure_Pa`` (None ends: no limit)."""

    phase: str
    pressure_Pa: float
    lower: Boundary | None
    upper: Boundary | None
    never: str = ""  # why the phase is stable at no temperature at this pressure, if so

    def outside(self, t_lo: float, t_hi: float) -> tuple[tuple[float, float, str], ...]:
        """Parts of [t_lo, t_hi] where the phase is not the stable one: (from, to, side)."""
        if self.never:
            return ((t_lo, t_hi, "never"),)
        parts = []
        if self.lower is not None and t_lo < self.lower.T_K:
            parts.append((t_lo, min(t_hi, self.lower.T_K), "below"))
        if self.upper is not None and t_hi > self.upper.T_K:
            parts.append((max(t_lo, self.upper.T_K), t_hi, "above"))
        return tuple(parts)


def _t(T: float) -> str:
    """'353.2 K (80.1 °C)': the number policy's temperature."""
    return temperature(T)


def _k(T: float) -> str:
    """'353.2 K': a temperature to 0.1 K (the number policy's default digits)."""
    return f"{fixed(T, 1, group=False)}{UNIT_SPACE}K"


def _span(lo: float, hi: float) -> str:
    c = [fixed(T - ZERO_CELSIUS, 1, group=False) for T in (lo, hi)]
    return (f"{fixed(lo, 1, group=False)}–{_k(hi)} ({c[0]}–{c[1]}{UNIT_SPACE}°C)")


def _bar(p: float) -> str:
    """A computed pressure in bar to four significant figures, never in e-notation."""
    return quantity(p / 1e5, "bar", figures=4)


def _given_bar(p: float) -> str:
    """The pressure the case gives, echoed as given: '1 bar', '1.01325 bar'."""
    return f"{plain(p / 1e5)}{UNIT_SPACE}bar"


def vaporisation_enthalpy(vp: VapourPressure, T: float) -> float:
    """ΔvapH ≈ R T² d ln p_sat/dT at T (J/mol), by a central difference of the curve."""
    h = 1e-3 * T
    return R * T * T * (vp.ln_p(T + h) - vp.ln_p(T - h)) / (2.0 * h)


def _curve_root(vp: VapourPressure, pressure: float, extrapolation: float
                ) -> tuple[float, bool] | None:
    """T where p_sat(T) = pressure: (T, extrapolated) or None when the curve does not reach it."""
    target = math.log(pressure)

    def f(T: float) -> float:
        return vp.ln_p(T) - target

    tc = vp.coeffs[0] * (1.0 - 1e-9) if vp.kind == "wagner" else math.inf  # Wagner: T < Tc
    inner = (vp.t_min, min(vp.t_max, tc))
    outer = (vp.t_min * (1.0 - extrapolation), min(vp.t_max * (1.0 + extrapolation), tc))
    for (a, b), extrapolated in ((inner, False), (outer, True)):
        fa, fb = f(a), f(b)
        if math.isfinite(fa) and math.isfinite(fb) and fa * fb <= 0.0:
            return brent(f, a, b, xtol=1e-6), extrapolated
    return None


def boiling_point(pd: PhaseData, pressure: float, *, normal_pressure: float,
                  trouton: float, extrapolation: float) -> Boundary | None:
    """The boiling point at ``pressure`` (see the module notes), or None when unknown."""
    vp = pd.vapour_pressure
    if vp is not None and vp.kind == "wagner" and pressure >= vp.coeffs[1]:
        return None  # at or above the critical pressure no boiling point separates the phases
    if vp is not None:
        found = _curve_root(vp, pressure, extrapolation)
        if found is not None:
            T, extrapolated = found
            how = (f"vapour-pressure curve, extrapolated beyond its range "
                   f"{fixed(vp.t_min, 1, group=False)}–{_k(vp.t_max)}" if extrapolated
                   else "vapour-pressure curve")
            return Boundary(T, "boiling point", how, vp.source)
    if pd.t_boil is None or pd.sublimes:
        return None
    tb = pd.t_boil
    source = pd.source_of("boiling point") or ""
    if pressure == normal_pressure:
        return Boundary(tb, "boiling point", "normal boiling point", source)
    T = 1.0 / (1.0 / tb - R * math.log(pressure / normal_pressure) / (trouton * tb))
    return Boundary(T, "boiling point",
                    f"estimated from the normal boiling point {_t(tb)} with the "
                    f"Clausius-Clapeyron equation and Trouton's rule (ΔvapS ≈ {trouton:g} "
                    "J/(mol·K)), no vapour-pressure curve being known", source)


def _sublimation(pd: PhaseData, pressure: float, normal_pressure: float) -> Boundary:
    source = pd.source_of("boiling point") or ""
    if pressure == normal_pressure:
        return Boundary(pd.t_boil, "sublimation point", "at 1 atm", source)
    return Boundary(pd.t_boil, "sublimation point",
                    f"at 1 atm; its shift to {_given_bar(pressure)} is not known", source)


def _liquid_exists(pd: PhaseData, pressure: float) -> bool:
    """For a substance that sublimes at 1 atm: is ``pressure`` above its triple point?"""
    vp = pd.vapour_pressure
    if vp is None or pd.t_melt is None or not vp.in_range(pd.t_melt):
        return False
    return pressure > vp.p(pd.t_melt)


def _vapour_limits(pd: PhaseData, pressure: float, kw: dict) -> tuple[Boundary | None, bool]:
    """(lower limit of the gas = upper limit of the condensed phases, liquid possible?)."""
    if pd.sublimes and not _liquid_exists(pd, pressure):
        return _sublimation(pd, pressure, kw["normal_pressure"]), False
    return boiling_point(pd, pressure, **kw), True


def _melting(pd: PhaseData) -> Boundary | None:
    if pd.t_melt is None:
        return None
    return Boundary(pd.t_melt, "melting point",
                    "normal melting point, its change with pressure neglected",
                    pd.source_of("melting point") or "")


def _solid_range(pd: PhaseData, pressure: float, kw: dict) -> StableRange:
    vapour, liquid = _vapour_limits(pd, pressure, kw)
    upper = _melting(pd) if liquid else vapour
    lower = None
    if pd.form_range is not None:
        lo, hi = pd.form_range
        source = pd.source_of("form range") or ""
        if lo is not None:
            lower = Boundary(lo, "form change", "change from another solid form", source)
        if hi is not None and (upper is None or hi < upper.T_K):
            upper = Boundary(hi, "form change", "change to another solid form", source)
    return StableRange("s", pressure, lower, upper)


def stable_range(phase: str, pd: PhaseData | None, pressure: float, *, normal_pressure: float,
                 trouton: float, extrapolation: float) -> StableRange | None:
    """Where ``phase`` is the stable phase at ``pressure``; None when no boundary is known."""
    if pd is None:
        return None
    kw = {"normal_pressure": normal_pressure, "trouton": trouton, "extrapolation": extrapolation}
    if phase == "s":
        found = _solid_range(pd, pressure, kw)
    elif phase == "g":
        vapour, _ = _vapour_limits(pd, pressure, kw)
        found = StableRange("g", pressure, vapour, None)
    elif phase in ("l", "aq"):
        vapour, liquid = _vapour_limits(pd, pressure, kw)
        if not liquid:
            what = "the solvent" if phase == "aq" else "the substance"
            return StableRange(phase, pressure, None, None,
                               never=f"{what} has no stable liquid at {_given_bar(pressure)}: it "
                                     f"sublimes at {_t(vapour.T_K)} ({vapour.basis})")
        found = StableRange(phase, pressure, _melting(pd), vapour)
    else:
        return None
    if found.lower is None and found.upper is None:
        return None
    return found


def _gas_text(label: str, pd: PhaseData, sr: StableRange, lo: float, hi: float) -> str:
    b = sr.lower
    below_melt = pd.t_melt is not None and lo < pd.t_melt
    condensed = "the liquid" + (" (the solid below its melting point "
                                f"{_t(pd.t_melt)})" if below_melt else "")
    if b.what == "sublimation point":
        condensed = "the solid"
    text = (f"{label}: as a pure substance at {_given_bar(sr.pressure_Pa)} it condenses below its "
            f"{b.what} {_t(b.T_K)} ({b.basis}); from {_span(lo, hi)} of the window the gas "
            f"written {PHASE_WARNING_MARK} ({condensed} is), and the data describe a vapour "
            "that would condense")
    vp = pd.vapour_pressure
    if vp is not None and b.what == "boiling point":
        dh = vaporisation_enthalpy(vp, lo)
        text += (f" (the heat of vaporisation there is about {dh / 1e3:.0f} kJ/mol, from the "
                 f"vapour-pressure curve); in a gas mixture it stays a vapour only while its "
                 f"partial pressure is below its vapour pressure, {_bar(vp.p(lo))} at "
                 f"{_k(lo)}")
    return text + ": check that the phase written is the one present"


def _condensed_text(label: str, phase: str, pd: PhaseData, sr: StableRange,
                    part: tuple[float, float, str]) -> str:
    lo, hi, side = part
    b = sr.lower if side == "below" else sr.upper
    if phase == "aq":
        verb = "freezes" if side == "below" else "boils"
        return (f"{label}: the solvent, {pd.solvent or 'the solvent'}, {verb} at {_t(b.T_K)} "
                f"at {_given_bar(sr.pressure_Pa)} ({b.basis}); from {_span(lo, hi)} of the window "
                "there is no liquid solvent at this pressure, so the dissolved species written "
                f"{PHASE_WARNING_MARK} there: it cannot exist")
    if b.what == "form change":
        source = f"; {b.source}" if b.source else ""
        return (f"{label}: this solid form is the stable one only "
                f"{'above' if side == 'below' else 'below'} {_t(b.T_K)} ({b.basis}{source}); "
                f"from {_span(lo, hi)} of the window it {PHASE_WARNING_MARK} (another solid "
                "form is)")
    if phase == "l" and side == "above":
        vp = pd.vapour_pressure
        more = (f"; the liquid stays liquid there only under at least its vapour pressure, "
                f"{_bar(vp.p(hi))} at {_k(hi)}" if vp is not None and vp.in_range(hi) else "")
        return (f"{label}: at {_given_bar(sr.pressure_Pa)} it boils at {_t(b.T_K)} ({b.basis}); "
                f"from {_span(lo, hi)} of the window the liquid written {PHASE_WARNING_MARK} "
                f"(the vapour is){more}")
    if phase == "l":
        return (f"{label}: it melts at {_t(b.T_K)} ({b.basis}); from {_span(lo, hi)} of the "
                f"window the liquid written {PHASE_WARNING_MARK} (the solid is)")
    after = "the vapour" if b.what == "sublimation point" else "the liquid"
    return (f"{label}: its {b.what} is {_t(b.T_K)} ({b.basis}); from {_span(lo, hi)} of the "
            f"window the solid written {PHASE_WARNING_MARK} ({after} is)")


def phase_warnings(label: str, phase: str, pd: PhaseData, sr: StableRange,
                   window: tuple[float, float]) -> tuple[str, ...]:
    """Sentences for the parts of ``window`` where ``phase`` is not the stable one."""
    out = []
    for part in sr.outside(*window):
        lo, hi, side = part
        if side == "never":
            out.append(f"{label}: at {_given_bar(sr.pressure_Pa)} {sr.never}; the "
                       f"{_PHASE_WORDS[phase]} written {PHASE_WARNING_MARK} anywhere in "
                       f"the window {_span(lo, hi)}")
        elif phase == "g":
            out.append(_gas_text(label, pd, sr, lo, hi))
        else:
            out.append(_condensed_text(label, phase, pd, sr, part))
    return tuple(out)


def describe_range(sr: StableRange | None, sources: bool = True) -> str:
    """The stable range in words, e.g. "above 372.76 K (99.61 °C), its boiling point ..."."""
    if sr is None:
        return "no phase boundary known"
    if sr.never:
        return f"none at {_given_bar(sr.pressure_Pa)}: {sr.never}"
    parts = []
    for word, b in (("above", sr.lower), ("below", sr.upper)):
        if b is not None:
            source = f"; {b.source}" if b.source and sources else ""
            parts.append(f"{word} {_t(b.T_K)}, its {b.what} at {_given_bar(sr.pressure_Pa)} "
                         f"({b.basis}{source})")
    return " and ".join(parts)


__all__ = ["PHASE_WARNING_MARK", "Boundary", "StableRange", "boiling_point", "stable_range", "phase_warnings",
           "describe_range", "vaporisation_enthalpy"]
