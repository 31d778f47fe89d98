"""The finding rules.  Each is a small named function of the assessment's parts
(:class:`RuleSubject`) returning zero or more findings with a severity, one
sentence with the numbers, and the method or source.  :data:`RULES` lists
them in the order they run; thresholds come from the subject's method
settings.

Severity words: information < caution < warning < critical.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Iterable, Iterator

from dossier.assess.resolve import ESTIMATE_PREFIX
from dossier import number_policy as policy
from dossier.chem.formula import parse_formula
from dossier.constants import R, T_REF, ZERO_CELSIUS
from dossier.engine.estimate import estimate_species
from dossier.engine.phases import PHASE_WARNING_MARK
from dossier.engine.settings import MethodSettings
from dossier.errors import DossierError
from dossier.model.assessment import Safety, SpeciesUse, Thermodynamics
from dossier.model.case import Case, LocalSpecies
from dossier.model.findings import Finding
from dossier.temperature import kelvin_celsius


@dataclass(frozen=True)
class RuleSubject:
    """What the finding rules see."""

    case: Case
    thermo: Thermodynamics
    safety: Safety | None
    species: tuple[SpeciesUse, ...]
    settings: MethodSettings
    warnings: tuple[str, ...] = field(default=())

_NB = policy.UNIT_SPACE


def _q(x: float | None, unit: str, interval=None) -> str:
    """A figure by the number policy ('3.62 GJ', '442 bar')."""
    return policy.quantity(x, unit, interval)


def _plain(x: float, unit: str) -> str:
    """A threshold or input as given, with its unit ('50 K', '500 J/g')."""
    return f"{policy.plain(x)}{_NB}{unit}"


def _bar(p_bar: float) -> str:
    """A pressure the case states (as given): '1 bar', '1.01325 bar'."""
    return _plain(p_bar, "bar")


THERMO_SOURCE = ("Standard-state thermodynamics from tabulated data: ΔG° = ΔH° − TΔS°, "
                 "ln K = −ΔG°/RT, Kirchhoff's law for the temperature dependence")

# Short citations for findings; the full provenance text (dossier.engine.safety
# *_SOURCE) is printed on the methods page.
SEVERITY_SHORT = ("Stoessel, Thermal Safety of Chemical Processes (Wiley-VCH 2008), "
                  "severity scale on ΔT_ad; thresholds from memory")
CRITICALITY_SHORT = ("Stoessel, Thermal Safety of Chemical Processes (Wiley-VCH 2008), "
                     "criticality classes; class definitions from memory")
PROBABILITY_SHORT = ("Stoessel (2008) probability scale on TMRad, thresholds from memory; "
                     "TMRad by Townsend and Tou (1980), zero-order approximation")


def unfavourable(subj: RuleSubject) -> Iterator[Finding]:
    t = subj.thermo
    if t.favourable == "nowhere":
        lo, hi = t.window_K
        rows = [r for r in t.profile if lo <= r.T_K <= hi]
        g = [r.dG_kJ_mol for r in rows]
        best = max(r.conversion for r in rows)
        if best >= 0.01:
            reach = (f"; at the case pressure of {_bar(t.pressure_bar)} the equilibrium still "
                     f"reaches at most {policy.percent(best)} conversion")
        else:
            reach = (f"; even at the case pressure the equilibrium conversion stays below "
                     f"1{_NB}%, so "
                     "the reaction does not proceed as written")
        yield Finding("unfavourable-everywhere", "warning",
                      f"ΔG° is positive across the whole window {kelvin_celsius(lo)} to {kelvin_celsius(hi)} "
                      f"({policy.fixed(min(g), 1)} to {_q(max(g), 'kJ/mol')}), so K < 1 "
                      f"throughout{reach}. "
                      "It needs product removal, other conditions or another route.",
                      THERMO_SOURCE)


def crossover_in_window(subj: RuleSubject) -> Iterator[Finding]:
    for c in subj.thermo.crossovers_in_window:
        yield Finding("crossover-in-window", "caution",
                      f"ΔG° changes sign inside the window at {kelvin_celsius(c.T)} (the reaction is "
                      f"{c.direction} that temperature): "
                      "feasibility depends on where in the window the process runs.",
                      THERMO_SOURCE)


#: How the equilibrium treated the liquids, for the source of the finding.
_LIQUIDS = {
    "": "pure condensed phases",
    "ideal": "pure solids, the liquids as one ideal solution",
    "unifac": "pure solids, the liquids as one solution with UNIFAC activity coefficients",
    "unifac-dortmund": ("pure solids, the liquids as one solution with modified UNIFAC "
                        "(Dortmund) activity coefficients"),
}


def equilibrium_limited(subj: RuleSubject) -> Iterator[Finding]:
    t = subj.thermo
    lo, hi = t.window_K
    rows = [r for r in t.profile if lo <= r.T_K <= hi]
    limit = subj.settings.equilibrium_limited_below
    low = [r for r in rows if r.conversion < limit]
    if low:
        worst = min(low, key=lambda r: r.conversion)
        yield Finding("equilibrium-limited", "caution",
                      f"The equilibrium stops short of completion in the window: the conversion "
                      f"of {t.basis} falls below {policy.percent(limit)} (lowest "
                      f"{policy.percent(worst.conversion)} at "
                      f"{kelvin_celsius(worst.T_K)}, {_bar(t.pressure_bar)}), so the reaction "
                      "cannot go to completion there without removing a product or changing "
                      "pressure or temperature.",
                      f"Equilibrium of one reaction, ideal gases and "
                      f"{_LIQUIDS.get(t.solution_model, t.solution_model)} "
                      "(stoichiometric feed)")


def extrapolated(subj: RuleSubject) -> Iterator[Finding]:
    for w in subj.warnings:
        if "extrapolated" in w and PHASE_WARNING_MARK not in w:
            yield Finding("extrapolated-data", "caution", w,
                          "Validity ranges of the species data and of the methods")


def phase_not_stable(subj: RuleSubject) -> Iterator[Finding]:
    """A species written in a phase that is not the stable one in part of the window."""
    for w in subj.warnings:
        if PHASE_WARNING_MARK in w:
            yield Finding("phase-not-stable", "caution", w,
                          "Phase boundaries of the species at the case pressure: melting and "
                          "normal boiling points and vapour-pressure curves (library records, "
                          "sources named on each species page)")


def case_local(subj: RuleSubject) -> Iterator[Finding]:
    estimated = {sp.name for sp in subj.case.species if sp.estimated}
    for s in subj.species:
        if s.local and s.name not in estimated:  # estimates have their own finding
            units = {"hf": (1e3, "kJ/mol"), "s": (1.0, "J/(mol·K)"), "cp": (1.0, "J/(mol·K)")}
            unc = ", ".join(f"{k} ± {policy.plain(v / units.get(k, (1.0, ''))[0])}"
                            f"{_NB}{units.get(k, (1.0, ''))[1]}".rstrip()
                            for k, v in s.uncertainty)
            yield Finding("case-local-data", "information",
                          f"{s.key} uses the case's own data ({s.source.removeprefix('case-local data: ')})"
                          + (f" with stated uncertainty {unc}" if unc else " with no stated uncertainty")
                          + (", replacing the library record" if s.overrides_library else "")
                          + ".", "Case file [[species]] table")


ESTIMATE_SHORT = ("Group-additivity estimate from the structure: Benson, Thermochemical "
                  "Kinetics, 2nd ed. (1976), group values of pgradd; Joback and Reid, Chem. Eng. "
                  "Comm. 57 (1987) 233; liquids by Lee–Kesler and Rowlinson–Poling. "
                  "Uncertainties from the methods' published accuracy (methods page)")


def estimated_data(subj: RuleSubject) -> Iterator[Finding]:
    """Species whose data are estimated from their structure, and the estimates asked
    for beside a case's own values (then compared with them)."""
    tables = {sp.name: sp for sp in subj.case.species if sp.estimate is not None}
    for s in subj.species:
        table = tables.get(s.name) if s.local else None
        if table is None:
            continue
        if table.estimated:
            yield _estimated(s)
        else:
            yield _estimate_check(s, table, subj.settings)


