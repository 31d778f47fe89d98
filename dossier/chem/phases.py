"""Phase codes: the one place that knows how a phase is written and named.

A phase is written in brackets after a species, ``(g)``, ``(l)``, ``(s)``,
``(cr)`` (a crystalline solid, stored as ``s``) or ``(aq)``.
"""
from __future__ import annotations

from dossier.errors import SpeciesError

#: Canonical phase codes, in the order listings show them.
PHASES: tuple[str, ...] = ("g", "l", "s", "aq")

#: Phase as written (lower case) -> canonical code.
PHASE_ALIASES: dict[str, str] = {"g": "g", "l": "l", "s": "s", "cr": "s", "aq": "aq"}

#: Canonical code -> the word pages use.
PHASE_NAMES: dict[str, str] = {"g": "gas", "l": "liquid", "s": "solid", "aq": "aqueous"}

#: What a message lists as the accepted spellings.
ACCEPTED_TEXT = "g, l, s, cr or aq"


def normalise_phase(phase: str) -> str:
    """'g', 'l', 's' (or 'cr'), 'aq' -> canonical phase code; anything else is an error."""
    key = str(phase).strip().lower()
    if key not in PHASE_ALIASES:
        raise SpeciesError(f"unknown phase '{phase}' (expected {ACCEPTED_TEXT})")
    return PHASE_ALIASES[key]


def split_phase(label: str) -> tuple[str, str | None]:
    """'water(l)' -> ('water', 'l'); 'water' -> ('water', None); 'NaCl(cr)' -> ('NaCl', 's')."""
    text = label.strip()
    if text.endswith(")") and "(" in text:
        body, _, tail = text[:-1].rpartition("(")
        code = PHASE_ALIASES.get(tail.strip().lower())
        if code is not None and body:
            return body.strip(), code
    return text, None


def labelled(name: str, phase: str) -> str:
    """'water', 'cr' -> 'water(s)': a label with its canonical phase."""
    return f"{name}({normalise_phase(phase)})"


__all__ = ["PHASES", "PHASE_ALIASES", "PHASE_NAMES", "ACCEPTED_TEXT", "normalise_phase",
           "split_phase", "labelled"]
