"""What the page renderers get (plain frozen data), and the summaries pages print.

The build makes the views from an assessed case; the templates read them
and call the summaries below, which put a case's verdicts, crossovers and
integrity in words.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Sequence

from dossier.render.maths import DerivationView
from dossier.render.numbers import words
from dossier.render.phrases import crossover_text
from dossier.render.species_text import DATA_RANGE_MEANING, phase_lines

if TYPE_CHECKING:  # pragma: no cover
    from dossier.library.record import SpeciesRecord
    from dossier.model.assessment import Assessment
    from dossier.model.case import Charge, Decomposition, Measured, Review, Vessel
    from dossier.render.figures import Figure
    from dossier.model.decisions import CaseDecisions
    from dossier.review.digest import IntegrityRecord

FAVOURABLE_WORDS = {
    "everywhere": "favourable everywhere in the window (ΔG° < 0)",
    "partly": "favourable in part of the window (ΔG° changes sign)",
    "nowhere": "favourable nowhere in the window (ΔG° ≥ 0)",
}


@dataclass(frozen=True)
class CaseView:
    """Everything a dossier page needs about one case (plain data)."""

    slug: str
    source_name: str  # the case file's name, e.g. "full.md"
    assessment: "Assessment"
    reviews: tuple["Review", ...]
    narrative: str
    inerts: tuple[tuple[str, float], ...]
    charge: "Charge | None"
    vessel: "Vessel | None"
    decomposition: "Decomposition | None"
    measured: "Measured | None"
    species_slugs: tuple[str, ...]  # one per assessment.species
    figures: tuple["Figure", ...]
    derivation: DerivationView | None
    derivation_note: str = ""
    integrity: "IntegrityRecord | None" = None
    integrity_note: str = "integrity record: not yet computed"
    decisions: "CaseDecisions | None" = None

    @property
    def id(self) -> str:
        return self.assessment.case_id


@dataclass(frozen=True)
class SpeciesView:
    slug: str
    record: "SpeciesRecord"
    local_to: str | None  # case slug when the record is case-local data
    figure: "Figure"
    used_by: tuple[tuple[str, str, str], ...]  # (case slug, case id, key as written)

    @property
    def phase_lines(self) -> list[tuple[str, str]]:
        """The record's phase boundaries and stable phase at 1 bar, as labelled lines."""
        return phase_lines(self.record)

    @property
    def data_range_meaning(self) -> str:
        return DATA_RANGE_MEANING


@dataclass(frozen=True)
class FailedCase:
    """A case file that failed to assess (or render) in this build, with its page.

    ``slug`` names its page (``cases/<slug>.html``, "" when it has none);
    ``earlier`` is the data export (``cases/<slug>.json``) of the last build that
    assessed it, shown as not current, or None when no earlier good build is
    known; ``kept`` are the packets of that build kept in the site.
    """

    file: str
    problems: tuple[str, ...]
    slug: str = ""
    earlier: dict | None = field(default=None, compare=False, hash=False)
    kept: tuple[str, ...] = ()


@dataclass(frozen=True)
class MeetingView:
    date: str
    slug: str  # "meeting-2026-11-24"
    cases: tuple[CaseView, ...]


# --------------------------------------------------------------------------
# Summaries used by the register and the cover pages

def verdict_summary(reviews: Sequence["Review"]) -> str:
    if not reviews:
        return "no verdict yet"
    return "; ".join(f"{words(str(r.verdict))} ({r.name}, {r.date.isoformat()})"
                     for r in reviews)


def crossover_summary(a: "Assessment") -> str:
    """The crossovers in words, as the terminal prints them (:func:`phrases.crossover_text`)."""
    return crossover_text(a.thermo)


def worst_finding(a: "Assessment"):
    return max(a.findings, key=lambda f: f.rank) if a.findings else None


def review_record_status(review: "Review", integrity: "IntegrityRecord | None") -> str:
    if not review.digest:
        return "the verdict names no integrity record"
    if integrity is None:
        return "the verdict names a record; the current record is not computed"
    if review.digest.lower().replace(" ", "") == integrity.digest:
        return "given on the current integrity record"
    if integrity.digest.startswith(review.digest.lower().replace(" ", "")) and len(review.digest) >= 12:
        return "given on the current integrity record (short form)"
    return "given on a different integrity record: the case or its data changed since"


# --------------------------------------------------------------------------
# What the packets' covers, agendas and sign-off sheets print

#: The roles of a sign-off sheet besides those the case's verdicts name: the
#: disciplines a process-safety review board usually seats (common practice, no source).
DEFAULT_BOARD_ROLES = ("process safety (board chair)", "thermal hazards laboratory",
                       "production engineering", "environment and occupational hygiene")

#: The mark a packet carries until the board has accepted the case.
APPROVAL_MARKS = {"draft": "DRAFT", "submitted": "NOT APPROVED", "declined": "NOT APPROVED",
                  "withdrawn": "NOT APPROVED"}


def approval_mark(a: "Assessment") -> str:
    """"DRAFT" or "NOT APPROVED" until the case is accepted (with or without
    conditions); "" once it is."""
    return APPROVAL_MARKS.get(str(a.status), "")


def open_conditions(v: CaseView) -> tuple[str, ...]:
    """The open conditions of the case's current verdicts, one line each ("C1: text").

    They come from the conditions tracked in the case's decisions
    (:class:`~dossier.model.decisions.ConditionLine`, closed ones left out); a
    view without decisions falls back to the conditions text of each verdict."""
    if v.decisions is not None:
        return tuple(f"{c.id}: {c.text}" for c in v.decisions.conditions if c.open)
    return tuple(f"{r.conditions} ({r.name})" for r in v.reviews if r.conditions)


def signoff_roles(v: CaseView) -> tuple[str, ...]:
    """One line per board role on the sign-off sheet: the roles the case's verdicts
    and signatures name, then the usual roles of a board not named yet."""
    named = [r.role for r in v.reviews]
    if v.decisions is not None:
        named += [s.role for s in v.decisions.signatures]
    roles: list[str] = []
    for role in [*named, *DEFAULT_BOARD_ROLES]:
        if role and role.strip().lower() not in {r.lower() for r in roles}:
            roles.append(role.strip())
    return tuple(roles)


__all__ = ["CaseView", "FAVOURABLE_WORDS", "FailedCase", "MeetingView", "SpeciesView",
           "crossover_summary", "review_record_status", "verdict_summary", "worst_finding",
           "APPROVAL_MARKS", "DEFAULT_BOARD_ROLES", "approval_mark", "open_conditions",
           "signoff_roles"]
