"""A temperature in words for messages and findings: kelvin with degrees Celsius.

The one place where the assessment writes "398.1 K (125.0 °C)", by the number
policy (:func:`dossier.number_policy.temperature`): 0.1 K, or the digits a
95 % interval fixes.
"""
from __future__ import annotations

from dossier.number_policy import temperature


def kelvin_celsius(T: float, digits: int | None = None, interval=None) -> str:
    """``398.15`` → ``"398.2 K (125.0 °C)"``: to 0.1 K, to the digits ``interval`` (a 95 %
    interval) fixes, or to ``digits`` decimals where a caller asks for them (a table)."""
    return temperature(T, interval=interval, decimals=digits)


__all__ = ["kelvin_celsius"]
