"""The verdict lifecycle: format-2 blocks, superseded and withdrawn verdicts, the
part-by-part comparison, conditions with ids and their closures, and the refusals
of `sign`.  People and cases are invented (Halvermoor Fine Chemicals)."""
from __future__ import annotations

import datetime

import pytest
from click.testing import CliRunner
from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

from dossier.casefile.load import header_of, load_case, read_source
from dossier.cli.main import _Group
from dossier.cli.signing import COMMANDS
from dossier.errors import CaseError, SignatureError
from dossier.model.decisions import CaseDecisions, SignatureLine
from dossier.model.integrity import RecordedReview
from dossier.review.conditions import next_condition_number, track_conditions
from dossier.review.digest import check_recorded_reviews
from dossier.review.keys import TrustedKey, public_key_text
from dossier.review.signatures import ReviewParts, make_review, parse_signatures
from dossier.review.verdicts import CurrentCase, judge_reviews

D1, D2 = "ab" * 32, "cd" * 32
PARTS = ReviewParts(content="01" * 32, species="02" * 32, settings="03" * 32,
                    versions="library 2026.1+aaaa; dossier 0.1.0")
FIGURES = {"MTSR": "351.2 K", "criticality class": "2"}
CHAIR, LAB = Ed25519PrivateKey.generate(), Ed25519PrivateKey.generate()
KEYS = (TrustedKey(public_key_text(CHAIR), "H. Pellow", "process safety"),
        TrustedKey(public_key_text(LAB), "R. Ostrander", "thermal hazards laboratory"))


def block(key=CHAIR, *, verdict="accepted", conditions=(), note="", date=(2026, 11, 10),
          digest=D1, revision=2, parts=PARTS, figures=FIGURES):
    who = {CHAIR: KEYS[0], LAB: KEYS[1]}.get(key, TrustedKey("", "X. Nobody", "none"))
    return make_review(key, "scrub", revision, digest, who.name, who.role, verdict, conditions,
                       datetime.date(*date), parts=parts, figures=figures, note=note)


def now(digest=D1, revision=2, parts=PARTS, figures=FIGURES) -> CurrentCase:
    return CurrentCase(digest, revision, parts, tuple(figures.items()))


def statuses(*reviews, current=None):
    return [s.status for s in judge_reviews(reviews, KEYS, current or now(), "scrub")]


# --------------------------------------------------------------------------
# Format 2


def test_a_format_2_block_reads_back_as_itself_and_signs_every_line_but_the_last():
    review = block(verdict="accepted-with-conditions",
                   conditions=(("C1", "Vent fan interlocked."), ("C2", "pH logged, α ≥ 2.")))
    text = review.to_text()
    assert text.splitlines()[0] == "format: dossier-review-2"
    assert [line.split(":")[0] for line in text.splitlines()] == [
        "format", "case", "revision", "digest", "content", "species", "settings", "versions",
        "figures", "signer", "role", "date", "verdict", "conditions", "note", "key", "signature"]
    assert review.signed_bytes() == "".join(
        line + "\n" for line in text.splitlines()[:-1]).encode("utf-8")
    assert parse_signatures(text.encode("utf-8"), "x") == (review,)
    assert review.condition_list == (("C1", "Vent fan interlocked."), ("C2", "pH logged, α ≥ 2."))
    assert review.figure_map == FIGURES


@pytest.mark.parametrize("changes, message", [
    ({"verdict": "withdrawn"}, "key 'conditions': a withdrawal needs its reason (the note)"),
    ({"verdict": "withdrawn", "note": "x", "conditions": (("C1", "y"),)},
     "key 'conditions': a withdrawal has no conditions; give the reason as the note"),
    ({"verdict": "accepted-with-conditions", "conditions": (("D1", "y"),)},
     "key 'conditions': condition id 'D1' is not C followed by a number (C1, C2, ...)"),
    ({"verdict": "accepted-with-conditions", "conditions": (("C1", "y"), ("C1", "z"))},
     "key 'conditions': condition id 'C1' is given twice"),
    ({"parts": ReviewParts("01" * 32, "02" * 32, "03" * 32, "library 1;dossier 2")},
     "key 'versions': versions 'library 1;dossier 2' is not '<name> <version>' pairs "
     "separated by '; '"),
])
def test_make_review_refuses_a_bad_format_2_block(changes, message):
    with pytest.raises(SignatureError) as err:
        block(**changes)
    assert str(err.value) == message


