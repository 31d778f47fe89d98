"""Chemical formulas: element counts, charge and molar mass.

Accepted forms (no phase here; phases belong to reaction strings):

* plain and nested groups: ``C6H5NO2``, ``Ca(OH)2``, ``K4[Fe(CN)6]``;
* hydrates and adducts with ``.`` or ``·`` and an optional multiplier:
  ``CuSO4.5H2O``, ``CuSO4·5H2O``;
* charges at the end: ``Na+``, ``Cl-``, ``SO4-2``, ``SO4^2-``, ``SO4--``,
  ``Fe+3``, ``Fe^3+``; the electron is ``e-``.

Counts are whole or decimal numbers directly after a symbol or bracket; a
``.`` always separates the parts of a hydrate or adduct, so ``C1.5H3`` is not
a decimal count (write such compositions as case-local species instead).
"""
from __future__ import annotations

import functools
import re
from dataclasses import dataclass
from fractions import Fraction

from dossier.chem.elements import ATOMIC_WEIGHTS
from dossier.errors import FormulaError

_CHARGE_RE = re.compile(
    r"""(?:
        \^(?P<n1>\d+)(?P<s1>[+-])      # ^2-  ^3+
      | (?P<s2>[+-])(?P<n2>\d+)        # -2   +3
      | (?P<s3>[+]+|[-]+)              # +  -  ++  --
    )$""",
    re.VERBOSE,
)
_TOKEN_RE = re.compile(r"([A-Z][a-z]?)|(\d+(?:\.\d+)?)|([(\[])|([)\]])")

#: Largest element count or charge a formula may give (no real species comes near).
MAX_COUNT = 10**6


def _bounded(value: Fraction | int, original: str) -> Fraction | int:
    """``value`` when within :data:`MAX_COUNT`, else FormulaError (absurd input)."""
    if abs(value) > MAX_COUNT:
        raise FormulaError(f"formula '{original[:60]}' gives a count or charge above "
                           f"{MAX_COUNT:,}; no species has that many")
    return value


def _number(digits: str, original: str) -> Fraction:
    """A count as written; absurdly long numbers are refused before conversion."""
    if len(digits) > 12:
        raise FormulaError(f"formula '{original[:60]}' has a count with more than 12 "
                           "digits; no species has that many")
    return Fraction(digits)


@dataclass(frozen=True)
class Formula:
    """A parsed formula: sorted (element, count) pairs and an integer charge."""

    text: str
    elements: tuple[tuple[str, Fraction], ...]
    charge: int

    @property
    def composition(self) -> dict[str, Fraction]:
        return dict(self.elements)

    @property
    def molar_mass(self) -> float:
        """Molar mass in g/mol (electrons count as zero)."""
        return float(sum(ATOMIC_WEIGHTS[el] * float(n) for el, n in self.elements))

    @property
    def hill(self) -> str:
        """Hill-order formula with charge suffix, e.g. ``C6H5NO2`` or ``SO4-2``."""
        return hill_formula(self.composition, self.charge)


def hill_formula(composition: dict[str, Fraction] | dict[str, float], charge: int = 0) -> str:
    """Hill order: C first, then H, then the rest alphabetically (all alphabetical without C)."""
    comp = {el: n for el, n in composition.items() if el != "E" and n}
    if "C" in comp:
        order = ["C"] + (["H"] if "H" in comp else []) + sorted(k for k in comp if k not in ("C", "H"))
    else:
        order = sorted(comp)
    out = []
    for el in order:
        n = comp[el]
        n = Fraction(n).limit_denominator(1000) if not isinstance(n, Fraction) else n
        count = "" if n == 1 else (str(n.numerator) if n.denominator == 1 else str(float(n)))
        out.append(f"{el}{count}")
    text = "".join(out) or ("e" if charge else "")
    if charge:
        text += ("+" if charge > 0 else "-") + (str(abs(charge)) if abs(charge) != 1 else "")
    return text


def _split_charge(text: str) -> tuple[str, int]:
    if text in ("e-", "e"):
        return "", -1
    m = _CHARGE_RE.search(text)
    if not m or m.start() == 0:
        return text, 0
    if m.group("s1"):
        sign, n = m.group("s1"), int(_number(m.group("n1"), text))
    elif m.group("s2"):
        sign, n = m.group("s2"), int(_number(m.group("n2"), text))
    else:
        run = m.group("s3")
        sign, n = run[0], len(run)
    return text[: m.start()], int(_bounded(n if sign == "+" else -n, text))


def _parse_part(text: str, original: str) -> dict[str, Fraction]:
    stack: list[dict[str, Fraction]] = [{}]
    pos = 0
    last: dict[str, Fraction] | str | None = None  # what a following count multiplies
    while pos < len(text):
        m = _TOKEN_RE.match(text, pos)
        if not m:
            raise FormulaError(f"cannot read formula '{original}' at '{text[pos:]}'")
        el, num, opening, closing = m.groups()
        pos = m.end()
        if el:
            if el not in ATOMIC_WEIGHTS or el == "E":
                raise FormulaError(f"'{el}' in formula '{original}' is not an element symbol")
            stack[-1][el] = _bounded(stack[-1].get(el, Fraction(0)) + 1, original)
            last = el
        elif num:
            if last is None:
                raise FormulaError(f"a count in formula '{original}' has nothing to multiply")
            k = _number(num, original)
            if isinstance(last, str):
                stack[-1][last] = _bounded(stack[-1][last] + k - 1, original)
            else:
                for e, c in last.items():
                    stack[-1][e] = _bounded(stack[-1].get(e, Fraction(0)) + c * (k - 1),
                                            original)
            last = None
        elif opening:
            stack.append({})
            last = None
        else:  # closing
            if len(stack) == 1:
                raise FormulaError(f"unbalanced bracket in formula '{original}'")
            group = stack.pop()
            for e, c in group.items():
                stack[-1][e] = _bounded(stack[-1].get(e, Fraction(0)) + c, original)
            last = group
    if len(stack) != 1:
        raise FormulaError(f"unbalanced bracket in formula '{original}'")
    return stack[0]


def parse_formula(text: str) -> Formula:
    """Parse a formula such as ``Ca(OH)2``, ``CuSO4·5H2O`` or ``SO4^2-``."""
    original = text
    text = text.strip()
    if not text:
        raise FormulaError("empty formula")
    body, charge = _split_charge(text)
    total: dict[str, Fraction] = {}
    for part in re.split(r"[.·*]", body) if body else []:
        m = re.match(r"^(\d+(?:\.\d+)?)?(.*)$", part)
        mult = _number(m.group(1), original) if m.group(1) else Fraction(1)
        if not m.group(2):
            raise FormulaError(f"cannot read formula '{original}'")
        for el, c in _parse_part(m.group(2), original).items():
            total[el] = _bounded(total.get(el, Fraction(0)) + mult * c, original)
    elements = tuple(sorted((el, n) for el, n in total.items() if n))
    if not elements and charge == 0:
        raise FormulaError(f"formula '{original}' has no elements")
    return Formula(original, elements, charge)


@functools.lru_cache(maxsize=4096)
def is_formula(text: str) -> bool:
    """True when ``text`` reads as a chemical formula (then its letter case is meaningful)."""
    try:
        parse_formula(text)
    except FormulaError:
        return False
    return True

