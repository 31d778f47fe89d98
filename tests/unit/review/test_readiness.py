"""Readiness by status (dossier.review.readiness), through `dossier check` and the
meeting packets.

One small fixture (tests/fixtures/readiness/ready.md, a submitted case that meets
every rule); each test changes one thing in it, or starts from the template of
`dossier new`, and names the exact message the rule gives.  The rules are the
project's own (see the module's docstring); no outside check values here.
"""
from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

from dossier.build.assessing import assess_file
from dossier.build.outputs import light_view, meeting_views
from dossier.casefile.load import parse_case_text
from dossier.casefile.template import case_template
from dossier.cli.main import main
from dossier.library.lookup import Library
from dossier.model.decisions import SignatureLine
from dossier.model.integrity import RecordedReview
from dossier.review.readiness import (REQUIRED_SECTIONS, case_readiness, joins_meeting,
                                      narrative_sections)

FIXTURE = Path(__file__).parents[2] / "fixtures" / "readiness" / "ready.md"
READY = FIXTURE.read_text(encoding="utf-8")
SECTIONS = ("the sections Purpose, Route, Scale and equipment, What the board is asked, "
            "Data and references, each with text")


def edit(old: str, new: str, text: str = READY) -> str:
    assert text.count(old) == 1, old
    return text.replace(old, new)


def line_of(text: str, start: str) -> int:
    """1-based line of the only line of ``text`` that starts with ``start``."""
    hits = [i + 1 for i, line in enumerate(text.split("\n")) if line.startswith(start)]
    assert len(hits) == 1, (start, hits)
    return hits[0]


def problems(text: str, name: str = "t-901.md", signatures=(), recorded=()) -> list[str]:
    case = parse_case_text(text, name)
    return [str(p) for p in case_readiness(case, signatures, recorded, text).problems]


def accepted(text: str = READY) -> str:
    return edit('status = "submitted"', 'status = "accepted"', text)


def review(verdict: str, status: str, name: str = "T. Quarrell") -> RecordedReview:
    return RecordedReview(name, "process safety (board chair)", "2026-12-15", verdict, status, "")


def signature(verdict: str, status: str, signer: str = "A. Drummack") -> SignatureLine:
    return SignatureLine(signer, "thermal hazards laboratory", "2026-12-15", verdict, "", 1,
                         status, "")


# --------------------------------------------------------------------------
# submitted

def test_the_fixture_is_ready_and_names_what_does_not_apply():
    case = parse_case_text(READY, "t-901.md")
    r = case_readiness(case, (), (), READY)
    assert r.ready and r.problems == () and r.notes == ()
    assert r.status == "submitted"
    assert r.excused == (("decomposition", "Dilute aqueous salts below 40 degC: nothing in "
                                           "the tank decomposes."),)
    assert r.needs.startswith("a real title and operating window; the narrative sections "
                              "Purpose, Route")


def test_the_template_title_is_refused_once_submitted():
    text = edit('title = "Neutralisation of rinse water in tank T-901"', 'title = "t-901"')
    assert problems(text) == [
        "t-901.md:3: key 'title': the title is still the template's (the case id 't-901'); "
        "a submitted case needs a title that says what is proposed"]


def test_a_case_made_by_dossier_new_and_submitted_as_it_stands_gets_one_message_per_rule():
    text = case_template("rinse-water", "H+(aq) + OH-(aq) -> H2O(l)")
    text = edit('status = "draft"', 'status = "submitted"', text)
    f = "rinse-water.md"
    status_line = line_of(text, "status = ")
    heading = {name: line_of(text, f"## {name}") for name, _ in REQUIRED_SECTIONS}
    who = "a submitted case"
    assert problems(text, f) == [
        f"{f}:{line_of(text, 'title = ')}: key 'title': the title is still the template's "
        f"(the case id 'rinse-water'); {who} needs a title that says what is proposed",
        *(f"{f}:{status_line}: key '{t}': {who} needs a [{t}] table or the reason it does "
          f"not apply: add [{t}], or write {t} = \"the reason\" under [not_applicable]"
          for t in ("charge", "decomposition", "vessel")),
        f"{f}:{line_of(text, 'temperature = ')}: key 'temperature': the window is still the "
        "template's starting value (25 °C to 100 °C) and the template's note 'only a "
        f"starting value' is still above it; {who} needs the operating window: replace it "
        "(if 25 °C to 100 °C is the operating window, delete the note)",
        *(f"{f}:{heading[name]}: the section '## {name}' has no text (a comment alone does "
          f"not count); {who} needs it written" for name, _ in REQUIRED_SECTIONS),
    ]