def _estimated(s: SpeciesUse) -> Finding:
    u = dict(s.uncertainty)
    how = s.source.removeprefix(ESTIMATE_PREFIX).split(": ", 1)[0]
    nu = abs(s.nu)
    u_g = math.hypot(nu * u["hf"], nu * T_REF * u["s"])  # J/mol, the two taken as independent
    return Finding(
        "estimated-data", "caution",
        f"{s.key} has no data in the library or the case: its values are estimated from its "
        f"structure ({how}): ΔfH° {policy.plus_minus(s.hf298_kJ_mol, u['hf'] / 1e3, 'kJ/mol')}, "
        f"S° {policy.plus_minus(s.s298_J_molK, u['s'], 'J/(mol·K)')}, "
        f"Cp° {policy.plus_minus(s.cp298_J_molK, u['cp'], 'J/(mol·K)')} (one standard "
        f"uncertainty each). As written in the reaction they carry "
        f"± {_q(nu * u['hf'] / 1e3, 'kJ/mol')} into ΔrH° and ± {_q(nu * u['s'], 'J/(mol·K)')} "
        f"into ΔrS°, together ± {_q(u_g / 1e3, 'kJ/mol')} into ΔrG° at 298.15{_NB}K: K is "
        f"uncertain by a factor of about {policy.significant(math.exp(u_g / (R * T_REF)))} "
        "there. Replace them "
        "by measured values before the figures are relied on.", ESTIMATE_SHORT)


