"""The units edge: text with a unit in, an SI float out.

Every physical quantity in a case file is a string with a unit ("25 degC",
"5 bar", "1.9 kJ/(kg*K)").  :func:`parse_quantity` reads one such string for
an expected *dimension* (see :data:`DIMENSIONS`) and returns a plain float in
SI units (K, Pa, kg, mol, m3, s, J, W and their quotients).  Inside the engine
there are only SI floats; units exist only here, at the edge.

Rules (the case-file format relies on them):

* A unit is always required.  A bare number (``5`` or ``"5"``) is an error
  that names the expected dimension and shows an example.  Fractions too:
  write ``"35 %"``, not ``0.35``.
* The number is a plain decimal, optionally with an exponent (``1.2e3``).
  ``nan``, ``inf``, thousands separators and numbers beyond
  :data:`MAX_MAGNITUDE` (after conversion to SI) are rejected.
* Temperatures (``temperature``) are absolute: ``K``, ``degC``, ``degF`` or
  ``degR``; ``°C`` and ``°F`` are accepted too.  They must be above 0 K.  A
  difference unit (``delta_degC``) is rejected here, because it is not a
  temperature but a difference.
* Temperature differences (``temperature_difference``, e.g. uncertainties)
  take ``K``, ``delta_degC`` or ``delta_degF``; ``degC`` is rejected there,
  because "15 degC" is a temperature (288.15 K), not a difference.
* Pressures are **absolute** and must be above zero.  Gauge notations
  (``barg``, ``psig``) are rejected with a hint; write the absolute value.
* Units are read by a small tokenizer of our own (names, ``*``, ``/``,
  ``^`` or ``**`` with a one-digit exponent, parentheses, and the usual
  ``m3`` / ``cm3`` shorthand for powers).  Anything else in a unit (digit
  runs, operators, nested powers) is refused, so a hostile unit string cannot
  make anyone compute huge powers.  Unicode forms are read as their plain
  spelling: ``m³``, ``m²``, ``K⁻¹`` (one-digit superscript powers), ``°C``,
  ``℃``, ``°F``, ``µ`` or ``μ`` for micro, ``·``, ``⋅`` and ``×`` for a product.
* The tokens are evaluated with the table of :mod:`dossier.casefile.unit_table`
  (the units case files use, with exact factors); pint reads only what the
  table does not hold (``mmHg``, ``inch``, plural names, compound units with a
  repeating factor such as ``kJ/h``).  Both give the same values (checked
  against pint unit by unit, and on every case file of the project).
* Results are rounded to 15 significant digits, which removes conversion
  noise such as ``800 L`` -> ``0.8000000000000002 m3`` and changes no input
  that a person typed.
* A unit of the wrong kind is explained in words: what it reads as ("60 C"
  reads as coulombs, an electric charge; "J/kg K" as joules times kelvins per
  kilogram) and, when a usual slip explains it, what to write instead.

pint is imported, and its registry built, only when the table does not hold a
unit, so importing this module and reading an ordinary case are cheap.
Measured on the development machine: importing pint about 0.15-0.3 s,
building the cached registry about 0.05 s.
"""
from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from fractions import Fraction
from functools import cache
from typing import Any, Literal, overload

from dossier.casefile.unit_table import (NOUNS_BEYOND_CASES, Dims, NotInTable, Reading,
                                         in_words, read_tokens)
from dossier.errors import Problem, UnitError

#: Largest absolute SI value accepted (guards against overflow and typos).
MAX_MAGNITUDE = 1e20

#: Longest quantity text accepted (after trimming).
MAX_TEXT_LENGTH = 80


@dataclass(frozen=True)
class Dimension:
    """One kind of quantity a case file may contain."""

    name: str          # key used by callers, e.g. "pressure"
    noun: str          # for messages, with article: "a pressure"
    si_unit: str       # pint spelling of the SI unit we return
    example: str       # a valid input, shown in messages
    common_units: tuple[str, ...]  # for "did you mean" on an unknown unit


