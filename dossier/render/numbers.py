"""Numbers, units and status codes as the pages write them.

True minus signs, narrow no-break spaces between thousands and before units,
kelvin with degrees Celsius, and "not assessed" where a value is missing.
These are the template filters ``num``, ``sig``, ``unit``, ``temp``, ``pct``
and ``words``; the terminal and the assessment's own messages use
:func:`dossier.temperature.kelvin_celsius` instead.
"""
from __future__ import annotations

import math

from dossier.constants import ZERO_CELSIUS

MINUS = "\u2212"
NBSP = "\u00a0"
THIN = "\u202f"  # narrow no-break space: thousands separator and before units

STATUS_WORDS = {
    "draft": "draft",
    "submitted": "submitted for review",
    "accepted": "accepted",
    "accepted-with-conditions": "accepted with conditions",
    "declined": "declined",
    "withdrawn": "withdrawn",
}

_SUPERSCRIPTS = str.maketrans("0123456789-+", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺")


def _missing(x: float | None) -> bool:
    return x is None or (isinstance(x, float) and not math.isfinite(x))


def num(x: float | None, digits: int = 2, group: bool = True) -> str:
    """A number with a true minus sign and narrow spaces between thousands."""
    if _missing(x):
        return "–"
    text = f"{abs(x):,.{digits}f}" if group else f"{abs(x):.{digits}f}"
    text = text.replace(",", THIN)
    if x < 0 and float(text.replace(THIN, "")) != 0:
        text = MINUS + text
    return text


def superscript(text: str) -> str:
    """Digits and signs as Unicode superscripts: ``-3`` → ``⁻³``."""
    return text.translate(_SUPERSCRIPTS)


def sig(x: float | None, figures: int = 4) -> str:
    """A number to ``figures`` significant figures (plain or ×10ⁿ for very large/small)."""
    if _missing(x):
        return "–"
    if x == 0:
        return "0"
    exp = math.floor(math.log10(abs(x)))
    if -4 <= exp < 7:
        digits = max(0, figures - 1 - exp)
        return num(x, digits)
    mant = x / 10 ** exp
    return f"{num(mant, figures - 1)}{NBSP}×{NBSP}10{superscript(str(exp))}"


def unit(x: float | None, u: str, digits: int = 2) -> str:
    """'12.30 kJ/mol'; 'not assessed' for a missing value."""
    if _missing(x):
        return "not assessed"
    return f"{num(x, digits)}{NBSP}{u}"


def temp(T: float | None, digits: int = 2, missing: str = "not assessed") -> str:
    """'435.21 K (162.06 °C)'; ``missing`` for an absent value."""
    if _missing(T):
        return missing
    return (f"{num(T, digits, group=False)}{NBSP}K "
            f"({num(T - ZERO_CELSIUS, digits, group=False)}{NBSP}°C)")


def pct(x: float | None, digits: int = 1) -> str:
    """A fraction as a percentage: ``0.125`` → '12.5 %'."""
    if x is None:
        return "not assessed"
    return f"{num(x * 100.0, digits)}{NBSP}%"


def words(text: str | None) -> str:
    """A status or verdict code in plain words."""
    if not text:
        return ""
    return STATUS_WORDS.get(str(text), str(text).replace("-", " "))


def sign_words(x: float | None, positive: str, negative: str, zero: str = "zero") -> str:
    """The words for the sign of ``x`` ('not assessed' when it is missing)."""
    if x is None:
        return "not assessed"
    return positive if x > 0 else negative if x < 0 else zero


__all__ = ["MINUS", "NBSP", "STATUS_WORDS", "THIN", "num", "pct", "sig", "sign_words",
           "superscript", "temp", "unit", "words"]