def _estimate_check(s: SpeciesUse, table: LocalSpecies, settings: MethodSettings) -> Finding:
    """The case's own values of ``s`` against the estimate its table asks for."""
    try:
        est = estimate_species(str(table.smiles).strip(), s.phase, str(table.estimate), settings)
    except DossierError as err:
        return Finding("estimated-data", "caution",
                       f"{s.key} uses the case's own values; the estimate asked for beside them "
                       f"could not be made: {err.problems[0].message}.", ESTIMATE_SHORT)
    limit = settings.estimate_disagreement_u
    given = {"hf": s.hf298_kJ_mol * 1e3, "s": s.s298_J_molK, "cp": s.cp298_J_molK}
    words = {"hf": ("ΔfH°", 1e3, "kJ/mol"), "s": ("S°", 1.0, "J/(mol·K)"),
             "cp": ("Cp°", 1.0, "J/(mol·K)")}
    parts, apart = [], []
    for key, q in (("hf", est.hf), ("s", est.s), ("cp", est.cp)):
        name, scale, unit = words[key]
        parts.append(f"{name} {_q(given[key] / scale, unit)} given, "
                     f"{policy.plus_minus(q.value / scale, q.uncertainty / scale, unit)} "
                     "estimated")
        if abs(given[key] - q.value) > limit * q.uncertainty:
            apart.append(name)
    formula = dict(est.composition) == _elements_of(s.formula)
    verdict = (f"They differ by more than {policy.plain(limit)} standard uncertainties of the "
               f"estimate in {', '.join(apart)}: check the values and their source."
               if apart else f"They agree within {policy.plain(limit)} standard uncertainties.")
    if not formula:
        verdict = "The SMILES does not describe the formula given: check the structure."
    return Finding("estimated-data", "caution" if apart or not formula else "information",
                   f"{s.key} uses the case's own values; the estimate asked for beside them "
                   f"({est.summary}) gives: " + "; ".join(parts) + ". " + verdict,
                   ESTIMATE_SHORT)


def _elements_of(formula: str) -> dict[str, float]:
    """Element counts of a formula."""
    return {e: float(n) for e, n in parse_formula(formula).elements}


