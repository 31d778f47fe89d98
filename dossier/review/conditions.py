"""Conditions of a case's verdicts, tracked to close-out.

A verdict ``accepted-with-conditions`` sets conditions; each has an id that
is unique in its case:

* ``C1``, ``C2``, ... written with the condition: in a signed review of format
  ``dossier-review-2`` (``dossier sign --condition``) or in a recorded verdict's
  ``[[review.conditions]]`` tables (``id``, ``text``);
* for a condition written in the first form, without an id (one line of text):
  ``R<n>`` for the n-th ``[[review]]`` table of the case file, ``S<n>`` for the
  n-th block of the signatures file (which is only ever appended to).

A ``[[closure]]`` table of the case file closes one: the id, the evidence, by
whom and when.  Closures are records like verdicts: they are outside the
integrity digest, so closing a condition leaves every signature as it was.

Only the conditions of current verdicts count: a superseded or withdrawn
verdict, or one whose signature is not trusted or intact, sets none.  Pure.
"""
from __future__ import annotations

import datetime
import re
from typing import Any, Iterable, Mapping

from dossier.model.decisions import ConditionLine
from dossier.review.signatures import SignedReview
from dossier.review.verdicts import ReviewStatus

_C_ID = re.compile(r"C([1-9][0-9]{0,3})")
_SETTING = "accepted-with-conditions"
#: The statuses of a signed verdict whose conditions count.
_SETS_CONDITIONS = ("valid", "versions-changed", "changed-since-signed")


def _text(value: Any) -> str:
    return value.isoformat() if isinstance(value, datetime.date) else str(value)


def recorded_conditions(header: Mapping[str, Any]) -> list[tuple[str, str, str]]:
    """``(id, text, set by)`` of every condition of the ``[[review]]`` tables in a
    case header (as TOML gives it)."""
    out = []
    for index, rv in enumerate(header.get("review") or (), start=1):
        if not isinstance(rv, Mapping) or rv.get("verdict") != _SETTING:
            continue
        by = f"{rv.get('name')} (recorded, {_text(rv.get('date'))})"
        conditions = rv.get("conditions")
        if isinstance(conditions, Mapping):
            conditions = [conditions]
        if isinstance(conditions, str):
            out.append((f"R{index}", conditions, by))
        elif isinstance(conditions, list):
            out += [(str(c.get("id")), str(c.get("text")), by)
                    for c in conditions if isinstance(c, Mapping)]
    return out


def signed_conditions(statuses: Iterable[ReviewStatus]) -> list[tuple[str, str, str]]:
    """``(id, text, set by)`` of the conditions of the current signed verdicts, in
    the order of the file (``statuses`` as :func:`~dossier.review.verdicts.judge_reviews`
    gives them)."""
    out = []
    for number, s in enumerate(statuses, start=1):
        r = s.review
        if s.status not in _SETS_CONDITIONS or r.verdict != _SETTING:
            continue
        by = f"{r.signer} (signed, {r.date.isoformat()})"
        out += [(cid or f"S{number}", text, by) for cid, text in r.condition_list]
    return out


def track_conditions(header: Mapping[str, Any], statuses: Iterable[ReviewStatus]
                     ) -> tuple[tuple[ConditionLine, ...], tuple[str, ...]]:
    """Every condition of the case with whether it is open or closed, and the problems
    (a closure naming no condition, one id with two texts)."""
    problems: list[str] = []
    merged: dict[str, tuple[str, list[str]]] = {}
    for cid, text, by in recorded_conditions(header) + signed_conditions(statuses):
        if cid in merged and merged[cid][0] != text:
            problems.append(f"condition {cid} is set with two different texts (by "
                            f"{merged[cid][1][0]} and by {by}); one id stands for one condition")
            continue
        merged.setdefault(cid, (text, []))[1].append(by)
    closures: dict[str, Mapping[str, Any]] = {}
    for index, closure in enumerate(header.get("closure") or (), start=1):
        if not isinstance(closure, Mapping):
            continue
        cid = str(closure.get("condition"))
        if cid not in merged:
            problems.append(f"closure[{index}] closes condition {cid}, but no current verdict "
                            "of this case sets a condition with that id")
        else:
            closures.setdefault(cid, closure)
    lines = []
    for cid, (text, by) in merged.items():
        closure = closures.get(cid)
        lines.append(ConditionLine(
            id=cid, text=text, set_by=tuple(by), status="closed" if closure else "open",
            closed_by=str(closure.get("by")) if closure else "",
            closed_on=_text(closure.get("date")) if closure else "",
            evidence=str(closure.get("evidence")) if closure else ""))
    return tuple(lines), tuple(problems)


def next_condition_number(header: Mapping[str, Any], reviews: Iterable[SignedReview]) -> int:
    """The number of the next new condition id of a case: one above every ``C<n>`` in
    use in its ``[[review]]`` tables and signatures (any status)."""
    used = [cid for cid, _, _ in recorded_conditions(header)]
    for r in reviews:
        used += [cid for cid, _ in r.condition_list]
    numbers = [int(m.group(1)) for m in map(_C_ID.fullmatch, used) if m]
    return max(numbers, default=0) + 1


__all__ = ["recorded_conditions", "signed_conditions", "track_conditions",
           "next_condition_number"]