def test_a_damaged_format_2_line_is_named_with_its_line():
    text = block().to_text().replace('"MTSR"', "MTSR")
    with pytest.raises(SignatureError) as err:
        parse_signatures(text.encode(), "scrub.signatures")
    assert str(err.value).startswith("scrub.signatures:9: figures '{MTSR:")
    assert str(err.value).endswith("is not a JSON object of texts")


# --------------------------------------------------------------------------
# Superseded and withdrawn


def test_a_later_verdict_of_the_same_signer_supersedes_the_earlier_one():
    first = block(digest=D2, revision=1)
    second = block(date=(2026, 11, 24))
    results = judge_reviews((first, second), KEYS, now(), "scrub")
    assert [s.status for s in results] == ["superseded", "valid"]
    assert results[0].explanation == ("replaced by H. Pellow's verdict of 2026-11-24 on "
                                      "revision 2; kept in the history")
    # another signer's verdict is not touched
    assert statuses(first, block(LAB)) == ["changed-since-signed", "valid"]


def test_the_signed_date_orders_the_entries_then_the_place_in_the_file():
    later, earlier = block(date=(2026, 11, 24)), block(digest=D2, date=(2026, 11, 10))
    assert statuses(later, earlier) == ["valid", "superseded"]
    assert statuses(block(digest=D2), block()) == ["superseded", "valid"]  # same date


def test_an_untrusted_key_cannot_supersede_a_trusted_verdict():
    impostor = Ed25519PrivateKey.generate()
    forged = make_review(impostor, "scrub", 2, D2, "H. Pellow", "process safety", "declined",
                         (), datetime.date(2026, 11, 30), parts=PARTS, figures=FIGURES)
    assert statuses(block(), forged) == ["valid", "untrusted-key"]


def test_a_withdrawal_takes_the_verdict_back_and_holds():
    withdrawal = block(verdict="withdrawn", note="New acid supplier.", date=(2026, 11, 30))
    results = judge_reviews((block(), withdrawal), KEYS, now(), "scrub")
    assert [s.status for s in results] == ["superseded", "withdrawn"]
    assert results[0].explanation == ("withdrawn by H. Pellow on 2026-11-30 (New acid "
                                      "supplier.); kept in the history")
    assert all(s.holds for s in results)


# --------------------------------------------------------------------------
# Part by part


def test_only_versions_changed_and_no_figure_moved_holds():
    newer = ReviewParts(PARTS.content, PARTS.species, PARTS.settings,
                        "library 2027.1+bbbb; dossier 0.2.0")
    (result,) = judge_reviews((block(),), KEYS, now(D2, parts=newer), "scrub")
    assert result.status == "versions-changed" and result.holds
    assert result.explanation == (
        "only versions changed (dossier 0.1.0 -> 0.2.0, library 2026.1+aaaa -> 2027.1+bbbb); "
        "the case file's content, the species records used and the method settings are as "
        "signed; re-assessed now, no key figure moved, so the verdict holds")


def test_only_versions_changed_but_a_figure_moved_does_not_hold():
    newer = ReviewParts(PARTS.content, PARTS.species, PARTS.settings,
                        "library 2026.1+aaaa; dossier 0.1.0; thermo 0.4.2")
    moved = dict(FIGURES, MTSR="356.0 K")
    (result,) = judge_reviews((block(),), KEYS, now(D2, parts=newer, figures=moved), "scrub")
    assert result.status == "changed-since-signed" and not result.holds
    assert [(c.what, c.before, c.after) for c in result.moved] == [("MTSR", "351.2 K", "356.0 K")]
    assert result.explanation.endswith("re-assessed now, key figures moved: MTSR: 351.2 K "
                                       "signed, 356.0 K now")
    assert "(thermo (not used) -> 0.4.2)" in result.explanation


