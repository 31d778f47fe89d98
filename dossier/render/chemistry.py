"""Chemistry typeset as HTML: formulas, species with their phase, reactions.

Built from escaped pieces only and then marked safe, so a name from a case
file (``intermediate <B>``) shows as text.
"""
from __future__ import annotations

import re
from fractions import Fraction

from markupsafe import Markup, escape

from dossier.chem.phases import PHASE_ALIASES
from dossier.chem.reaction import Term, formula_of, parse_reaction
from dossier.errors import DossierError
from dossier.render.numbers import MINUS, NBSP

_CHARGE_RE = re.compile(r"(\^(?P<n1>\d+)(?P<s1>[+-])|(?P<s2>[+-])(?P<n2>\d+)|(?P<s3>\++|-+))$")

#: A species key as written: ``H2O(l)``, ``NaCl(cr)`` (any phase spelling the parser accepts).
_KEY_RE = re.compile(rf"^(.*)\(({'|'.join(PHASE_ALIASES)})\)\s*$")


def _charge_html(m: re.Match) -> str:
    """The superscript of a charge matched by ``_CHARGE_RE``: ``2-`` → ²⁻ (as HTML)."""
    if m.group("s1"):
        n, s = m.group("n1"), m.group("s1")
    elif m.group("s2"):
        n, s = m.group("n2"), m.group("s2")
    else:
        run = m.group("s3")
        n, s = (str(len(run)) if len(run) > 1 else ""), run[0]
    n = "" if n == "1" else n
    return f"<sup>{escape(n)}{'+' if s == '+' else MINUS}</sup>"


def formula_html(label: str) -> Markup:
    """A formula with subscript counts and a superscript charge: ``SO4^2-`` → SO₄²⁻."""
    text = label.strip()
    if text in ("e-", "e"):
        return Markup("e<sup>−</sup>")
    charge = ""
    m = _CHARGE_RE.search(text)
    if m and m.start() > 0:
        charge = _charge_html(m)
        text = text[: m.start()]
    out = []
    parts = re.split(r"([.·*])", text)
    for part in parts:
        if part in (".", "·", "*"):
            out.append("·")
            continue
        mult = re.match(r"^\d+(?:\.\d+)?", part)
        if mult:  # multiplier of an adduct part: normal size
            out.append(str(escape(mult.group(0))))
            part = part[mult.end():]
        for tok in re.finditer(r"(\d+(?:\.\d+)?)|([^\d]+)", part):
            if tok.group(1):
                out.append(f"<sub>{escape(tok.group(1))}</sub>")
            else:
                out.append(str(escape(tok.group(2))))
    return Markup("".join(out) + charge)


def coefficient_text(c: Fraction) -> str:
    """A stoichiometric coefficient as written: ``3``, ``1/2``."""
    return str(c.numerator) if c.denominator == 1 else f"{c.numerator}/{c.denominator}"


def species_html(label: str, phase: str, is_formula: bool) -> Markup:
    """A species with its phase; a formula is typeset, a name is escaped text."""
    body = formula_html(label) if is_formula else escape(label)
    return Markup('<span class="species">{}<span class="phase">({})</span></span>').format(
        body, phase)


def _side_html(terms: tuple[Term, ...]) -> Markup:
    bits = []
    for t in terms:
        coeff = "" if t.coefficient == 1 else Markup('<span class="coeff">{}</span>{}').format(
            coefficient_text(t.coefficient), NBSP)
        bits.append(Markup("{}{}").format(coeff, species_html(t.label, t.phase,
                                                              t.formula is not None)))
    return Markup(' <span class="op">+</span> ').join(bits)


def reaction_html(text: str) -> Markup:
    """The reaction typeset as chemistry; plain escaped text if it cannot be parsed."""
    try:
        r = parse_reaction(text)
    except (DossierError, ValueError):
        return Markup('<span class="reaction">{}</span>').format(text)
    arrow = "⇌" if r.reversible else "→"
    return Markup('<span class="reaction">{} <span class="arrow" title="{}">{}</span> {}</span>'
                  ).format(_side_html(r.reactants), "equilibrium" if r.reversible else "forward",
                           arrow, _side_html(r.products))


def key_html(key: str) -> Markup:
    """A species key as written in the reaction, e.g. ``H2O(l)``, typeset."""
    m = _KEY_RE.match(key.strip())
    if not m:
        return escape(key)
    label, phase = m.group(1).strip(), m.group(2)
    return species_html(label, phase, formula_of(label) is not None)


__all__ = ["coefficient_text", "formula_html", "key_html", "reaction_html", "species_html"]
