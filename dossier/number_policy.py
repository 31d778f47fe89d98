"""The number policy: how every figure is written for people.

One policy for the terminal, the pages, the packets and the texts of findings
(which the assessment writes and every surface shows), so a figure reads the
same wherever it appears.  Pure functions of numbers to text; no I/O.

* **Digits follow the uncertainty** where one is known: the 95 % half-width
  is rounded to one significant digit (two when its first digit is 1 or 2)
  and the figure and its interval are rounded to the same decimal place,
  never finer than the default below (an uncertainty takes digits away)
  (GUM, JCGM 100:2008, 7.2.6: an uncertainty "to at most two significant
  digits"; the 1-or-2 rule is common practice, no source).
* **Stated defaults** where there is none: temperatures and temperature
  differences to 0.1 K, molar reaction and formation properties to
  0.1 kJ/mol and 0.1 J/(mol·K), percentages to 0.1 %; every other figure to
  :data:`DEFAULT_FIGURES` significant figures (our choice: the inputs of a
  screening, a batch size or a heat capacity, are rarely known better than
  to 1 %).
* **Units scaled** as an engineer expects: mol → kmol, kJ → MJ → GJ → TJ,
  kW → MW, kJ/K → MJ/K, chosen after rounding so that 999.96 kJ becomes
  1.00 MJ, never "1000 kJ".  m³, bar, h, J/g and kJ/kg keep their unit and
  their significant figures.
* **One thousands separator**, the narrow no-break space U+202F, between
  groups of three digits of a whole part of five or more digits (SI
  Brochure, 9th ed. 2019, 5.4.4: groups of three separated by a thin space,
  a four-digit number customarily not split; decimals are not grouped, our
  choice, as they never run long here); the minus sign U+2212; a no-break
  space U+00A0 between a number and its unit.
* **No e-notation**: magnitudes of a million and more, or below 0.001, are
  written "1.23 × 10⁹".
* **Temperatures** as kelvin with degrees Celsius, "366.5 K (93.4 °C)".
* A missing figure (None, NaN) is "not assessed"; ±infinity is "∞"/"−∞".
"""
from __future__ import annotations

import math
from decimal import ROUND_HALF_UP, Decimal

from dossier.constants import ZERO_CELSIUS

MINUS = "\u2212"
GROUP = "\u202f"        # narrow no-break space: between groups of three digits
UNIT_SPACE = "\u00a0"   # no-break space: between a number and its unit
TIMES = "×"
MISSING = "not assessed"

#: Significant figures of a figure with no stated uncertainty and no fixed resolution.
DEFAULT_FIGURES = 3

#: Fixed resolution (decimals) of the units whose figures are read to a fixed step.
FIXED_DECIMALS: dict[str, int] = {
    "K": 1, "°C": 1, "kJ/mol": 1, "J/(mol·K)": 1, "%": 1,
}

#: Units whose figures keep their units digit however wide the interval.
KEEP_UNITS_DIGIT = frozenset({"K", "°C"})

#: Unit families scaled by factors of 1000, smallest unit first.
SCALES: dict[str, tuple[str, ...]] = {
    "mol": ("mol", "kmol"),
    "kJ": ("kJ", "MJ", "GJ", "TJ"),
    "J": ("J", "kJ", "MJ", "GJ"),
    "kW": ("kW", "MW", "GW"),
    "W": ("W", "kW", "MW"),
    "kJ/K": ("kJ/K", "MJ/K", "GJ/K"),
}

#: Plain digits from here to :data:`PLAIN_BELOW` (magnitudes); "× 10ⁿ" outside.
PLAIN_FROM = 1e-3
PLAIN_BELOW = 1e6
#: An interval narrower than this share of its ends has no width (rounding noise).
NO_WIDTH = 1e-9
#: Group digits in threes from this many digits on (either side of the point).
GROUP_FROM = 5

