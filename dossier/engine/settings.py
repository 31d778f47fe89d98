"""Method settings: every threshold, band and choice that changes a number or a finding.

This module is the only place that holds one.  The assessment receives a
:class:`MethodSettings` (normally :data:`DEFAULT`) and passes the values it
needs to the methods; the integrity record of every case digests
:meth:`MethodSettings.record`, so editing any value here changes every
signature's digest (a verdict is never shown as valid on other thresholds).

Provenance of each value is given beside it, and its full citation in
:data:`DEFAULT_SOURCES` (printed on the methods page); "from memory" means
recalled from the published method and not checked against the published text.
A review board may change the values of :data:`POLICY_KEYS` by its policy file
(:mod:`dossier.review.policy`), naming its own source for each: the result is
another ``MethodSettings`` whose ``policy`` and ``policy_sources`` say so.
"""
from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any, Mapping

from dossier.constants import P_STANDARD, R, T_REF, ZERO_CELSIUS

#: A three-level scale: (level, from, to) in the scale's unit.
Bands = tuple[tuple[str, float, float], ...]


@dataclass(frozen=True)
class MethodSettings:
    """Everything the methods compare against, in SI units unless the name says otherwise."""

    # -- the temperature grid of the profile tables --------------------------
    #: Step widths tried in turn (K) until the window needs at most grid_max_rows rows.
    grid_steps_K: tuple[float, ...] = (1.0, 2.0, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0,
                                       200.0, 250.0, 500.0, 1000.0)
    grid_min_step_K: float = 5.0
    grid_max_rows: int = 41
    #: Crossovers are searched over the window widened to the data range, within these limits.
    crossover_scan_K: tuple[float, float] = (200.0, 3000.0)
    #: Points across the window on which "favourable everywhere / nowhere / partly" is judged.
    favourable_points: int = 401

    # -- equilibrium (the model; described, not tunable yet) -----------------
    equilibrium_model: str = ("stoichiometric feed plus inerts; ideal gases; pure solids; "
                              "the liquids of the reaction and the liquid inerts as one "
                              "solution (ideal unless the case asks for UNIFAC), a single "
                              "liquid as a pure phase; ideal dilute solutes at 1 mol of "
                              "reaction per kg of water (liquids then pure)")
    #: Points along the extent on which the reaction quotient is scanned when an
    #: activity model is used (to see whether it predicts a split into two liquids).
    #: Project choice: with 32 points a split region wider than about 3 % of the
    #: extent is seen; each point costs one evaluation of the activity model.
    activity_scan_points: int = 32
    #: Temperatures (K) of the data the UNIFAC parameters were fitted to, roughly;
    #: outside them the activity coefficients are extrapolated and the dossier says so.
    #: From memory, not checked against the published text: the original UNIFAC
    #: parameters were fitted to vapour-liquid equilibria of about 275 to 425 K
    #: (Fredenslund, Gmehling and Rasmussen, "Vapor-Liquid Equilibria Using UNIFAC",
    #: Elsevier 1977).
    unifac_range_K: tuple[float, float] = (275.0, 425.0)

    # -- thresholds of the findings (project thresholds: common practice, no source)
    #: Equilibrium conversion below which the reaction is called equilibrium-limited:
    #: the finding fires whenever the equilibrium leaves more than 0.5 % of the basis
    #: unconverted somewhere in the window.  Project choice, no source: a shortfall of
    #: 0.5 % stands clear of the precision the dossier prints conversions to (0.1 %)
    #: and far above the solver's (1e-12); smaller shortfalls are shown in the
    #: profile but not raised as a finding.
    equilibrium_limited_below: float = 0.995
    #: Measured and computed reaction enthalpy disagree when they differ by more than
    #: this fraction of the measured value or by more than the absolute amount.
    enthalpy_mismatch_fraction: float = 0.20
    enthalpy_mismatch_kJ_mol: float = 30.0
    #: Maximum decomposition energy from which a species is flagged as energetic (J/g):
    #: the UN Appendix 6 screening level.
    energetic_species_J_per_g: float = 500.0

    # -- thermal safety (Stoessel, Thermal Safety of Chemical Processes, 2008; from memory)
    #: Severity on the adiabatic temperature rise, K. Boundaries count as "medium".
    severity_bands_K: Bands = (("low", -math.inf, 50.0), ("medium", 50.0, 200.0),
                               ("high", 200.0, math.inf))
    #: Probability on TMRad at the MTSR, h. Boundaries count as "medium".
    probability_bands_h: Bands = (("high", 0.0, 8.0), ("medium", 8.0, 24.0),
                                  ("low", 24.0, math.inf))
    #: TMRad that defines TD24, s (24 h).
    td24_time_s: float = 24.0 * 3600.0
    #: A given TD24 further than this from TD24 from the kinetics gets a note, K.
    td24_agreement_K: float = 5.0
    #: Normal conditions for gas volumes: 0 °C and 1 atm.
    gas_normal_T_K: float = ZERO_CELSIUS
    gas_normal_p_Pa: float = 101325.0
    #: Finding severity given to each level and class.
    severity_findings: tuple[tuple[str, str], ...] = (
        ("low", "information"), ("medium", "warning"), ("high", "critical"))
    probability_findings: tuple[tuple[str, str], ...] = (
        ("low", "information"), ("medium", "warning"), ("high", "critical"))
    criticality_findings: tuple[tuple[int, str], ...] = (
        (1, "information"), (2, "caution"), (3, "warning"), (4, "critical"), (5, "critical"))
    #: Finding severity of the rules that compare a figure with a limit of the plant or
    #: of the assessment: the MTSR at or above the MTT, and the process temperature
    #: outside the window.  Our choice: reaching the MTT is what makes class 3 or worse
    #: a "warning" in criticality_findings; a window that misses the process temperature
    #: leaves its figures unchecked, a "caution"; a figure whose 95 % interval reaches
    #: across a class boundary or a design limit ("borderline"), a "warning", as the
    #: worse side may hold.
    limit_findings: tuple[tuple[str, str], ...] = (
        ("mtsr-above-mtt", "warning"), ("process-outside-window", "caution"),
        ("borderline", "warning"))
    #: Severity on the pressure at the MTSR, on the ratio of the highest pressure in the
    #: closed gas space (evolved gas plus the vapour of the liquids) to the design
    #: pressure.  Our choice, no published scale: at or above the design pressure the
    #: vessel is over-pressured ("high"); from 90 % of it, inside the usual margin
    #: between operating pressure and relief set pressure ("medium"; a 10 % margin is
    #: common practice, no source).  The severity of the case is the higher of this one
    #: and the severity on ΔT_ad.
    pressure_severity_bands: Bands = (("low", -math.inf, 0.9), ("medium", 0.9, 1.0),
                                      ("high", 1.0, math.inf))

    # -- phase boundaries at the case pressure (engine/phases.py) -------------
    #: Pressure the normal melting and boiling points refer to: 1 atm (definition).
    normal_boiling_pressure_Pa: float = 101325.0
    #: Trouton's rule, ΔvapS at the normal boiling point, J/(mol K): for a species with a
    #: normal boiling point but no vapour-pressure curve, the boiling point at the case
    #: pressure is estimated with it (Clausius-Clapeyron).  About 85-88 J/(mol K) for
    #: non-associated liquids (common practice; the textbook value, e.g. Atkins'
    #: Physical Chemistry, from memory); larger for hydrogen-bonded liquids.
    trouton_entropy_J_molK: float = 88.0
    #: How far beyond its published range a vapour-pressure curve is followed to find a
    #: boiling point, as a fraction of the range's end temperatures (project choice; the
    #: text then says "extrapolated").  Beyond that the boiling point is not known.
    vapour_pressure_extrapolation: float = 0.1

    # -- energetic screening (UN Manual of Tests and Criteria, Appendix 6) ---
    un_energy_J_per_g: float = 500.0
    un_onset_K: float = 500.0 + ZERO_CELSIUS
    un_oxygen_balance_pct: float = -200.0
    #: Simple products of the maximum-decomposition-energy estimate: (name, library
    #: label, phase).  Water as vapour: the gas a runaway actually makes.
    decomposition_products: tuple[tuple[str, str, str], ...] = (
        ("CO2", "CO2", "g"), ("H2O", "H2O", "g"), ("CO", "CO", "g"), ("N2", "N2", "g"),
        ("H2", "H2", "g"), ("O2", "O2", "g"), ("C", "C", "s"), ("HCl", "HCl", "g"),
        ("HF", "HF", "g"), ("SO2", "SO2", "g"), ("Cl2", "Cl2", "g"),
    )

    # -- estimates for species without data (engine/estimate.py) -------------
    #: Standard uncertainties of Benson group additivity where every group is
    #: tabulated: ΔfH° (J/mol), S° and Cp° (J/(mol K)); 1 kcal/mol and 1 cal/(mol K).
    #: From memory, not checked against the text: the accuracy usually quoted for the
    #: method (Benson, Thermochemical Kinetics, 2nd ed., Wiley 1976); our cross-check
    #: against the CRC Handbook (tests/unit/engine/test_estimate.py) holds it.
    estimate_benson_uncertainty: tuple[tuple[str, float], ...] = (
        ("hf", 4184.0), ("s", 4.184), ("cp", 4.184))
    #: Benson's corrections for interactions beyond nearest neighbours that pgradd
    #: tabulates with an enthalpy only: (correction, S° and Cp° taken for it, J/(mol K)).
    #: From memory: Benson's tables give these as enthalpy corrections alone.
    estimate_benson_enthalpy_only: tuple[tuple[str, float], ...] = (
        ("AlkaneGauche", 0.0), ("AlkeneGauche", 0.0), ("Ether oxygen gauche", 0.0),
        ("Ditertiary ether", 0.0), ("tbCis", 0.0), ("Double tbCis", 0.0), ("Double Cis", 0.0))
    #: Published errors of the Joback method, (property, average absolute error, its
    #: standard deviation), SI units: ΔfH° 2.2 and 2.0 kcal/mol (370 compounds), ΔfG°
    #: 2.0 and 4.37 kcal/mol (328), Tb 12.91 and 17.85 K (438), Tm 22.6 and 24.68 K
    #: (388), Tc 4.76 and 6.94 K (409), Pc 2.06 and 3.2 bar (392): Joback and Reid,
    #: Chem. Eng. Comm. 57 (1987) 233, as quoted in the documentation of
    #: thermo.group_contribution.joback.  The standard uncertainty used is the root
    #: mean square of the two ("mean abs" and "sd" below).
    estimate_joback_errors: tuple[tuple[str, float], ...] = (
        ("hf mean abs", 2.2 * 4184.0), ("hf sd", 2.0 * 4184.0),
        ("gf mean abs", 2.0 * 4184.0), ("gf sd", 4.37 * 4184.0),
        ("tb mean abs", 12.91), ("tb sd", 17.85), ("tm mean abs", 22.6), ("tm sd", 24.68),
        ("tc mean abs", 4.76), ("tc sd", 6.94), ("pc mean abs", 2.06e5), ("pc sd", 3.2e5))
    #: Relative standard uncertainty of Joback's ideal-gas Cp.  Joback and Reid report
    #: no overall error for it; project choice, held by our cross-check (worst 9 %,
    #: dichloromethane).
    estimate_joback_cp_relative: float = 0.05
    #: Smallest ring Joback is used for: it has no ring-strain terms (our cross-check:
    #: oxirane and cyclopropane come out 71 and 65 kJ/mol too low).
    estimate_joback_min_ring: int = 5
    #: Structures Joback's ΔfH°, ΔfG° and Cp are not used for: (what, SMARTS).  Its
    #: groups treat the N-C=O of an amide as an amine and a ketone; our cross-check
    #: against the CRC Handbook and the NIST WebBook: acetamide +75, N-methylacetamide
    #: +84, N,N-dimethylacetamide +57, caprolactam +41, N-methylpyrrolidone +66,
    #: acetanilide +98 and urea +137 kJ/mol in ΔfH°.
    estimate_joback_excluded: tuple[tuple[str, str], ...] = (
        ("amides, lactams, ureas, carbamates and imides (N-C=O)", "[#7X3][CX3]=[OX1]"),)
    #: Where Joback's Cp polynomial may be used, K: fitted to data of 298-1000 K (as
    #: quoted in thermo's documentation of the method).
    estimate_joback_range_K: tuple[float, float] = (298.0, 1000.0)
    #: Relative standard uncertainty of the Rowlinson–Poling liquid Cp, (other liquids,
    #: hydrogen-bonding liquids).  Poling et al., The Properties of Gases and Liquids,
    #: 5th ed. (2001): average error 2.5 % for 194 of 212 substances, above 10 % for the
    #: other 18, mostly associating (as quoted in chemicals' documentation); 0.5 for
    #: hydrogen-bonding liquids is our choice (cross-check: ethylene glycol +61 %).
    estimate_liquid_cp_relative: tuple[float, float] = (0.025, 0.5)
    #: Highest reduced temperature T/Tc (at 298.15 K and at the boiling point) at which
    #: the liquid correlations (Lee–Kesler, Rowlinson–Poling) are used: both diverge at
    #: the critical point.  Project choice, no source.
    estimate_liquid_max_reduced_T: float = 0.85
    #: Largest molecule estimated, in atoms besides hydrogen (bounds the symmetry search).
    estimate_max_heavy_atoms: int = 60
    #: A case's own values and the estimate asked for beside them disagree when they
    #: differ by more than this many standard uncertainties of the estimate.  Project
    #: choice: about 95 % coverage if the estimate's errors were normal.
    estimate_disagreement_u: float = 2.0

    # -- uncertainty (engine/uncertainty.py) ---------------------------------
    #: Draws of the Monte Carlo propagation of the stated uncertainties.  Project
    #: choice: with 4,000 draws the ends of a 95 % interval are found to about 2 % of
    #: its half-width (the standard error of a 2.5th percentile of a normal sample,
    #: sqrt(p(1-p)/n)/φ(z), is 0.05 standard deviations at n = 4,000).
    uncertainty_samples: int = 4000
    #: Seed of the draws: fixed, so that the same case gives the same intervals and the
    #: same pages on every build.
    uncertainty_seed: int = 20261202
    #: Coverage of the intervals printed, and the meaning of every stated uncertainty
    #: (the half-width of an interval of this coverage).
    uncertainty_coverage: float = 0.95

    # -- the policy in force ----------------------------------------------------
    #: Name of the policy these values are: the published defaults, or the board's
    #: policy file that changed some of them (review/policy.py).
    policy: str = "published defaults (dossier.engine.settings)"
    #: (setting, the board's source) for every value the board's policy changed.
    policy_sources: tuple[tuple[str, str], ...] = ()

    # -- lookups ---------------------------------------------------------------
    def severity_finding(self, level: str) -> str:
        return dict(self.severity_findings)[level]

    def probability_finding(self, level: str) -> str:
        return dict(self.probability_findings)[level]

    def criticality_finding(self, klass: int) -> str:
        return dict(self.criticality_findings)[klass]

    def limit_finding(self, rule: str) -> str:
        """The severity of a limit rule; a policy that does not name the rule keeps the
        published default for it."""
        return dict(self.limit_findings).get(rule) or dict(DEFAULT.limit_findings)[rule]

    def source_of(self, name: str) -> str:
        """The citation of the value of setting ``name`` in force: the board's source
        where its policy changed it, else the published default's."""
        board = dict(self.policy_sources)
        if name in board:
            return f"{self.policy}: {board[name]}"
        return DEFAULT_SOURCES.get(name, "")

    def record(self) -> dict[str, Any]:
        """Every setting as plain JSON values (infinite band limits as null), with the
        physical constants the numbers rest on: what the integrity record digests and
        the methods page lists."""
        out: dict[str, Any] = {
            "standard_pressure_Pa": P_STANDARD,
            "reference_temperature_K": T_REF,
            "gas_constant_J_per_molK": R,
        }
        for f in dataclasses.fields(self):
            out[f.name] = _plain(getattr(self, f.name))
        return out


