"""The board's decisions on a case as plain data: signed verdicts checked against
the trusted keys and the current digest, verdicts recorded in the case file,
and the revision history.  Made by :mod:`dossier.review.decisions` and
:mod:`dossier.review.revisions`; shown by the pages.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.model.integrity import RecordedReview
from dossier.model.readiness import Readiness


@dataclass(frozen=True)
class Change:
    """One input or figure, before and after (as display text)."""

    what: str
    before: str
    after: str


@dataclass(frozen=True)
class RevisionStep:
    from_revision: int
    to_revision: int
    inputs: tuple[Change, ...]
    figures: tuple[Change, ...]
    findings_added: tuple[str, ...]
    findings_removed: tuple[str, ...]

    @property
    def unchanged(self) -> bool:
        return not (self.inputs or self.figures or self.findings_added or self.findings_removed)


@dataclass(frozen=True)
class RevisionHistory:
    case_id: str
    revisions: tuple[int, ...]  # every revision shown, oldest first, the current one last
    steps: tuple[RevisionStep, ...]
    problems: tuple[str, ...] = ()  # kept revisions that could not be read or assessed


#: How each signature status reads on a page (our own words).
SIGNATURE_WORDS = {
    "valid": "valid: signed by a trusted key on the current data",
    "versions-changed": "holds: same inputs, newer versions, no key figure moved",
    "withdrawn": "withdrawn by the signer",
    "changed-since-signed": "signed on other data: the case or its data changed since",
    "superseded": "superseded: replaced by the signer's later entry",
    "untrusted-key": "untrusted: the key is not in the board's list",
    "invalid": "invalid: the signature does not match (altered)",
}

#: How a current signed verdict stands, in the one-line summary of a case.
SUMMARY_WORDS = {
    "valid": "signed, valid",
    "versions-changed": "signed, holds after a version change",
    "changed-since-signed": "signed on other data",
    "untrusted-key": "signed with a key the board does not trust",
    "invalid": "signature invalid",
}

#: The statuses of a signer's current entry that hold.
HOLDING_STATUSES = ("valid", "versions-changed", "withdrawn")


@dataclass(frozen=True)
class ConditionLine:
    """One condition of the case's verdicts, open or closed."""

    id: str                    # "C1"; "R2"/"S3" for a condition written without an id
    text: str
    set_by: tuple[str, ...]    # "T. Quarrell (signed, 2026-11-17)", ...
    status: str                # "open" | "closed"
    closed_by: str = ""
    closed_on: str = ""
    evidence: str = ""

    @property
    def open(self) -> bool:
        return self.status == "open"


@dataclass(frozen=True)
class SignatureLine:
    signer: str
    role: str
    date: str
    verdict: str
    conditions: str
    revision: int
    status: str  # a key of SIGNATURE_WORDS
    explanation: str
    note: str = ""                         # the reason of a withdrawal or decline
    changed_parts: tuple[str, ...] = ()    # parts of the integrity record that differ
    moved: tuple[Change, ...] = ()         # key figures: as signed, as re-assessed now

    @property
    def words(self) -> str:
        return SIGNATURE_WORDS.get(self.status, self.status)

    @property
    def current(self) -> bool:
        """The signer's latest entry (superseded ones are history)."""
        return self.status != "superseded"


@dataclass(frozen=True)
class CaseDecisions:
    signatures: tuple[SignatureLine, ...]
    signature_problems: tuple[str, ...]  # a signature file that could not be read
    recorded: tuple[RecordedReview, ...]
    history: RevisionHistory | None
    readiness: Readiness | None = None  # the rules of the case's status, applied
    conditions: tuple[ConditionLine, ...] = ()
    condition_problems: tuple[str, ...] = ()

    @property
    def changed_since_decided(self) -> bool:
        """True when a current verdict (signed or recorded) was given on other data."""
        return (any(s.status == "changed-since-signed" for s in self.signatures)
                or any(r.status == "changed since reviewed" for r in self.recorded))

    @property
    def open_conditions(self) -> tuple[ConditionLine, ...]:
        return tuple(c for c in self.conditions if c.open)

    @property
    def closed_conditions(self) -> tuple[ConditionLine, ...]:
        return tuple(c for c in self.conditions if not c.open)

    @property
    def current_signatures(self) -> tuple[SignatureLine, ...]:
        return tuple(s for s in self.signatures if s.current)

    @property
    def summary(self) -> str:
        """The verdicts in one line: every current signed verdict and every recorded
        one, with how it stands; "no verdict yet" only when there is none at all."""
        parts = [f"{s.verdict.replace('-', ' ')} ({s.signer}, {s.date}): "
                 f"{SUMMARY_WORDS.get(s.status, s.status)}"
                 for s in self.current_signatures if s.verdict != "withdrawn"]
        parts += [f"{r.verdict.replace('-', ' ')} ({r.name}, {r.date}): recorded, {r.status}"
                  for r in self.recorded]
        parts += [f"withdrawn by {s.signer} ({s.date})"
                  for s in self.current_signatures if s.verdict == "withdrawn"]
        return "; ".join(parts) or "no verdict yet"

    @property
    def not_checkable(self) -> int:
        """Recorded verdicts that name no digest, so cannot be checked."""
        return sum(1 for r in self.recorded if r.status.startswith("not checkable"))

    @property
    def signature_trouble(self) -> bool:
        return bool(self.signature_problems) or any(
            s.status in ("untrusted-key", "invalid") for s in self.signatures)


__all__ = ["Change", "RevisionStep", "RevisionHistory", "SIGNATURE_WORDS", "SUMMARY_WORDS",
           "HOLDING_STATUSES",
           "ConditionLine", "SignatureLine", "CaseDecisions"]
