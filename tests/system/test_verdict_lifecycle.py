"""A verdict's whole life on a copy of a demo case, through the commands a board uses.

Submit (a draft is refused), sign with conditions, fix the case (a new
revision), re-sign (the earlier verdicts are superseded), close a condition,
withdraw and give a verdict again, upgrade the data library and dossier:
``verify`` ends with exit 0 and its table is the case's signed history, one
row per step.  The people are invented (Halvermoor Fine Chemicals, Orrowby
Works); the case is the demo ``ammonia-scrubber``.
"""
from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

import dossier.assess.evaluate as evaluate_module
from dossier import __version__
from dossier.cli.main import _Group
from dossier.cli.signing import COMMANDS
from dossier.library.lookup import Library
from dossier.review.digest import digest_for_case
from paths import ROOT

CASE_ID = "ammonia-scrubber"
CHAIR = ("H. Pellow", "process safety (board chair)")
LAB = ("R. Ostrander", "thermal hazards laboratory")
PH = "Scrubber liquor pH logged each shift, alarm below pH 2."
FAN = "Vent header fan interlocked to stop on low liquor flow."
ACID = "Liquor make-up acid dosed only with the fan running."
CLOSURE = '''
[[closure]]
condition = "C1"
evidence = "pH alarm PAL-912 function-tested, record in the plant file"
by = "J. Pellingham, environmental engineering"
date = 2026-11-28
'''


@pytest.fixture()
def board(tmp_path):
    runner = CliRunner()
    group = _Group(commands=list(COMMANDS))

    def run(*args, code=0):
        result = runner.invoke(group, [str(a) for a in args])
        assert result.exit_code == code, result.output
        return result

    cases = tmp_path / "cases"
    cases.mkdir()
    shutil.copy(ROOT / "cases" / f"{CASE_ID}.md", cases)
    lines = ["# Halvermoor Fine Chemicals review board (test)"]
    for name, role in (CHAIR, LAB):
        lines.append(run("keygen", "--name", name, "--role", role, "--out",
                         tmp_path / "keys").stdout.strip().splitlines()[-1])
    (cases / "trusted-keys.txt").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return run, cases, tmp_path / "keys"


def _edit(path: Path, old: str, new: str) -> None:
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, old
    path.write_text(text.replace(old, new), encoding="utf-8")


def _rows(stdout: str) -> list[list[str]]:
    """The status column of each table row, with its date and verdict."""
    return [line.split()[-3:] for line in stdout.splitlines() if line.startswith(CASE_ID + " ")]


