"""Numbers, units and status codes as the pages write them: template filters over
the number policy (:mod:`dossier.number_policy`), which the terminal and the
assessment's own texts use as well.

``num`` (a table column at a fixed number of decimals), ``sig`` (significant
figures), ``unit`` (a figure with its unit: digits from its 95 % interval or
the policy's default, unit scaled), ``temp`` (kelvin with degrees Celsius),
``pct`` and ``words``.  Digits, separators, minus signs and units come from
the policy only; nothing here decides them.
"""
from __future__ import annotations

from dossier import number_policy as policy
from dossier.number_policy import MINUS, UNIT_SPACE as NBSP, GROUP as THIN, superscript

STATUS_WORDS = {
    "draft": "draft",
    "submitted": "submitted for review",
    "accepted": "accepted",
    "accepted-with-conditions": "accepted with conditions",
    "declined": "declined",
    "withdrawn": "withdrawn",
}


def num(x: float | None, digits: int = 2, group: bool = True) -> str:
    """A table cell at ``digits`` decimals (a column reads to one step), true minus,
    thousands grouped by the policy; "–" when missing."""
    return policy.fixed(x, digits, group)


def sig(x: float | None, figures: int = policy.DEFAULT_FIGURES) -> str:
    """A number to ``figures`` significant figures ("1.23 × 10⁹" for extremes)."""
    return policy.significant(x, figures)


def _no_digits(value, name: str) -> None:
    if isinstance(value, int) and not isinstance(value, bool):
        raise TypeError(f"{name}: the number policy sets the digits; pass an interval "
                        "(or figures=) instead of a count of decimals")


def unit(x: float | None, u: str, interval=None, figures: int | None = None) -> str:
    """'3.62 GJ', '442 bar' by the policy (digits from ``interval``, a 95 % interval, where
    one is known); 'not assessed' for a missing value."""
    _no_digits(interval, "unit()")
    return policy.quantity(x, u, interval, figures)


def temp(T: float | None, missing: str = policy.MISSING, interval=None) -> str:
    """'435.2 K (162.1 °C)' (0.1 K, or the digits of its 95 % interval); ``missing`` for
    an absent value."""
    _no_digits(missing, "temp()")
    return policy.temperature(T, interval, missing_text=missing)


def given(x: float | None, u: str, missing: str = "not given") -> str:
    """An input as the case gives it: '4 h', '0.8 m³' (no digits added)."""
    return policy.given(x, u, missing)


def pct(x: float | None, interval=None) -> str:
    """A fraction as a percentage: ``0.125`` → '12.5 %'."""
    _no_digits(interval, "pct()")
    return policy.percent(x, interval)


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


__all__ = ["MINUS", "NBSP", "STATUS_WORDS", "THIN", "given", "num", "pct", "sig", "sign_words",
           "superscript", "temp", "unit", "words"]
