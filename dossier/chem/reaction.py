"""Reaction strings: parsing, normal form, element and charge balance.

A reaction string (see the case format) is a list of terms on each side of
one arrow::

    C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)
    NH4+(aq) + OH-(aq) <=> NH3(aq) + H2O(l)
    1/2 O2(g) + H2(g) = H2O(l)

Rules this module applies:

* A term is an optional coefficient, a species label and a phase in
  brackets.  The coefficient is a whole number, a decimal or a fraction
  (``3``, ``0.5``, ``1/2``), separated from the label by white space; it is
  kept as an exact :class:`~fractions.Fraction`.  A coefficient glued to a
  formula (``2H2O(l)``) is rejected with a hint, because names may start
  with digits (``1,2-dichloroethane``, ``2H-pyran``).
* The label is a formula or a library name as written (``H2O``, ``NH4+``,
  ``SO4^2-``, ``intermediate B``, ``acetic acid``).  Internal white space is
  collapsed to single spaces.  A label without spaces that starts with an
  upper-case letter or a bracket, and reads as a formula, gets a parsed
  :class:`~dossier.chem.formula.Formula`; anything else is a name to be resolved
  against the library later.
* Phases: ``(g)``, ``(l)``, ``(s)`` (``(cr)`` is read as ``(s)``), ``(aq)``.
* Terms are separated by a ``+`` with white space on both sides, or by a
  ``+`` right after a phase; a ``+`` inside a term is a charge
  (``NH4+(aq)+OH-(aq)`` has two terms).
* Arrows: ``->`` or ``→`` (forward), ``<=>`` or ``⇌`` (equilibrium); ``=`` is
  read as ``->``.  Exactly one arrow.
* The same species (label and phase) may appear only once: twice on one
  side, or on both sides, is rejected.  Combining silently would hide a
  typing mistake in a safety input, so the user writes the net reaction.

Balance: each term's composition (element counts and charge) comes from the
caller (the resolved library records) or, failing that, from the label's own
formula.  Residuals are products minus reactants, per element and for the
charge.  A balanced suggestion is the one-dimensional nullspace of the
element/charge matrix, scaled to the smallest whole numbers, when it keeps
every species on its side.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass, replace
from fractions import Fraction
from numbers import Rational
from typing import Mapping

from dossier.chem.formula import Formula, parse_formula
from dossier.chem.phases import PHASE_ALIASES, PHASES
from dossier.errors import FormulaError, ReactionError

_ARROW_RE = re.compile(r"<=>|⇌|->|→|=")
_REVERSIBLE_ARROWS = ("<=>", "⇌")
_BAD_ARROW_RE = re.compile(r"-->|<->|<-|(?<!<)=>|<=(?!>)|==|=<|>=")
_PHASE_RE = re.compile(r"^(?P<body>.*?)\s*\((?P<phase>[^()]*)\)$", re.DOTALL)
_AFTER_PHASE_RE = re.compile(r"\([a-z]+\)\s*$")
_NUMBER = r"(?:\d+(?:\.\d+)?(?:/\d+)?|\.\d+)"
_COEFF_RE = re.compile(rf"^(?P<coeff>{_NUMBER})\s+(?P<label>\S.*)$", re.DOTALL)
_GLUED_RE = re.compile(rf"^(?P<coeff>{_NUMBER})(?P<rest>[A-Z(\[]\S*)$")
_ALLOWED_PHASES_TEXT = "(g), (l), (s) or (cr), (aq)"

#: Most terms a reaction may have (both sides together); more is not a reaction
#: a review board can check, and would make species resolution take very long.
MAX_TERMS = 100
#: Longest coefficient as written (characters), e.g. ``0.000125`` or ``355/113``.
MAX_COEFFICIENT_CHARS = 20
#: Longest reaction string accepted (characters, white space collapsed).
MAX_REACTION_CHARS = 10_000

Composition = tuple[Mapping[str, "float | int | Fraction"], int]


def _format_coefficient(c: Fraction) -> str:
    return str(c.numerator) if c.denominator == 1 else f"{c.numerator}/{c.denominator}"


def formula_of(label: str) -> Formula | None:
    """The label's formula when it reads as one, else None (a library name)."""
    if not label:
        return None
    if label == "e-":
        return parse_formula(label)
    if " " in label or not (label[0].isupper() or label[0] in "(["):
        return None
    try:
        return parse_formula(label)
    except FormulaError:
        return None


