"""Assess one case from the files already read for it.

The build reads each case file once, into a
:class:`~dossier.review.inputs.CaseInputs` (the case file, its kept
revisions, its signature file and the trusted keys).  :func:`assess_inputs`
turns that into an :class:`AssessedCase`: the case parsed from those bytes,
its :class:`~dossier.assess.evaluate.Evaluation`, the integrity record of
exactly what the evaluation used, and the board's decisions.  It reads no
file.  A case that fails is kept as a :class:`CaseFailure` with its file,
line and key; the other cases go on.
"""
from __future__ import annotations

import traceback
from dataclasses import dataclass
from pathlib import Path

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import parse_source
from dossier.engine.thermo import ReactionThermo
from dossier.errors import DossierError
from dossier.library.lookup import Library
from dossier.library.record import SpeciesRecord
from dossier.model.assessment import Assessment
from dossier.model.case import Case
from dossier.model.integrity import IntegrityRecord
from dossier.model.decisions import CaseDecisions
from dossier.review.decisions import collect_decisions
from dossier.review.digest import integrity_of
from dossier.review.inputs import CaseInputs, read_case_inputs

NOT_COMPUTED = "integrity record: not yet computed"


@dataclass(frozen=True)
class CaseFailure:
    """A case file that could not be assessed, with its located problems."""

    file: str
    problems: tuple[str, ...]


@dataclass(frozen=True)
class AssessedCase:
    """A case with everything computed about it (the assess phase's output)."""

    path: Path
    case: Case
    assessment: Assessment
    records: tuple[SpeciesRecord, ...]  # one per assessment.species
    thermo: ReactionThermo  # the reaction's properties, for figures and derivation
    integrity: IntegrityRecord | None
    integrity_note: str
    decisions: CaseDecisions | None = None  # signatures, recorded verdicts, revision history


def located_failure(path: str | Path, err: DossierError) -> CaseFailure:
    """A case file's problems, each naming the file (and its line and key)."""
    located = err.located(str(path))
    return CaseFailure(str(path), tuple(str(p) for p in located.problems))


def internal_failure(path: str | Path, step: str, exc: Exception, outcome: str = "") -> CaseFailure:
    """A defect in dossier met while ``step``: named with where it happened, and isolated."""
    where = traceback.extract_tb(exc.__traceback__)[-1]
    return CaseFailure(str(path), (
        f"{path}: internal error while {step} ({type(exc).__name__}: {exc}; "
        f"at {Path(where.filename).name}:{where.lineno}){outcome}; please report it",))


def assess_inputs(inputs: CaseInputs, library: Library) -> AssessedCase | CaseFailure:
    """Assess the case in ``inputs``; never raises for a bad case and reads no file."""
    path = inputs.source.name
    try:
        case = parse_source(inputs.source)
        evaluation = evaluate(case, library, settings=inputs.settings())  # the board's policy
    except DossierError as err:
        return located_failure(path, err)
    except Exception as exc:  # a defect in dossier, not in the case: isolate it too
        return internal_failure(path, "assessing this case", exc)
    try:
        integrity, note = integrity_of(inputs.source, evaluation), ""
    except DossierError as err:
        integrity = None
        note = f"{NOT_COMPUTED} ({'; '.join(p.message for p in err.problems)})"
    decisions = collect_decisions(inputs, case, evaluation.assessment, integrity, library)
    return AssessedCase(inputs.path, case, evaluation.assessment, evaluation.reaction_records,
                        evaluation.properties, integrity, note, decisions)


def assess_file(path: str | Path, library: Library) -> AssessedCase | CaseFailure:
    """Read the case file at ``path`` (and the files beside it) once and assess it."""
    try:
        inputs = read_case_inputs(path)
    except DossierError as err:
        return located_failure(path, err)
    return assess_inputs(inputs, library)


__all__ = ["NOT_COMPUTED", "CaseFailure", "AssessedCase", "located_failure",
           "internal_failure", "assess_inputs", "assess_file"]