def test_submit_sign_fix_resign_close_withdraw_upgrade(board, monkeypatch):
    run, cases, keys = board
    case = cases / f"{CASE_ID}.md"
    chair, lab = keys / "h-pellow.key", keys / "r-ostrander.key"
    sign = ("sign", case, "--key")

    # 1. A draft is refused; submitted, it can be signed.
    assert 'status = "draft"' in case.read_text(encoding="utf-8")
    refused = run(*sign, chair, "--verdict", "accepted", "--date", "2026-11-10", code=2)
    assert refused.stderr == (
        f"error: {case}:5: key 'status': the case is a draft (status = \"draft\"); the board "
        "gives verdicts on submitted cases: set status = \"submitted\" when the case is ready, "
        "then sign\n")
    _edit(case, 'status = "draft"', 'status = "submitted"')

    # 2. Signed with two conditions (ids C1, C2) and a plain acceptance.
    out = run(*sign, chair, "--verdict", "accepted-with-conditions", "--condition", PH,
              "--condition", FAN, "--date", "2026-11-10").stdout
    assert f"  condition C1: {PH}\n  condition C2: {FAN}\n" in out
    run(*sign, lab, "--verdict", "accepted", "--date", "2026-11-10")
    out = run("verify", cases).stdout
    assert _rows(out) == [["2026-11-10", "accepted-with-conditions", "valid"],
                          ["2026-11-10", "accepted", "valid"]]
    assert f"  {CASE_ID} C1: open: {PH}\n  {CASE_ID} C2: open: {FAN}\n" in out

    # 3. The case is fixed in a new revision: both verdicts are about the old one.
    (cases / CASE_ID).mkdir()
    shutil.copy(case, cases / CASE_ID / "rev-1.md")
    _edit(case, "revision = 1", "revision = 2")
    _edit(case, 'temperature = ["15 degC", "40 degC"]', 'temperature = ["15 degC", "35 degC"]')
    out = run("verify", cases, code=1).stdout
    assert [r[-1] for r in _rows(out)] == ["changed-since-signed"] * 2
    assert ("signed for revision 1, but the case is now at revision 2: the verdict is about an "
            "earlier version; changed since signing: the case file's content; unchanged: the "
            "species records used, the method settings and board policy, the versions of the "
            "data library, dossier and method libraries") in out

    # 4. Re-signed: C1 carried over by its id, C2 dropped, a new condition gets C3.
    out = run(*sign, chair, "--verdict", "accepted-with-conditions", "--condition", "C1",
              "--condition", ACID, "--date", "2026-11-24").stdout
    assert f"  condition C1: {PH}\n  condition C3: {ACID}\n" in out
    run(*sign, lab, "--verdict", "accepted", "--date", "2026-11-24")
    out = run("verify", cases).stdout
    assert [r[-1] for r in _rows(out)] == ["superseded", "superseded", "valid", "valid"]
    assert ("    replaced by H. Pellow's verdict of 2026-11-24 on revision 2; kept in the "
            "history") in out
    assert f"{CASE_ID} C2" not in out

    # 5. C1 closed in the case file: the digest, and so every signature, stays as it was.
    digest = digest_for_case(case)[0].digest
    _edit(case, "\n+++\n", "\n" + CLOSURE + "+++\n")
    assert digest_for_case(case)[0].digest == digest
    out = run("verify", cases).stdout
    assert (f"  {CASE_ID} C3: open: {ACID}\n"
            f"  {CASE_ID} C1: closed 2026-11-28 by J. Pellingham, environmental engineering "
            f"(pH alarm PAL-912 function-tested, record in the plant file): {PH}\n") in out

    # 6. The laboratory withdraws its verdict, then gives it again.
    out = run("withdraw", case, "--key", lab, "--reason",
              "The liquor analysis is repeated with the new acid supplier.",
              "--date", "2026-11-30").stdout
    assert out.startswith("Withdrawn: the verdict of R. Ostrander (accepted, 2026-11-24) on "
                          f"case {CASE_ID}, 2026-11-30: The liquor analysis is repeated")
    out = run("verify", cases).stdout
    assert _rows(out)[-1] == ["2026-11-30", "withdrawn", "withdrawn"]
    assert ("    withdrawn by R. Ostrander on 2026-11-30 (The liquor analysis is repeated with "
            "the new acid supplier.); kept in the history") in out
    run(*sign, lab, "--verdict", "accepted", "--date", "2026-12-01")

    # 7. A new data library and a new dossier, the inputs unchanged: the verdicts hold.
    library_before = Library.default().version
    monkeypatch.setattr(Library.default(), "version", "2027.1.0+0123456789ab")
    monkeypatch.setattr(evaluate_module, "__version__", "0.2.0")
    out = run("verify", cases).stdout
    assert _rows(out) == [
        ["2026-11-10", "accepted-with-conditions", "superseded"],
        ["2026-11-10", "accepted", "superseded"],
        ["2026-11-24", "accepted-with-conditions", "versions-changed"],
        ["2026-11-24", "accepted", "superseded"],
        ["2026-11-30", "withdrawn", "superseded"],
        ["2026-12-01", "accepted", "versions-changed"]]
    assert (f"    only versions changed (dossier {__version__} -> 0.2.0, library "
            f"{library_before} -> 2027.1.0+0123456789ab); the case file's content, the species "
            "records used and the method settings are as signed; re-assessed now, no key "
            "figure moved, so the verdict holds") in out
    assert "2 current verdicts: 2 hold." in out