@dataclass(frozen=True)
class Term:
    """One species in a reaction, with its coefficient as written (positive)."""

    coefficient: Fraction
    label: str
    phase: str
    formula: Formula | None

    def __post_init__(self) -> None:
        if not isinstance(self.coefficient, Fraction) or self.coefficient <= 0:
            raise ValueError(f"coefficient must be a positive Fraction, got {self.coefficient!r}")
        if self.phase not in PHASES:
            raise ValueError(f"phase must be one of g, l, s, aq, got {self.phase!r}")

    @classmethod
    def of(cls, coefficient: Fraction | int, label: str, phase: str) -> "Term":
        """A term whose formula is derived from the label as the parser does."""
        return cls(Fraction(coefficient), label, PHASE_ALIASES.get(phase, phase), formula_of(label))

    @property
    def key(self) -> str:
        """The species with its phase, e.g. ``H2O(l)`` or ``intermediate B(l)``."""
        return f"{self.label}({self.phase})"

    def __str__(self) -> str:
        if self.coefficient == 1:
            return self.key
        return f"{_format_coefficient(self.coefficient)} {self.key}"


@dataclass(frozen=True)
class Reaction:
    """A parsed reaction; ``text`` is its normal form."""

    reactants: tuple[Term, ...]
    products: tuple[Term, ...]
    reversible: bool = False

    def __post_init__(self) -> None:
        if not self.reactants or not self.products:
            raise ValueError("a reaction needs at least one reactant and one product")

    @property
    def arrow(self) -> str:
        return "<=>" if self.reversible else "->"

    @property
    def text(self) -> str:
        """Normal form: coefficient 1 omitted, fractions as ``1/2``, ``->`` or ``<=>``."""
        left = " + ".join(str(t) for t in self.reactants)
        right = " + ".join(str(t) for t in self.products)
        return f"{left} {self.arrow} {right}"

    def __str__(self) -> str:
        return self.text

    @property
    def terms(self) -> tuple[Term, ...]:
        return self.reactants + self.products

    def signed(self) -> tuple[tuple[Fraction, Term], ...]:
        """(ν, term) pairs with ν negative for reactants, positive for products."""
        return tuple((-t.coefficient, t) for t in self.reactants) + tuple(
            (t.coefficient, t) for t in self.products
        )

    def scaled(self, k: Fraction | int) -> "Reaction":
        """All coefficients multiplied by the positive rational ``k``."""
        if not isinstance(k, Rational):
            raise TypeError(f"scale factor must be an int or Fraction, got {k!r}")
        k = Fraction(k)
        if k <= 0:
            raise ValueError(f"scale factor must be positive, got {k}")
        return Reaction(
            tuple(replace(t, coefficient=t.coefficient * k) for t in self.reactants),
            tuple(replace(t, coefficient=t.coefficient * k) for t in self.products),
            self.reversible,
        )

    def reversed(self) -> "Reaction":
        """Products and reactants swapped (the reverse reaction)."""
        return Reaction(self.products, self.reactants, self.reversible)


# --------------------------------------------------------------------------- parsing


def _split_terms(side: str) -> list[str]:
    """Split one side at the '+' signs that separate terms (not charges)."""
    chunks: list[str] = []
    start = 0
    for i, ch in enumerate(side):
        if ch != "+":
            continue
        spaced = 0 < i < len(side) - 1 and side[i - 1].isspace() and side[i + 1].isspace()
        if spaced or _AFTER_PHASE_RE.search(side, start, i):
            chunks.append(side[start:i])
            start = i + 1
    chunks.append(side[start:])
    return [c.strip() for c in chunks]


def _parse_term(text: str) -> Term:
    m = _PHASE_RE.match(text)
    phase_written = m.group("phase").strip() if m else None
    if m is None or not re.fullmatch(r"[a-z]+", phase_written or ""):
        # no phase at all (the final bracket, if any, belongs to the label)
        cm = _COEFF_RE.match(text)
        bare = " ".join(cm.group("label").split()) if cm else text
        options = ", ".join(f"{bare}({p})" for p in ("g", "l", "s"))
        raise ReactionError(
            f"term '{text}' has no phase: write it as {options} or {bare}(aq)"
        )
    if phase_written not in PHASE_ALIASES:
        raise ReactionError(
            f"term '{text}' has an unknown phase '({phase_written})': "
            f"use {_ALLOWED_PHASES_TEXT}"
        )
    body = m.group("body").strip()
    coefficient = Fraction(1)
    cm = _COEFF_RE.match(body)
    if cm and len(cm.group("coeff")) > MAX_COEFFICIENT_CHARS:
        raise ReactionError(
            f"term '{text[:60]}' has a coefficient longer than {MAX_COEFFICIENT_CHARS} "
            "characters: write a smaller whole number, decimal or fraction"
        )
    if cm:
        try:
            coefficient = Fraction(cm.group("coeff"))
        except ZeroDivisionError:
            raise ReactionError(
                f"term '{text}' has a coefficient with a zero denominator"
            ) from None
        body = cm.group("label")
    label = " ".join(body.split())
    if not label or not re.search(r"[A-Za-z]", label):
        raise ReactionError(f"term '{text}' names no species")
    if not (label[0].isalnum() or label[0] in "(["):
        raise ReactionError(
            f"term '{text}' does not start with a coefficient or a species name"
        )
    if coefficient == 0:
        raise ReactionError(f"term '{text}' has a zero coefficient: leave the term out")
    glued = _GLUED_RE.match(label)
    if glued and formula_of(glued.group("rest")) is not None:
        raise ReactionError(
            f"term '{text}': put a space between the coefficient and the formula, "
            f"as in '{glued.group('coeff')} {glued.group('rest')}({phase_written})'"
        )
    return Term(coefficient, label, PHASE_ALIASES[phase_written], formula_of(label))


