"""The finding rules.  Each is a small named function of the assessment
(:class:`dossier.assess.evaluate.RuleSubject`) returning zero or more findings with a
severity, one sentence with the numbers, and the method or source.

Severity words: information < caution < warning < critical.
"""
from __future__ import annotations

from typing import Iterator

from dossier.model.findings import Finding, rule

THERMO_SOURCE = ("Standard-state thermodynamics from tabulated data: ΔG° = ΔH° − TΔS°, "
                 "ln K = −ΔG°/RT, Kirchhoff's law for the temperature dependence")
MISMATCH_REL, MISMATCH_ABS = 0.20, 30.0  # fraction, kJ/mol (project threshold, see METHOD_SETTINGS)
EQ_LIMIT = 0.95

# Short citations for findings; the full provenance text (dossier.engine.safety
# *_SOURCE) is printed on the methods page.
SEVERITY_SHORT = ("Stoessel, Thermal Safety of Chemical Processes (Wiley-VCH 2008), "
                  "severity scale on ΔT_ad; thresholds from memory")
CRITICALITY_SHORT = ("Stoessel, Thermal Safety of Chemical Processes (Wiley-VCH 2008), "
                     "criticality classes; class definitions from memory")
PROBABILITY_SHORT = ("Stoessel (2008) probability scale on TMRad, thresholds from memory; "
                     "TMRad by Townsend and Tou (1980), zero-order approximation")


def _C(T: float) -> str:
    return f"{T:.1f} K ({T - 273.15:.1f} °C)"


@rule("unfavourable-everywhere")
def unfavourable(subj) -> Iterator[Finding]:
    t = subj.thermo
    if t.favourable == "nowhere":
        lo, hi = t.window_K
        rows = [r for r in t.profile if lo <= r.T_K <= hi]
        g = [r.dG_kJ_mol for r in rows]
        best = max(r.conversion for r in rows)
        if best >= 0.01:
            reach = (f"; at the case pressure of {t.pressure_bar:g} bar the equilibrium still "
                     f"reaches at most {best:.0%} conversion")
        else:
            reach = ("; even at the case pressure the equilibrium conversion stays below 1 %, so "
                     "the reaction does not proceed as written")
        yield Finding("unfavourable-everywhere", "warning",
                      f"ΔG° is positive across the whole window {_C(lo)} to {_C(hi)} "
                      f"({min(g):.1f} to {max(g):.1f} kJ/mol), so K < 1 throughout{reach}. "
                      "It needs product removal, other conditions or another route.",
                      THERMO_SOURCE)


@rule("crossover-in-window")
def crossover_in_window(subj) -> Iterator[Finding]:
    for c in subj.thermo.crossovers_in_window:
        yield Finding("crossover-in-window", "caution",
                      f"ΔG° changes sign inside the window at {_C(c.T)} (the reaction is "
                      f"{c.direction} that temperature): "
                      "feasibility depends on where in the window the process runs.",
                      THERMO_SOURCE)


@rule("equilibrium-limited")
def equilibrium_limited(subj) -> Iterator[Finding]:
    t = subj.thermo
    lo, hi = t.window_K
    rows = [r for r in t.profile if lo <= r.T_K <= hi]
    low = [r for r in rows if r.conversion < EQ_LIMIT]
    if low:
        worst = min(low, key=lambda r: r.conversion)
        yield Finding("equilibrium-limited", "caution",
                      f"Equilibrium conversion of {t.basis} falls below {EQ_LIMIT:.0%} in the "
                      f"window (lowest {worst.conversion:.1%} at {_C(worst.T_K)}, "
                      f"{t.pressure_bar:g} bar): the reaction cannot go to completion there "
                      "without removing a product or changing pressure or temperature.",
                      "Equilibrium of one reaction, ideal gases and pure condensed phases "
                      "(stoichiometric feed)")


@rule("extrapolated-data")
def extrapolated(subj) -> Iterator[Finding]:
    for w in subj.warnings:
        if "extrapolated" in w or "stable one only" in w:
            yield Finding("extrapolated-data", "caution", w,
                          "Validity ranges of the species data (library records)")


@rule("case-local-data")
def case_local(subj) -> Iterator[Finding]:
    for s in subj.species:
        if s.local:
            units = {"hf": (1e3, "kJ/mol"), "s": (1.0, "J/(mol·K)"), "cp": (1.0, "J/(mol·K)")}
            unc = ", ".join(f"{k} ± {v / units.get(k, (1.0, ''))[0]:g} {units.get(k, (1.0, ''))[1]}".rstrip()
                            for k, v in s.uncertainty)
            yield Finding("case-local-data", "information",
                          f"{s.key} uses the case's own data ({s.source.removeprefix('case-local data: ')})"
                          + (f" with stated uncertainty {unc}" if unc else " with no stated uncertainty")
                          + (", replacing the library record" if s.overrides_library else "")
                          + ".", "Case file [[species]] table")


