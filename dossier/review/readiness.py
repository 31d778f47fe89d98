"""Readiness by status: what the board expects of a case at each status.

The rules (our own; a board adopting others changes them here):

* **submitted, accepted, accepted-with-conditions, declined**: a real title (not
  the case id the template writes), the operating window (not the template's
  starting value while the template's note about it is still in the file), the
  narrative sections of :data:`REQUIRED_SECTIONS`, each with text (an HTML
  comment alone does not count), and each safety input of :data:`SAFETY_TABLES`
  either given or named under ``[not_applicable]`` with a reason.
* **accepted, accepted-with-conditions, declined** also need a verdict on the
  current data that says the same as the status: a ``[[review]]`` table (not
  one whose digest names other data) or a signature that holds for the current
  data (:data:`CARRYING`: a trusted board key on the current integrity digest, or
  on the same inputs judged by newer versions with no key figure moved).
* **every status**: a safety table and a reason why it does not apply are never
  both given, and a reason has at least :data:`MIN_REASON_WORDS` words.
* **meetings**: :func:`joins_meeting` says which cases join the packet of the
  meeting they name: not drafts and not withdrawn cases.

:func:`case_readiness` applies them to a loaded case and its checked verdicts;
it reads nothing.
"""
from __future__ import annotations

import re
from typing import Sequence

from dossier.casefile.template import STARTING_WINDOW
from dossier.casefile.units import parse_quantity
from dossier.constants import ZERO_CELSIUS
from dossier.errors import Problem
from dossier.model.case import Case, Status
from dossier.model.decisions import SignatureLine
from dossier.model.integrity import RecordedReview
from dossier.model.readiness import Readiness

#: The narrative sections a case before the board must have, each with the
#: heading beginnings accepted for it (case-insensitive): "Scale" covers
#: "Scale and equipment"; a decided case may say "What the board was asked".
REQUIRED_SECTIONS: tuple[tuple[str, tuple[str, ...]], ...] = (
    ("Purpose", ("purpose",)),
    ("Route", ("route",)),
    ("Scale and equipment", ("scale",)),
    ("What the board is asked", ("what the board is asked", "what the board was asked")),
    ("Data and references", ("data and references",)),
)

#: The safety inputs a case before the board gives, or says why they do not apply.
SAFETY_TABLES = ("charge", "vessel", "decomposition")

#: Fewest words in a reason under [not_applicable] ("n/a" is not a reason).
MIN_REASON_WORDS = 3

#: Words of the template's note above its starting window (see casefile.template).
TEMPLATE_WINDOW_NOTE = "only a starting value"

#: Signature statuses whose verdict stands for the current data: valid, or the same
#: inputs judged by newer versions with no key figure moved (a withdrawn, superseded,
#: untrusted or altered signature carries no verdict).
CARRYING = ("valid", "versions-changed")

BEFORE_BOARD = (Status.SUBMITTED, Status.ACCEPTED, Status.ACCEPTED_WITH_CONDITIONS,
                Status.DECLINED)
DECIDED = (Status.ACCEPTED, Status.ACCEPTED_WITH_CONDITIONS, Status.DECLINED)

_NAMED = {Status.SUBMITTED: "a submitted case", Status.ACCEPTED: "an accepted case",
          Status.ACCEPTED_WITH_CONDITIONS: "a case accepted with conditions",
          Status.DECLINED: "a declined case"}

_NEEDS_BEFORE_BOARD = ("a real title and operating window; the narrative sections "
                       + ", ".join(name for name, _ in REQUIRED_SECTIONS)
                       + ", each with text; [charge], [vessel] and [decomposition], "
                       "or a reason under [not_applicable] for each one left out")
_NEEDS = {
    Status.DRAFT: "nothing yet: a draft is checked when it is submitted; it joins no meeting",
    Status.SUBMITTED: _NEEDS_BEFORE_BOARD,
    Status.WITHDRAWN: "nothing: a withdrawn case is kept for the record and joins no meeting",
}