def test_a_real_window_of_25_to_100_degC_is_accepted_without_the_template_note():
    text = edit('temperature = ["15 degC", "40 degC"]', 'temperature = ["25 degC", "100 degC"]')
    assert problems(text) == []


def test_a_missing_section_is_named_at_the_start_of_the_narrative():
    text = edit("## Route\n\nDilute hydrochloric acid is dosed into the rinse water.\n\n", "")
    start = parse_case_text(text, "t-901.md").narrative_line
    assert start == line_of(text, "# Rinse water") - 1  # the line after the closing +++
    assert problems(text) == [
        f"t-901.md:{start}: the narrative has no section '## Route'; a submitted case "
        f"needs {SECTIONS}"]


def test_a_section_with_only_a_comment_has_no_text():
    text = edit("Dilute hydrochloric acid is dosed into the rinse water.",
                "<!-- The chemistry: reagents, solvent, catalyst. -->")
    assert problems(text) == [
        f"t-901.md:{line_of(text, '## Route')}: the section '## Route' has no text (a comment "
        "alone does not count); a submitted case needs it written"]


def test_a_heading_inside_fenced_code_is_not_a_section():
    text = edit("## Route\n", "```\n## Route\n```\n")
    assert [t for t, _i, _b in narrative_sections(parse_case_text(text, "x").narrative)] == [
        "Rinse water neutralisation", "Purpose", "Scale and equipment",
        "What the board is asked", "Data and references"]
    assert problems(text)[0].endswith(f"the narrative has no section '## Route'; a submitted "
                                      f"case needs {SECTIONS}")


def test_a_missing_safety_table_without_a_reason_is_named():
    text = edit('[vessel]\nmtt = "100 degC"\n\n', "")
    assert problems(text) == [
        f"t-901.md:{line_of(text, 'status = ')}: key 'vessel': a submitted case needs a "
        "[vessel] table or the reason it does not apply: add [vessel], or write vessel = "
        "\"the reason\" under [not_applicable]"]


def test_a_table_and_a_reason_for_it_are_never_both_given():
    text = edit("[not_applicable]\n", '[not_applicable]\nvessel = "an open tank, vented"\n')
    assert problems(text) == [
        f"t-901.md:{line_of(text, 'vessel = ')}: key 'not_applicable.vessel': the case gives a "
        "[vessel] table and also says it does not apply; keep one of the two"]


def test_a_reason_of_one_word_is_refused_even_in_a_draft():
    text = edit('decomposition = "Dilute aqueous salts below 40 degC: nothing in the tank '
                'decomposes."', 'decomposition = "n/a"')
    text = edit('status = "submitted"', 'status = "draft"', text)
    assert problems(text) == [
        f"t-901.md:{line_of(text, 'decomposition = ')}: key 'not_applicable.decomposition': "
        "the reason 'n/a' is too short; say in a sentence of at least 3 words why "
        "[decomposition] does not apply, so the board can judge it"]


# --------------------------------------------------------------------------
# draft, withdrawn, meetings

def test_a_draft_from_the_template_has_no_readiness_problems():
    text = case_template("rinse-water", "H+(aq) + OH-(aq) -> H2O(l)")
    case = parse_case_text(text, "rinse-water.md")
    r = case_readiness(case, (), (), text)
    assert r.ready and r.notes == ()
    assert r.needs == ("nothing yet: a draft is checked when it is submitted; it joins no "
                       "meeting")


def test_a_draft_naming_a_meeting_is_told_it_does_not_join_it():
    text = edit('status = "submitted"', 'status = "draft"')
    r = case_readiness(parse_case_text(text, "t-901.md"), (), (), text)
    assert r.ready
    assert r.notes == ("a draft case does not join the meeting of 2026-12-15 it names; it "
                       "joins when its status is submitted",)


@pytest.mark.parametrize("status, joins", [
    ("draft", False), ("submitted", True), ("accepted", True),
    ("accepted-with-conditions", True), ("declined", True), ("withdrawn", False)])
def test_which_statuses_join_the_meeting_they_name(status, joins):
    assert joins_meeting(status, "2026-12-15") is joins
    assert joins_meeting(status, None) is False


def test_a_draft_with_a_meeting_date_stays_out_of_the_meeting_packet(tmp_path):
    (tmp_path / "t-901.md").write_text(READY, encoding="utf-8")
    (tmp_path / "t-902.md").write_text(edit('status = "submitted"', 'status = "draft"'),
                                       encoding="utf-8")
    lib = Library.default()
    views = [light_view(assess_file(tmp_path / f"{n}.md", lib), n, ())
             for n in ("t-901", "t-902")]
    meetings, problems_ = meeting_views(views, None)
    assert problems_ == []
    assert [(m.date, [c.id for c in m.cases]) for m in meetings] == [("2026-12-15", ["t-901"])]
    (only,), _problems = meeting_views(views, "2026-12-15")
    assert [c.id for c in only.cases] == ["t-901"]