_SUPERSCRIPTS = str.maketrans("0123456789-+", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺")


def missing(x: float | None) -> bool:
    """True for None and NaN (a figure that was not assessed)."""
    return x is None or (isinstance(x, float) and math.isnan(x))


def superscript(text: str) -> str:
    """Digits and signs as Unicode superscripts: ``-3`` → ``⁻³``."""
    return text.translate(_SUPERSCRIPTS)


def _group(digits: str) -> str:
    """'3621787' → '3 621 787' (left to right groups from the end)."""
    if len(digits) < GROUP_FROM:
        return digits
    head = len(digits) % 3 or 3
    return GROUP.join([digits[:head]] + [digits[i:i + 3] for i in range(head, len(digits), 3)])


def _rounded(x: float, decimals: int) -> Decimal:
    """``x`` rounded at ``decimals`` (negative: tens, hundreds ...), halves away from zero,
    from its shortest decimal form, so 2.675 → 2.68 and 366.5 → 367 as written (common
    practice, no source)."""
    return Decimal(repr(float(x))).quantize(Decimal(1).scaleb(-decimals), ROUND_HALF_UP)


def _infinite(x: float) -> str:
    return "∞" if x > 0 else MINUS + "∞"


def fixed(x: float | None, decimals: int, group: bool = True) -> str:
    """``x`` with ``decimals`` decimals (negative: rounded to tens, hundreds ...), a true
    minus, digits grouped; "–" when missing.  No e-notation at any size."""
    if missing(x):
        return "–"
    if math.isinf(x):
        return _infinite(x)
    d = _rounded(x, decimals)
    if d == 0:
        d = abs(d)  # no "−0.0"
    text = f"{abs(d):f}"
    whole, _, frac = text.partition(".")
    if decimals < 0:
        frac = ""
    if group:
        whole = _group(whole)
    return (MINUS if d < 0 else "") + whole + ("." + frac if frac else "")


def exponent(x: float) -> int:
    """The decimal exponent of ``x`` (``x`` finite, not zero)."""
    return math.floor(math.log10(abs(x)))


def figures_decimals(x: float, figures: int) -> int:
    """The decimals that give ``x`` ``figures`` significant figures, after rounding (so
    999.96 to three figures is 1000, decimals -1, not 999.96 → "1000." with decimals 0)."""
    if x == 0 or not math.isfinite(x):
        return 0  # zero is written "0"
    decimals = figures - 1 - exponent(x)
    r = float(_rounded(x, decimals))
    if r != 0 and exponent(r) != exponent(x):
        decimals = figures - 1 - exponent(r)
    return decimals


def uncertainty_decimals(half_width: float | None) -> int | None:
    """The decimal place a 95 % half-width fixes: one significant digit, two when the first
    is 1 or 2 (0.034 → 3 decimals, 0.15 → 2, 7.85 → 0, 18 600 → -3); None without one."""
    if half_width is None or not math.isfinite(half_width) or half_width <= 0:
        return None
    e = exponent(half_width)
    lead = float(_rounded(half_width / 10 ** e, 0))
    if lead >= 10:
        e, lead = e + 1, 1.0
    return -(e - 1) if lead < 3 else -e


def half_width(interval: tuple[float | None, float | None] | None) -> float | None:
    """Half the width of a 95 % interval; None when it is missing or unbounded."""
    if not interval:
        return None
    lo, hi = interval
    if lo is None or hi is None or missing(lo) or missing(hi):
        return None
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return None
    if hi - lo <= NO_WIDTH * max(abs(lo), abs(hi), 1.0):
        return None  # no width but rounding noise: nothing uncertain was stated
    return (hi - lo) / 2.0


def _special(x: float | None) -> str | None:
    """The text of a value that has no digits to round: missing, infinite or zero."""
    if missing(x):
        return "–"
    if math.isinf(x):
        return _infinite(x)
    if x == 0:
        return "0"
    return None


def significant(x: float | None, figures: int = DEFAULT_FIGURES) -> str:
    """``x`` to ``figures`` significant figures: plain digits between 0.001 and a million,
    "1.23 × 10⁹" outside (never e-notation); "0" for zero."""
    special = _special(x)
    if special is not None:
        return special
    decimals = figures_decimals(x, figures)
    r = float(_rounded(x, decimals))
    if PLAIN_FROM <= abs(r) < PLAIN_BELOW:
        return fixed(x, decimals)
    e = exponent(r)
    mantissa = x / 10 ** e
    m_dec = figures_decimals(mantissa, figures)
    if abs(float(_rounded(mantissa, m_dec))) >= 10:  # 9.999 → 10.0: one power up
        e += 1
        mantissa = x / 10 ** e
        m_dec = figures_decimals(mantissa, figures)
    return f"{fixed(mantissa, m_dec)}{UNIT_SPACE}{TIMES}{UNIT_SPACE}10{superscript(str(e))}"


def decimals_for(x: float, unit: str, interval=None, figures: int | None = None) -> int:
    """The decimals the policy gives ``x`` in ``unit``: from its 95 % interval, else the
    unit's fixed resolution, else ``figures`` (default :data:`DEFAULT_FIGURES`)
    significant figures."""
    if figures is None and unit in FIXED_DECIMALS:
        default = FIXED_DECIMALS[unit]
    else:
        default = figures_decimals(x, figures or DEFAULT_FIGURES)
    from_u = uncertainty_decimals(half_width(interval))
    if from_u is None:
        return default
    # an uncertainty takes digits away, never adds them beyond the default; a temperature
    # keeps its units digit (so its °C reads the same as its K)
    return max(min(from_u, default), 0) if unit in KEEP_UNITS_DIGIT else min(from_u, default)


def scale(x: float, unit: str, decimals: int) -> tuple[float, str, int]:
    """(value, unit, decimals) in the unit of ``unit``'s family where the rounded value
    stays below 1000: 3 621 787 kJ at 0 decimals → (3.621787, "GJ", -6) ... the decimals
    shifted with it."""
    family = SCALES.get(unit)
    if not family:
        return x, unit, decimals
    r = float(_rounded(x, decimals))
    step = 0
    while step + 1 < len(family) and abs(r) >= 1000 * 1000 ** step:
        step += 1
    return x / 1000 ** step, family[step], decimals + 3 * step


def _number(x: float, decimals: int, figures: int | None) -> str:
    """Digits for ``x`` at ``decimals``; "× 10ⁿ" for magnitudes outside the plain range."""
    r = float(_rounded(x, decimals))
    if r == 0 or PLAIN_FROM <= abs(r) < PLAIN_BELOW:
        return fixed(x, decimals)
    return significant(x, figures or max(1, min(15, exponent(r) + decimals + 1)))


def quantity(x: float | None, unit: str, interval=None, figures: int | None = None,
             missing_text: str = MISSING) -> str:
    """'3.62 GJ', '442 bar', '−1812.3 kJ/mol', '16.0 kmol' by the policy; ``interval`` (a
    95 % interval of ``x`` in the same unit) sets the digits; ``missing_text`` for a
    missing figure."""
    if missing(x):
        return missing_text
    if math.isinf(x):
        return f"{_infinite(x)}{UNIT_SPACE}{unit}" if unit else _infinite(x)
    decimals = decimals_for(x, unit, interval, figures)
    value, shown, decimals = scale(x, unit, decimals)
    text = _number(value, decimals, figures)
    return f"{text}{UNIT_SPACE}{shown}" if shown else text


def interval(pair, unit: str, nominal: float | None = None, figures: int | None = None,
             label: str = f"95{UNIT_SPACE}% interval ") -> str:
    """'95 % interval 359 to 375 K': the ends at the digits (and in the scaled unit) of
    the nominal figure they belong to; '' without an interval, or when both ends print
    alike (nothing uncertain was stated)."""
    if not pair:
        return ""
    lo, hi = pair
    if (lo is None or missing(lo)) and (hi is None or missing(hi)):
        return ""
    ref = nominal if nominal is not None and not missing(nominal) else next(
        v for v in (hi, lo) if v is not None and not missing(v))
    first = decimals_for(ref, unit, pair, figures)
    _v, shown, decimals = scale(ref, unit, first)
    factor = 1000 ** ((decimals - first) // 3)

    def end(v):
        return "unbounded" if v is None or missing(v) else _number(v / factor, decimals, figures)

    lo_t, hi_t = end(lo), end(hi)
    if lo_t == hi_t or (lo is not None and hi is not None and half_width(pair) is None):
        return ""
    return f"{label}{lo_t} to {hi_t}{UNIT_SPACE}{shown}" if shown else f"{label}{lo_t} to {hi_t}"


def temperature(T: float | None, interval=None, decimals: int | None = None,
                missing_text: str = MISSING) -> str:
    """'366.5 K (93.4 °C)': kelvin with degrees Celsius, to 0.1 K or to the digits its 95 %
    interval fixes; ``missing_text`` for a missing temperature."""
    if missing(T):
        return missing_text
    if decimals is None:
        decimals = decimals_for(T, "K", interval)
    decimals = max(decimals, 0)  # a temperature keeps its units digit
    return (f"{fixed(T, decimals, group=False)}{UNIT_SPACE}K "
            f"({fixed(T - ZERO_CELSIUS, decimals, group=False)}{UNIT_SPACE}°C)")


def percent(fraction: float | None, interval=None, missing_text: str = MISSING) -> str:
    """A fraction as a percentage to 0.1 % (or to its interval's digits): 0.125 → '12.5 %'."""
    if missing(fraction):
        return missing_text
    pair = None if not interval else tuple(None if v is None else v * 100 for v in interval)
    return quantity(fraction * 100.0, "%", pair)


def signed(x: float | None, unit: str, interval=None, figures: int | None = None) -> str:
    """'+3.2 K', '−0.8 K' (a margin: the sign always shown); 'unbounded' for a missing end."""
    if missing(x):
        return "unbounded"
    text = quantity(x, unit, interval, figures)
    return text if text.startswith(MINUS) or _is_zero(text) else "+" + text


def _is_zero(text: str) -> bool:
    return not any(ch in "123456789" for ch in text.split(UNIT_SPACE)[0])


def plus_minus(x: float | None, u: float | None, unit: str) -> str:
    """'−12.3 ± 4.5 kJ/mol': a value and its uncertainty ``u`` (whatever its coverage) at
    the digits ``u`` fixes; the policy's default digits when ``u`` is missing or zero."""
    if missing(x):
        return MISSING
    decimals = uncertainty_decimals(u)
    if decimals is None:
        return quantity(x, unit)
    return (f"{_number(x, decimals, None)} ± {_number(u, decimals, None)}"
            + (f"{UNIT_SPACE}{unit}" if unit else ""))


def given(x: float | None, unit: str, missing_text: str = "not given") -> str:
    """An input echoed back as the case gives it, with its unit: '4 h', '0.8 m³', '10 bar'
    (:func:`plain`; no digits added, none taken away)."""
    if missing(x):
        return missing_text
    return f"{plain(x)}{UNIT_SPACE}{unit}" if unit else plain(x)


def count(n: int | float | None) -> str:
    """A whole number of things, grouped: 4000, 40 000."""
    if missing(n):
        return "–"
    return fixed(float(n), 0)


def plain(x: float | None, figures: int = 6) -> str:
    """A value as given (an input echoed back): the shortest form up to ``figures``
    significant figures, trailing zeros dropped: 1.0 → '1', 1.01325 → '1.01325'."""
    special = _special(x)
    if special is not None:
        return special
    decimals = max(figures_decimals(x, figures), 0)
    r = float(_rounded(x, decimals))
    if not (PLAIN_FROM <= abs(r) < PLAIN_BELOW):
        return significant(x, figures)
    text = fixed(x, decimals)
    return text.rstrip("0").rstrip(".") if "." in text else text


__all__ = [
    "DEFAULT_FIGURES", "FIXED_DECIMALS", "GROUP", "MINUS", "MISSING", "SCALES", "UNIT_SPACE",
    "count", "decimals_for", "given", "figures_decimals", "fixed", "half_width", "interval", "missing",
    "percent", "plain", "plus_minus", "quantity", "scale", "signed", "significant", "superscript",
    "temperature", "uncertainty_decimals",
]
