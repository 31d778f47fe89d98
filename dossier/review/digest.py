"""Integrity records: one SHA-256 digest for everything a verdict rests on.

A review board accepts a case as it stood: the case file, the species data
the assessment used, the version of the data library and of dossier, and the
method settings (thresholds and the like).  :func:`case_digest` condenses all
of that into one digest, so a signed verdict can later be checked against the
case as it stands now.  The serialisation is documented in
``docs/signatures.md`` and summarised here:

1. ``case``: SHA-256 of the canonical JSON of the case as the loader reads it
   (:func:`content_bytes`): the header's values without the ``[[review]]``
   tables, and the narrative with ``\n`` line endings.
2. ``species``: for every species record used, SHA-256 of its canonical JSON
   text; the list holds ``[id, digest]`` pairs sorted by id (then digest).
3. ``settings``: SHA-256 of the canonical JSON text of the method settings.
4. The *manifest* is the JSON object ``{"format": "dossier-integrity-2",
   "case": ..., "species": [...], "library_version": ..., "tool_version": ...,
   "settings": ...}``; the integrity digest is SHA-256 of its canonical JSON
   text.

Canonical JSON: keys sorted, no whitespace (separators ``,`` and ``:``),
every non-ASCII character escaped (``\\uXXXX``), encoded as ASCII; numbers as
Python writes them (shortest round-trip form); NaN and infinities are
refused.  Digests are lowercase hexadecimal.

Everything here is pure except :func:`digest_for_case`, which reads one case
file and the shipped species library.  The species records and the settings
come from the assessment's :class:`~dossier.assess.evaluate.Evaluation`, so
the digest covers exactly what the assessment used.
"""
from __future__ import annotations

import datetime
import hashlib
import json
import math
from pathlib import Path
from typing import Any, Iterable, Mapping

from dossier.assess.evaluate import Evaluation, evaluate
from dossier.casefile.load import CaseSource, parse_source, read_source, signed_content
from dossier.engine.settings import MethodSettings
from dossier.errors import LibraryError
from dossier.library.lookup import Library
from dossier.model.assessment import Assessment
from dossier.model.case import Case
from dossier.review.policy import policy_settings, read_policy
from dossier.review.revisions import key_figures
from dossier.review.signatures import ReviewParts
from dossier.review.verdicts import CurrentCase
from dossier.model.integrity import (INTEGRITY_FORMAT, IntegrityRecord, RecordedReview,
                                     short_digest)

#: Header keys left out of the case part besides ``review`` (which the loader's
#: signed content leaves out): the closures of conditions, recorded like verdicts.
UNSIGNED_RECORDS = ("closure",)

def canonical_json(value: Any) -> str:
    """The canonical JSON text of ``value`` (see the module documentation).

    Accepts mappings with string keys, lists and tuples, strings, booleans,
    integers, finite floats and None; anything else raises TypeError, a
    non-finite float ValueError.
    """
    return json.dumps(_plain(value), sort_keys=True, separators=(",", ":"),
                      ensure_ascii=True, allow_nan=False)


def _plain(value: Any, where: str = "value") -> Any:
    """``value`` as plain JSON types, checked."""
    if value is None or isinstance(value, (bool, int, str)):
        return value
    if isinstance(value, float):
        if not math.isfinite(value):
            raise ValueError(f"{where} is {value!r}; only finite numbers can be digested "
                             "(write an unbounded limit as null)")
        return value
    if isinstance(value, Mapping):
        out = {}
        for key, item in value.items():
            if not isinstance(key, str):
                raise TypeError(f"{where} has the key {key!r}; keys must be strings")
            out[key] = _plain(item, f"{where}.{key}")
        return out
    if isinstance(value, (list, tuple)):
        return [_plain(item, f"{where}[{i}]") for i, item in enumerate(value)]
    raise TypeError(f"{where} is a {type(value).__name__}; only JSON values can be digested")


def sha256_hex(data: bytes) -> str:
    """SHA-256 of ``data``, lowercase hex."""
    return hashlib.sha256(data).hexdigest()


def case_digest(case_bytes: bytes, species_records: Iterable[Mapping[str, Any]],
                library_version: str, tool_version: str,
                method_settings: Mapping[str, Any]) -> IntegrityRecord:
    """The integrity record of a case with the data and settings its assessment used.

    ``species_records`` are the canonical dicts of the records used (e.g.
    ``SpeciesRecord.to_dict()``); each needs a string ``"id"``.  A record
    given twice counts once; the order does not matter.
    """
    if not isinstance(case_bytes, (bytes, bytearray)):
        raise TypeError(f"case_bytes must be bytes, got {type(case_bytes).__name__}")
    pairs = set()
    for record in species_records:
        sid = record.get("id") if isinstance(record, Mapping) else None
        if not isinstance(sid, str) or not sid:
            raise LibraryError(f"a species record without a text id cannot be digested: {record!r:.80}")
        pairs.add((sid, sha256_hex(canonical_json(record).encode("ascii"))))
    record = IntegrityRecord(
        digest="",
        case_file_digest=sha256_hex(bytes(case_bytes)),
        species_digests=tuple(sorted(pairs)),
        settings_digest=sha256_hex(canonical_json(method_settings).encode("ascii")),
        library_version=str(library_version),
        tool_version=str(tool_version),
    )
    manifest = canonical_json(record.manifest()).encode("ascii")
    return IntegrityRecord(
        digest=sha256_hex(manifest),
        case_file_digest=record.case_file_digest,
        species_digests=record.species_digests,
        settings_digest=record.settings_digest,
        library_version=record.library_version,
        tool_version=record.tool_version,
    )