def test_a_change_of_inputs_names_the_parts_that_changed():
    other = ReviewParts(PARTS.content, "09" * 32, "08" * 32, PARTS.versions)
    (result,) = judge_reviews((block(),), KEYS, now(D2, parts=other), "scrub")
    assert result.status == "changed-since-signed"
    assert result.changed_parts == ("species", "settings")
    assert result.explanation.endswith(
        "changed since signing: the species records used, the method settings and board "
        "policy; unchanged: the case file's content, the versions of the data library, "
        "dossier and method libraries")


def test_a_format_1_signature_says_that_the_part_cannot_be_told():
    old = make_review(CHAIR, "scrub", 2, D2, "H. Pellow", "process safety", "accepted", "",
                      datetime.date(2026, 11, 10))
    (result,) = judge_reviews((old,), KEYS, now(), "scrub")
    assert result.status == "changed-since-signed"
    assert result.explanation.endswith("this signature (format dossier-review-1) records the "
                                       "whole digest only, so which part changed cannot be told")


# --------------------------------------------------------------------------
# Conditions and closures

CASE = '''+++
title = "Ammonia scrubbing"
revision = 2
status = "accepted-with-conditions"
reaction = "NH3(g) + H+(aq) -> NH4+(aq)"
temperature = ["15 degC", "35 degC"]

[[review]]
name = "M. Okafor"
role = "plant manager"
date = 2026-11-20
verdict = "accepted-with-conditions"
conditions = "Operators trained on the scrubber start-up."

[[review]]
name = "A. Linde"
role = "quality"
date = 2026-11-21
verdict = "accepted-with-conditions"

[[review.conditions]]
id = "C4"
text = "Acid tank level alarm tested monthly."
%s
+++
Narrative.
'''


def _case(tmp_path, extra=""):
    path = tmp_path / "scrub.md"
    path.write_text(CASE % extra, encoding="utf-8")
    return path


def test_conditions_of_both_forms_are_tracked_and_closed(tmp_path):
    path = _case(tmp_path, '\n[[closure]]\ncondition = "R1"\nevidence = "training record '
                           'TR-77"\nby = "M. Okafor"\ndate = 2026-11-30\n')
    case = load_case(path)
    assert case.reviews[0].conditions == "Operators trained on the scrubber start-up."
    assert case.reviews[1].conditions == (("C4", "Acid tank level alarm tested monthly."),)
    signed = judge_reviews((block(verdict="accepted-with-conditions",
                                  conditions=(("C5", "Vent fan interlocked."),)),),
                           KEYS, now(), "scrub")
    lines, problems = track_conditions(header_of(read_source(path)), signed)
    assert problems == ()
    assert [(c.id, c.status, c.set_by) for c in lines] == [
        ("R1", "closed", ("M. Okafor (recorded, 2026-11-20)",)),
        ("C4", "open", ("A. Linde (recorded, 2026-11-21)",)),
        ("C5", "open", ("H. Pellow (signed, 2026-11-10)",))]
    assert (lines[0].closed_by, lines[0].closed_on, lines[0].evidence) == (
        "M. Okafor", "2026-11-30", "training record TR-77")
    assert next_condition_number(header_of(read_source(path)),
                                 [s.review for s in signed]) == 6


def test_a_superseded_verdict_sets_no_condition_and_a_closure_of_nothing_is_named(tmp_path):
    path = _case(tmp_path, '\n[[closure]]\ncondition = "C9"\nevidence = "x"\nby = "y"\n'
                           'date = 2026-11-30\n')
    reviews = (block(verdict="accepted-with-conditions", conditions=(("C5", "Old."),)),
               block(date=(2026, 11, 24)))
    lines, problems = track_conditions(header_of(read_source(path)),
                                       judge_reviews(reviews, KEYS, now(), "scrub"))
    assert [c.id for c in lines] == ["R1", "C4"]
    assert problems == ("closure[1] closes condition C9, but no current verdict of this case "
                        "sets a condition with that id",)


