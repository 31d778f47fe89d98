"""Quantities written with an uncertainty: ``"1.90 ± 0.10 kJ/(kg*K)"``.

The number after ``±`` (or ``+/-``) is the half-width of a 95 % interval in the
same unit as the value, as the Active Thermochemical Tables state their own
uncertainties.  The half-width is converted to SI as the difference between
the converted upper end and the converted value, so that a temperature
written ``"60 ± 2 degC"`` has a half-width of 2 K and not 275 K.

Only the split is done here; :mod:`dossier.casefile.validate` converts both
ends with :func:`dossier.casefile.units.parse_quantity` and reports problems
at the key's line.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

_NUMBER = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"
_PLUS_MINUS = r"(?:±|\+/-|\+-)"
_WITH_UNCERTAINTY = re.compile(
    rf"^\s*(?:\(\s*(?P<a1>{_NUMBER})\s*{_PLUS_MINUS}\s*(?P<b1>{_NUMBER})\s*\)"
    rf"|(?P<a2>{_NUMBER})\s*{_PLUS_MINUS}\s*(?P<b2>{_NUMBER}))\s*(?P<unit>.*?)\s*$")
_MARK = re.compile(_PLUS_MINUS)


@dataclass(frozen=True)
class Split:
    """A value and the upper end of its 95 % interval, each as quantity text."""

    central: str      # "1.90 kJ/(kg*K)"
    upper: str        # "2.0 kJ/(kg*K)" (value + half-width, same unit)
    half_width: float  # the number after ±, in the written unit


def has_uncertainty(value: object) -> bool:
    """True when ``value`` is text with a ``±`` (or ``+/-``) in it."""
    return isinstance(value, str) and _MARK.search(value) is not None


def split_uncertainty(text: str) -> Split | None:
    """The value and the upper end of ``text`` = "A ± B unit" (or "(A ± B) unit"), or
    None when the text does not have that form."""
    m = _WITH_UNCERTAINTY.match(text)
    if m is None:
        return None
    a = m.group("a1") or m.group("a2")
    b = m.group("b1") or m.group("b2")
    unit = m.group("unit")
    half = float(b)
    upper = float(a) + half
    tail = f" {unit}" if unit else ""
    return Split(f"{a}{tail}", f"{upper!r}{tail}", half)


__all__ = ["Split", "has_uncertainty", "split_uncertainty"]