def content_bytes(source: CaseSource) -> bytes:
    """The canonical JSON text (ASCII bytes) of what a signature on the case covers:
    :func:`dossier.casefile.load.signed_content`, with TOML dates and times written
    as tagged ISO text so that they never collide with a string of the same text."""
    content = signed_content(source)
    for name in UNSIGNED_RECORDS:
        content["header"].pop(name, None)
    return canonical_json(_toml_plain(content)).encode("ascii")


def _toml_plain(value: Any) -> Any:
    if isinstance(value, dict):
        return {k: _toml_plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_toml_plain(v) for v in value]
    if isinstance(value, (datetime.datetime, datetime.date, datetime.time)):
        return {f"${type(value).__name__}": value.isoformat()}
    return value


def review_parts(record: IntegrityRecord, settings: MethodSettings,
                 method_libraries: Iterable[tuple[str, str]]) -> ReviewParts:
    """The parts of ``record`` a ``dossier-review-2`` block signs: the case content,
    one digest of the species list, the method settings without the method
    libraries, and every version as one line (docs/signatures.md)."""
    species = [[sid, d] for sid, d in record.species_digests]
    versions = [("library", record.library_version), ("dossier", record.tool_version)]
    versions += sorted(method_libraries)
    return ReviewParts(
        content=record.case_file_digest,
        species=sha256_hex(canonical_json(species).encode("ascii")),
        settings=sha256_hex(canonical_json(settings.record()).encode("ascii")),
        versions="; ".join(f"{name} {str(v).replace(' ', '-')}" for name, v in versions))


def current_case(record: IntegrityRecord, revision: int, assessment: Assessment,
                 settings: MethodSettings,
                 method_libraries: Iterable[tuple[str, str]]) -> CurrentCase:
    """The case as it is now, for judging verdicts: digest, revision, parts and the
    key figures of its assessment."""
    return CurrentCase(record.digest, revision, review_parts(record, settings, method_libraries),
                       tuple(key_figures(assessment).items()))


def check_recorded_reviews(reviews, current_digest: str) -> tuple[RecordedReview, ...]:
    """Compare the digest each recorded verdict names with the case as it is now.

    A recorded digest may be written in full or as its first 12 or more hex
    digits (spaces allowed, as the pages print it).
    """
    out = []
    for r in reviews:
        recorded = (r.digest or "").replace(" ", "").lower()
        if not recorded:
            status = "not checkable: no digest"
            why = ("the verdict does not name the digest it accepted, so it cannot be tied to "
                   "this revision's data")
        elif len(recorded) >= 12 and current_digest.startswith(recorded):
            status = "matches"
            why = "the case and its data are unchanged since this verdict"
        else:
            status = "changed since reviewed"
            why = (f"the verdict names digest {short_digest(recorded) if len(recorded) >= 12 else recorded}, "
                   f"but the case or its data now give {short_digest(current_digest)}")
        out.append(RecordedReview(r.name, r.role, r.date.isoformat(), str(r.verdict), status, why))
    return tuple(out)


def integrity_of(source: CaseSource, evaluation: Evaluation) -> IntegrityRecord:
    """The integrity record of the case in ``source`` as ``evaluation`` assessed it:
    the case file's bytes without its ``[[review]]`` tables, exactly the species
    records the assessment used, the library and tool versions, the method
    settings it ran with and the versions of the general-purpose libraries whose
    numbers it used (activity coefficients, estimates, structures)."""
    a = evaluation.assessment
    settings = evaluation.settings.record()
    if evaluation.method_libraries:  # only cases that used them carry them
        settings["method_libraries"] = [list(p) for p in evaluation.method_libraries]
    return case_digest(content_bytes(source),
                       [r.to_dict() for r in evaluation.records],
                       a.library_version, a.tool_version, settings)


def digest_for_case(case_path: str | Path, library: Library | None = None,
                    settings: MethodSettings | None = None) -> tuple[IntegrityRecord, int, str]:
    """(integrity record, revision, case id) of the case file at ``case_path``.

    Reads the file once and assesses it (with the shipped library unless one is
    given), so the record covers what the assessment used and nothing else.
    """
    _, record, case, _ = assess_for_review(case_path, library, settings)
    return record, case.revision, case.id


def assess_for_review(case_path: str | Path, library: Library | None = None,
                      settings: MethodSettings | None = None
                      ) -> tuple[CaseSource, IntegrityRecord, Case, CurrentCase]:
    """The source read once, its integrity record, the parsed case and the case as
    verdicts are judged against (:class:`CurrentCase`) of the case file at
    ``case_path``."""
    return assess_source_for_review(read_source(case_path), library, settings)


def assess_source_for_review(source: CaseSource, library: Library | None = None,
                             settings: MethodSettings | None = None
                             ) -> tuple[CaseSource, IntegrityRecord, Case, CurrentCase]:
    """:func:`assess_for_review` of a case file read already."""
    case = parse_source(source)
    if settings is None:  # the board's policy of the case's folder, as the build uses
        settings = policy_settings(read_policy(source.path.parent))
    evaluation = evaluate(case, library or Library.default(), settings=settings)
    record = integrity_of(source, evaluation)
    return source, record, case, current_case(record, case.revision, evaluation.assessment,
                                              settings, evaluation.method_libraries)


__all__ = ["canonical_json", "sha256_hex", "case_digest", "content_bytes",
           "check_recorded_reviews", "integrity_of", "digest_for_case", "IntegrityRecord",
           "UNSIGNED_RECORDS", "review_parts", "current_case", "assess_for_review", "assess_source_for_review",
           "RecordedReview", "INTEGRITY_FORMAT", "short_digest"]