def _plain(value: Any) -> Any:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, tuple):
        return [_plain(v) for v in value]
    return value


_STOESSEL = ("F. Stoessel, Thermal Safety of Chemical Processes: Risk Assessment and "
             "Process Design, Wiley-VCH, Weinheim, 2008 (ISBN 978-3-527-31712-7)")
_STOESSEL_1993 = ("F. Stoessel, 'What is your thermal risk?', Chemical Engineering Progress "
                  "89 (10), 1993, pp. 68-75")
_STOESSEL_CLASSES = ("F. Stoessel, 'Planning protection measures against runaway reactions "
                     "using criticality classes', Process Safety and Environmental Protection "
                     "87 (2009) 105-112 (also IChemE Symposium Series)")
_UN_APP6 = ("United Nations, Recommendations on the Transport of Dangerous Goods, Manual of "
            "Tests and Criteria, Appendix 6 'Screening procedures', section 3 (substances that "
            "may have explosive properties), e.g. 7th revised edition, New York and Geneva "
            "2019 (ST/SG/AC.10/11/Rev.7)")
_UN_CHECKED = ("the criterion's wording checked against its quotation in the New Zealand "
               "Environmental Risk Management Authority's 'User Guide to Thresholds and "
               "Classification' (p. 29); the paragraph number from memory")