@pytest.mark.parametrize("extra, message", [
    ('\n[[closure]]\ncondition = "first"\nevidence = "x"\nby = "y"\ndate = 2026-11-30\n',
     "scrub.md:26: key 'closure[1].condition': expected the id of a condition, like \"C1\"; "
     "got 'first'"),
    ('\n[[closure]]\ncondition = "C4"\nby = "y"\ndate = 2026-11-30\n',
     "scrub.md:25: key 'closure[1].evidence': required key is missing in [[closure]]; add a "
     "line like: evidence = \"interlock function test IT-2291 passed, record in the plant "
     "file\""),
    ('\n[[review.conditions]]\nid = "4"\ntext = "x"\n',
     "scrub.md:26: key 'review[2].conditions[2].id': expected a condition id C followed by a "
     "number, like \"C1\"; got '4'"),
    ('\n[[review.conditions]]\nid = "C4"\ntext = "Another text."\n',
     "scrub.md:26: key 'review[2].conditions[2].id': condition C4 is given another text "
     "elsewhere in the case; one id stands for one condition: give this one a new id"),
])
def test_bad_conditions_and_closures_are_one_located_problem(tmp_path, extra, message):
    with pytest.raises(CaseError) as err:
        load_case(_case(tmp_path, extra))
    assert str(err.value) == f"{tmp_path}/{message}"


def test_a_recorded_verdict_without_a_digest_is_not_checkable(tmp_path):
    case = load_case(_case(tmp_path))
    assert {r.status for r in check_recorded_reviews(case.reviews, D1)} == {
        "not checkable: no digest"}


# --------------------------------------------------------------------------
# The one-line summary the pages print


def _line(status, verdict="accepted"):
    return SignatureLine("H. Pellow", "process safety", "2026-11-10", verdict, "", 1, status, "")


def test_the_summary_never_says_no_verdict_beside_a_changed_one():
    changed = CaseDecisions((_line("changed-since-signed"),), (), (), None)
    assert changed.changed_since_decided
    assert changed.summary == "accepted (H. Pellow, 2026-11-10): signed on other data"
    recorded = CaseDecisions((), (), (RecordedReview("A", "x", "2026-11-20", "accepted",
                                                     "not checkable: no digest", ""),), None)
    assert recorded.summary == "accepted (A, 2026-11-20): recorded, not checkable: no digest"
    assert recorded.not_checkable == 1
    superseded = CaseDecisions((_line("superseded"), _line("withdrawn", "withdrawn")), (), (), None)
    assert superseded.summary == "withdrawn by H. Pellow (2026-11-10)"
    assert CaseDecisions((), (), (), None).summary == "no verdict yet"


# --------------------------------------------------------------------------
# sign refuses a draft and a date after today


@pytest.fixture()
def cli(tmp_path):
    group, runner = _Group(commands=list(COMMANDS)), CliRunner()
    result = runner.invoke(group, ["keygen", "--name", "H. Pellow", "--role", "process safety",
                                   "--out", str(tmp_path / "keys")])
    line = result.stdout.strip().splitlines()[-1]
    (tmp_path / "trusted-keys.txt").write_text(line + "\n", encoding="utf-8")
    return lambda *args: runner.invoke(group, [str(a) for a in args])


def test_sign_refuses_a_draft_with_its_line(tmp_path, cli):
    path = _case(tmp_path)
    path.write_text(path.read_text().replace('"accepted-with-conditions"\nreaction',
                                             '"draft"\nreaction'), encoding="utf-8")
    result = cli("sign", path, "--key", tmp_path / "keys" / "h-pellow.key", "--verdict",
                 "accepted", "--date", "2026-11-10")
    assert result.exit_code == 2
    assert result.stderr == (
        f"error: {path}:4: key 'status': the case is a draft (status = \"draft\"); the board "
        "gives verdicts on submitted cases: set status = \"submitted\" when the case is ready, "
        "then sign\n")
    assert not (tmp_path / "scrub.signatures").exists()