DIMENSIONS: dict[str, Dimension] = {
    d.name: d
    for d in (
        Dimension("temperature", "a temperature", "K", "25 degC",
                  ("K", "degC", "degF", "degR")),
        Dimension("temperature_difference", "a temperature difference", "K", "15 K",
                  ("K", "delta_degC", "delta_degF")),
        Dimension("pressure", "a pressure", "Pa", "5 bar",
                  ("bar", "Pa", "kPa", "MPa", "mbar", "atm", "psi", "torr")),
        Dimension("mass", "a mass", "kg", "120 kg", ("kg", "g", "t", "lb")),
        Dimension("amount", "an amount of substance", "mol", "0.5 mol",
                  ("mol", "kmol", "mmol")),
        Dimension("volume", "a volume", "m^3", "0.8 m3", ("m3", "L", "mL", "dm3")),
        Dimension("time", "a time", "s", "4 h", ("s", "min", "h", "day")),
        Dimension("specific_heat", "a specific heat capacity", "J/(kg*K)",
                  "1.9 kJ/(kg*K)", ("J/(kg*K)", "kJ/(kg*K)", "J/(g*K)")),
        Dimension("molar_heat_capacity", "a molar heat capacity", "J/(mol*K)",
                  "290 J/(mol*K)", ("J/(mol*K)", "kJ/(mol*K)")),
        Dimension("molar_entropy", "a molar entropy", "J/(mol*K)",
                  "250 J/(mol*K)", ("J/(mol*K)", "kJ/(mol*K)")),
        Dimension("energy", "an energy", "J", "1.2 MJ", ("J", "kJ", "MJ", "kWh")),
        Dimension("energy_per_mass", "an energy per mass", "J/kg", "420 J/g",
                  ("J/g", "kJ/kg", "J/kg")),
        Dimension("energy_per_amount", "an energy per amount of substance", "J/mol",
                  "-540 kJ/mol", ("kJ/mol", "J/mol")),
        Dimension("power", "a power", "W", "1.5 kW", ("W", "kW", "MW")),
        Dimension("power_per_mass", "a power per mass", "W/kg", "8 W/kg",
                  ("W/kg", "mW/g", "W/g")),
        Dimension("heat_transfer", "a heat-transfer capacity U*A", "W/K", "2.5 kW/K",
                  ("W/K", "kW/K")),
        Dimension("fraction", "a fraction", "dimensionless", "35 %",
                  ("%", "percent")),
    )
}

#: The two-way dimension accepted by :func:`parse_mass_or_amount`.
MASS_OR_AMOUNT = "mass_or_amount"

_NUMBER_RE = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")
_NONFINITE_RE = re.compile(r"[+-]?(?:nan|inf|infinity)\b", re.IGNORECASE)
_UNIT_TOKEN_RE = re.compile(
    r"""\s*(?:
        (?P<name>[A-Za-z_%µμΩ°][A-Za-z_]*)(?P<short>[23](?![0-9A-Za-z_]))?
      | (?P<pow>(?:\^|\*\*)\s*(?P<exp>-?[1-9])(?![0-9]))
      | (?P<op>[*/·])
      | (?P<open>\()
      | (?P<close>\))
      | (?P<one>1)(?=\s*/)
    )""",
    re.VERBOSE,
)
_SPELLINGS = {"°C": "degC", "℃": "degC", "°F": "degF", "℉": "degF", "°K": "K",
              "μ": "µ", "·": "*", "⋅": "*", "×": "*"}
_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")
_SUPERSCRIPT_RE = re.compile("(⁻?)([⁰¹²³⁴⁵⁶⁷⁸⁹]+)")
# a lone C or F (coulomb, farad), as people write for Celsius and Fahrenheit
_LETTER_RE = re.compile(r"(?<![A-Za-z_])[CF](?![A-Za-z_0-9])")
# "J/kg K": one '/' and no parentheses, the part after it holding two units
_OVER_RE = re.compile(r"([^/()]+)/([^/()]+)")
_GAUGE = ("barg", "psig", "kPag", "MPag", "mbarg")


@cache
def _registry():  # -> pint.UnitRegistry, created on first use
    import pint  # deferred: costs ~0.3 s; only units beyond our table need it

    try:
        return pint.UnitRegistry(cache_folder=":auto:")
    except Exception:  # an unwritable or damaged cache must not stop us
        return pint.UnitRegistry()


def _fail(message: str) -> UnitError:
    return UnitError(Problem(message))