_OURS = "our choice, no published source"

#: The citation of every setting's published default: author, title, publisher or
#: journal, year, and the section where it can be given.  "From memory" marks what
#: could not be checked against the published text while writing this.
DEFAULT_SOURCES: Mapping[str, str] = MappingProxyType({
    "grid_steps_K": f"{_OURS}: round steps, so that the profile reads easily",
    "grid_min_step_K": f"{_OURS}: the finest step printed",
    "grid_max_rows": f"{_OURS}: a table that fits a printed page",
    "crossover_scan_K": f"{_OURS}: the span of the tabulated species data",
    "favourable_points": f"{_OURS}: finer than the profile grid",
    "equilibrium_model": "the model as built; described, not a threshold",
    "activity_scan_points": f"{_OURS}: a split wider than about 3 % of the extent is seen",
    "unifac_range_K": ("A. Fredenslund, J. Gmehling and P. Rasmussen, Vapor-Liquid Equilibria "
                       "Using UNIFAC, Elsevier, Amsterdam, 1977: the temperatures of the data "
                       "the parameters were fitted to, about 275-425 K (from memory)"),
    "equilibrium_limited_below": (f"{_OURS}: a shortfall of 0.5 % stands clear of the "
                                  "precision conversions are printed to (0.1 %)"),
    "enthalpy_mismatch_fraction": f"{_OURS} (common practice for agreement of calorimetry "
                                  "with tabulated data, no source)",
    "enthalpy_mismatch_kJ_mol": f"{_OURS} (common practice, no source)",
    "energetic_species_J_per_g": (f"{_UN_APP6}, paragraph 3.3 (c): an exothermic decomposition "
                                  f"energy below 500 J/g screens a substance out; {_UN_CHECKED}"),
    "severity_bands_K": (f"{_STOESSEL}, chapter 3 (assessment of thermal risks), the "
                         "three-level severity scale on the adiabatic temperature rise: below "
                         "50 K (and no pressure) low, 50-200 K medium, above 200 K high; first "
                         f"given in {_STOESSEL_1993}. From memory: the table and page numbers "
                         "were not checked"),
    "probability_bands_h": (f"{_STOESSEL}, chapter 3, the three-level probability scale on "
                            "TMRad at the MTSR: above 24 h low, 8-24 h medium, below 8 h high "
                            f"(condensed from the six-level scale of {_STOESSEL_1993}). From "
                            "memory: the table and page numbers were not checked"),
    "td24_time_s": (f"{_STOESSEL}, chapter 3: TD24, the temperature at which TMRad is 24 h, "
                    f"is the decomposition level of the criticality classes ({_STOESSEL_CLASSES}); "
                    "from memory"),
    "td24_agreement_K": f"{_OURS}: about the spread of TD24 from repeated DSC runs",
    "gas_normal_T_K": "normal conditions 0 °C and 1 atm (DIN 1343; from memory), common practice",
    "gas_normal_p_Pa": "normal conditions 0 °C and 1 atm (DIN 1343; from memory), common practice",
    "severity_findings": f"{_OURS}: each level one step of the findings' scale",
    "probability_findings": f"{_OURS}: each level one step of the findings' scale",
    "criticality_findings": (f"{_OURS}, after the measures {_STOESSEL_CLASSES} asks of each "
                             "class (none for 1; 3 and up need the technical limit or more; "
                             "from memory)"),
    "limit_findings": (f"{_OURS}: reaching the MTT is a warning as criticality class 3 is; a "
                       "window that misses the process temperature is a caution; a figure "
                       "whose 95 % interval crosses a boundary or limit is a warning"),
    "pressure_severity_bands": (f"{_OURS}: at or above the design pressure high, from 90 % of "
                                "it medium (a 10 % margin below the relief set pressure is "
                                "common practice, no source); Stoessel's 'low' severity also "
                                f"asks for no pressure build-up ({_STOESSEL}, chapter 3; from "
                                "memory)"),
    "normal_boiling_pressure_Pa": "the definition of the normal boiling point (1 atm)",
    "trouton_entropy_J_molK": ("F. Trouton, Philosophical Magazine 18 (1884) 54-57: about "
                               "85-88 J/(mol K) for non-associated liquids (value as in "
                               "textbooks, e.g. Atkins' Physical Chemistry; from memory)"),
    "vapour_pressure_extrapolation": f"{_OURS}: the text then says 'extrapolated'",
    "un_energy_J_per_g": (f"{_UN_APP6}, paragraph 3.3 (c): exothermic decomposition energy "
                          f"below 500 J/g; {_UN_CHECKED}"),
    "un_onset_K": (f"{_UN_APP6}, paragraph 3.3 (c): with the onset of exothermic "
                   f"decomposition below 500 °C; {_UN_CHECKED}"),
    "un_oxygen_balance_pct": (f"{_UN_APP6}, paragraph 3.3 (b): oxygen balance below -200, "
                              "OB = -1600 (2x + y/2 - z) / M for CxHyOz; " + _UN_CHECKED),
    "decomposition_products": (f"{_OURS}: the simple products a runaway makes, water as "
                               "vapour"),
    "estimate_benson_uncertainty": ("S. W. Benson, Thermochemical Kinetics, 2nd ed., Wiley, "
                                    "New York, 1976: the accuracy usually quoted, 1 kcal/mol "
                                    "and 1 cal/(mol K) (from memory; held by our cross-check "
                                    "against the CRC Handbook)"),
    "estimate_benson_enthalpy_only": ("S. W. Benson, Thermochemical Kinetics, 2nd ed., Wiley, "
                                      "1976: corrections tabulated as enthalpies alone (from "
                                      "memory)"),
    "estimate_joback_errors": ("K. G. Joback and R. C. Reid, 'Estimation of pure-component "
                               "properties from group-contributions', Chemical Engineering "
                               "Communications 57 (1987) 233-243, as quoted in the "
                               "documentation of thermo.group_contribution.joback"),
    "estimate_joback_cp_relative": f"{_OURS}: Joback and Reid give no overall error for Cp",
    "estimate_joback_min_ring": f"{_OURS}: Joback has no ring-strain terms (our cross-check)",
    "estimate_joback_excluded": f"{_OURS}: our cross-check against the CRC Handbook",
    "estimate_joback_range_K": ("Joback and Reid (1987): Cp fitted to 298-1000 K, as quoted in "
                                "thermo's documentation"),
    "estimate_liquid_cp_relative": ("B. E. Poling, J. M. Prausnitz and J. P. O'Connell, The "
                                    "Properties of Gases and Liquids, 5th ed., McGraw-Hill, "
                                    "2001, as quoted in chemicals' documentation; 0.5 for "
                                    "hydrogen-bonding liquids our choice"),
    "estimate_liquid_max_reduced_T": f"{_OURS}: the correlations diverge at the critical point",
    "estimate_max_heavy_atoms": f"{_OURS}: bounds the symmetry search",
    "estimate_disagreement_u": f"{_OURS}: about 95 % coverage for normal errors",
    "uncertainty_samples": (f"{_OURS}: the ends of a 95 % interval to about 2 % of its "
                            "half-width (standard error of a percentile of a normal sample)"),
    "uncertainty_seed": f"{_OURS}: fixed, so that builds are repeatable",
    "uncertainty_coverage": ("95 %, as the Active Thermochemical Tables state their "
                             "uncertainties (B. Ruscic et al., J. Phys. Chem. A 108 (2004) "
                             "9979-9997; from memory) and as ISO/IEC Guide 98-3 (GUM) "
                             "expanded uncertainties are usually given"),
    "policy": "the name of the policy in force",
    "policy_sources": "the board's source for each value its policy changed",
})

#: The settings a board's policy file may change: the thresholds and bands of the
#: findings.  The method settings (grids, estimates, models) are not a board's choice.
POLICY_KEYS: tuple[str, ...] = (
    "equilibrium_limited_below", "enthalpy_mismatch_fraction", "enthalpy_mismatch_kJ_mol",
    "energetic_species_J_per_g", "severity_bands_K", "probability_bands_h",
    "pressure_severity_bands", "td24_time_s", "td24_agreement_K", "severity_findings",
    "probability_findings", "criticality_findings", "limit_findings", "un_energy_J_per_g",
    "un_onset_K", "un_oxygen_balance_pct")

#: The settings every assessment uses unless a caller passes others.
DEFAULT = MethodSettings()

__all__ = ["MethodSettings", "DEFAULT", "DEFAULT_SOURCES", "POLICY_KEYS", "Bands"]