def test_sign_refuses_a_date_after_today(tmp_path, cli):
    tomorrow = datetime.date.today() + datetime.timedelta(days=1)
    result = cli("sign", _case(tmp_path), "--key", tmp_path / "keys" / "h-pellow.key",
                 "--verdict", "accepted", "--date", tomorrow.isoformat())
    assert result.exit_code == 2
    assert result.stderr == (f"error: key '--date': {tomorrow.isoformat()} is after today "
                             f"({datetime.date.today().isoformat()}); a verdict is dated the "
                             "day it is given\n")
    assert not (tmp_path / "scrub.signatures").exists()


def test_withdraw_needs_a_current_verdict_of_the_signer(tmp_path, cli):
    result = cli("withdraw", _case(tmp_path), "--key", tmp_path / "keys" / "h-pellow.key",
                 "--reason", "Changed my mind.")
    assert result.exit_code == 2
    assert result.stderr == (f"error: {tmp_path / 'scrub.signatures'}: H. Pellow has no current "
                             "verdict on case 'scrub' to withdraw\n")


def test_withdraw_refuses_a_key_the_board_does_not_trust(tmp_path, cli):
    from dossier.review.keys import generate_keypair, write_private_key

    other = tmp_path / "other.key"
    write_private_key(other, generate_keypair("X. Nobody", "none")[0])
    result = cli("withdraw", _case(tmp_path), "--key", other, "--reason", "No.")
    assert result.exit_code == 2
    assert result.stderr == (f"error: key '--key': this key is not in {tmp_path / 'trusted-keys.txt'}; "
                             "only a trusted signer can withdraw a verdict\n")


def test_a_first_format_condition_is_s_and_its_block_number(tmp_path):
    first = make_review(CHAIR, "scrub", 2, D1, "H. Pellow", "process safety",
                        "accepted-with-conditions", "Vent fan interlocked.",
                        datetime.date(2026, 11, 10))
    second = block(LAB, verdict="accepted-with-conditions", conditions=(("C5", "Other."),))
    lines, problems = track_conditions({}, judge_reviews((first, second), KEYS, now(), "scrub"))
    assert [(c.id, c.text) for c in lines] == [("S1", "Vent fan interlocked."), ("C5", "Other.")]
    assert problems == ()


def test_one_id_with_two_texts_across_signatures_is_a_problem():
    a = block(verdict="accepted-with-conditions", conditions=(("C1", "Vent fan interlocked."),))
    b = block(LAB, verdict="accepted-with-conditions", conditions=(("C1", "pH logged."),))
    lines, problems = track_conditions({}, judge_reviews((a, b), KEYS, now(), "scrub"))
    assert [c.id for c in lines] == ["C1"]
    assert problems == ("condition C1 is set with two different texts (by H. Pellow (signed, "
                        "2026-11-10) and by R. Ostrander (signed, 2026-11-10)); one id stands "
                        "for one condition",)


def test_the_versions_line_names_every_version_with_spaces_as_hyphens():
    from dossier.engine.settings import DEFAULT
    from dossier.review.digest import case_digest, review_parts

    record = case_digest(b"x", [], "2026.1+aaaa", "0.1.0", DEFAULT.record())
    parts = review_parts(record, DEFAULT, [("thermo", "not installed"), ("rdkit", "2025.3")])
    assert parts.versions == ("library 2026.1+aaaa; dossier 0.1.0; rdkit 2025.3; "
                              "thermo not-installed")
    assert parts.content == record.case_file_digest


def test_one_condition_may_be_an_inline_table(tmp_path):
    path = _case(tmp_path)
    text = path.read_text(encoding="utf-8").replace(
        'conditions = "Operators trained on the scrubber start-up."',
        'conditions = { id = "C2", text = "Operators trained on the scrubber start-up." }')
    path.write_text(text, encoding="utf-8")
    assert load_case(path).reviews[0].conditions == (
        ("C2", "Operators trained on the scrubber start-up."),)
    lines, _ = track_conditions(header_of(read_source(path)), ())
    assert [c.id for c in lines] == ["C2", "C4"]