@rule("exotherm-severity")
def exotherm_severity(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.adiabatic_rise_K is None:
        return
    sev = {"low": "information", "medium": "warning", "high": "critical"}[s.severity]
    yield Finding("exotherm-severity", sev,
                  f"Adiabatic temperature rise {s.adiabatic_rise_K:.1f} K: severity "
                  f"{s.severity} on the three-level scale (below 50 K low, 50–200 K medium, "
                  "above 200 K high).", SEVERITY_SHORT)


@rule("criticality-class")
def criticality(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.criticality_class is None:
        return
    k = s.criticality_class
    sev = {1: "information", 2: "caution", 3: "warning", 4: "critical", 5: "critical"}[k]
    yield Finding("criticality-class", sev,
                  "Criticality " + s.criticality_reason.rstrip(".") + ".", CRITICALITY_SHORT)


@rule("runaway-probability")
def probability(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.probability is None or s.tmrad_at_mtsr_h is None:
        return
    sev = {"low": "information", "medium": "warning", "high": "critical"}[s.probability]
    yield Finding("runaway-probability", sev,
                  f"TMRad at the MTSR is {s.tmrad_at_mtsr_h:.1f} h: probability "
                  f"{s.probability} (above 24 h low, 8–24 h medium, below 8 h high).",
                  PROBABILITY_SHORT)


@rule("cooling-shortfall")
def cooling(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.cooling_sufficient is None:
        return
    if not s.cooling_sufficient:
        yield Finding("cooling-shortfall", "warning",
                      f"Mean heat release {s.release_rate_kW:.1f} kW exceeds the cooling "
                      f"capacity {s.cooling_capacity_kW:.1f} kW (U·A·(T_process − T_coolant)) "
                      f"by {-s.cooling_margin_kW:.1f} kW: the temperature will rise during "
                      "the feed.", "Heat balance of a cooled vessel, common practice")


@rule("gas-and-pressure")
def gas(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.scale is None or s.scale.gas_mol <= 0:
        return
    vol = s.gas_volume_normal_m3
    text = (f"The reaction releases {s.scale.gas_mol:.3g} mol of gas per batch "
            f"({vol:.3g} m³ at 0 °C and 1.01325 bar)")
    if s.pressure_at_mtsr_bar is not None:
        text += f", {s.pressure_at_mtsr_bar:.2f} bar in the closed gas space at the MTSR"
        if s.design_pressure_bar is not None:
            text += f" against a design pressure of {s.design_pressure_bar:.2f} bar"
    text += "; the vent and off-gas system must take it."
    sev = "critical" if s.pressure_exceeds_design else "caution"
    yield Finding("gas-and-pressure", sev, text,
                  "Ideal-gas law, p = p_initial + n R T / V (closed vessel, no venting)")


@rule("enthalpy-mismatch")
def mismatch(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or s.scale is None or s.scale.enthalpy_measured_kJ_mol is None:
        return
    m, c = s.scale.enthalpy_measured_kJ_mol, s.scale.enthalpy_computed_kJ_mol
    diff = abs(m - c)
    if diff > MISMATCH_ABS or diff > MISMATCH_REL * abs(m):
        yield Finding("enthalpy-mismatch", "warning",
                      f"Measured reaction enthalpy {m:.1f} kJ/mol differs from the computed "
                      f"{c:.1f} kJ/mol by {diff:.1f} kJ/mol ({diff / abs(m):.0%}; threshold "
                      f"{MISMATCH_REL:.0%} or {MISMATCH_ABS:.0f} kJ/mol); the measured value is "
                      "used for the safety figures. Check the species data and the "
                      "measurement (side reactions, phase changes, dilution heat).",
                      "Project threshold (common practice, no source)")


@rule("missing-safety-inputs")
def missing(subj) -> Iterator[Finding]:
    s = subj.safety
    if s is None or not s.not_assessed:
        return
    figures = ", ".join(fig for fig, _m in s.not_assessed)
    needs = "; ".join(s.missing_inputs) if s.missing_inputs else "see the list of figures"
    yield Finding("missing-safety-inputs", "warning",
                  f"Not assessed for lack of inputs: {figures}. Missing from the case file: "
                  f"{needs}.", "Completeness of the case file")


@rule("energetic-species")
def energetic(subj) -> Iterator[Finding]:
    """Species whose decomposition could release much energy, or that carry explosophores."""
    s = subj.safety
    if s is None:
        return
    for e in s.energetics:
        high = e.max_decomposition_J_per_g is not None and e.max_decomposition_J_per_g >= 500.0
        if not (high or e.explosophores):
            continue
        parts = []
        if high:
            parts.append(f"its most exothermic decomposition into simple products would release "
                         f"{e.max_decomposition_J_per_g:.0f} J/g, above the 500 J/g screening level")
        if e.explosophores:
            parts.append("it carries explosophore groups (" + ", ".join(e.explosophores) + ")")
        ob = (f"; oxygen balance {e.oxygen_balance_pct:.1f} %" if e.oxygen_balance_pct is not None
              else "")
        yield Finding("energetic-species", "warning",
                      f"{e.species}: " + " and ".join(parts) + ob +
                      f". Screening outcome: {e.screening_outcome} ({e.screening_reason}). "
                      "Measure the decomposition energy and onset (DSC) of the real material.",
                      "UN Manual of Tests and Criteria, Appendix 6 screening (from memory); "
                      "oxygen balance; maximum decomposition energy by linear programming")
