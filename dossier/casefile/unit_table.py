"""The units case files commonly use, read without pint, and their names in words.

:mod:`dossier.casefile.units` reads a unit in two steps: our small tokenizer
turns the text into tokens (names, ``*``, ``/``, ``**n``, parentheses), then
this module evaluates them with the table below.  Only when a unit name is
not in the table (an unusual unit such as ``mmHg`` or ``inch``) is pint asked,
so a case that writes ordinary units never pays pint's start-up (about 0.3 s
for the import and the registry).

The table gives each unit its exact factor to SI base units (as a fraction),
its dimension (powers of length, mass, time, temperature, amount of substance
and electric current) and its name in words for messages.  It follows pint's
rules wherever they matter, so every accepted unit gives the value pint gives
(``tests/unit/casefile/test_units_table.py`` checks each one against pint):

* a spelling resolves to exactly one unit, the names of the unit's exponents
  are summed (``K*K`` is ``K**2``) and a zero power drops out;
* an offset unit (``degC``, ``degF``) is a temperature only when it stands
  alone with power one; anywhere else (``kJ/(kg*degC)``, ``degC**2``) it is a
  difference of its size.

Factors come from the definitions in the BIPM SI Brochure (9th ed., 2019:
prefixes, table 8 for L, t, min, h, d, bar; 0 degC = 273.15 K) and NIST SP 811
(2008 ed.: atm, torr, lb, lbf, psi, cal, degF, degR).
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

Dims = tuple[int, int, int, int, int, int]
"""Powers of length, mass, time, temperature, amount of substance, current."""

LENGTH: Dims = (1, 0, 0, 0, 0, 0)
MASS: Dims = (0, 1, 0, 0, 0, 0)
TIME: Dims = (0, 0, 1, 0, 0, 0)
TEMPERATURE: Dims = (0, 0, 0, 1, 0, 0)
AMOUNT: Dims = (0, 0, 0, 0, 1, 0)
CURRENT: Dims = (0, 0, 0, 0, 0, 1)
NONE: Dims = (0, 0, 0, 0, 0, 0)


def combine(*parts: tuple[Dims, int]) -> Dims:
    """The dimension of a product of powers, e.g. ``combine((MASS, 1), (TIME, -2))``."""
    out = [0] * 6
    for dims, power in parts:
        for i, d in enumerate(dims):
            out[i] += d * power
    return tuple(out)  # type: ignore[return-value]


VOLUME = combine((LENGTH, 3))
ENERGY = combine((MASS, 1), (LENGTH, 2), (TIME, -2))
POWER = combine((ENERGY, 1), (TIME, -1))
PRESSURE = combine((MASS, 1), (LENGTH, -1), (TIME, -2))
CHARGE = combine((CURRENT, 1), (TIME, 1))
CAPACITANCE = combine((CHARGE, 2), (ENERGY, -1))


@dataclass(frozen=True)
class UnitEntry:
    """One spelling of a unit: its size in SI base units and its name in words."""

    canonical: str        # one name per unit, whatever the spelling ("degC", "L")
    factor: Fraction      # SI value of one of it (the size of a degree for degC)
    dims: Dims
    word: str             # singular, for messages: "kilojoule", "degree Celsius"
    offset: Fraction = Fraction(0)  # SI value of its zero (degC: 273.15 K)
    delta: bool = False   # a temperature difference (delta_degC, delta_degF)


_PREFIXES = {"G": (Fraction(10**9), "giga"), "M": (Fraction(10**6), "mega"),
             "k": (Fraction(1000), "kilo"), "h": (Fraction(100), "hecto"),
             "d": (Fraction(1, 10), "deci"), "c": (Fraction(1, 100), "centi"),
             "m": (Fraction(1, 1000), "milli"), "µ": (Fraction(1, 10**6), "micro")}

_LB = Fraction("0.45359237")                        # kg, exact (NIST SP 811)
_ATM = Fraction(101325)                             # Pa, exact (NIST SP 811)
# 1 psi = 0.45359237 kg * 9.80665 m/s2 / (0.0254 m)**2 = 6894.757293168361... Pa (NIST
# SP 811); kept as the float
# pint computes (one ulp above the nearest one), so values round exactly as before
_PSI = Fraction(6894.7572931683635)

# symbol, other spellings, word (singular), SI factor, dimension, prefixes taken
_BASES: tuple[tuple[str, tuple[str, ...], str, Fraction, Dims, str], ...] = (
    ("m", ("metre", "meter"), "metre", Fraction(1), LENGTH, "kdcmµ"),
    ("L", ("l", "litre", "liter"), "litre", Fraction(1, 1000), VOLUME, "kdcmµ"),
    ("g", ("gram",), "gram", Fraction(1, 1000), MASS, "kmµ"),
    ("t", ("tonne",), "tonne", Fraction(1000), MASS, ""),
    ("lb", ("pound",), "pound", _LB, MASS, ""),
    ("mol", ("mole",), "mole", Fraction(1), AMOUNT, "kmµ"),
    ("s", ("second",), "second", Fraction(1), TIME, "m"),
    ("min", ("minute",), "minute", Fraction(60), TIME, ""),
    ("h", ("hr", "hour"), "hour", Fraction(3600), TIME, ""),
    ("day", ("d",), "day", Fraction(86400), TIME, ""),
    ("K", ("kelvin",), "kelvin", Fraction(1), TEMPERATURE, ""),
    ("degR", (), "degree Rankine", Fraction(5, 9), TEMPERATURE, ""),
    ("Pa", ("pascal",), "pascal", Fraction(1), PRESSURE, "GMkhm"),
    ("bar", (), "bar", Fraction(10**5), PRESSURE, "km"),
    ("atm", (), "standard atmosphere", _ATM, PRESSURE, ""),
    ("torr", (), "torr", _ATM / 760, PRESSURE, ""),
    ("psi", (), "pound-force per square inch", _PSI, PRESSURE, ""),
    ("J", ("joule",), "joule", Fraction(1), ENERGY, "GMkm"),
    ("cal", ("calorie",), "calorie", Fraction("4.184"), ENERGY, "k"),
    ("Wh", (), "watt-hour", Fraction(3600), ENERGY, "GMk"),
    ("W", ("watt",), "watt", Fraction(1), POWER, "GMkm"),
    ("C", ("coulomb",), "coulomb", Fraction(1), CHARGE, ""),
    ("F", ("farad",), "farad", Fraction(1), CAPACITANCE, ""),
    ("A", ("ampere",), "ampere", Fraction(1), CURRENT, ""),
    ("%", ("percent",), "percent", Fraction(1, 100), NONE, ""),
    ("dimensionless", (), "", Fraction(1), NONE, ""),
)

_OFFSET_UNITS = (
    # 0 degC = 273.15 K (SI Brochure 2.3.1); degF = 5/9 K and 32 degF = 0 degC (NIST SP 811)
    UnitEntry("degC", Fraction(1), TEMPERATURE, "degree Celsius", Fraction("273.15")),
    UnitEntry("degF", Fraction(5, 9), TEMPERATURE, "degree Fahrenheit",
              Fraction("273.15") - Fraction(5, 9) * 32),
)


def _build_table() -> dict[str, UnitEntry]:
    table: dict[str, UnitEntry] = {}
    for symbol, others, word, factor, dims, prefixes in _BASES:
        for spelling in (symbol, *others):
            table[spelling] = UnitEntry(symbol, factor, dims, word)
        for p in prefixes:
            size, prefix_word = _PREFIXES[p]
            table[p + symbol] = UnitEntry(p + symbol, size * factor, dims, prefix_word + word)
    for entry in _OFFSET_UNITS:
        table[entry.canonical] = entry
        table["delta_" + entry.canonical] = UnitEntry(
            "delta_" + entry.canonical, entry.factor, TEMPERATURE,
            entry.word + " of difference", delta=True)
    return table


UNITS: dict[str, UnitEntry] = _build_table()
"""Every spelling read without pint (names are case-sensitive, as in pint)."""

NOUNS_BEYOND_CASES: dict[Dims, str] = {
    LENGTH: "a length",
    combine((LENGTH, 2)): "an area",
    combine((VOLUME, 1), (TIME, -1)): "a volume flow rate",
    combine((MASS, 1), (TIME, -1)): "a mass flow rate",
    combine((AMOUNT, 1), (TIME, -1)): "an amount per time",
    combine((TIME, -1)): "a rate",
    combine((MASS, 1), (VOLUME, -1)): "a density",
    combine((LENGTH, 1), (TIME, -1)): "a speed",
    combine((MASS, 1), (AMOUNT, -1)): "a molar mass",
    combine((AMOUNT, 1), (VOLUME, -1)): "a concentration",
    CHARGE: "an electric charge",
    CAPACITANCE: "an electric capacitance",
    CURRENT: "an electric current",
}
"""Names of dimensions no case-file key takes, for 'reads as ...' messages."""


@dataclass(frozen=True)
class Reading:
    """A unit as read: its SI factor (and zero), dimension, and words."""

    factor: Fraction
    dims: Dims | None         # None: a dimension beyond the six (read by pint)
    offset: Fraction          # nonzero only for a lone degC or degF
    delta: bool               # holds a temperature difference unit
    terms: tuple[tuple[str, int], ...]  # (word, power), as written


class NotInTable(Exception):
    """A unit name the table does not hold: the caller asks pint instead."""


def _power_of(tokens: list[str], pos: int) -> tuple[int, int]:
    if pos < len(tokens) and tokens[pos].startswith("**"):
        return int(tokens[pos][2:]), pos + 1
    return 1, pos


def _atom(tokens: list[str], pos: int) -> tuple[dict[str, int], int]:
    token = tokens[pos]
    if token == "(":
        powers, pos = _product(tokens, pos + 1)
        pos += 1  # the ")"; the tokenizer has checked the balance
    elif token == "1":
        powers, pos = {}, pos + 1
    else:
        if token not in UNITS:
            raise NotInTable(token)
        powers, pos = {token: 1}, pos + 1
    power, pos = _power_of(tokens, pos)
    return {name: p * power for name, p in powers.items()}, pos


def _product(tokens: list[str], pos: int) -> tuple[dict[str, int], int]:
    powers, pos = _atom(tokens, pos)
    while pos < len(tokens) and tokens[pos] in ("*", "/"):
        sign = 1 if tokens[pos] == "*" else -1
        more, pos = _atom(tokens, pos + 1)
        for name, p in more.items():
            powers[name] = powers.get(name, 0) + sign * p
    return powers, pos


def read_tokens(tokens: list[str], strict: bool = True) -> Reading:
    """Evaluate checked unit tokens (``["kJ", "/", "(", "kg", "*", "K", ")"]``).

    Raises :class:`NotInTable` when a name is not in :data:`UNITS`, when
    two spellings of one unit meet, or when a compound unit's factor does not
    terminate as a decimal (``kJ/h``, ``J/(kg*delta_degF)``): all left to pint,
    to keep its rules and its rounding (``strict=False`` reads them anyway,
    for the words and the dimension of a message).  pint's float arithmetic and ours
    differ by an ulp or two; after the rounding to 15 significant digits that
    is invisible when the exact SI value terminates (a typed number times a
    terminating factor), but a repeating value such as 298.15 MJ/day may round
    the other way, so those keep pint's path.
    """
    written, _ = _product(tokens, 0)
    canonical = {UNITS[name].canonical for name in written}
    if strict and len(canonical) != len(written):
        raise NotInTable("two spellings of one unit")
    powers = {name: p for name, p in written.items() if p != 0}
    factor, offset, delta = Fraction(1), Fraction(0), False
    dims: Dims = NONE
    alone = len(powers) == 1 and next(iter(powers.values())) == 1
    for name, p in powers.items():
        entry = UNITS[name]
        factor *= entry.factor ** p
        dims = combine((dims, 1), (entry.dims, p))
        if entry.offset and alone:
            offset = entry.offset
        delta = delta or entry.delta or bool(entry.offset and not alone)
    if strict and not (alone or _terminates(factor)):
        raise NotInTable("a compound unit with a repeating factor")
    terms = tuple((UNITS[name].word, p) for name, p in powers.items())
    return Reading(factor, dims, offset, delta, terms)


def _terminates(factor: Fraction) -> bool:
    """True when the factor is a terminating decimal (no 1/3, 1/9, 1/3600 in it)."""
    d = factor.denominator
    for prime in (2, 5):
        while d % prime == 0:
            d //= prime
    return d == 1


_PLURAL_HEADS = {"degree": "degrees", "pound-force": "pounds-force"}


def plural(word: str) -> str:
    """ "kilojoule" -> "kilojoules", "degree Celsius" -> "degrees Celsius"."""
    if word in ("", "percent"):
        return word
    head, space, rest = word.partition(" ")
    if head in _PLURAL_HEADS:
        return _PLURAL_HEADS[head] + space + rest
    return word + ("es" if word.endswith(("ch", "sh", "s")) else "s")


def _named(word: str, power: int) -> str:
    if power == 1:
        return word
    if power == 2:
        return f"square {word}"
    if power == 3:
        return f"cubic {word}"
    return f"{word} to the power {power}"


def in_words(terms: tuple[tuple[str, int], ...]) -> str:
    """Name a unit in words: "joules per kilogram per kelvin", "cubic metres"."""
    above = [_named(plural(w), p) for w, p in terms if p > 0 and w]
    below = [_named(w, -p) for w, p in terms if p < 0 and w]
    text = " times ".join(above) if above else ("one" if below else "a plain number")
    return text + "".join(f" per {word}" for word in below)
