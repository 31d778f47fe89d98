"""The board's decisions on a case, as the site shows them.

For one case: every signed review in ``cases/<id>.signatures`` checked
against the trusted keys and the current integrity digest; every verdict
recorded in the case file's ``[[review]]`` tables checked against the same
digest; and the revision history from the kept earlier revisions
(``cases/<id>/rev-<N>.md``).  :func:`collect_decisions` reads those files;
the result is plain data for the pages.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from dossier.errors import DossierError

if TYPE_CHECKING:  # pragma: no cover
    from dossier.assess.evaluate import Assessment
    from dossier.model.case import Case
    from dossier.review.digest import IntegrityRecord, RecordedReview
    from dossier.review.revisions import RevisionHistory
    from dossier.library.lookup import Library

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
    recorded: tuple["RecordedReview", ...]
    history: "RevisionHistory | None"

    @property
    def changed_since_decided(self) -> bool:
        """True when a verdict (signed or recorded) was given on other data."""
        return (any(s.status == "changed-since-signed" for s in self.signatures)
                or any(r.status == "changed since reviewed" for r in self.recorded))

    @property
    def signature_trouble(self) -> bool:
        return bool(self.signature_problems) or any(
            s.status in ("untrusted-key", "invalid") for s in self.signatures)


def _signatures(path: Path, case: "Case", digest: str | None) -> tuple[tuple[SignatureLine, ...], tuple[str, ...]]:
    from dossier.review.signatures import (load_signatures, load_trusted_keys, signatures_path,
                          trusted_keys_path, verify_reviews)

    sig_file = signatures_path(path)
    if not sig_file.exists():
        return (), ()
    try:
        reviews = load_signatures(sig_file)
        keys_file = trusted_keys_path(path.parent)
        trusted = load_trusted_keys(keys_file) if keys_file.exists() else ()
    except DossierError as err:
        return (), tuple(str(p) for p in err.problems)
    if digest is None:
        return (), (f"{sig_file.name}: the signatures cannot be checked because the integrity "
                    "record could not be computed",)
    statuses = verify_reviews(reviews, trusted, digest, case.revision, case_id=case.id)
    lines = tuple(
        SignatureLine(signer=r.signer, role=r.role, date=str(r.date), verdict=r.verdict,
                      conditions=r.conditions, revision=int(r.revision), status=s.status,
                      explanation=s.explanation)
        for r, s in zip(reviews, statuses))
    return lines, ()


def _history(path: Path, case: "Case", assessment: "Assessment",
             library: "Library") -> "RevisionHistory | None":
    from dossier.assess.evaluate import assess_case
    from dossier.casefile.load import load_case, read_header
    from dossier.review.revisions import archived_revisions, history

    kept = archived_revisions(path)
    if not kept:
        return None
    revisions = []
    problems = []
    for n, rev_path in kept:
        try:
            text = rev_path.read_text(encoding="utf-8")
            old = load_case(rev_path)
            if old.revision != n:
                problems.append(f"{rev_path.name}: the file says revision {old.revision}; "
                                f"its name says {n}")
            revisions.append((n, read_header(text, str(rev_path)), old.narrative,
                              assess_case(old, library)))
        except (DossierError, OSError, UnicodeDecodeError) as err:
            msg = "; ".join(str(p) for p in err.problems) if isinstance(err, DossierError) else str(err)
            problems.append(f"{rev_path.name}: this kept revision could not be assessed ({msg})")
    current_text = path.read_text(encoding="utf-8")
    revisions.append((case.revision, read_header(current_text, str(path)), case.narrative,
                      assessment))
    return history(case.id, revisions, problems)


def collect_decisions(path: Path, case: "Case", assessment: "Assessment",
                      integrity: "IntegrityRecord | None", library: "Library") -> CaseDecisions:
    from dossier.review.digest import check_recorded_reviews

    digest = integrity.digest if integrity else None
    signatures, sig_problems = _signatures(path, case, digest)
    recorded = check_recorded_reviews(case.reviews, digest) if digest else ()
    return CaseDecisions(signatures=signatures, signature_problems=sig_problems,
                         recorded=recorded, history=_history(path, case, assessment, library))
