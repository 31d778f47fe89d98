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
    equilibrium_model: str = ("stoichiometric feed; ideal gases; pure condensed phases; "
                              "ideal dilute solutes at 1 mol of reaction per kg of water")

    # -- thresholds of the findings (project thresholds: common practice, no source)
    #: Equilibrium conversion below which the reaction is called equilibrium-limited.
    equilibrium_limited_below: float = 0.95
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
