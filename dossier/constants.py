"""Physical constants and reference states: each defined here and nowhere else.

These are facts of nature and of the tables, not method settings (those live
in :mod:`dossier.engine.settings`).
"""
from __future__ import annotations

R = 8.314462618
"""Molar gas constant, J/(mol K) (CODATA 2018; exact, N_A times k)."""

T_REF = 298.15
"""Reference temperature of the thermochemical tables, K."""

P_STANDARD = 1.0e5
"""IUPAC standard pressure p° (1 bar), Pa."""

ZERO_CELSIUS = 273.15
"""0 °C in kelvin."""

SECONDS_PER_HOUR = 3600.0

__all__ = ["R", "T_REF", "P_STANDARD", "ZERO_CELSIUS", "SECONDS_PER_HOUR"]