def _shown(value: Any) -> str:
    """How a raw value is quoted in messages (TOML spelling where it matters)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        text = value if len(value) <= MAX_TEXT_LENGTH else value[:MAX_TEXT_LENGTH] + "..."
        return repr(text)
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "a list"
    return f"a {type(value).__name__}"


def _expected(noun: str, example: str) -> str:
    return f"expected {noun}, like '{example}'"


def _plain_spelling(unit_text: str) -> str:
    """Unicode unit forms in our spelling: "m³" -> "m^3", "J·mol⁻¹" -> "J*mol^-1"."""
    text = unit_text
    for spelled, canonical in _SPELLINGS.items():
        text = text.replace(spelled, canonical)
    return _SUPERSCRIPT_RE.sub(
        lambda m: "^" + ("-" if m.group(1) else "") + m.group(2).translate(_SUPERSCRIPTS),
        text)


def _tokens(unit_text: str, noun: str, example: str, given: str) -> list[str]:
    """Check a unit string against our small grammar; return its tokens."""
    text = _plain_spelling(unit_text)
    if "," in text:
        raise _fail(f"{_expected(noun, example)}; got {given}: use '.' for decimals "
                    "and no thousands separators")
    out: list[str] = []
    pos = 0
    depth = 0
    last = "start"  # start | operand | op
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        m = _UNIT_TOKEN_RE.match(text, pos)
        if not m or m.end() == pos:
            raise _fail(f"{_expected(noun, example)}; got {given}: cannot read the "
                        f"unit '{unit_text.strip()}'")
        pos = m.end()
        if m.group("name") or m.group("one"):
            if last == "operand":
                out.append("*")  # "kg K" means kg*K
            out.append(m.group("name") or "1")
            if m.group("short"):
                out.append("**" + m.group("short"))
            last = "operand"
        elif m.group("pow"):
            if last != "operand" or (out and out[-1].startswith("**")):
                raise _fail(f"{_expected(noun, example)}; got {given}: misplaced "
                            "power in the unit")
            out.append("**" + m.group("exp"))
        elif m.group("op"):
            if last != "operand":
                raise _fail(f"{_expected(noun, example)}; got {given}: cannot read "
                            f"the unit '{unit_text.strip()}'")
            out.append("/" if m.group("op") == "/" else "*")
            last = "op"
        elif m.group("open"):
            if last == "operand":
                out.append("*")
            out.append("(")
            depth += 1
            last = "start"
        else:  # close
            depth -= 1
            if depth < 0 or last != "operand":
                raise _fail(f"{_expected(noun, example)}; got {given}: unbalanced "
                            "parentheses in the unit")
            out.append(")")
            last = "operand"
    if depth != 0 or last != "operand":
        raise _fail(f"{_expected(noun, example)}; got {given}: cannot read the unit "
                    f"'{unit_text.strip()}'")
    return out


def _split(value: Any, noun: str, example: str) -> tuple[float, str, str, str]:
    """Split raw input into (number, unit text, shown form, number as written)."""
    given = _shown(value)
    if isinstance(value, bool) or not isinstance(value, (str, int, float)):
        raise _fail(f"expected {noun} as text with a unit, like '{example}'; "
                    f"got {given}")
    if isinstance(value, (int, float)):
        raise _fail(f"expected {noun} with a unit, like '{example}'; got {given}")
    text = value.strip().replace("\u2212", "-")  # U+2212 MINUS SIGN
    if len(text) > MAX_TEXT_LENGTH:
        raise _fail(f"{_expected(noun, example)}; got a text of {len(text)} "
                    f"characters (at most {MAX_TEXT_LENGTH})")
    if _NONFINITE_RE.match(text):
        raise _fail(f"{_expected(noun, example)}; got {given}, which is not a finite "
                    "number")
    m = _NUMBER_RE.match(text)
    if not m:
        raise _fail(f"{_expected(noun, example)}; got {given}, which does not start "
                    "with a number")
    number = float(m.group(0))
    if not math.isfinite(number):
        raise _fail(f"{_expected(noun, example)}; got {given}: the number is too large")
    unit = text[m.end():]
    if unit.strip() == "":
        raise _fail(f"expected {noun} with a unit, like '{example}'; got {given}")
    return number, unit, given, m.group(0)


def _dimension(name: str) -> Dimension:
    try:
        return DIMENSIONS[name]
    except KeyError:
        raise ValueError(f"unknown dimension {name!r}; known: "
                         f"{', '.join(sorted(DIMENSIONS))}") from None


@cache
def _dims_of(name: str) -> Dims | None:
    """The dimension of a :data:`DIMENSIONS` entry, read from its SI unit."""
    return read_tokens(_tokens(DIMENSIONS[name].si_unit, "", "", "")).dims


_PINT_DIMS = ("[length]", "[mass]", "[time]", "[temperature]", "[substance]", "[current]")


def _pint_reading(spelled: str, units) -> Reading:
    """A :class:`Reading` of pint units (factor unused: pint converts those)."""
    reg = _registry()
    dims = units.dimensionality
    known = None if set(dims) - set(_PINT_DIMS) else tuple(int(dims.get(d, 0))
                                                           for d in _PINT_DIMS)
    offset = reg.Quantity(0.0, units).to_base_units().magnitude
    terms = reg.parse_units_as_container(spelled).items()
    return Reading(Fraction(1), known, Fraction(offset) if offset else Fraction(0),
                   "delta_" in str(units),
                   tuple((name.replace("_", " "), int(p)) for name, p in terms))


def _read(unit_text: str, noun: str, example: str, given: str,
          dim: Dimension | None = None) -> tuple[Reading, Any]:
    """Read a unit: from our table, or else from pint (then also its pint units).

    Raises :class:`UnitError` for text pint does not know either (with a hint
    from ``dim``'s common units when given).
    """
    tokens = _tokens(unit_text, noun, example, given)
    try:
        return read_tokens(tokens), None
    except NotInTable:
        pass
    reg = _registry()
    try:
        units = reg.parse_units("".join(tokens))
        reading = _pint_reading("".join(tokens), units)
    except Exception:  # pint raises several types, some of them bare
        hint = _unknown_unit_hint(unit_text, dim) if dim else ""
        raise _fail(f"unknown unit '{unit_text.strip()}' in {given}; "
                    f"{_expected(noun, example)}{hint}") from None
    try:  # our words for a unit the table holds but leaves to pint's arithmetic
        return read_tokens(tokens, strict=False), units
    except NotInTable:
        return reading, units


def _which_is(reading: Reading) -> str:
    """What a unit measures, in words, for a 'got ..., which ...' clause."""
    nouns = [d.noun for d in DIMENSIONS.values()
             if d.name != "temperature_difference" and _dims_of(d.name) == reading.dims]
    if nouns:
        return "which is " + " or ".join(dict.fromkeys(nouns))
    if reading.dims is not None and not any(reading.dims):
        return "which is a plain number"
    words = in_words(reading.terms)
    if reading.dims in NOUNS_BEYOND_CASES:
        return f"which reads as {words} ({NOUNS_BEYOND_CASES[reading.dims]})"
    return f"which reads as {words}"


def _fixes(unit_text: str, dim: Dimension) -> tuple[tuple[str, str], ...]:
    """Rewrites of a unit that people often mean, each with the reason shown."""
    text = _plain_spelling(unit_text).strip()
    out = []
    if dim.name == "temperature":
        swapped = _LETTER_RE.sub(lambda m: "deg" + m.group(0), text)
    else:
        swapped = _LETTER_RE.sub(lambda m: "K" if m.group(0) == "C" else "delta_degF", text)
    if swapped != text:
        out.append((swapped, ""))
    over = _OVER_RE.fullmatch(text)
    if over and len(over.group(2).split()) + over.group(2).count("*") > 1:
        below = "*".join(w for w in re.split(r"[\s*]+", over.group(2)) if w)
        out.append((f"{over.group(1).strip()}/({below})",
                    ", because '/' divides by the next unit only"))
    return tuple(out)


def _mismatch(reading: Reading, number_text: str, unit_text: str, given: str,
              dim: Dimension) -> UnitError:
    """The message for a unit of the wrong kind, with a rewrite when one fits."""
    message = f"{_expected(dim.noun, dim.example)}; got {given}, {_which_is(reading)}"
    for fixed, why in _fixes(unit_text, dim):
        try:  # only rewrites into units of our table are offered
            candidate = read_tokens(_tokens(fixed, dim.noun, dim.example, given), strict=False)
        except (UnitError, NotInTable):
            continue
        if candidate.dims == _dims_of(dim.name):
            return _fail(f"{message}{why}; write '{number_text} {fixed}' for {dim.noun}")
    return _fail(message)


def _unknown_unit_hint(unit_text: str, dim: Dimension) -> str:
    word = unit_text.strip()
    if word in _GAUGE or word.lower().endswith("(g)"):
        return ("; gauge pressures are not accepted: write the absolute pressure, "
                "like '6 bar'")
    lowered = {u.lower(): u for u in dim.common_units}
    if word.lower() in lowered:
        return f"; did you mean '{lowered[word.lower()]}'?"
    close = difflib.get_close_matches(word, dim.common_units, n=1, cutoff=0.6)
    return f"; did you mean '{close[0]}'?" if close else ""


def _to_si(number: float, reading: Reading, units: Any, given: str,
           dim: Dimension) -> float:
    """Convert with the table's exact factor, or with pint for pint's units."""
    if units is None:
        return number * float(reading.factor) + float(reading.offset)
    reg = _registry()
    return float(reg.Quantity(number, units).to(reg.parse_units(dim.si_unit)).magnitude)


def _convert(number: float, unit_text: str, given: str, dim: Dimension,
             number_text: str) -> float:
    reading, units = _read(unit_text, dim.noun, dim.example, given, dim)
    if reading.dims != _dims_of(dim.name):
        raise _mismatch(reading, number_text, unit_text, given, dim)
    if dim.name == "temperature" and reading.delta:
        raise _fail(f"{_expected(dim.noun, dim.example)}; got {given}, which is a "
                    "temperature difference; use K, degC or degF")
    if dim.name == "temperature_difference" and reading.offset:
        raise _fail(f"{_expected(dim.noun, dim.example)}; got {given}, which is a "
                    "temperature, not a difference; use K or delta_degC")
    try:
        value = _to_si(number, reading, units, given, dim)
    except Exception:
        raise _fail(f"{_expected(dim.noun, dim.example)}; got {given}: cannot "
                    "convert it") from None
    if not math.isfinite(value) or abs(value) > MAX_MAGNITUDE:
        raise _fail(f"{_expected(dim.noun, dim.example)}; got {given}: the number "
                    "is too large")
    return float(f"{value:.15g}")


@overload
def parse_quantity(text: Any, dimension: Literal["mass_or_amount"]) -> tuple[str, float]: ...
@overload
def parse_quantity(text: Any, dimension: str) -> float: ...


def parse_quantity(text, dimension):
    """Read ``text`` (e.g. ``"5 bar"``) as ``dimension``; return the SI value.

    ``dimension`` is a key of :data:`DIMENSIONS`, or ``"mass_or_amount"``, for
    which the result is ``(kind, value)`` as in :func:`parse_mass_or_amount`.
    Raises :class:`UnitError` (one :class:`Problem` without location) for a
    missing unit, an unknown unit, the wrong dimension or an unusable number.
    """
    if dimension == MASS_OR_AMOUNT:
        return parse_mass_or_amount(text)
    dim = _dimension(dimension)
    number, unit, given, number_text = _split(text, dim.noun, dim.example)
    value = _convert(number, unit, given, dim, number_text)
    if dim.name == "temperature" and value <= 0.0:
        raise _fail(f"expected a temperature above absolute zero, like "
                    f"'{dim.example}'; got {given} (= {value:g} K)")
    if dim.name == "pressure" and value <= 0.0:
        raise _fail(f"expected an absolute pressure above zero, like "
                    f"'{dim.example}'; got {given}")
    if dim.name == "fraction" and not 0.0 <= value <= 1.0:
        raise _fail(f"expected a fraction between 0 % and 100 %, like "
                    f"'{dim.example}'; got {given}")
    return value


def parse_mass_or_amount(text: Any) -> tuple[Literal["mass", "amount"], float]:
    """Read a mass ("120 kg", result in kg) or an amount ("3 kmol", in mol).

    Returns ``("mass", kg)`` or ``("amount", mol)``.
    """
    noun, example = "a mass or an amount of substance", "120 kg' or '3 kmol"
    number, unit, given, number_text = _split(text, noun, example)
    reading, _ = _read(unit, noun, example, given)
    for kind in ("mass", "amount"):
        if reading.dims == _dims_of(kind):
            value = _convert(number, unit, given, DIMENSIONS[kind], number_text)
            return kind, value  # type: ignore[return-value]
    raise _fail(f"{_expected(noun, example)}; got {given}, {_which_is(reading)}")