def exotherm_severity(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.adiabatic_rise_K is None:
        return
    sev = subj.settings.severity_finding(s.severity)
    (low, _inf, b1), (medium, _b1, b2), (high, _b2, _top) = subj.settings.severity_bands_K
    yield Finding("exotherm-severity", sev,
                  f"Adiabatic temperature rise "
                  f"{_q(s.adiabatic_rise_K, 'K', s.adiabatic_rise_interval_K)}: severity "
                  f"{s.severity} on the three-level scale (below {_plain(b1, 'K')} {low}, "
                  f"{policy.plain(b1)}–{_plain(b2, 'K')} {medium}, above {_plain(b2, 'K')} "
                  f"{high}).",
                  subj.settings.source_of("severity_bands_K") or SEVERITY_SHORT)


def criticality(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.criticality_class is None:
        return
    k = s.criticality_class
    sev = subj.settings.criticality_finding(k)
    reason = s.criticality_reason
    # the temperatures at the digits their 95 % intervals fix, as everywhere else
    for T, pair in ((s.mtsr_K, s.mtsr_interval_K), (s.td24_K, s.td24_interval_K)):
        if T is not None and pair:
            reason = reason.replace(kelvin_celsius(T), kelvin_celsius(T, interval=pair))
    yield Finding("criticality-class", sev,
                  "Criticality " + reason.rstrip(".") + ".", CRITICALITY_SHORT)


def probability(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.probability is None or s.tmrad_at_mtsr_h is None:
        return
    sev = subj.settings.probability_finding(s.probability)
    (high, _z, b1), (medium, _b1, b2), (low, _b2, _top) = subj.settings.probability_bands_h
    yield Finding("runaway-probability", sev,
                  f"TMRad at the MTSR is "
                  f"{_q(s.tmrad_at_mtsr_h, 'h', s.tmrad_at_mtsr_interval_h)}: probability "
                  f"{s.probability} (above {_plain(b2, 'h')} {low}, {policy.plain(b1)}–"
                  f"{_plain(b2, 'h')} {medium}, below {_plain(b1, 'h')} {high}).",
                  (subj.settings.source_of("probability_bands_h") or PROBABILITY_SHORT)
                  + "; TMRad by Townsend and Tou (1980), zero-order approximation")


def cooling(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.cooling_sufficient is None:
        return
    if not s.cooling_sufficient:
        yield Finding("cooling-shortfall", "warning",
                      f"Mean heat release {_q(s.release_rate_kW, 'kW')} exceeds the cooling "
                      f"capacity {_q(s.cooling_capacity_kW, 'kW')} (U·A·(T_process − "
                      f"T_coolant)) by {_q(-s.cooling_margin_kW, 'kW')}: the temperature will "
                      "rise during "
                      "the feed.", "Heat balance of a cooled vessel, common practice")


def gas(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.scale is None or s.scale.gas_mol <= 0:
        return
    vol = s.gas_volume_normal_m3
    text = (f"The reaction releases {_q(s.scale.gas_mol, 'mol')} of gas per batch "
            f"({_q(vol, 'm³')} at {_plain(subj.settings.gas_normal_T_K - ZERO_CELSIUS, '°C')} "
            f"and {_bar(subj.settings.gas_normal_p_Pa / 1e5)})")
    if s.pressure_at_mtsr_bar is not None:
        text += (f", {_q(s.pressure_at_mtsr_bar, 'bar', s.pressure_at_mtsr_interval_bar)} in "
                 "the closed gas space at the MTSR")
        if s.design_pressure_bar is not None:
            text += f" against a design pressure of {_bar(s.design_pressure_bar)}"
    text += "; the vent and off-gas system must take it."
    sev = "critical" if s.pressure_exceeds_design else "caution"
    yield Finding("gas-and-pressure", sev, text,
                  "Ideal-gas law, p = p_0 + nRT/V with p_0 the initial pressure (closed vessel, "
                  "no venting)")


def mismatch(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.scale is None or s.scale.enthalpy_measured_kJ_mol is None:
        return
    m, c = s.scale.enthalpy_measured_kJ_mol, s.scale.enthalpy_computed_kJ_mol
    diff = abs(m - c)
    rel, absolute = subj.settings.enthalpy_mismatch_fraction, subj.settings.enthalpy_mismatch_kJ_mol
    if diff > absolute or diff > rel * abs(m):
        # a measured value of (nearly) zero has no meaningful relative difference
        share = policy.percent(diff / abs(m)) if diff <= 10 * abs(m) else \
            "over ten times the measured value"
        yield Finding("enthalpy-mismatch", "warning",
                      f"Measured reaction enthalpy {_q(m, 'kJ/mol')} differs from the computed "
                      f"{_q(c, 'kJ/mol')} by {_q(diff, 'kJ/mol')} ({share}; threshold "
                      f"{_plain(rel * 100, '%')} or {_plain(absolute, 'kJ/mol')}); the "
                      "measured value is "
                      "used for the safety figures. Check the species data and the "
                      "measurement (side reactions, phase changes, dilution heat).",
                      "Project threshold (common practice, no source)")


def missing(subj: RuleSubject) -> Iterator[Finding]:
    s = subj.safety
    if s is None or not s.not_assessed:
        return
    figures = ", ".join(fig for fig, _m in s.not_assessed)
    needs = "; ".join(s.missing_inputs) if s.missing_inputs else "see the list of figures"
    yield Finding("missing-safety-inputs", "warning",
                  f"Not assessed for lack of inputs: {figures}. Missing from the case file: "
                  f"{needs}.", "Completeness of the case file")


def energetic(subj: RuleSubject) -> Iterator[Finding]:
    """Species whose decomposition could release much energy, or that carry explosophores."""
    s = subj.safety
    if s is None:
        return
    level = subj.settings.energetic_species_J_per_g
    for e in s.energetics:
        high = e.max_decomposition_J_per_g is not None and e.max_decomposition_J_per_g >= level
        if not (high or e.explosophores):
            continue
        parts = []
        if high:
            parts.append(f"its most exothermic decomposition into simple products would release "
                         f"{_q(e.max_decomposition_J_per_g, 'J/g')}, above the "
                         f"{_plain(level, 'J/g')} screening level")
        if e.explosophores:
            parts.append("it carries explosophore groups (" + ", ".join(e.explosophores) + ")")
        ob = (f"; oxygen balance {_q(e.oxygen_balance_pct, '%')}"
              if e.oxygen_balance_pct is not None
              else "")
        yield Finding("energetic-species", "warning",
                      f"{e.species}: " + " and ".join(parts) + ob +
                      f". Screening outcome: {e.screening_outcome} ({e.screening_reason}). "
                      "Measure the decomposition energy and onset (DSC) of the real material.",
                      "UN Manual of Tests and Criteria, Appendix 6 screening (from memory); "
                      "oxygen balance; maximum decomposition energy by linear programming")


MTT_SOURCE = ("Cooling-failure scenario: MTSR = T_p + X_acc·ΔT_ad compared with the maximum "
              "technical temperature (Stoessel, Thermal Safety of Chemical Processes, Wiley-VCH "
              "2008; from memory)")


def mtsr_above_mtt(subj: RuleSubject) -> Iterator[Finding]:
    """The MTSR at or above the MTT, whether or not TD24 is known."""
    s = subj.safety
    if s is None or s.mtsr_K is None or s.mtt_K is None or s.mtsr_K < s.mtt_K:
        return
    over = s.mtsr_K - s.mtt_K
    if s.td24_K is None:
        then = ("TD24 is not known, so whether the decomposition is triggered as well cannot "
                "be said: measure it (DSC or adiabatic calorimetry)")
    elif s.mtsr_K >= s.td24_K:
        then = (f"the MTSR is also at or above TD24 "
                f"{kelvin_celsius(s.td24_K, interval=s.td24_interval_K)}")
    else:
        then = f"the MTSR stays below TD24 {kelvin_celsius(s.td24_K, interval=s.td24_interval_K)}"
    yield Finding("mtsr-above-mtt", subj.settings.limit_finding("mtsr-above-mtt"),
                  f"After a cooling failure the reaction alone takes the mass to the MTSR "
                  f"{kelvin_celsius(s.mtsr_K, interval=s.mtsr_interval_K)}, "
                  f"{_q(over, 'K', s.mtsr_interval_K)} "
                  "above the MTT "
                  f"{kelvin_celsius(s.mtt_K)}: the mass boils if the MTT is its boiling point "
                  "(the condenser or vent must take the vapour at the rate it is made), or the "
                  f"vessel's temperature or pressure limit is passed (loss of containment); "
                  f"{then}.", MTT_SOURCE)


def process_outside_window(subj: RuleSubject) -> Iterator[Finding]:
    """The process temperature of [charge] outside the window the case assesses."""
    ch = subj.case.charge
    lo, hi = subj.case.window
    if ch is None or lo <= ch.process_temperature <= hi:
        return
    yield Finding("process-outside-window", subj.settings.limit_finding("process-outside-window"),
                  f"The process temperature {kelvin_celsius(ch.process_temperature)} lies outside "
                  f"the window {kelvin_celsius(lo)} to {kelvin_celsius(hi)}: the profile, the "
                  "crossovers and the equilibrium findings do not cover the temperature the "
                  "process runs at. Widen the window to include it.",
                  "Consistency of the case file")


VAPOUR_SOURCE = ("Pressure at the MTSR: evolved gas by the ideal-gas law (closed vessel, no "
                 "venting) plus the vapour of the liquids, bounded by the highest pure-liquid "
                 "vapour pressure (Raoult's law for an ideal solution), each from its boiling "
                 "point at the case pressure by the Clausius–Clapeyron equation with Trouton's "
                 "rule for the enthalpy of vaporisation; pressure scale and the rule taking the "
                 "higher of the two severities: our choice")


def liquid_vapour_pressures(subj: RuleSubject, T: float) -> list[tuple[str, float]]:
    """(species, vapour pressure at ``T`` in Pa) for each liquid with a known boiling
    point at the case pressure, by Clausius–Clapeyron with ΔvapH = ΔvapS_Trouton·T_b."""
    out = []
    p_case = subj.case.pressure
    for u in subj.species:
        if u.phase != "l" or not u.stable_phase_K or u.stable_phase_K[-1] is None:
            continue
        t_b = float(u.stable_phase_K[-1])
        dh_vap = subj.settings.trouton_entropy_J_molK * t_b
        out.append((u.key, p_case * math.exp(dh_vap / R * (1.0 / t_b - 1.0 / T))))
    return out


def _level(bands: tuple[tuple[str, float, float], ...], x: float) -> str:
    for level, lo, hi in bands:
        if lo <= x < hi:
            return level
    return bands[-1][0]


def pressure_severity(subj: RuleSubject) -> Iterator[Finding]:
    """Severity on the pressure at the MTSR (gas and vapour) against the design pressure,
    when it is above the lowest level; the severity that counts is the higher one."""
    s = subj.safety
    if s is None or s.mtsr_K is None or s.design_pressure_bar is None:
        return
    vapours = liquid_vapour_pressures(subj, s.mtsr_K)
    p_vap = max((p for _k, p in vapours), default=0.0)
    p_gas = (s.pressure_at_mtsr_bar * 1e5 if s.pressure_at_mtsr_bar is not None
             else subj.case.pressure)
    total = p_gas + p_vap
    bands = subj.settings.pressure_severity_bands
    level = _level(bands, total / (s.design_pressure_bar * 1e5))
    levels = [b[0] for b in subj.settings.severity_bands_K]
    if level == bands[0][0]:
        return
    thermal = s.severity or levels[0]
    counts = max(level, thermal, key=lambda lv: levels.index(lv) if lv in levels else 0)
    if s.pressure_at_mtsr_bar is not None:
        gas = f"gas {_q(s.pressure_at_mtsr_bar, 'bar')} with the evolved gas"
    elif s.scale is not None and s.scale.gas_mol <= 0:
        gas = f"the initial {_bar(subj.case.pressure / 1e5)}; the reaction makes no gas"
    else:
        gas = f"the initial {_bar(subj.case.pressure / 1e5)}; the evolved gas not assessed"
    vap = ", no liquid with a known boiling point"
    if vapours:
        top = max(vapours, key=lambda v: v[1])[0]
        t_b = next(float(u.stable_phase_K[-1]) for u in subj.species if u.key == top)
        vap = f", vapour up to {_q(p_vap / 1e5, 'bar')} ({top}"
        vap += (f", which boils at {kelvin_celsius(t_b)} at the case pressure: far above its "
                "boiling point the estimate is rough)" if s.mtsr_K > t_b else ")")
    yield Finding("pressure-severity", subj.settings.severity_finding(counts),
                  f"At the MTSR {kelvin_celsius(s.mtsr_K, interval=s.mtsr_interval_K)} the closed "
                  "gas space reaches about "
                  f"{_q(total / 1e5, 'bar')} ({gas}{vap}) against a design pressure of "
                  f"{_bar(s.design_pressure_bar)}: severity {level} on pressure, {thermal} on "
                  f"ΔT_ad; the severity that counts is {counts}. Relief and vent must be sized "
                  "for it.", VAPOUR_SOURCE)


MARGIN_SOURCE = ("Monte Carlo propagation of the stated uncertainties (each a 95 % "
                 "half-width, sampled as a normal distribution; fixed seed), the margin's "
                 "central 95 % interval; boundaries and limits as on the methods page")


def _signed(x: float | None, unit: str, interval=None) -> str:
    return policy.signed(x, unit, interval)


def borderline(subj: RuleSubject) -> Iterator[Finding]:
    """A class boundary, a design limit or a crossover inside the 95 % interval of the
    figure compared with it."""
    s, level = subj.safety, subj.settings.limit_finding("borderline")
    for m in (s.margins if s is not None else ()):
        if not m.borderline:
            continue
        lo, hi = m.interval
        yield Finding("borderline", level,
                      f"{m.what[0].upper()}{m.what[1:]}: margin "
                      f"{_signed(m.nominal, m.unit, m.interval)} on the nominal figures, but "
                      f"its 95{_NB}% interval, {_signed(lo, m.unit, m.interval)} to "
                      f"{_signed(hi, m.unit, m.interval)}, includes zero: {m.consequence}. "
                      "The class or "
                      "level printed rests on the nominal figures; narrow the uncertainty "
                      "(measure the inputs that carry it) or design for the worse side.",
                      MARGIN_SOURCE)
    ch, t = subj.case.charge, subj.thermo
    if ch is None:
        return
    for c, (lo, hi) in zip(t.crossovers, t.crossover_intervals_K):
        if lo is not None and hi is not None and lo < hi and lo <= ch.process_temperature <= hi:
            yield Finding("borderline", level,
                          f"The crossover at {kelvin_celsius(c.T, interval=(lo, hi))} "
                          f"({c.direction}) has a "
                          f"{policy.interval((lo, hi), 'K', c.T)}, which includes the process "
                          f"temperature {kelvin_celsius(ch.process_temperature)}: within the "
                          "species data's uncertainty the reaction may be favourable or "
                          "unfavourable at standard state there.", MARGIN_SOURCE)


Rule = tuple[str, Callable[[RuleSubject], Iterable[Finding]]]

#: Every rule, in the order it runs: (stable name, function).
RULES: tuple[Rule, ...] = (
    ("unfavourable-everywhere", unfavourable),
    ("crossover-in-window", crossover_in_window),
    ("equilibrium-limited", equilibrium_limited),
    ("extrapolated-data", extrapolated),
    ("phase-not-stable", phase_not_stable),
    ("case-local-data", case_local),
    ("estimated-data", estimated_data),
    ("exotherm-severity", exotherm_severity),
    ("criticality-class", criticality),
    ("mtsr-above-mtt", mtsr_above_mtt),
    ("borderline", borderline),
    ("pressure-severity", pressure_severity),
    ("process-outside-window", process_outside_window),
    ("runaway-probability", probability),
    ("cooling-shortfall", cooling),
    ("gas-and-pressure", gas),
    ("enthalpy-mismatch", mismatch),
    ("missing-safety-inputs", missing),
    ("energetic-species", energetic),
)


def run_rules(subject: RuleSubject, rules: tuple[Rule, ...] = RULES) -> tuple[Finding, ...]:
    """Run every rule on ``subject``; most severe first, then in rule order."""
    out: list[Finding] = []
    for _name, fn in rules:
        out.extend(fn(subject))
    return tuple(sorted(out, key=lambda f: -f.rank))


__all__ = ["RuleSubject", "RULES", "run_rules"]
