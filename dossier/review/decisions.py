"""The board's decisions on a case, as the site shows them.

For one case: every signed review in ``cases/<id>.signatures`` judged
against the trusted keys and the case as it is now, with the verdict
lifecycle (superseded and withdrawn verdicts, part-by-part comparison:
:mod:`dossier.review.verdicts`); every verdict recorded in the case file's
``[[review]]`` tables checked against the same digest; the conditions of the
current verdicts, open or closed (:mod:`dossier.review.conditions`); and the
revision history from the kept earlier revisions
(``cases/<id>/rev-<N>.md``).  :func:`collect_decisions` works on the files
already read into a :class:`~dossier.review.inputs.CaseInputs`; the result is
plain data for the pages.
"""
from __future__ import annotations


from dossier.assess.evaluate import assess_case, method_libraries
from dossier.casefile.load import header_of, parse_source
from dossier.errors import DossierError
from dossier.library.lookup import Library
from dossier.model.assessment import Assessment
from dossier.model.case import Case
from dossier.model.decisions import (CaseDecisions, ConditionLine, RevisionHistory,
                                     SignatureLine)
from dossier.model.integrity import IntegrityRecord
from dossier.review.conditions import track_conditions
from dossier.review.digest import check_recorded_reviews, current_case
from dossier.review.inputs import CaseInputs
from dossier.review.readiness import case_readiness
from dossier.review.revisions import history
from dossier.review.keys import parse_trusted_keys
from dossier.review.signatures import SignedReview, parse_signatures
from dossier.review.verdicts import CurrentCase, ReviewStatus, judge_reviews


def condition_words(review: SignedReview) -> str:
    """A review's conditions as one line: "C1: text; C2: text" (first form: the text)."""
    return "; ".join(f"{cid}: {text}" if cid else text for cid, text in review.condition_list)


def _judged(inputs: CaseInputs, case: Case, current: CurrentCase | None
            ) -> tuple[tuple[ReviewStatus, ...], tuple[str, ...]]:
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
    if current is None:
        return (), (f"{sig.path.name}: the signatures cannot be checked because the integrity "
                    "record could not be computed",)
    return judge_reviews(reviews, trusted, current, case_id=case.id), ()


def _lines(statuses: tuple[ReviewStatus, ...]) -> tuple[SignatureLine, ...]:
    return tuple(
        SignatureLine(signer=s.review.signer, role=s.review.role, date=str(s.review.date),
                      verdict=s.review.verdict, conditions=condition_words(s.review),
                      revision=int(s.review.revision), status=s.status,
                      explanation=s.explanation, note=s.review.note,
                      changed_parts=s.changed_parts, moved=s.moved)
        for s in statuses)


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
    """Signatures (judged with the verdict lifecycle), recorded verdicts, conditions
    and revision history of one case, from the files already read into ``inputs``
    (nothing is read here)."""
    digest = integrity.digest if integrity else None
    current = None
    if integrity is not None:
        current = current_case(integrity, case.revision, assessment, inputs.settings(),
                               method_libraries(case, assessment))
    statuses, sig_problems = _judged(inputs, case, current)
    recorded = check_recorded_reviews(case.reviews, digest) if digest else ()
    conditions: tuple[ConditionLine, ...] = ()
    condition_problems: tuple[str, ...] = ()
    try:
        conditions, condition_problems = track_conditions(header_of(inputs.source), statuses)
    except DossierError as err:
        condition_problems = tuple(str(p) for p in err.problems)
    return CaseDecisions(signatures=_lines(statuses), signature_problems=sig_problems,
                         recorded=recorded, history=_history(inputs, case, assessment, library),
                         conditions=conditions, condition_problems=condition_problems,
                         readiness=case_readiness(case, _lines(statuses), recorded,
                                                  inputs.source.data.decode("utf-8", "replace")))


__all__ = ["collect_decisions", "condition_words"]