_HEADING_RE = re.compile(r"^(#{1,6})\s+(.*?)\s*#*\s*$")
_FENCE_RE = re.compile(r"^\s*(```|~~~)")
_COMMENT_RE = re.compile(r"<!--.*?(-->|$)", re.S)


def joins_meeting(status: str, meeting: object) -> bool:
    """True when a case of ``status`` naming ``meeting`` joins that meeting's packet."""
    return bool(meeting) and status not in (Status.DRAFT, Status.WITHDRAWN)


def needs_of(status: Status) -> str:
    """What ``status`` asks of a case, in words (for pages and ``check``)."""
    if status in DECIDED:
        return (f"{_NEEDS_BEFORE_BOARD}; and a verdict '{status.value}' on the current data, "
                "recorded in a [[review]] table or signed by a board member")
    return _NEEDS.get(status, "")


def case_readiness(case: Case, signatures: Sequence[SignatureLine] = (),
                   recorded: Sequence[RecordedReview] = (), source_text: str = ""
                   ) -> Readiness:
    """The readiness rules of ``case``'s status applied to it.

    ``signatures`` and ``recorded`` are the case's verdicts as
    :func:`dossier.review.decisions.collect_decisions` checked them (empty when
    the integrity record could not be computed: the ``[[review]]`` tables then
    count as written); ``source_text`` is the case file's text, where the
    template's note about its starting window may still stand.
    """
    problems = [*_not_applicable_problems(case)]
    if case.status in BEFORE_BOARD:
        who = _NAMED[case.status]
        problems += _title_problems(case, who)
        problems += _window_problems(case, who, source_text)
        problems += _narrative_problems(case, who)
        problems += _safety_input_problems(case, who)
    if case.status in DECIDED:
        problems += _verdict_problems(case, signatures, recorded)
    notes = ()
    if case.meeting and not joins_meeting(case.status, case.meeting):
        notes = (f"a {case.status.value} case does not join the meeting of "
                 f"{case.meeting.isoformat()} it names; it joins when its status is submitted",)
    problems.sort(key=lambda p: (p.line or 0, p.key or ""))
    return Readiness(case.status.value, needs_of(case.status), tuple(problems), notes,
                     case.not_applicable)


def _problem(case: Case, message: str, key: str | None, line: int | None = None) -> Problem:
    if line is None and key is not None:
        line = case.line_of(key)
    return Problem(message, str(case.path), line, key)


def _title_problems(case: Case, who: str) -> list[Problem]:
    if case.title.strip().casefold() not in (case.id.casefold(),
                                             case.id.replace("-", " ").casefold()):
        return []
    return [_problem(case, f"the title is still the template's (the case id '{case.id}'); "
                           f"{who} needs a title that says what is proposed", "title")]


def _window_problems(case: Case, who: str, source_text: str) -> list[Problem]:
    start = tuple(parse_quantity(t.strip('"'), "temperature") for t in STARTING_WINDOW)
    if any(abs(a - b) > 1e-9 for a, b in zip(case.window, start)):
        return []
    header = " ".join(line.lstrip("#").strip() for line in source_text.split("\n")
                      if line.lstrip().startswith("#"))
    if TEMPLATE_WINDOW_NOTE not in " ".join(header.split()):
        return []
    lo, hi = (f"{t - ZERO_CELSIUS:g} °C" for t in start)
    return [_problem(case, f"the window is still the template's starting value ({lo} to {hi}) "
                           f"and the template's note '{TEMPLATE_WINDOW_NOTE}' is still above "
                           f"it; {who} needs the operating window: replace it (if {lo} to "
                           f"{hi} is the operating window, delete the note)", "temperature")]


