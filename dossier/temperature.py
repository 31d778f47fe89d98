"""A temperature in words for messages and findings: kelvin with degrees Celsius.

The one place where the assessment writes "398.1 K (125.0 °C)"; the pages
use the same conversion through :data:`dossier.constants.ZERO_CELSIUS`.
"""
from __future__ import annotations

from dossier.constants import ZERO_CELSIUS


def kelvin_celsius(T: float, digits: int = 1) -> str:
    """``398.15`` → ``"398.1 K (125.0 °C)"`` (``digits`` decimals in both)."""
    return f"{T:.{digits}f} K ({T - ZERO_CELSIUS:.{digits}f} °C)"


__all__ = ["kelvin_celsius"]
