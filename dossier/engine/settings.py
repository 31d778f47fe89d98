"""Method settings: every threshold, band and choice that changes a number or a finding.

This module is the only place that holds one.  The assessment receives a
:class:`MethodSettings` (normally :data:`DEFAULT`) and passes the values it
needs to the methods; the integrity record of every case digests
:meth:`MethodSettings.record`, so editing any value here changes every
signature's digest (a verdict is never shown as valid on other thresholds).

Provenance of each value is given beside it; "from memory" means recalled
from the published method and not checked against the published text.
"""
from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Any

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

    # -- lookups ---------------------------------------------------------------
    def severity_finding(self, level: str) -> str:
        return dict(self.severity_findings)[level]

    def probability_finding(self, level: str) -> str:
        return dict(self.probability_findings)[level]

    def criticality_finding(self, klass: int) -> str:
        return dict(self.criticality_findings)[klass]

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


#: The settings every assessment uses unless a caller passes others.
DEFAULT = MethodSettings()

__all__ = ["MethodSettings", "DEFAULT", "Bands"]