def narrative_sections(narrative: str) -> list[tuple[str, int, str]]:
    """The level-1 and level-2 sections of a Markdown narrative: (heading, index of
    its line in the narrative, its text up to the next such heading), outside
    fenced code."""
    sections: list[tuple[str, int, list[str]]] = []
    fenced = False
    for i, line in enumerate(narrative.split("\n")):
        if _FENCE_RE.match(line):
            fenced = not fenced
        m = None if fenced else _HEADING_RE.match(line)
        if m and len(m.group(1)) <= 2:
            sections.append((m.group(2), i, []))
        elif sections:
            sections[-1][2].append(line)
    return [(title, i, "\n".join(body)) for title, i, body in sections]


def _narrative_problems(case: Case, who: str) -> list[Problem]:
    sections = narrative_sections(case.narrative)
    wanted = ", ".join(name for name, _ in REQUIRED_SECTIONS)
    out = []
    for name, starts in REQUIRED_SECTIONS:
        found = [s for s in sections if s[0].casefold().startswith(starts)]
        if not found:
            out.append(_problem(case, f"the narrative has no section '## {name}'; {who} needs "
                                      f"the sections {wanted}, each with text", None,
                                case.narrative_line))
        elif not any(_COMMENT_RE.sub("", text).strip() for _t, _i, text in found):
            title, index, _text = found[0]
            out.append(_problem(case, f"the section '## {title}' has no text (a comment alone "
                                      f"does not count); {who} needs it written", None,
                                case.narrative_line + index))
    return out


def _safety_input_problems(case: Case, who: str) -> list[Problem]:
    excused = dict(case.not_applicable)
    out = []
    for table in SAFETY_TABLES:
        if getattr(case, table) is None and table not in excused:
            out.append(_problem(
                case, f"{who} needs a [{table}] table or the reason it does not apply: add "
                      f"[{table}], or write {table} = \"the reason\" under [not_applicable]",
                table, case.line_of("status")))
    return out


def _not_applicable_problems(case: Case) -> list[Problem]:
    out = []
    for table, reason in case.not_applicable:
        key = f"not_applicable.{table}"
        if getattr(case, table, None) is not None:
            out.append(_problem(case, f"the case gives a [{table}] table and also says it does "
                                      "not apply; keep one of the two", key))
        elif len(reason.split()) < MIN_REASON_WORDS:
            out.append(_problem(case, f"the reason '{reason}' is too short; say in a sentence "
                                      f"of at least {MIN_REASON_WORDS} words why [{table}] "
                                      "does not apply, so the board can judge it", key))
    return out


def _verdict_problems(case: Case, signatures: Sequence[SignatureLine],
                      recorded: Sequence[RecordedReview]) -> list[Problem]:
    status = case.status.value
    checked = list(recorded) if recorded else [
        RecordedReview(r.name, r.role, r.date.isoformat(), str(r.verdict), "not checked", "")
        for r in case.reviews]
    current = [r for r in checked if r.verdict == status and r.status != "changed since reviewed"]
    current += [s for s in signatures if s.verdict == status and s.status in CARRYING]
    if current:
        return []
    stale = [f"{r.name} (recorded)" for r in checked
             if r.verdict == status and r.status == "changed since reviewed"]
    stale += [f"{s.signer} (signed)" for s in signatures
              if s.verdict == status and s.status == "changed-since-signed"]
    why = f"; the verdicts of {', '.join(stale)} were given on other data" if stale else ""
    return [_problem(case, f"the status is '{status}' but no verdict '{status}' on the current "
                           f"data is on record: record it in a [[review]] table (verdict = "
                           f"\"{status}\") or sign it with `dossier sign`{why}", "status")]


__all__ = ["REQUIRED_SECTIONS", "SAFETY_TABLES", "MIN_REASON_WORDS", "TEMPLATE_WINDOW_NOTE",
           "BEFORE_BOARD", "DECIDED", "CARRYING", "joins_meeting", "needs_of", "case_readiness",
           "narrative_sections"]
