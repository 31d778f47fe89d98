"""The board's decisions on a case, as the site shows them.

For one case: every signed review in ``cases/<id>.signatures`` checked
against the trusted keys and the current integrity digest; every verdict
recorded in the case file's ``[[review]]`` tables checked against the same
digest; and the revision history from the kept earlier revisions
(``cases/<id>/rev-<N>.md``).  :func:`collect_decisions` works on the files
already read into a :class:`~dossier.review.inputs.CaseInputs`; the result is
plain data for the pages.
"""
from __future__ import annotations


from dossier.assess.evaluate import assess_case
from dossier.casefile.load import header_of, parse_source
from dossier.errors import DossierError
from dossier.library.lookup import Library
from dossier.model.assessment import Assessment
from dossier.model.case import Case
from dossier.model.decisions import CaseDecisions, RevisionHistory, SignatureLine
from dossier.model.integrity import IntegrityRecord
from dossier.review.digest import check_recorded_reviews
from dossier.review.inputs import CaseInputs
from dossier.review.revisions import history
from dossier.review.keys import parse_trusted_keys
from dossier.review.signatures import parse_signatures, verify_reviews

def _signatures(inputs: CaseInputs, case: Case, digest: str | None
                ) -> tuple[tuple[SignatureLine, ...], tuple[str, ...]]:
    sig, keys = inputs.signatures, inputs.trusted_keys
    if not sig.exists:
        return (), ()
    if sig.problem or keys.problem:
        return (), tuple(p for p in (sig.problem, keys.problem) if p)
    try:
        reviews = parse_signatures(sig.data or b"", str(sig.path))
        trusted = parse_trusted_keys(keys.data, str(keys.path)) if keys.data is not None else ()
    except DossierError as err:
        return (), tuple(str(p) for p in err.problems)
    if digest is None:
        return (), (f"{sig.path.name}: the signatures cannot be checked because the integrity "
                    "record could not be computed",)
    statuses = verify_reviews(reviews, trusted, digest, case.revision, case_id=case.id)
    lines = tuple(
        SignatureLine(signer=r.signer, role=r.role, date=str(r.date), verdict=r.verdict,
                      conditions=r.conditions, revision=int(r.revision), status=s.status,
                      explanation=s.explanation)
        for r, s in zip(reviews, statuses))
    return lines, ()


def _history(inputs: CaseInputs, case: Case, assessment: Assessment,
             library: Library) -> RevisionHistory | None:
    if not inputs.revisions:
        return None
    revisions = []
    problems = []
    for kept in inputs.revisions:
        name = kept.path.name
        if kept.source is None:
            problems.append(f"{name}: this kept revision could not be assessed ({kept.problem})")
            continue
        try:
            old = parse_source(kept.source)
            if old.revision != kept.number:
                problems.append(f"{name}: the file says revision {old.revision}; "
                                f"its name says {kept.number}")
            revisions.append((kept.number, header_of(kept.source), old.narrative,
                              assess_case(old, library, settings=inputs.settings())))
        except DossierError as err:
            msg = "; ".join(str(p) for p in err.problems)
            problems.append(f"{name}: this kept revision could not be assessed ({msg})")
    revisions.append((case.revision, header_of(inputs.source), case.narrative, assessment))
    return history(case.id, revisions, problems)


def collect_decisions(inputs: CaseInputs, case: Case, assessment: Assessment,
                      integrity: IntegrityRecord | None, library: Library) -> CaseDecisions:
    """Signatures, recorded verdicts and revision history of one case, from the files
    already read into ``inputs`` (nothing is read here)."""
    digest = integrity.digest if integrity else None
    signatures, sig_problems = _signatures(inputs, case, digest)
    recorded = check_recorded_reviews(case.reviews, digest) if digest else ()
    return CaseDecisions(signatures=signatures, signature_problems=sig_problems,
                         recorded=recorded, history=_history(inputs, case, assessment, library))


__all__ = ["collect_decisions"]