def _parse_side(side: str, reaction_text: str, which: str) -> tuple[Term, ...]:
    if not side.strip():
        raise ReactionError(f"reaction '{reaction_text}' has no {which}")
    terms = []
    for chunk in _split_terms(side)[:MAX_TERMS + 1]:
        if not chunk:
            raise ReactionError(
                f"reaction '{reaction_text}' has an empty term among its {which} "
                "(a '+' with nothing beside it)"
            )
        terms.append(_parse_term(chunk))
    return tuple(terms)


def parse_reaction(text: str) -> Reaction:
    """Parse a reaction string into a :class:`Reaction`.

    Raises :class:`ReactionError` quoting the offending part of ``text``.
    """
    if not isinstance(text, str):
        raise ReactionError(f"a reaction must be a string, got {text!r}")
    written = " ".join(text.split())
    if not written:
        raise ReactionError("the reaction is empty")
    if len(written) > MAX_REACTION_CHARS:
        raise ReactionError(
            f"the reaction is {len(written):,} characters long; at most "
            f"{MAX_REACTION_CHARS:,} are accepted (it starts '{written[:40]}')"
        )
    bad = _BAD_ARROW_RE.search(written)
    if bad:
        raise ReactionError(
            f"reaction '{written}' has an arrow '{bad.group()}' that is not understood: "
            "write '->' (forward) or '<=>' (equilibrium)"
        )
    arrows = list(_ARROW_RE.finditer(written))
    if not arrows:
        raise ReactionError(
            f"reaction '{written}' has no arrow: write '->' (forward) or '<=>' "
            "(equilibrium) between reactants and products"
        )
    if len(arrows) > 1:
        found = ", ".join(f"'{a.group()}'" for a in arrows)
        raise ReactionError(
            f"reaction '{written}' has more than one arrow ({found}): "
            "write one '->' (forward) or '<=>' (equilibrium)"
        )
    arrow = arrows[0]
    n_terms = len(_split_terms(written[: arrow.start()])) + len(_split_terms(written[arrow.end():]))
    if n_terms > MAX_TERMS:
        raise ReactionError(
            f"reaction '{written[:60]}...' has {n_terms} terms; at most {MAX_TERMS} are "
            "accepted: write the reaction a review board checks, with its main species"
        )
    reactants = _parse_side(written[: arrow.start()], written, "reactants")
    products = _parse_side(written[arrow.end():], written, "products")

    seen: dict[str, str] = {}
    for side_name, side in (("reactants", reactants), ("products", products)):
        for term in side:
            if term.key in seen:
                if seen[term.key] == side_name:
                    raise ReactionError(
                        f"'{term.key}' appears twice among the {side_name} of "
                        f"reaction '{written}': combine the terms into one"
                    )
                raise ReactionError(
                    f"'{term.key}' appears on both sides of reaction '{written}': "
                    "write the net reaction"
                )
            seen[term.key] = side_name
    return Reaction(reactants, products, arrow.group() in _REVERSIBLE_ARROWS)


# --------------------------------------------------------------------------- balance


def _exact(value: float | int | Fraction, what: str) -> Fraction:
    if isinstance(value, Rational):
        return Fraction(value)
    if not math.isfinite(value):
        raise ReactionError(f"the composition of '{what}' has a non-finite count {value!r}")
    return Fraction(value).limit_denominator(10**6)


