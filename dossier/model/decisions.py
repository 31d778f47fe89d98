"""The board's decisions on a case as plain data: signed verdicts checked against
the trusted keys and the current digest, verdicts recorded in the case file,
and the revision history.  Made by :mod:`dossier.review.decisions` and
:mod:`dossier.review.revisions`; shown by the pages.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.model.integrity import RecordedReview


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
    "changed-since-signed": "signed on other data: the case or its data changed since",
    "untrusted-key": "untrusted: the key is not in the board's list",
    "invalid": "invalid: the signature does not match (altered)",
}


@dataclass(frozen=True)
class SignatureLine:
    signer: str
    role: str
    date: str
    verdict: str
    conditions: str
    revision: int
    status: str  # valid | changed-since-signed | untrusted-key | invalid
    explanation: str

    @property
    def words(self) -> str:
        return SIGNATURE_WORDS.get(self.status, self.status)


@dataclass(frozen=True)
class CaseDecisions:
    signatures: tuple[SignatureLine, ...]
    signature_problems: tuple[str, ...]  # a signature file that could not be read
    recorded: tuple[RecordedReview, ...]
    history: RevisionHistory | None

    @property
    def changed_since_decided(self) -> bool:
        """True when a verdict (signed or recorded) was given on other data."""
        return (any(s.status == "changed-since-signed" for s in self.signatures)
                or any(r.status == "changed since reviewed" for r in self.recorded))

    @property
    def signature_trouble(self) -> bool:
        return bool(self.signature_problems) or any(
            s.status in ("untrusted-key", "invalid") for s in self.signatures)


__all__ = ["Change", "RevisionStep", "RevisionHistory", "SIGNATURE_WORDS", "SignatureLine",
           "CaseDecisions"]