# --------------------------------------------------------------------------
# decided cases: a verdict on the current data that says the same as the status

NO_VERDICT = ("t-901.md:{line}: key 'status': the status is '{s}' but no verdict '{s}' on the "
              "current data is on record: record it in a [[review]] table (verdict = \"{s}\") "
              "or sign it with `dossier sign`")


def test_accepted_without_any_verdict_is_refused():
    text = accepted()
    assert problems(text) == [NO_VERDICT.format(line=line_of(text, "status = "), s="accepted")]


def test_a_recorded_verdict_on_the_current_data_or_without_a_digest_is_enough():
    assert problems(accepted(), recorded=[review("accepted", "matches")]) == []
    assert problems(accepted(), recorded=[review("accepted", "not checkable: no digest")]) == []


def test_a_recorded_review_table_counts_when_the_digest_could_not_be_checked():
    text = accepted(READY.replace("+++\n\n# Rinse", '[[review]]\nname = "T. Quarrell"\n'
                                  'role = "process safety (board chair)"\ndate = 2026-12-15\n'
                                  'verdict = "accepted"\n+++\n\n# Rinse'))
    assert problems(text) == []


def test_a_verdict_given_on_other_data_does_not_carry_the_status():
    text = accepted()
    got = problems(text, recorded=[review("accepted", "changed since reviewed")],
                   signatures=[signature("accepted", "changed-since-signed")])
    assert got == [NO_VERDICT.format(line=line_of(text, "status = "), s="accepted")
                   + "; the verdicts of T. Quarrell (recorded), A. Drummack (signed) were "
                     "given on other data"]


@pytest.mark.parametrize("status", ["valid", "versions-changed"])
def test_a_signature_that_holds_carries_the_status(status):
    assert problems(accepted(), signatures=[signature("accepted", status)]) == []


@pytest.mark.parametrize("status", ["untrusted-key", "invalid", "withdrawn", "superseded"])
def test_a_signature_that_does_not_hold_carries_nothing(status):
    text = accepted()
    assert problems(text, signatures=[signature("accepted", status)]) == [
        NO_VERDICT.format(line=line_of(text, "status = "), s="accepted")]


@pytest.mark.parametrize("status, verdict", [
    ("accepted", "accepted-with-conditions"), ("accepted-with-conditions", "accepted"),
    ("declined", "accepted"), ("accepted", "declined")])
def test_a_verdict_that_says_something_else_does_not_carry_the_status(status, verdict):
    text = edit('status = "submitted"', f'status = "{status}"')
    assert problems(text, recorded=[review(verdict, "matches")],
                    signatures=[signature(verdict, "valid")]) == [
        NO_VERDICT.format(line=line_of(text, "status = "), s=status)]


def test_a_withdrawn_case_needs_nothing():
    text = case_template("rinse-water", "H+(aq) + OH-(aq) -> H2O(l)")
    text = edit('status = "draft"', 'status = "withdrawn"', text)
    assert problems(text, "rinse-water.md") == []


# --------------------------------------------------------------------------
# dossier check

def test_check_passes_the_ready_fixture_and_refuses_each_unready_file(tmp_path):
    good = tmp_path / "t-901.md"
    good.write_text(READY, encoding="utf-8")
    bad = tmp_path / "t-902.md"
    bad.write_text(accepted(), encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(good), str(bad)])
    assert result.exit_code == 2
    assert f"ok: {good}\n" in result.stdout
    assert result.stderr == (
        f"error: {bad}:{line_of(accepted(), 'status = ')}: key 'status': the status is "
        "'accepted' but no verdict 'accepted' on the current data is on record: record it in "
        "a [[review]] table (verdict = \"accepted\") or sign it with `dossier sign`\n")
    assert result.stdout.endswith("1 of 2 case files are good.\n")


def test_check_prints_a_note_for_a_draft_naming_a_meeting_and_passes_it(tmp_path):
    draft = tmp_path / "t-903.md"
    draft.write_text(edit('status = "submitted"', 'status = "draft"'), encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(draft)])
    assert result.exit_code == 0, result.output
    assert result.stdout == (
        f"note: {draft}: a draft case does not join the meeting of 2026-12-15 it names; it "
        f"joins when its status is submitted\nok: {draft}\n1 of 1 case files are good.\n")