def _term_compositions(
    reaction: Reaction, compositions: Mapping[str, Composition] | None
) -> list[tuple[dict[str, Fraction], Fraction]]:
    out = []
    for term in reaction.terms:
        if compositions is not None and term.key in compositions:
            elements, charge = compositions[term.key]
            comp = {el: _exact(n, term.key) for el, n in elements.items()}
            out.append((comp, _exact(charge, term.key)))
        elif term.formula is not None:
            out.append((term.formula.composition, Fraction(term.formula.charge)))
        else:
            raise ReactionError(
                f"cannot check the balance of reaction '{reaction.text}': "
                f"the composition of '{term.key}' is not known"
            )
    return out


def _element_order(elements: set[str]) -> list[str]:
    first = [el for el in ("C", "H") if el in elements]
    return first + sorted(elements - set(first))


def _matrix(
    reaction: Reaction, compositions: Mapping[str, Composition] | None
) -> tuple[list[str], list[list[Fraction]]]:
    """Rows: elements (C, H, then alphabetical) and 'charge'; columns: terms in order."""
    comps = _term_compositions(reaction, compositions)
    elements = _element_order({el for comp, _ in comps for el, n in comp.items() if n})
    rows = [[comp.get(el, Fraction(0)) for comp, _ in comps] for el in elements]
    rows.append([charge for _, charge in comps])
    return elements + ["charge"], rows


def balance_residuals(
    reaction: Reaction, compositions: Mapping[str, Composition] | None = None
) -> dict[str, Fraction]:
    """Non-zero residuals, products minus reactants, per element and ``"charge"``.

    ``compositions`` maps ``term.key`` to ``(element counts, charge)``; a term
    missing from it uses its own formula.  An empty dict means balanced.
    """
    names, rows = _matrix(reaction, compositions)
    nus = [nu for nu, _ in reaction.signed()]
    out: dict[str, Fraction] = {}
    for name, row in zip(names, rows):
        r = sum((nu * a for nu, a in zip(nus, row)), Fraction(0))
        if r:
            out[name] = r
    return out


def suggest_balance(
    reaction: Reaction, compositions: Mapping[str, Composition] | None = None
) -> Reaction | None:
    """The balanced form with the smallest whole-number coefficients, or None.

    The same species stay on the same sides with positive coefficients.
    None when no such form exists or when it is not unique (the nullspace of
    the element/charge matrix is not one-dimensional).
    """
    return _suggest(reaction, compositions)[0]


def _suggest(
    reaction: Reaction, compositions: Mapping[str, Composition] | None
) -> tuple[Reaction | None, int]:
    """(suggestion or None, nullspace dimension)."""
    import sympy  # lazy: slow to import and only needed here

    _, rows = _matrix(reaction, compositions)
    n_left = len(reaction.reactants)
    # columns: reactants as +composition, products as -composition; A c = 0, c > 0
    a = sympy.Matrix(
        [
            [sympy.Rational(x.numerator, x.denominator) * (1 if j < n_left else -1)
             for j, x in enumerate(row)]
            for row in rows
        ]
    )
    basis = a.nullspace()
    if len(basis) != 1:
        return None, len(basis)
    v = [Fraction(int(sympy.fraction(x)[0]), int(sympy.fraction(x)[1])) for x in basis[0]]
    # sympy sets the free variable to 1, so a positive solution comes out positive
    if not all(x > 0 for x in v):
        return None, 1
    denominators = math.lcm(*(x.denominator for x in v))
    whole = [int(x * denominators) for x in v]
    g = math.gcd(*whole)
    coefficients = [Fraction(x // g) for x in whole]
    terms = [replace(t, coefficient=c) for t, c in zip(reaction.terms, coefficients)]
    return Reaction(tuple(terms[:n_left]), tuple(terms[n_left:]), reaction.reversible), 1


def _format_residual(value: Fraction) -> str:
    return ("+" if value > 0 else "-") + _format_coefficient(abs(value))


def check_balance(
    reaction: Reaction, compositions: Mapping[str, Composition] | None = None
) -> None:
    """Raise :class:`ReactionError` unless elements and charge balance.

    The message lists every residual (products minus reactants) and, when one
    exists, the balanced form with the same species on the same sides.
    """
    residuals = balance_residuals(reaction, compositions)
    if not residuals:
        return
    listed = ", ".join(f"{name} {_format_residual(r)}" for name, r in residuals.items())
    suggestion, dimension = _suggest(reaction, compositions)
    if suggestion is not None:
        advice = f"balanced with the same species: '{suggestion.text}'"
    elif dimension > 1:
        advice = (
            "no unique balanced form exists with these species on these sides "
            f"({dimension} independent balances)"
        )
    else:
        advice = "no balanced form exists with these species on these sides"
    raise ReactionError(
        f"reaction '{reaction.text}' does not balance: {listed} "
        f"(products minus reactants); {advice}"
    )
